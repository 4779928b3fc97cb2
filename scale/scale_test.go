package scale_test

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"github.com/centroidlab/centroid/scale"
)

// affineConfigs are the configured affine scalers, each as a pointer.
var affineConfigs = []struct {
	name string
	cfg  scale.Scaler
}{
	{"zscore", &scale.ZScore{}},
	{"minmax", &scale.MinMax{}},
	{"median-iqr", &scale.MedianIQR{}},
}

// allConfigs adds UnitLength to affineConfigs.
var allConfigs = append(slices.Clone(affineConfigs), struct {
	name string
	cfg  scale.Scaler
}{"unitlength", &scale.UnitLength{}})

// randomData returns an n×d matrix whose columns have very different
// locations and spreads.
func randomData(seed uint64, n, d int) *mat.Dense {
	rnd := rand.New(rand.NewPCG(seed, 1))
	m := mat.NewDense(n, d, nil)
	for j := range d {
		loc := 10*float64(j) - 5
		spread := math.Pow(10, float64(j%4)-1)
		for i := range n {
			m.Set(i, j, loc+spread*rnd.NormFloat64())
		}
	}
	return m
}

// randomWeights returns n weights in [0, 3), about a fifth of them zero.
func randomWeights(seed uint64, n int) []float64 {
	rnd := rand.New(rand.NewPCG(seed, 2))
	w := make([]float64, n)
	for i := range w {
		if rnd.IntN(5) > 0 {
			w[i] = 3 * rnd.Float64()
		}
	}
	return w
}

// kept returns the entries of x whose weight is positive (all if w is nil).
func kept(x, w []float64) []float64 {
	if w == nil {
		return slices.Clone(x)
	}
	var out []float64
	for i, v := range x {
		if w[i] > 0 {
			out = append(out, v)
		}
	}
	return out
}

// learn learns cfg and returns the learned scaler's affine parameters.
func learn(t *testing.T, cfg scale.Scaler, data mat.Matrix, w []float64) (s scale.Scaler, shift, div []float64) {
	t.Helper()
	s, err := cfg.Learn(data, w)
	require.NoError(t, err)
	if a, ok := s.(scale.Affine); ok {
		shift, div = a.Affine()
	}
	return s, shift, div
}

// near reports whether got is within tol of want, relative to max(1, |want|).
func near(want, got, tol float64) bool {
	return math.Abs(want-got) <= tol*math.Max(1, math.Abs(want))
}

var weightCases = []struct {
	name string
	w    func(n int) []float64
}{
	{"unweighted", func(int) []float64 { return nil }},
	{"weighted", func(n int) []float64 { return randomWeights(7, n) }},
}

func TestZScoreAgainstGonum(t *testing.T) {
	for _, n := range []int{1, 2, 57} {
		for _, wc := range weightCases {
			t.Run(fmt.Sprintf("%s/n=%d", wc.name, n), func(t *testing.T) {
				data, w := randomData(1, n, 5), wc.w(n)
				if w != nil && floats.Sum(w) == 0 {
					w[0] = 1
				}
				_, shift, div := learn(t, scale.ZScore{}, data, w)
				for j := range 5 {
					col := mat.Col(nil, j, data)
					// Reference: gonum stat.PopMeanStdDev (population form, divides by Σw).
					mean, std := stat.PopMeanStdDev(col, w)
					if lo, hi := floats.Min(kept(col, w)), floats.Max(kept(col, w)); lo == hi {
						mean, std = lo, 1 // constant column (one kept row), documented substitution
					}
					assert.True(t, near(mean, shift[j], 1e-12), "column %d mean: gonum %v, got %v", j, mean, shift[j])
					assert.True(t, near(std, div[j], 1e-12), "column %d std: gonum %v, got %v", j, std, div[j])
				}
			})
		}
	}
}

func TestMinMaxAgainstGonum(t *testing.T) {
	for _, wc := range weightCases {
		t.Run(wc.name, func(t *testing.T) {
			data, w := randomData(2, 40, 4), wc.w(40)
			_, shift, div := learn(t, scale.MinMax{}, data, w)
			for j := range 4 {
				col := kept(mat.Col(nil, j, data), w)
				// Reference: gonum floats.Min and floats.Max over the rows of positive weight.
				assert.Equal(t, floats.Min(col), shift[j], "column %d", j)
				assert.Equal(t, floats.Max(col)-floats.Min(col), div[j], "column %d", j)
			}
		})
	}
}

// gonumMedianIQR returns the median and interquartile range of x by gonum's
// stat.Quantile with the Empirical kind, after sorting x (and w) with gonum.
func gonumMedianIQR(x, w []float64) (median, iqr float64) {
	x = slices.Clone(x)
	if w == nil {
		sort.Float64s(x)
	} else {
		w = slices.Clone(w)
		stat.SortWeighted(x, w)
	}
	median = stat.Quantile(0.5, stat.Empirical, x, w)
	iqr = stat.Quantile(0.75, stat.Empirical, x, w) - stat.Quantile(0.25, stat.Empirical, x, w)
	return median, iqr
}

