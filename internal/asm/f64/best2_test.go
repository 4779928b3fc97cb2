package f64

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

type best2Func func(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0, j1 int)

type best2RowFunc func(x, shift []float64, c, norm2 []float64, k, exclude int) (int, float64, float64, float64)

// kernel is one implementation of Best2 under test.
type kernel struct {
	name string
	fn   best2Func
	row  best2RowFunc
}

// norms returns the squared norms of the k×d row-major centers, in a
// slice of length n ≥ k whose entries beyond k are fill.
func norms(cs []float64, k, d, n int, fill float64) []float64 {
	norm2 := make([]float64, n)
	for j := range norm2 {
		norm2[j] = fill
		if j < k {
			norm2[j] = 0
			for _, v := range cs[j*d : (j+1)*d] {
				norm2[j] += v * v
			}
		}
	}
	return norm2
}

// reference is the loop in Best2's documentation, on row-major rows and
// centers, with the dot products summed in index order. It also returns, per row, a
// bound on how far any order of summation can move a value: 4·(d+2)·2⁻⁵³
// times |norm2| + 2·Σ|x·c| (Higham 2002, §3.1), maximised over the centers.
func reference(idx []int, best, second, x []float64, d int, cs, norm2 []float64, j0, j1 int) (tol []float64) {
	tol = make([]float64, len(idx))
	for i := range idx {
		xi := x[i*d : (i+1)*d]
		for j := j0; j < j1; j++ {
			var dot, abs float64
			for t, v := range xi {
				dot += v * cs[j*d+t]
				abs += math.Abs(v * cs[j*d+t])
			}
			v := norm2[j] - 2*dot
			tol[i] = math.Max(tol[i], 4*float64(d+2)*0x1p-53*(math.Abs(norm2[j])+2*abs)+0x1p-1000)
			if v < best[i] {
				second[i], best[i], idx[i] = best[i], v, j
			} else if v < second[i] {
				second[i] = v
			}
		}
	}
	return tol
}

// problem is one Best2 call to test.
type problem struct {
	m, k, d, j0, j1 int
	x, cs           []float64 // rows m×d, centers k×d row-major
	exact           bool      // integer data: every order gives the same bits
}

// check runs kernel f on p with guard regions (NaN after every output,
// NaN in the padded lanes of the packed rows, centers outside [j0, j1)
// that would win if they were read as in range, NaN norms after j1) and
// compares it with the reference.
func check(t *testing.T, f best2Func, p problem) {
	t.Helper()
	const pad = 5
	norm2 := norms(p.cs, p.k, p.d, p.k+pad, math.NaN())
	for j := range p.k {
		if j < p.j0 || j >= p.j1 {
			norm2[j] = -math.MaxFloat64 // would win everything
		}
	}
	x := Pack(make([]float64, PackedLen(p.m, p.d)), p.x, p.m, p.d, math.NaN())
	cs := append(append([]float64(nil), p.cs[:p.j1*p.d]...), math.NaN(), math.NaN())
	idx := make([]int, p.m+pad)
	best := make([]float64, p.m+pad)
	second := make([]float64, p.m+pad)
	for i := range idx {
		idx[i], best[i], second[i] = -7, math.NaN(), math.NaN()
		if i < p.m {
			best[i], second[i] = math.Inf(1), math.Inf(1)
		}
	}
	wIdx := make([]int, p.m)
	wBest := make([]float64, p.m)
	wSecond := make([]float64, p.m)
	for i := range wIdx {
		wIdx[i], wBest[i], wSecond[i] = -7, math.Inf(1), math.Inf(1)
	}
	f(idx[:p.m], best[:p.m], second[:p.m], x, p.d, cs[:p.j1*p.d], norm2[:p.j1], p.j0, p.j1)
	tol := reference(wIdx, wBest, wSecond, p.x, p.d, p.cs, norm2, p.j0, p.j1)
	for i := p.m; i < p.m+pad; i++ {
		require.Equal(t, -7, idx[i], "wrote idx past m")
		require.True(t, math.IsNaN(best[i]) && math.IsNaN(second[i]), "wrote best/second past m")
	}
	compare(t, p.exact, wIdx, wBest, wSecond, tol, idx[:p.m], best[:p.m], second[:p.m])
}

