package profile

import (
	"bufio"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
)

// printed checks that the number s, as printed, is v rounded to the
// decimals shown.
func printed(t *testing.T, v float64, s, where string) {
	t.Helper()
	got, err := strconv.ParseFloat(s, 64)
	require.NoError(t, err, "%s: %q", where, s)
	dec := 0
	if i := strings.IndexByte(s, '.'); i >= 0 {
		dec = len(s) - i - 1
	}
	assert.LessOrEqual(t, math.Abs(got-v), 0.5*math.Pow(10, -float64(dec))*(1+1e-9), "%s: printed %s for %v", where, s, v)
}

// TestReportTextRoundTrip reads the printed report back and checks every
// number in it against the report's values, to the printed precision, and
// the layout: header, the table over all rows, then per cluster its
// headline, its standouts in order and its table.
func TestReportTextRoundTrip(t *testing.T) {
	x, assign := stations(120, 4)
	w := randomWeights(120, 4, false, true)
	for _, weighted := range []bool{false, true} {
		o := &Options{Names: bikeshare.Features(), Units: bikeshare.Units(), K: 6, Noun: "stations"}
		if weighted {
			o.Weights = w
		}
		r, err := Explain(x, assign, o)
		require.NoError(t, err)
		text := r.String()
		var b strings.Builder
		n, err := r.WriteTo(&b)
		require.NoError(t, err)
		assert.Equal(t, text, b.String())
		assert.Equal(t, int64(len(text)), n)
		assert.NotContains(t, text, "NaN")

		sc := bufio.NewScanner(strings.NewReader(text))
		line := func() []string {
			require.True(t, sc.Scan(), "text ends early")
			return strings.Fields(sc.Text())
		}
		head := line()
		assert.Equal(t, []string{"120", "stations"}, head[:2])
		if weighted {
			assert.Equal(t, []string{"(total", "weight"}, head[2:4])
			printed(t, r.Weight, strings.TrimSuffix(head[4], ")"), "total weight")
			head = append(head[:2], head[5:]...)
		}
		assert.Equal(t, []string{"·", "6", "clusters", "·", "6", "features,", "in", "original", "units"}, head[2:])
		assert.Contains(t, strings.Join(line(), " "), "|shift| ≥ 0.5")
		assert.Empty(t, line())
		assert.Equal(t, []string{"all", "120", "stations"}, line())
		assert.Equal(t, []string{"feature", "median", "middle", "half", "mean", "sd"}, line())
		for j, s := range r.Overall {
			f := line()
			require.Len(t, f, 8, "%v", f)
			assert.Equal(t, r.Names[j], f[0])
			printed(t, s.Median, f[1], "overall median")
			printed(t, s.MiddleHalf[0], f[2], "overall Q¼")
			assert.Equal(t, "–", f[3])
			printed(t, s.MiddleHalf[1], f[4], "overall Q¾")
			printed(t, s.Mean, f[5], "overall mean")
			printed(t, s.SD, f[6], "overall sd")
			assert.Equal(t, r.Units[j], f[7])
		}
		for _, c := range r.Clusters {
			assert.Empty(t, line())
			f := line()
			if c.Rows == 0 {
				assert.Equal(t, []string{"cluster", strconv.Itoa(c.Cluster), "·", "0", "stations:", "empty"}, f)
				continue
			}
			assert.Equal(t, []string{"cluster", strconv.Itoa(c.Cluster), "·", strconv.Itoa(c.Rows), "stations"}, f[:5])
			printed(t, 100*c.Share, strings.TrimRight(strings.TrimPrefix(f[5], "("), "%)"), "share")
			if weighted {
				assert.Equal(t, []string{"of", "the", "weight)"}, f[6:])
			}
			if len(c.Standouts) == 0 {
				assert.Equal(t, "close", line()[0])
			} else {
				assert.Equal(t, []string{"set", "apart", "by", "(mean", "vs", "overall", "mean)"}, line())
				for _, j := range c.Standouts {
					f := line()
					require.Len(t, f, 8, "%v", f)
					assert.Equal(t, r.Names[j], f[0])
					printed(t, c.Features[j].Mean, f[1], "cluster mean")
					assert.Equal(t, []string{r.Units[j], "vs"}, f[2:4])
					printed(t, r.Overall[j].Mean, f[4], "overall mean")
					assert.Equal(t, "overall", f[5])
					printed(t, c.Shift[j], strings.TrimPrefix(f[6], "("), "shift")
					assert.Equal(t, "sd)", f[7])
				}
			}
			assert.Equal(t, []string{"feature", "median", "middle", "half"}, line())
			for j, s := range c.Features {
				f := line()
				require.Len(t, f, 6, "%v", f)
				assert.Equal(t, r.Names[j], f[0])
				printed(t, s.Median, f[1], "median")
				printed(t, s.MiddleHalf[0], f[2], "Q¼")
				printed(t, s.MiddleHalf[1], f[4], "Q¾")
				assert.Equal(t, r.Units[j], f[5])
			}
		}
		assert.False(t, sc.Scan(), "text goes on: %q", sc.Text())
	}
}