func TestMedianIQRAgainstGonum(t *testing.T) {
	for _, n := range []int{1, 2, 3, 4, 10, 11, 64} {
		for _, wc := range weightCases {
			for _, ties := range []bool{false, true} {
				t.Run(fmt.Sprintf("%s/n=%d/ties=%v", wc.name, n, ties), func(t *testing.T) {
					data, w := randomData(3, n, 4), wc.w(n)
					if w != nil && floats.Sum(w) == 0 {
						w[0] = 1
					}
					if ties {
						data.Apply(func(_, _ int, v float64) float64 { return math.Round(v) }, data)
					}
					_, shift, div := learn(t, scale.MedianIQR{}, data, w)
					for j := range 4 {
						// Reference: gonum stat.Quantile(p, stat.Empirical, sorted, weights),
						// given all rows including those of weight zero.
						median, iqr := gonumMedianIQR(mat.Col(nil, j, data), w)
						if iqr == 0 {
							iqr = 1 // documented substitution
						}
						assert.Equal(t, median, shift[j], "column %d median", j)
						assert.Equal(t, iqr, div[j], "column %d IQR", j)
					}
				})
			}
		}
	}
}

func TestMedianIQRSmallByHand(t *testing.T) {
	// Column 0 sorted is 1 2 3 4: by the definition Q(p) = x₍ₖ₎ with k the
	// smallest i where i ≥ 4p, Q(¼) = 1, Q(½) = 2 (lower middle), Q(¾) = 3.
	// Column 1 is ten times column 0.
	data := mat.NewDense(4, 2, []float64{
		4, 40,
		1, 10,
		3, 30,
		2, 20,
	})
	_, shift, div := learn(t, scale.MedianIQR{}, data, nil)
	assert.Equal(t, []float64{2, 20}, shift)
	assert.Equal(t, []float64{2, 20}, div)
	// Reference: gonum stat.Quantile with stat.Empirical agrees.
	m, iqr := gonumMedianIQR([]float64{4, 1, 3, 2}, nil)
	assert.Equal(t, []float64{2, 2}, []float64{m, iqr})

	// Weights 3 1 1 1: column 1 sorted is 10 20 30 40 with cumulative weights
	// 1 2 3 6; targets 1.5, 3, 4.5 give Q(¼) = 20, Q(½) = 30, Q(¾) = 40.
	// Column 0 likewise gives 2, 3, 4.
	w := []float64{3, 1, 1, 1}
	_, shift, div = learn(t, scale.MedianIQR{}, data, w)
	assert.Equal(t, []float64{3, 30}, shift)
	assert.Equal(t, []float64{2, 20}, div)
	m, iqr = gonumMedianIQR([]float64{40, 10, 30, 20}, w) // reference: gonum
	assert.Equal(t, []float64{30, 20}, []float64{m, iqr})
}

func TestWeightsAsMultiplicities(t *testing.T) {
	const n, d = 30, 3
	data := randomData(4, n, d)
	rnd := rand.New(rand.NewPCG(4, 4))
	w := make([]float64, n)
	var rows []float64
	for i := range w {
		w[i] = float64(rnd.IntN(4))
		for range int(w[i]) {
			rows = append(rows, data.RawRowView(i)...)
		}
	}
	w[0]++
	rows = append(rows, data.RawRowView(0)...)
	repeated := mat.NewDense(len(rows)/d, d, rows)
	for _, c := range allConfigs {
		t.Run(c.name, func(t *testing.T) {
			sw, shiftW, divW := learn(t, c.cfg, data, w)
			sr, shiftR, divR := learn(t, c.cfg, repeated, nil)
			assert.Equal(t, sr.Dim(), sw.Dim())
			if c.name == "zscore" { // sums in a different order: equal up to rounding
				for j := range shiftW {
					assert.True(t, near(shiftR[j], shiftW[j], 1e-13))
					assert.True(t, near(divR[j], divW[j], 1e-13))
				}
				return
			}
			assert.Equal(t, shiftR, shiftW)
			assert.Equal(t, divR, divW)
		})
	}
}

func TestZeroWeightRowsIgnored(t *testing.T) {
	data := randomData(5, 12, 3)
	w := randomWeights(5, 12)
	w[3], w[8] = 0, 0
	outlier := mat.DenseCopyOf(data)
	outlier.SetRow(3, []float64{1e9, -1e9, 1e9})
	outlier.SetRow(8, []float64{-1e9, 1e9, 0})
	for _, c := range affineConfigs {
		t.Run(c.name, func(t *testing.T) {
			_, shift, div := learn(t, c.cfg, data, w)
			_, shiftO, divO := learn(t, c.cfg, outlier, w)
			assert.Equal(t, shift, shiftO)
			assert.Equal(t, div, divO)
		})
	}
}

