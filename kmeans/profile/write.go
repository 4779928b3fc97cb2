package profile

import "io"

// tallyWriter counts the bytes written through it and keeps the first
// error.
type tallyWriter struct {
	w   io.Writer
	n   int64
	err error
}

func (c *tallyWriter) Write(p []byte) (int, error) {
	if c.err != nil {
		return 0, c.err
	}
	n, err := c.w.Write(p)
	c.n += int64(n)
	c.err = err
	return n, err
}