func TestReportTextSpecialClusters(t *testing.T) {
	x := mat.NewDense(5, 2, []float64{1, 7, 2, 7, 3, 7, 1.5, 7, 100, 7})
	r, err := Explain(x, []int{0, 0, 1, 1, 3}, &Options{Weights: []float64{1, 1, 1, 1, 0}, K: 4, MinShift: 3})
	require.NoError(t, err)
	text := r.String()
	assert.Contains(t, text, "5 rows (total weight 4) · 4 clusters · 2 features, in original units\n")
	assert.Contains(t, text, "\ncluster 0 · 2 rows (50.0% of the weight)\n  close to everyone: no feature shifted by 3 sd or more\n")
	assert.Contains(t, text, "\ncluster 2 · 0 rows: empty\n")
	assert.Contains(t, text, "\ncluster 3 · 1 rows, all of weight zero: no statistics\n")
	assert.NotContains(t, text, " \n", "no trailing spaces")
	assert.Equal(t, "close to everyone", r.Gist(0))
	assert.Panics(t, func() { r.Gist(4) })
}

func TestReportGist(t *testing.T) {
	// Cluster 0 is high on column 0 and low on column 1. By hand: column 0
	// holds 9 9 1 1, mean 5 and population sd 4, so cluster 0's shift is
	// (9 − 5)/4 = +1; column 1 (0 0 10 10) gives −1, an equal |shift|.
	x := mat.NewDense(4, 2, []float64{9, 0, 9, 0, 1, 10, 1, 10})
	r, err := Explain(x, []int{0, 0, 1, 1}, &Options{Names: []string{"trips", "climb"}})
	require.NoError(t, err)
	assert.Equal(t, "high trips (+1.0 sd), low climb (-1.0 sd)", r.Gist(0))
	assert.Equal(t, "low trips (-1.0 sd), high climb (+1.0 sd)", r.Gist(1), "ties by column order: trips first, then climb")
}

type failWriter struct{ after int }

func (f *failWriter) Write(p []byte) (int, error) {
	if f.after <= 0 {
		return 0, errors.New("disk full")
	}
	f.after--
	return len(p), nil
}

func TestReportWriteToError(t *testing.T) {
	x, assign := stations(30, 1)
	r, err := Explain(x, assign, nil)
	require.NoError(t, err)
	for _, after := range []int{0, 3, 20} {
		_, err = r.WriteTo(&failWriter{after: after})
		assert.EqualError(t, err, "disk full")
	}
}

func TestNumberAndDecimals(t *testing.T) {
	for _, c := range []struct {
		sd   float64
		want int
	}{{150, 0}, {15, 1}, {1.5, 2}, {0.15, 3}, {0.0015, 5}, {0, 2}, {math.Inf(1), 2}, {1e-20, 8}} {
		assert.Equal(t, c.want, decimalsFor(c.sd), "%v", c.sd)
	}
	for _, c := range []struct {
		v    float64
		dec  int
		want string
	}{{-0.001, 2, "0.00"}, {-0.4, 0, "0"}, {math.Copysign(0, -1), 1, "0.0"}, {-0.006, 2, "-0.01"}, {12.345, 1, "12.3"}} {
		assert.Equal(t, c.want, number(c.v, c.dec))
	}
}