// scaledColumns applies s to every row of data and returns the columns.
func scaledColumns(s scale.Scaler, data *mat.Dense) [][]float64 {
	n, d := data.Dims()
	cols := make([][]float64, d)
	for j := range cols {
		cols[j] = make([]float64, n)
	}
	y := make([]float64, d)
	for i := range n {
		s.Apply(y, data.RawRowView(i))
		for j, v := range y {
			cols[j][i] = v
		}
	}
	return cols
}

func TestScaledStatistics(t *testing.T) {
	data, w := randomData(6, 50, 4), randomWeights(6, 50)
	t.Run("zscore", func(t *testing.T) {
		s, _, _ := learn(t, scale.ZScore{}, data, w)
		for j, col := range scaledColumns(s, data) {
			// Reference: gonum stat.PopMeanStdDev of the scaled column is (0, 1).
			mean, std := stat.PopMeanStdDev(col, w)
			assert.InDelta(t, 0, mean, 1e-12, "column %d", j)
			assert.InDelta(t, 1, std, 1e-12, "column %d", j)
		}
	})
	t.Run("minmax", func(t *testing.T) {
		s, _, _ := learn(t, scale.MinMax{}, data, w)
		for j, col := range scaledColumns(s, data) {
			// Reference: gonum floats.Min/Max of the scaled kept rows are exactly 0 and 1.
			assert.Equal(t, 0.0, floats.Min(kept(col, w)), "column %d", j)
			assert.Equal(t, 1.0, floats.Max(kept(col, w)), "column %d", j)
		}
	})
	t.Run("median-iqr", func(t *testing.T) {
		s, _, _ := learn(t, scale.MedianIQR{}, data, w)
		for j, col := range scaledColumns(s, data) {
			// Reference: gonum stat.Quantile (Empirical) of the scaled column.
			median, iqr := gonumMedianIQR(col, w)
			assert.Equal(t, 0.0, median, "column %d", j)
			assert.InDelta(t, 1, iqr, 1e-12, "column %d", j)
		}
	})
}

func TestApplyInvertRoundTrip(t *testing.T) {
	data := randomData(7, 20, 5)
	test := randomData(8, 10, 5)
	for _, c := range affineConfigs {
		t.Run(c.name, func(t *testing.T) {
			s, _, _ := learn(t, c.cfg, data, randomWeights(7, 20))
			y, back := make([]float64, 5), make([]float64, 5)
			for i := range 10 {
				x := test.RawRowView(i)
				s.Apply(y, x)
				require.NoError(t, s.Invert(back, y))
				inPlace := slices.Clone(x)
				s.Apply(inPlace, inPlace)
				assert.Equal(t, y, inPlace, "Apply in place")
				require.NoError(t, s.Invert(inPlace, inPlace))
				for j := range x {
					assert.True(t, near(x[j], back[j], 1e-13), "row %d column %d: %v vs %v", i, j, x[j], back[j])
					assert.Equal(t, back[j], inPlace[j])
				}
			}
		})
	}
}

func TestConstantColumns(t *testing.T) {
	// Column 0 is constant; column 1 is constant over the rows of positive
	// weight only; column 2 varies, but its kept values 5 5 5 9 have equal
	// first and third quartiles, so its interquartile range is 0.
	data := mat.NewDense(5, 3, []float64{
		7.25, 3, 5,
		7.25, 3, 5,
		7.25, 100, 1,
		7.25, 3, 5,
		7.25, 3, 9,
	})
	w := []float64{1, 1, 0, 1, 1}
	want := map[string]struct{ shift, div []float64 }{
		// Hand-computed for column 2 over the kept values 5 5 5 9: mean 6 and
		// population std √3; min 5, range 4; median 5, IQR 0 → divisor 1.
		"zscore":     {[]float64{7.25, 3, 6}, []float64{1, 1, math.Sqrt(3)}},
		"minmax":     {[]float64{7.25, 3, 5}, []float64{1, 1, 4}},
		"median-iqr": {[]float64{7.25, 3, 5}, []float64{1, 1, 1}},
	}
	for _, c := range affineConfigs {
		t.Run(c.name, func(t *testing.T) {
			s, shift, div := learn(t, c.cfg, data, w)
			assert.Equal(t, want[c.name].shift[:2], shift[:2])
			assert.Equal(t, want[c.name].div[:2], div[:2])
			assert.True(t, near(want[c.name].shift[2], shift[2], 1e-15))
			assert.True(t, near(want[c.name].div[2], div[2], 1e-15))
			y := make([]float64, 3)
			for i := range 5 {
				s.Apply(y, data.RawRowView(i))
				assert.Equal(t, 0.0, y[0], "constant column maps to 0")
				for _, v := range y {
					assert.False(t, math.IsNaN(v) || math.IsInf(v, 0))
				}
				if w[i] > 0 {
					assert.Equal(t, 0.0, y[1], "constant kept column maps to 0")
				}
			}
		})
	}
}