// compare checks kernel results against the reference: bit for bit on
// exact data, within tol (and the same index where the reference's two
// best are more than 2·tol apart) otherwise.
func compare(t *testing.T, exact bool, wIdx []int, wBest, wSecond, tol []float64, idx []int, best, second []float64) {
	t.Helper()
	for i := range idx {
		if exact {
			require.Equal(t, wIdx[i], idx[i], "row %d", i)
			require.Equal(t, wBest[i], best[i], "row %d", i)
			require.Equal(t, wSecond[i], second[i], "row %d", i)
			continue
		}
		require.InDelta(t, wBest[i], best[i], tol[i], "row %d best", i)
		if !math.IsInf(wSecond[i], 1) {
			require.InDelta(t, wSecond[i], second[i], tol[i], "row %d second", i)
		} else {
			require.True(t, math.IsInf(second[i], 1), "row %d second", i)
		}
		if wSecond[i]-wBest[i] > 2*tol[i] {
			require.Equal(t, wIdx[i], idx[i], "row %d", i)
		}
	}
}

// checkRow runs the one-row kernel f for every row of p (centers [0, k),
// the center exclude skipped) with NaN in the padded lanes of the packed
// centers and norms, and compares it with the reference.
func checkRow(t *testing.T, f best2RowFunc, p problem, exclude int) {
	t.Helper()
	c := Pack(make([]float64, PackedLen(p.k, p.d)), p.cs, p.k, p.d, math.NaN())
	norm2 := norms(p.cs, p.k, p.d, PackedLen(p.k, 1), math.NaN())
	ref := append([]float64(nil), norm2[:p.k]...)
	if exclude >= 0 {
		ref[exclude] = math.Inf(1)
	}
	// Integer problems shift the rows by an integer vector (exact, so
	// compared bit for bit); others pass a zero shift.
	shift := make([]float64, p.d+1)
	if p.exact {
		for q := range p.d {
			shift[q] = float64(q%3 - 1)
		}
	}
	shift[p.d] = math.NaN() // guard: never read
	for i := range p.m {
		x := make([]float64, p.d)
		var wantR2 float64
		for q := range x {
			x[q] = p.x[i*p.d+q] + shift[q]
			wantR2 += p.x[i*p.d+q] * p.x[i*p.d+q]
		}
		wIdx, wBest, wSecond := []int{0}, []float64{math.Inf(1)}, []float64{math.Inf(1)}
		tol := reference(wIdx, wBest, wSecond, p.x[i*p.d:(i+1)*p.d], p.d, p.cs, ref, 0, p.k)
		if !p.exact {
			j, b, s, r2 := f(x, shift[:p.d], c, norm2, p.k, exclude)
			compare(t, false, wIdx, wBest, wSecond, tol, []int{j}, []float64{b}, []float64{s})
			require.InDelta(t, wantR2, r2, float64(2*p.d)*0x1p-53*wantR2+0x1p-1000)
			continue
		}
		j, b, s, r2 := f(x, shift[:p.d], c, norm2, p.k, exclude)
		compare(t, true, wIdx, wBest, wSecond, tol, []int{j}, []float64{b}, []float64{s})
		require.Equal(t, wantR2, r2)
	}
}

// randomProblem draws a problem of the given shape; scale sets the
// magnitude of rows and centers, integer data makes every sum exact.
func randomProblem(rnd *rand.Rand, m, k, d int, scale float64, integer bool) problem {
	p := problem{m: m, k: k, d: d, x: make([]float64, m*d), cs: make([]float64, k*d), exact: integer}
	gen := func() float64 {
		if integer {
			return float64(rnd.IntN(7) - 3)
		}
		return rnd.NormFloat64() * scale
	}
	for i := range p.x {
		p.x[i] = gen()
	}
	for i := range p.cs {
		p.cs[i] = gen()
	}
	if integer && k > 1 { // duplicate centers: exact ties, the lower index must win
		copy(p.cs[(k-1)*d:], p.cs[:d])
	}
	p.j0, p.j1 = 0, k
	if k > 2 && rnd.IntN(3) == 0 {
		p.j0 = rnd.IntN(k)
		p.j1 = p.j0 + 1 + rnd.IntN(k-p.j0)
	}
	return p
}

