package profile

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// String returns the report as printed by WriteTo.
func (r *Report) String() string {
	var b strings.Builder
	r.WriteTo(&b)
	return b.String()
}

// WriteTo prints the report as text (see the package documentation for
// the layout): a header, the statistics over all rows, then for every
// cluster a headline with its size and share, the features that set it
// apart by decreasing |shift| with the cluster's mean against the overall
// mean, and a table of every feature's median and middle half. It returns
// the number of bytes written and the first write error.
func (r *Report) WriteTo(w io.Writer) (int64, error) {
	tw := &tallyWriter{w: w}
	dec := make([]int, len(r.Names))
	for j := range dec {
		dec[j] = decimalsFor(r.Overall[j].SD)
	}
	unit := func(j int) string {
		if r.Units == nil {
			return ""
		}
		return r.Units[j]
	}

	total := ""
	if r.Weighted {
		total = fmt.Sprintf(" (total weight %s)", strconv.FormatFloat(r.Weight, 'g', 6, 64))
	}
	fmt.Fprintf(tw, "%d %s%s · %d clusters · %d features, in original units\n", r.Rows, r.Noun, total, len(r.Clusters), len(r.Names))
	fmt.Fprintf(tw, "shift = (cluster mean − overall mean) / overall sd; a feature sets a cluster apart when |shift| ≥ %s\n", strconv.FormatFloat(r.MinShift, 'g', 3, 64))

	fmt.Fprintf(tw, "\nall %d %s\n", r.Rows, r.Noun)
	var t table
	t.add("feature", "median", "middle half", "mean", "sd", "")
	mid := middleHalves(r.Overall, dec)
	for j, s := range r.Overall {
		t.add(r.Names[j], number(s.Median, dec[j]), mid[j], number(s.Mean, dec[j]), number(s.SD, dec[j]), unit(j))
	}
	t.write(tw, "  ", 1, 2, 3, 4)

	for _, c := range r.Clusters {
		share := "%"
		if r.Weighted {
			share = "% of the weight"
		}
		switch {
		case c.Rows == 0:
			fmt.Fprintf(tw, "\ncluster %d · 0 %s: empty\n", c.Cluster, r.Noun)
			continue
		case c.Features == nil:
			fmt.Fprintf(tw, "\ncluster %d · %d %s, all of weight zero: no statistics\n", c.Cluster, c.Rows, r.Noun)
			continue
		}
		fmt.Fprintf(tw, "\ncluster %d · %d %s (%.1f%s)\n", c.Cluster, c.Rows, r.Noun, 100*c.Share, share)
		if len(c.Standouts) == 0 {
			fmt.Fprintf(tw, "  close to everyone: no feature shifted by %s sd or more\n", strconv.FormatFloat(r.MinShift, 'g', 3, 64))
		} else {
			fmt.Fprintln(tw, "  set apart by (mean vs overall mean)")
			var s table
			for _, j := range c.Standouts {
				s.add(r.Names[j], number(c.Features[j].Mean, dec[j]), unit(j), "vs", number(r.Overall[j].Mean, dec[j]), "overall", fmt.Sprintf("(%+.1f sd)", c.Shift[j]))
			}
			s.write(tw, "    ", 1, 4)
		}
		var f table
		f.add("feature", "median", "middle half", "")
		mid := middleHalves(c.Features, dec)
		for j, s := range c.Features {
			f.add(r.Names[j], number(s.Median, dec[j]), mid[j], unit(j))
		}
		f.write(tw, "  ", 1, 2)
	}
	return tw.n, tw.err
}

// Gist returns a one-line description of what sets cluster c apart, such
// as "high peak_hour_ratio (+1.6 sd), low weekend_share (-1.2 sd)", or
// "close to everyone" when no feature does, "empty" for a cluster without
// rows and "no weight" for one whose rows all have weight zero. It panics
// if c is not a cluster index of r.
func (r *Report) Gist(c int) string {
	cl := r.Clusters[c]
	switch {
	case cl.Rows == 0:
		return "empty"
	case cl.Features == nil:
		return "no weight"
	case len(cl.Standouts) == 0:
		return "close to everyone"
	}
	parts := make([]string, len(cl.Standouts))
	for i, j := range cl.Standouts {
		dir := "high"
		if cl.Shift[j] < 0 {
			dir = "low"
		}
		parts[i] = fmt.Sprintf("%s %s (%+.1f sd)", dir, r.Names[j], cl.Shift[j])
	}
	return strings.Join(parts, ", ")
}

// middleHalves formats the middle half of every summary as "lo – hi",
// padded so that the dashes line up.
func middleHalves(s []Summary, dec []int) []string {
	lo, hi := make([]string, len(s)), make([]string, len(s))
	var loW, hiW int
	for j, v := range s {
		lo[j], hi[j] = number(v.MiddleHalf[0], dec[j]), number(v.MiddleHalf[1], dec[j])
		loW, hiW = max(loW, len(lo[j])), max(hiW, len(hi[j]))
	}
	out := make([]string, len(s))
	for j := range s {
		out[j] = fmt.Sprintf("%*s – %*s", loW, lo[j], hiW, hi[j])
	}
	return out
}

// number formats v with dec decimals, without a sign on a rounded zero.
func number(v float64, dec int) string {
	s := strconv.FormatFloat(v, 'f', dec, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

// decimalsFor picks the number of decimals that shows about three
// significant digits of a spread sd (two for a zero spread).
func decimalsFor(sd float64) int {
	if !(sd > 0) || math.IsInf(sd, 0) {
		return 2
	}
	return min(8, max(0, 2-int(math.Floor(math.Log10(sd)))))
}

// table lays out rows of cells in columns two spaces apart, left-aligned
// except the columns given to write.
type table struct{ rows [][]string }

func (t *table) add(cells ...string) { t.rows = append(t.rows, cells) }

// write prints the table, each line after indent, right-aligning the
// given columns, without trailing spaces.
func (t *table) write(w io.Writer, indent string, right ...int) {
	var width []int
	for _, row := range t.rows {
		for c, cell := range row {
			if c == len(width) {
				width = append(width, 0)
			}
			width[c] = max(width[c], utf8.RuneCountInString(cell))
		}
	}
	isRight := make([]bool, len(width))
	for _, c := range right {
		isRight[c] = true
	}
	for _, row := range t.rows {
		var b strings.Builder
		b.WriteString(indent)
		for c, cell := range row {
			if c > 0 {
				b.WriteString("  ")
			}
			pad := strings.Repeat(" ", width[c]-utf8.RuneCountInString(cell))
			if isRight[c] {
				b.WriteString(pad + cell)
			} else {
				b.WriteString(cell + pad)
			}
		}
		fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
	}
}

// tallyWriter counts the bytes written through it and keeps the first
// error, after which it writes nothing.
type tallyWriter struct {
	w   io.Writer
	n   int64
	err error
}

func (t *tallyWriter) Write(p []byte) (int, error) {
	if t.err != nil {
		return 0, t.err
	}
	n, err := t.w.Write(p)
	t.n += int64(n)
	t.err = err
	return n, err
}