// matrixOnly hides the RawMatrixer fast path of the matrix it wraps.
type matrixOnly struct{ mat.Matrix }

func TestStrideAndGenericMatrix(t *testing.T) {
	big := randomData(9, 30, 7)
	view := big.Slice(2, 27, 1, 5).(*mat.Dense) // 25×4, stride 7
	require.Greater(t, view.RawMatrix().Stride, 4)
	copied := mat.DenseCopyOf(view)
	w := randomWeights(9, 25)
	for _, c := range allConfigs {
		t.Run(c.name, func(t *testing.T) {
			sv, shiftV, divV := learn(t, c.cfg, view, w)
			_, shiftG, divG := learn(t, c.cfg, matrixOnly{view}, w)
			_, shiftC, divC := learn(t, c.cfg, copied, w)
			assert.Equal(t, 4, sv.Dim())
			assert.Equal(t, shiftC, shiftV)
			assert.Equal(t, divC, divV)
			assert.Equal(t, shiftC, shiftG)
			assert.Equal(t, divC, divG)
		})
	}
	// A transposed matrix is read through At.
	_, shiftT, _ := learn(t, scale.MinMax{}, mat.Transpose{Matrix: copied.T()}, nil)
	_, shiftC, _ := learn(t, scale.MinMax{}, copied, nil)
	assert.Equal(t, shiftC, shiftT)
}

func TestInputsUnmodified(t *testing.T) {
	big := randomData(10, 20, 6)
	view := big.Slice(0, 20, 1, 5).(*mat.Dense) // 20×4, stride 6
	raw := slices.Clone(big.RawMatrix().Data)
	w := randomWeights(10, 20)
	wCopy := slices.Clone(w)
	for _, c := range allConfigs {
		t.Run(c.name, func(t *testing.T) {
			s, err := c.cfg.Learn(view, w)
			require.NoError(t, err)
			assert.Equal(t, raw, big.RawMatrix().Data, "data")
			assert.Equal(t, wCopy, w, "weights")
			assert.Equal(t, 0, c.cfg.Dim(), "configured receiver stays unlearned")

			// Learning again from a learned receiver leaves it unchanged and
			// starts afresh.
			before, err := scale.Encode(s)
			require.NoError(t, err)
			other := randomData(11, 5, 2)
			s2, err := s.Learn(other, nil)
			require.NoError(t, err)
			after, err := scale.Encode(s)
			require.NoError(t, err)
			assert.Equal(t, before, after)
			fresh, err := c.cfg.Learn(other, nil)
			require.NoError(t, err)
			assert.Equal(t, fresh, s2)

			// Apply does not modify x; Affine hands out copies.
			x := slices.Clone(view.RawRowView(3)[:4])
			xCopy := slices.Clone(x)
			s.Apply(make([]float64, 4), x)
			assert.Equal(t, xCopy, x)
			if a, ok := s.(scale.Affine); ok {
				shift, div := a.Affine()
				shift[0], div[0] = math.NaN(), -1
				shift2, div2 := a.Affine()
				assert.False(t, math.IsNaN(shift2[0]))
				assert.Positive(t, div2[0])
			}
		})
	}
}

func TestValueAndPointerConfigs(t *testing.T) {
	data, w := randomData(12, 15, 3), randomWeights(12, 15)
	pairs := []struct{ value, pointer scale.Scaler }{
		{scale.ZScore{}, &scale.ZScore{}},
		{scale.MinMax{}, &scale.MinMax{}},
		{scale.MedianIQR{}, &scale.MedianIQR{}},
		{scale.UnitLength{}, &scale.UnitLength{}},
	}
	for _, p := range pairs {
		t.Run(p.value.Kind(), func(t *testing.T) {
			a, err := p.value.Learn(data, w)
			require.NoError(t, err)
			b, err := p.pointer.Learn(data, w)
			require.NoError(t, err)
			assert.Equal(t, a, b)
			assert.IsType(t, p.pointer, a, "Learn returns a pointer")
			assert.Equal(t, p.value.Kind(), a.Kind())
			assert.Equal(t, 0, p.value.Dim())
			assert.Equal(t, 3, a.Dim())
		})
	}
}

