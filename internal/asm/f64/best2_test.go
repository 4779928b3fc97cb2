package f64

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

type best2Func func(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0, j1 int)

// kernel is one implementation of Best2 under test.
type kernel struct {
	name string
	fn   best2Func
}

// pack lays out k centers (k×d row-major) in panels, filling the lanes of
// the last panel beyond k with fill, and returns the packed centers and
// their squared norms (padded lanes fill too).
func pack(cs []float64, k, d int, fill float64) (c, norm2 []float64) {
	c = make([]float64, PackedLen(k, d))
	norm2 = make([]float64, PackedLen(k, 1))
	for i := range c {
		c[i] = fill
	}
	for i := range norm2 {
		norm2[i] = fill
	}
	for j := range k {
		var n float64
		for t := range d {
			v := cs[j*d+t]
			c[j/Panel*Panel*d+t*Panel+j%Panel] = v
			n += v * v
		}
		norm2[j] = n
	}
	return c, norm2
}

// reference is the loop in Best2's documentation, on the row-major centers,
// with the dot products summed in index order. It also returns, per row, a
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

// check runs kernel f on p with guard regions (NaN after every output and
// after x, NaN in the padded lanes of c and norm2, and centers outside
// [j0, j1) that would win if they were read as in range) and compares it
// with the reference.
func check(t *testing.T, f best2Func, p problem) {
	t.Helper()
	const pad = 5
	c, norm2 := pack(p.cs, p.k, p.d, math.NaN())
	for j := range p.k {
		if j < p.j0 || j >= p.j1 {
			norm2[j] = -math.MaxFloat64 // would win everything
		}
	}
	x := append(append([]float64(nil), p.x[:p.m*p.d]...), math.NaN(), math.NaN())
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
	f(idx[:p.m], best[:p.m], second[:p.m], x[:p.m*p.d], p.d, c, norm2, p.j0, p.j1)
	tol := reference(wIdx, wBest, wSecond, p.x, p.d, p.cs, norm2, p.j0, p.j1)
	for i := p.m; i < p.m+pad; i++ {
		require.Equal(t, -7, idx[i], "wrote idx past m")
		require.True(t, math.IsNaN(best[i]) && math.IsNaN(second[i]), "wrote best/second past m")
	}
	for i := range p.m {
		if p.exact {
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
					check(t, kn.fn, randomProblem(rnd, m, k, d, 1, (d+k)%3 == 0))
				}
			}
			for _, s := range [][3]int{{37, 131, 67}, {101, 77, 129}, {9, 257, 3}, {64, 64, 32}, {17, 300, 1}} {
				for _, scale := range []float64{1, 1e100, 1e-150} {
					check(t, kn.fn, randomProblem(rnd, s[0], s[1], s[2], scale, false))
				}
				check(t, kn.fn, randomProblem(rnd, s[0], s[1], s[2], 1, true))
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
		c, norm2 := pack(p.cs, p.k, p.d, 0)
		run := func(cuts ...int) ([]int, []float64, []float64) {
			idx, best, second := make([]int, p.m), make([]float64, p.m), make([]float64, p.m)
			for i := range best {
				best[i], second[i] = math.Inf(1), math.Inf(1)
			}
			for q := 0; q+1 < len(cuts); q++ {
				kn.fn(idx, best, second, p.x, p.d, c, norm2, cuts[q], cuts[q+1])
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
	c, n := pack(make([]float64, 6), 3, 2, 0)
	x := make([]float64, 4)
	ok := func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 2, c, n, 0, 3) }
	require.NotPanics(t, ok)
	for name, f := range map[string]func(){
		"best":   func() { Best2(make([]int, 2), make([]float64, 1), make([]float64, 2), x, 2, c, n, 0, 3) },
		"second": func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 1), x, 2, c, n, 0, 3) },
		"x":      func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x[:3], 2, c, n, 0, 3) },
		"c":      func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 2, c[:15], n, 0, 3) },
		"norm2":  func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 2, c, n[:7], 0, 3) },
		"range":  func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 2, c, n, 2, 1) },
		"d":      func() { Best2(make([]int, 2), make([]float64, 2), make([]float64, 2), x, 0, c, n, 0, 3) },
	} {
		require.Panics(t, f, name)
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
		}
	})
}

// benchmarkBest2 times Best2 on m rows against all k centers and reports
// GFLOP/s (2·m·d·k per call).
func benchmarkBest2(b *testing.B, f best2Func, m, d, k int) {
	rnd := rand.New(rand.NewPCG(1, 1))
	p := randomProblem(rnd, m, k, d, 1, false)
	c, norm2 := pack(p.cs, k, d, 0)
	idx, best, second := make([]int, m), make([]float64, m), make([]float64, m)
	b.ReportAllocs()
	for b.Loop() {
		for i := range best {
			best[i], second[i] = math.Inf(1), math.Inf(1)
		}
		f(idx, best, second, p.x, d, c, norm2, 0, k)
	}
	b.ReportMetric(2*float64(m*d*k)*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
}

func BenchmarkBest2(b *testing.B) {
	for _, kn := range kernels() {
		for _, s := range [][3]int{{256, 2, 8}, {256, 16, 64}, {256, 32, 64}, {256, 64, 256}, {1, 16, 32}} {
			b.Run(fmt.Sprintf("%s/m=%d/d=%d/k=%d", kn.name, s[0], s[1], s[2]), func(b *testing.B) { benchmarkBest2(b, kn.fn, s[0], s[1], s[2]) })
		}
	}
}
