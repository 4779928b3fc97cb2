package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode"
)

// errHelp is returned when -h was asked for (exit code 0).
var errHelp = errors.New("help shown")

// newFlags returns a flag set for a verb that prints its usage to w.
func newFlags(verb, synopsis string, w io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(verb, flag.ContinueOnError)
	fs.SetOutput(w)
	fs.Usage = func() {
		fmt.Fprintf(w, "usage: batch %s %s\n\nflags:\n", verb, synopsis)
		fs.PrintDefaults()
	}
	return fs
}

// parse parses args, mapping the flag package's errors to errUsage and
// errHelp, and rejects stray arguments.
func parse(fs *flag.FlagSet, args []string) error {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return errHelp
		}
		return fmt.Errorf("%w: %v", errUsage, err)
	}
	if fs.NArg() > 0 {
		return fmt.Errorf("%w: unexpected argument %q", errUsage, fs.Arg(0))
	}
	return nil
}

// size is a byte count given as 16MiB, 2GiB, 512KiB, 1GB, 1000 or 1.5GiB.
type size int64

func (s *size) String() string { return formatSize(int64(*s)) }

func (s *size) Set(v string) error {
	n, err := parseSize(v)
	if err != nil {
		return err
	}
	*s = size(n)
	return nil
}

// parseSize reads a size with an optional unit: B, KiB, MiB, GiB, TiB
// (powers of 1024) or kB, MB, GB, TB (powers of 1000), case-insensitive.
func parseSize(v string) (int64, error) {
	t := strings.TrimSpace(v)
	i := strings.IndexFunc(t, func(r rune) bool { return !(unicode.IsDigit(r) || r == '.') })
	num, unit := t, ""
	if i >= 0 {
		num, unit = t[:i], strings.TrimSpace(t[i:])
	}
	x, err := strconv.ParseFloat(num, 64)
	if err != nil || num == "" {
		return 0, fmt.Errorf("size %q: want a number with a unit such as 16MiB or 2GiB", v)
	}
	mult := map[string]float64{
		"": 1, "b": 1,
		"k": 1 << 10, "kib": 1 << 10, "m": 1 << 20, "mib": 1 << 20, "g": 1 << 30, "gib": 1 << 30, "t": 1 << 40, "tib": 1 << 40,
		"kb": 1e3, "mb": 1e6, "gb": 1e9, "tb": 1e12,
	}[strings.ToLower(unit)]
	if mult == 0 {
		return 0, fmt.Errorf("size %q: unknown unit %q (use KiB, MiB, GiB, TiB or kB, MB, GB, TB)", v, unit)
	}
	n := x * mult
	if !(n >= 1) || n > 1<<62 {
		return 0, fmt.Errorf("size %q: out of range", v)
	}
	return int64(n), nil
}

func formatSize(n int64) string {
	for _, u := range []struct {
		name string
		size int64
	}{{"TiB", 1 << 40}, {"GiB", 1 << 30}, {"MiB", 1 << 20}, {"KiB", 1 << 10}} {
		if n >= u.size && n%u.size == 0 {
			return fmt.Sprintf("%d%s", n/u.size, u.name)
		}
	}
	return strconv.FormatInt(n, 10)
}

// list is a comma-separated list flag.
type list []string

func (l *list) String() string { return strings.Join(*l, ",") }

func (l *list) Set(v string) error {
	*l = nil
	for _, s := range strings.Split(v, ",") {
		if s = strings.TrimSpace(s); s != "" {
			*l = append(*l, s)
		}
	}
	if len(*l) == 0 {
		return errors.New("empty list")
	}
	return nil
}

// kRange is -k: one number, or a range such as 2..8 for a sweep.
type kRange struct{ lo, hi int }

func (k *kRange) String() string {
	if k.lo == k.hi {
		return strconv.Itoa(k.lo)
	}
	return fmt.Sprintf("%d..%d", k.lo, k.hi)
}

func (k *kRange) Set(v string) error {
	a, b, isRange := strings.Cut(v, "..")
	lo, err := strconv.Atoi(strings.TrimSpace(a))
	if err != nil {
		return fmt.Errorf("k %q: want a number such as 5 or a range such as 2..8", v)
	}
	hi := lo
	if isRange {
		if hi, err = strconv.Atoi(strings.TrimSpace(b)); err != nil {
			return fmt.Errorf("k %q: want a range such as 2..8", v)
		}
	}
	if lo < 1 || hi < lo {
		return fmt.Errorf("k %q: want 1 ≤ low ≤ high", v)
	}
	k.lo, k.hi = lo, hi
	return nil
}