func TestLearnBadInput(t *testing.T) {
	good := mat.NewDense(3, 2, []float64{1, 2, 3, 4, 5, 6})
	with := func(i, j int, v float64) *mat.Dense {
		m := mat.DenseCopyOf(good)
		m.Set(i, j, v)
		return m
	}
	cases := []struct {
		name string
		data mat.Matrix
		w    []float64
		want error
	}{
		{"nil matrix", nil, nil, scale.ErrEmpty},
		{"nil *mat.Dense", (*mat.Dense)(nil), nil, scale.ErrEmpty},
		{"empty Dense", &mat.Dense{}, nil, scale.ErrEmpty},
		{"NaN", with(1, 0, math.NaN()), nil, scale.ErrNotFinite},
		{"+Inf", with(0, 1, math.Inf(1)), nil, scale.ErrNotFinite},
		{"-Inf", with(2, 1, math.Inf(-1)), nil, scale.ErrNotFinite},
		{"NaN in zero-weight row", with(2, 0, math.NaN()), []float64{1, 1, 0}, scale.ErrNotFinite},
		{"NaN through At", matrixOnly{with(1, 1, math.NaN())}, nil, scale.ErrNotFinite},
		{"short weights", good, []float64{1, 1}, scale.ErrWeights},
		{"long weights", good, []float64{1, 1, 1, 1}, scale.ErrWeights},
		{"empty weights", good, []float64{}, scale.ErrWeights},
		{"negative weight", good, []float64{1, -0.5, 1}, scale.ErrWeights},
		{"NaN weight", good, []float64{1, math.NaN(), 1}, scale.ErrWeights},
		{"+Inf weight", good, []float64{1, math.Inf(1), 1}, scale.ErrWeights},
		{"-Inf weight", good, []float64{1, math.Inf(-1), 1}, scale.ErrWeights},
		{"all zero weights", good, []float64{0, 0, 0}, scale.ErrWeights},
		{"weight sum overflows", good, []float64{math.MaxFloat64, math.MaxFloat64, 0}, scale.ErrWeights},
	}
	for _, c := range allConfigs {
		for _, tc := range cases {
			t.Run(c.name+"/"+tc.name, func(t *testing.T) {
				s, err := c.cfg.Learn(tc.data, tc.w)
				assert.ErrorIs(t, err, tc.want)
				assert.Nil(t, s)
			})
		}
	}
}

func TestLearnOverflow(t *testing.T) {
	// The range, the squared deviations and the interquartile range of
	// ±1.5e308 exceed math.MaxFloat64.
	data := mat.NewDense(2, 1, []float64{-1.5e308, 1.5e308})
	for _, c := range affineConfigs {
		t.Run(c.name, func(t *testing.T) {
			s, err := c.cfg.Learn(data, nil)
			assert.ErrorIs(t, err, scale.ErrNotFinite)
			assert.Nil(t, s)
		})
	}
}

func TestApplyPanics(t *testing.T) {
	data := randomData(13, 6, 3)
	for _, c := range allConfigs {
		t.Run(c.name, func(t *testing.T) {
			assert.Panics(t, func() { c.cfg.Apply(make([]float64, 3), make([]float64, 3)) }, "unlearned")
			s, _, _ := learn(t, c.cfg, data, nil)
			assert.Panics(t, func() { s.Apply(make([]float64, 3), make([]float64, 2)) }, "short x")
			assert.Panics(t, func() { s.Apply(make([]float64, 4), make([]float64, 3)) }, "long dst")
			assert.Panics(t, func() { s.Apply(nil, make([]float64, 3)) }, "nil dst")
			assert.NotPanics(t, func() { s.Apply(make([]float64, 3), make([]float64, 3)) })
		})
	}
}

func TestInvertErrors(t *testing.T) {
	data := randomData(14, 6, 3)
	for _, c := range affineConfigs {
		t.Run(c.name, func(t *testing.T) {
			assert.ErrorIs(t, c.cfg.Invert(make([]float64, 3), make([]float64, 3)), scale.ErrNotLearned)
			s, _, _ := learn(t, c.cfg, data, nil)
			assert.ErrorIs(t, s.Invert(make([]float64, 3), make([]float64, 2)), scale.ErrLength)
			assert.ErrorIs(t, s.Invert(make([]float64, 2), make([]float64, 3)), scale.ErrLength)
		})
	}
	s, _, _ := learn(t, scale.UnitLength{}, data, nil)
	for _, u := range []scale.Scaler{scale.UnitLength{}, s} {
		assert.ErrorIs(t, u.Invert(make([]float64, 3), make([]float64, 3)), scale.ErrNotInvertible)
	}
}