// TestBest2 compares every kernel with the documented loop on every d and
// k from 1 to 40 and odd large shapes, at unit, huge and tiny magnitudes,
// with integer data (exact ties, duplicate centers, compared bit for bit)
// and random center ranges.
func TestBest2(t *testing.T) {
	for _, kn := range kernels() {
		t.Run(kn.name, func(t *testing.T) {
			rnd := rand.New(rand.NewPCG(7, 7))
			for d := 1; d <= 40; d++ {
				for k := 1; k <= 40; k++ {
					m := 1 + rnd.IntN(19)
					p := randomProblem(rnd, m, k, d, 1, (d+k)%3 == 0)
					check(t, kn.fn, p)
					checkRow(t, kn.row, p, rnd.IntN(k+1)-1)
				}
			}
			for _, s := range [][3]int{{37, 131, 67}, {101, 77, 129}, {9, 257, 3}, {64, 64, 32}, {17, 300, 1}} {
				for _, scale := range []float64{1, 1e100, 1e-150} {
					p := randomProblem(rnd, s[0], s[1], s[2], scale, false)
					check(t, kn.fn, p)
					checkRow(t, kn.row, p, -1)
				}
				p := randomProblem(rnd, s[0], s[1], s[2], 1, true)
				check(t, kn.fn, p)
				checkRow(t, kn.row, p, s[1]/2)
			}
		})
	}
}

// TestBest2NearTies: rows exactly between two centers and one ulp either
// side, on a line of integers (exact arithmetic), so that every kernel
// must break ties towards the lower index and keep the exact values.
func TestBest2NearTies(t *testing.T) {
	for _, kn := range kernels() {
		t.Run(kn.name, func(t *testing.T) {
			for _, d := range []int{1, 3, 8, 17} {
				k := 19
				p := problem{k: k, d: d, cs: make([]float64, k*d), exact: true}
				for j := range k {
					p.cs[j*d] = float64(2 * j)
				}
				for j := range k - 1 {
					for _, v := range []float64{float64(2*j + 1), float64(2 * j), float64(2*j + 2)} {
						row := make([]float64, d)
						row[0] = v
						p.x = append(p.x, row...)
						p.m++
					}
				}
				p.j1 = k
				check(t, kn.fn, p)
				checkRow(t, kn.row, p, -1)
			}
		})
	}
}

// TestBest2Continue: two calls over consecutive center ranges give the
// answer of one call over their union.
func TestBest2Continue(t *testing.T) {
	for _, kn := range kernels() {
		rnd := rand.New(rand.NewPCG(3, 3))
		p := randomProblem(rnd, 13, 45, 7, 1, true)
		x := Pack(make([]float64, PackedLen(p.m, p.d)), p.x, p.m, p.d, 0)
		norm2 := norms(p.cs, p.k, p.d, p.k, 0)
		run := func(cuts ...int) ([]int, []float64, []float64) {
			idx, best, second := make([]int, p.m), make([]float64, p.m), make([]float64, p.m)
			for i := range best {
				best[i], second[i] = math.Inf(1), math.Inf(1)
			}
			for q := 0; q+1 < len(cuts); q++ {
				kn.fn(idx, best, second, x, p.d, p.cs, norm2, cuts[q], cuts[q+1])
			}
			return idx, best, second
		}
		i1, b1, s1 := run(0, 45)
		i2, b2, s2 := run(0, 5, 5, 16, 30, 45)
		require.Equal(t, i1, i2, kn.name)
		require.Equal(t, b1, b2, kn.name)
		require.Equal(t, s1, s2, kn.name)
	}
}

func TestBest2Panics(t *testing.T) {
	c, n := make([]float64, 6), make([]float64, 3)
	x := make([]float64, PackedLen(2, 2))
	ok := func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 2, c, n, 0, 3) }
	require.NotPanics(t, ok)
	for name, f := range map[string]func(){
		"best":      func() { Best2(make([]int, 2), make([]float64, 1), make([]float64, 2), x, 2, c, n, 0, 3) },
		"second":    func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 1), x, 2, c, n, 0, 3) },
		"x":         func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x[:15], 2, c, n, 0, 3) },
		"c":         func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 2, c[:5], n, 0, 3) },
		"norm2":     func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 2, c, n[:2], 0, 3) },
		"range":     func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 2, c, n, 2, 1) },
		"d":         func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 0, c, n, 0, 3) },
		"row c":     func() { Best2Row(make([]float64, 2), make([]float64, 2), c, make([]float64, 8), 3, -1) },
		"row n":     func() { Best2Row(make([]float64, 2), make([]float64, 2), x, n, 3, -1) },
		"row k":     func() { Best2Row(make([]float64, 2), make([]float64, 2), x, make([]float64, 8), 0, -1) },
		"row shift": func() { Best2Row(make([]float64, 2), make([]float64, 1), x, make([]float64, 8), 3, -1) },
		"pack":      func() { Pack(make([]float64, 15), make([]float64, 4), 2, 2, 0) },
	} {
		require.Panics(t, f, name)
	}
	require.NotPanics(t, func() { Best2Row(make([]float64, 2), make([]float64, 2), x, make([]float64, 8), 3, -1) })
}