func TestUnitLength(t *testing.T) {
	data := randomData(15, 20, 4)
	s, _, _ := learn(t, scale.UnitLength{}, data, randomWeights(15, 20))
	assert.Equal(t, 4, s.Dim())
	_, isAffine := s.(scale.Affine)
	assert.False(t, isAffine)
	y := make([]float64, 4)
	for i := range 20 {
		x := data.RawRowView(i)
		s.Apply(y, x)
		var ss float64 // brute-force norm of x
		for _, v := range x {
			ss += v * v
		}
		norm := math.Sqrt(ss)
		var ssY float64
		for j, v := range y {
			ssY += v * v
			assert.True(t, near(x[j], v*norm, 1e-13))
		}
		assert.InDelta(t, 1, ssY, 1e-14)
	}
	cases := []struct {
		name    string
		x, want []float64
	}{
		{"zero row stays zero", []float64{0, 0, 0, 0}, []float64{0, 0, 0, 0}},
		{"3-4-5 triangle", []float64{3, 0, -4, 0}, []float64{0.6, 0, -0.8, 0}},
		{"no overflow", []float64{1e200, 1e200, 1e200, 1e200}, []float64{0.5, 0.5, 0.5, 0.5}},
		{"no underflow", []float64{3e-300, 0, 0, 4e-300}, []float64{0.6, 0, 0, 0.8}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			got := s.Apply(make([]float64, 4), tc.x)
			assert.InDeltaSlice(t, tc.want, got, 1e-15)
			inPlace := s.Apply(tc.x, tc.x)
			assert.Equal(t, got, inPlace)
		})
	}
}

func TestJSONRoundTrip(t *testing.T) {
	data, w := randomData(16, 25, 6), randomWeights(16, 25)
	fresh := map[string]func() json.Unmarshaler{
		"zscore":     func() json.Unmarshaler { return new(scale.ZScore) },
		"minmax":     func() json.Unmarshaler { return new(scale.MinMax) },
		"median-iqr": func() json.Unmarshaler { return new(scale.MedianIQR) },
		"unitlength": func() json.Unmarshaler { return new(scale.UnitLength) },
	}
	for _, c := range allConfigs {
		t.Run(c.name, func(t *testing.T) {
			s, shift, div := learn(t, c.cfg, data, w)
			b, err := json.Marshal(s)
			require.NoError(t, err)
			enc, err := scale.Encode(s)
			require.NoError(t, err)
			assert.Equal(t, b, enc, "Encode and MarshalJSON agree")

			u := fresh[c.name]()
			require.NoError(t, json.Unmarshal(b, u))
			assert.Equal(t, s, u)
			dec, err := scale.Decode(b)
			require.NoError(t, err)
			assert.Equal(t, s, dec)
			assert.Equal(t, s.Kind(), dec.Kind())
			assert.Equal(t, 6, dec.Dim())
			if a, ok := dec.(scale.Affine); ok {
				shift2, div2 := a.Affine()
				for j := range shift {
					assert.Equal(t, math.Float64bits(shift[j]), math.Float64bits(shift2[j]))
					assert.Equal(t, math.Float64bits(div[j]), math.Float64bits(div2[j]))
				}
			}
			again, err := scale.Encode(dec)
			require.NoError(t, err)
			assert.Equal(t, b, again)

			// null leaves a learned value unchanged.
			require.NoError(t, json.Unmarshal([]byte("null"), u))
			assert.Equal(t, s, u)
		})
	}
}

// foreign is a Scaler of another package's making.
type foreign struct{ scale.UnitLength }

func TestEncodeSpecialCases(t *testing.T) {
	for _, s := range []scale.Scaler{nil, (*scale.ZScore)(nil), (*scale.MinMax)(nil), (*scale.MedianIQR)(nil), (*scale.UnitLength)(nil)} {
		b, err := scale.Encode(s)
		require.NoError(t, err)
		assert.Equal(t, "null", string(b), "%T", s)
	}
	for _, b := range []string{"null", " null\n"} {
		s, err := scale.Decode([]byte(b))
		assert.NoError(t, err)
		assert.Nil(t, s)
	}
	for _, c := range allConfigs {
		_, err := scale.Encode(c.cfg)
		assert.ErrorIs(t, err, scale.ErrNotLearned, c.name)
		_, err = json.Marshal(c.cfg)
		assert.ErrorIs(t, err, scale.ErrNotLearned, c.name)
	}
	_, err := scale.Encode(scale.MinMax{})
	assert.ErrorIs(t, err, scale.ErrNotLearned)
	s, _, _ := learn(t, scale.UnitLength{}, randomData(17, 2, 2), nil)
	_, err = scale.Encode(foreign{*s.(*scale.UnitLength)})
	assert.ErrorIs(t, err, scale.ErrUnsupported)

	// A learned value (not pointer) encodes too.
	z, _, _ := learn(t, scale.ZScore{}, randomData(17, 4, 2), nil)
	b1, err := scale.Encode(*z.(*scale.ZScore))
	require.NoError(t, err)
	b2, err := scale.Encode(z)
	require.NoError(t, err)
	assert.Equal(t, b1, b2)
}

func TestDecodeRejects(t *testing.T) {
	valid := `{"kind":"minmax","version":1,"dim":2,"offset":[150,12],"divisor":[200,6]}`
	s, err := scale.Decode([]byte(valid))
	require.NoError(t, err, "the base document is valid")
	require.Equal(t, 2, s.Dim())
	cases := []struct{ name, doc string }{
		{"empty", ``},
		{"blank", `  `},
		{"truncated", valid[:len(valid)/2]},
		{"missing brace", valid[:len(valid)-1]},
		{"array", `[1,2]`},
		{"number", `42`},
		{"unknown kind", `{"kind":"logistic","version":1,"dim":2,"offset":[150,12],"divisor":[200,6]}`},
		{"missing kind", `{"version":1,"dim":2,"offset":[150,12],"divisor":[200,6]}`},
		{"missing version", `{"kind":"minmax","dim":2,"offset":[150,12],"divisor":[200,6]}`},
		{"future version", `{"kind":"minmax","version":2,"dim":2,"offset":[150,12],"divisor":[200,6]}`},
		{"dim zero", `{"kind":"minmax","version":1,"dim":0}`},
		{"dim negative", `{"kind":"unitlength","version":1,"dim":-3}`},
		{"dim mismatch", `{"kind":"minmax","version":1,"dim":3,"offset":[150,12],"divisor":[200,6]}`},
		{"huge dim", `{"kind":"robust","version":1,"dim":1000000000,"offset":[150,12],"divisor":[200,6]}`},
		{"length mismatch", `{"kind":"minmax","version":1,"dim":2,"offset":[150,12],"divisor":[200]}`},
		{"missing divisor", `{"kind":"zscore","version":1,"dim":2,"offset":[150,12]}`},
		{"NaN as string", `{"kind":"minmax","version":1,"dim":2,"offset":["NaN",12],"divisor":[200,6]}`},
		{"NaN literal", `{"kind":"minmax","version":1,"dim":2,"offset":[NaN,12],"divisor":[200,6]}`},
		{"Inf as string", `{"kind":"minmax","version":1,"dim":2,"offset":[150,12],"divisor":["+Inf",6]}`},
		{"huge literal offset", `{"kind":"zscore","version":1,"dim":2,"offset":[1e999,12],"divisor":[200,6]}`},
		{"huge literal divisor", `{"kind":"robust","version":1,"dim":2,"offset":[150,12],"divisor":[200,-1e999]}`},
		{"zero divisor", `{"kind":"minmax","version":1,"dim":2,"offset":[150,12],"divisor":[200,0]}`},
		{"negative divisor", `{"kind":"zscore","version":1,"dim":2,"offset":[150,12],"divisor":[-200,6]}`},
		{"null entry", `{"kind":"zscore","version":1,"dim":2,"offset":[150,null],"divisor":[200,6]}`},
		{"string number", `{"kind":"zscore","version":1,"dim":2,"offset":[150,"12"],"divisor":[200,6]}`},
		{"unitlength with offset", `{"kind":"unitlength","version":1,"dim":2,"offset":[150,12]}`},
		{"unknown field", `{"kind":"minmax","version":1,"dim":2,"offset":[150,12],"divisor":[200,6],"note":1}`},
		{"trailing document", valid + ` {}`},
		{"trailing garbage", valid + `x`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s, err := scale.Decode([]byte(tc.doc))
			assert.ErrorIs(t, err, scale.ErrDecode)
			assert.Nil(t, s)
		})
	}
	// UnmarshalJSON demands its own kind and leaves the receiver alone on error.
	var z scale.ZScore
	assert.ErrorIs(t, json.Unmarshal([]byte(valid), &z), scale.ErrDecode)
	assert.Equal(t, 0, z.Dim())
	var m scale.MinMax
	assert.ErrorIs(t, json.Unmarshal([]byte(`{"kind":"minmax","version":1,"dim":1,"offset":[1],"divisor":[0]}`), &m), scale.ErrDecode)
	assert.Equal(t, 0, m.Dim())
}

func TestApplyAllocatesNothing(t *testing.T) {
	data := randomData(18, 10, 8)
	for _, c := range allConfigs {
		t.Run(c.name, func(t *testing.T) {
			s, _, _ := learn(t, c.cfg, data, nil)
			x, dst := data.RawRowView(4), make([]float64, 8)
			allocs := testing.AllocsPerRun(100, func() { s.Apply(dst, x) })
			assert.Zero(t, allocs)
		})
	}
}