// TestPack: the packed layout puts element t of row i at
// i/Panel·Panel·d + t·Panel + i%Panel and pads the last panel.
func TestPack(t *testing.T) {
	src := make([]float64, 11*3)
	for i := range src {
		src[i] = float64(i)
	}
	dst := Pack(make([]float64, PackedLen(11, 3)), src, 11, 3, -1)
	require.Len(t, dst, 2*Panel*3)
	for i := range 16 {
		for q := range 3 {
			want := -1.0
			if i < 11 {
				want = src[i*3+q]
			}
			require.Equal(t, want, dst[i/Panel*Panel*3+q*Panel+i%Panel])
		}
	}
}

// FuzzBest2 compares every kernel with the documented loop on shapes and
// values taken from the fuzzer's bytes.
func FuzzBest2(f *testing.F) {
	f.Add(uint8(3), uint8(9), uint8(5), uint8(0), uint8(9), int64(1), false)
	f.Add(uint8(1), uint8(1), uint8(1), uint8(0), uint8(1), int64(2), true)
	f.Add(uint8(17), uint8(40), uint8(33), uint8(3), uint8(30), int64(3), true)
	f.Fuzz(func(t *testing.T, m, k, d, j0, j1 uint8, seed int64, integer bool) {
		mm, kk, dd := 1+int(m%40), 1+int(k%80), 1+int(d%70)
		rnd := rand.New(rand.NewPCG(uint64(seed), 9))
		p := randomProblem(rnd, mm, kk, dd, math.Pow(10, float64(seed%100)), integer)
		p.j0 = int(j0) % kk
		p.j1 = p.j0 + int(j1)%(kk-p.j0+1)
		for _, kn := range kernels() {
			check(t, kn.fn, p)
			checkRow(t, kn.row, p, int(j0)%(kk+1)-1)
		}
	})
}