func TestConcurrentApply(t *testing.T) {
	const n, d, workers = 200, 5, 8
	data := randomData(19, n, d)
	for _, c := range allConfigs {
		t.Run(c.name, func(t *testing.T) {
			s, _, _ := learn(t, c.cfg, data, randomWeights(19, n))
			want := mat.NewDense(n, d, nil)
			for i := range n {
				s.Apply(want.RawRowView(i), data.RawRowView(i))
			}
			got := make([]*mat.Dense, workers)
			var wg sync.WaitGroup
			for g := range workers {
				got[g] = mat.NewDense(n, d, nil)
				wg.Go(func() {
					for i := range n {
						s.Apply(got[g].RawRowView(i), data.RawRowView((i+g)%n)) // different order per goroutine
					}
				})
			}
			wg.Wait()
			for g := range workers {
				for i := range n {
					assert.Equal(t, want.RawRowView((i+g)%n), got[g].RawRowView(i))
				}
			}
		})
	}
}

// benchmarkApply measures Apply of the scaler learned by cfg on d columns.
func benchmarkApply(b *testing.B, cfg scale.Scaler, d int) {
	data := randomData(1, 64, d)
	s, err := cfg.Learn(data, nil)
	if err != nil {
		b.Fatal(err)
	}
	dst := make([]float64, d)
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		s.Apply(dst, data.RawRowView(i%64))
	}
}

func BenchmarkApply(b *testing.B) {
	for _, c := range allConfigs {
		for _, d := range []int{4, 64} {
			b.Run(fmt.Sprintf("%s/d=%d", c.name, d), func(b *testing.B) { benchmarkApply(b, c.cfg, d) })
		}
	}
}

func BenchmarkLearn(b *testing.B) {
	data := randomData(1, 10000, 8)
	for _, c := range allConfigs {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := c.cfg.Learn(data, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func TestMedianIQRKinds(t *testing.T) {
	data := randomData(20, 12, 2)
	s, shift, div := learn(t, &scale.MedianIQR{}, data, nil)
	assert.Equal(t, "median-iqr", s.Kind())
	b, err := scale.Encode(s)
	require.NoError(t, err)
	var doc map[string]any
	require.NoError(t, json.Unmarshal(b, &doc))
	assert.Equal(t, "median-iqr", doc["kind"], "the new kind is written")

	// A document of the kind earlier releases wrote still decodes, to a
	// scaler with the same parameters, and is written back with its own
	// kind, byte for byte, so that model documents keep their checksums.
	legacy, err := json.Marshal(map[string]any{"kind": "robust", "version": 1, "dim": 2, "offset": shift, "divisor": div})
	require.NoError(t, err)
	for _, in := range [][]byte{b, legacy} {
		dec, err := scale.Decode(in)
		require.NoError(t, err, "%s", in)
		a := dec.(scale.Affine)
		gotShift, gotDiv := a.Affine()
		assert.Equal(t, shift, gotShift)
		assert.Equal(t, div, gotDiv)
		again, err := scale.Encode(dec)
		require.NoError(t, err)
		assert.JSONEq(t, string(in), string(again))
		assert.Equal(t, string(in) == string(b), dec.Kind() == "median-iqr")

		var m scale.MedianIQR
		require.NoError(t, json.Unmarshal(in, &m), "%s", in)
		assert.Equal(t, dec, &m)
	}
	var z scale.ZScore
	assert.ErrorIs(t, json.Unmarshal(legacy, &z), scale.ErrDecode, "another type does not take the old kind")
	_, err = scale.Decode([]byte(`{"kind":"Robust","version":1,"dim":1,"offset":[0],"divisor":[1]}`))
	assert.ErrorIs(t, err, scale.ErrDecode, "kinds are case-sensitive")
}

func TestRobustAlias(t *testing.T) {
	// The deprecated name, as the conformance contract writes it, is the
	// same type and learns the same scaler.
	data, w := randomData(21, 20, 3), randomWeights(21, 20)
	var cfg scale.Scaler = &scale.Robust{}
	old, err := cfg.Learn(data, w)
	require.NoError(t, err)
	cur, err := scale.MedianIQR{}.Learn(data, w)
	require.NoError(t, err)
	assert.Equal(t, cur, old)
	assert.IsType(t, &scale.MedianIQR{}, old)
	assert.Equal(t, "median-iqr", cfg.Kind())
	b, err := scale.Encode((*scale.Robust)(nil))
	require.NoError(t, err)
	assert.Equal(t, "null", string(b))
}

func TestNotFiniteNamesRowAndColumn(t *testing.T) {
	data := mat.NewDense(3, 2, []float64{1, 2, 3, math.Inf(-1), 5, 6})
	big := mat.NewDense(3, 4, nil)
	big.Slice(0, 3, 1, 3).(*mat.Dense).Copy(data)
	for name, m := range map[string]mat.Matrix{"dense": data, "strided": big.Slice(0, 3, 1, 3), "through At": matrixOnly{data}} {
		_, err := scale.ZScore{}.Learn(m, nil)
		require.ErrorIs(t, err, scale.ErrNotFinite, name)
		assert.EqualError(t, err, "scale: value is NaN or infinite: column 1 is -Inf in row 1", name)
	}
}