// benchmarkBest2 times Best2 on m rows against all k centers and reports
// GFLOP/s (2·m·d·k per call).
func benchmarkBest2(b *testing.B, f best2Func, m, d, k int) {
	rnd := rand.New(rand.NewPCG(1, 1))
	p := randomProblem(rnd, m, k, d, 1, false)
	x := Pack(make([]float64, PackedLen(m, d)), p.x, m, d, 0)
	norm2 := norms(p.cs, k, d, k, 0)
	idx, best, second := make([]int, m), make([]float64, m), make([]float64, m)
	b.ReportAllocs()
	for b.Loop() {
		for i := range best {
			best[i], second[i] = math.Inf(1), math.Inf(1)
		}
		f(idx, best, second, x, d, p.cs, norm2, 0, k)
	}
	b.ReportMetric(2*float64(m*d*k)*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
}

// BenchmarkBest2Row times Best2Row on rotating rows against all k centers.
func BenchmarkBest2Row(b *testing.B) {
	for _, kn := range kernels() {
		for _, s := range [][2]int{{2, 8}, {16, 32}, {64, 256}} {
			d, k := s[0], s[1]
			b.Run(fmt.Sprintf("%s/d=%d/k=%d", kn.name, d, k), func(b *testing.B) {
				rnd := rand.New(rand.NewPCG(1, 1))
				p := randomProblem(rnd, 64, k, d, 1, false)
				c := Pack(make([]float64, PackedLen(k, d)), p.cs, k, d, 0)
				norm2 := norms(p.cs, k, d, PackedLen(k, 1), math.Inf(1))
				shift := make([]float64, d)
				var sink int
				for i := 0; b.Loop(); i++ {
					j, _, _, _ := kn.row(p.x[i%64*d:(i%64+1)*d], shift, c, norm2, k, -1)
					sink += j
				}
				_ = sink
			})
		}
	}
}

func BenchmarkBest2(b *testing.B) {
	for _, kn := range kernels() {
		for _, s := range [][3]int{{256, 2, 8}, {256, 16, 64}, {256, 32, 64}, {256, 64, 256}} {
			b.Run(fmt.Sprintf("%s/m=%d/d=%d/k=%d", kn.name, s[0], s[1], s[2]), func(b *testing.B) { benchmarkBest2(b, kn.fn, s[0], s[1], s[2]) })
		}
	}
}

// TestPackShift: PackShift equals Pack of the shifted rows, with squared
// norms within rounding of the sequential sum, on every d from 1 to 40
// and row counts around panel boundaries; dst and r2 are guarded.
func TestPackShift(t *testing.T) {
	rnd := rand.New(rand.NewPCG(4, 4))
	for d := 1; d <= 40; d++ {
		for _, m := range []int{0, 1, 7, 8, 9, 16, 23, 40} {
			x := make([]float64, m*d)
			shift := make([]float64, d)
			for i := range x {
				x[i] = rnd.NormFloat64() * 100
			}
			for i := range shift {
				shift[i] = rnd.NormFloat64()
			}
			sx := make([]float64, m*d)
			want := make([]float64, m)
			for i := range m {
				for q := range d {
					sx[i*d+q] = x[i*d+q] - shift[q]
					want[i] += sx[i*d+q] * sx[i*d+q]
				}
			}
			n := PackedLen(m, d)
			dst := make([]float64, n+3)
			r2 := make([]float64, m+3)
			for i := range dst {
				dst[i] = math.NaN()
			}
			for i := range r2 {
				r2[i] = math.NaN()
			}
			got := PackShift(dst[:n], r2[:m], x, shift, m)
			require.Equal(t, Pack(make([]float64, n), sx, m, d, 0), got, "d=%d m=%d", d, m)
			for i := range m {
				require.InDelta(t, want[i], r2[i], float64(2*d)*0x1p-53*want[i], "d=%d m=%d row %d", d, m, i)
			}
			for i := n; i < n+3; i++ {
				require.True(t, math.IsNaN(dst[i]), "wrote past dst")
			}
			for i := m; i < m+3; i++ {
				require.True(t, math.IsNaN(r2[i]), "wrote past r2")
			}
		}
	}
}

// BenchmarkPeak is the one-thread fused multiply-add peak of the chosen
// kernel's vectors (PeakLoop); compare Best2's GFLOP/s with it.
func BenchmarkPeak(b *testing.B) {
	const n = 1 << 16
	var flops float64
	for b.Loop() {
		flops += PeakLoop(n)
	}
	b.ReportMetric(flops/b.Elapsed().Seconds()/1e9, "GFLOP/s")
}

// TestAffine: Affine equals the scalar loop bit for bit and finds the
// first non-finite result (NaN or ±Inf input, overflow, 0/0), for every
// length from 0 to 40; it writes nothing past len(x).
func TestAffine(t *testing.T) {
	rnd := rand.New(rand.NewPCG(6, 6))
	for n := range 41 {
		for trial := range 6 {
			x, shift, div := make([]float64, n), make([]float64, n), make([]float64, n)
			for i := range x {
				x[i], shift[i], div[i] = rnd.NormFloat64()*1e3, rnd.NormFloat64(), 0.1+rnd.Float64()*10
			}
			want := -1
			if n > 0 && trial > 0 {
				at := rnd.IntN(n)
				switch trial {
				case 1:
					x[at] = math.NaN()
				case 2:
					x[at] = math.Inf(-1)
				case 3:
					x[at], div[at] = 1e300, 1e-300 // overflows
				case 4:
					x[at], shift[at], div[at] = 1, 1, 0 // 0/0
				case 5:
					x[at] = math.MaxFloat64
					shift[at] = -math.MaxFloat64 // overflows in the subtraction
				}
				want = at
			}
			dst := make([]float64, n+2)
			dst[n], dst[n+1] = 7, 7
			got := Affine(dst[:n], x, shift, div)
			require.Equal(t, want, got, "n=%d trial %d", n, trial)
			last := n
			if want >= 0 {
				last = want + 1
			}
			for i := range last {
				require.Equal(t, math.Float64bits((x[i]-shift[i])/div[i]), math.Float64bits(dst[i]), "n=%d i=%d", n, i)
			}
			require.Equal(t, []float64{7, 7}, dst[n:], "wrote past len(x)")
		}
	}
}
