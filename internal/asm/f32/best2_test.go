package f32

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/floats"
)

type best2Func func(idx []int32, best, second, x []float32, d int, c, norm2 []float32, j0, j1 int)

type packShiftFunc func(dst, r2, x, shift []float32, m int) []float32

// kernel is one implementation of Best2 (and PackShift) under test.
type kernel struct {
	name string
	fn   best2Func
	pack packShiftFunc
}

// packShiftGo is the pure-Go PackShift with its checks.
func packShiftGo(dst, r2, x, shift []float32, m int) []float32 {
	checkPackShift(len(dst), len(r2), len(x), len(shift), m)
	packShiftGeneric(dst, r2, x, shift, 0, m)
	return dst[:PackedLen(m, len(shift))]
}

// u32 is the unit roundoff of float32.
const u32 = 0x1p-24

// norms returns the squared norms of the k×d row-major centers (summed in
// float64, rounded once to float32), in a slice of length n ≥ k whose
// entries beyond k are fill.
func norms(cs []float32, k, d, n int, fill float32) []float32 {
	norm2 := make([]float32, n)
	for j := range norm2 {
		norm2[j] = fill
		if j < k {
			var s float64
			for _, v := range cs[j*d : (j+1)*d] {
				s += float64(v) * float64(v)
			}
			norm2[j] = float32(s)
		}
	}
	return norm2
}

// reference is the loop in Best2's documentation on row-major rows and
// centers, computed in float64 (the products of float32 values are exact
// there) from the float32 norms. It also returns, per row, a bound on how
// far float32 sums in any order can move a value: 4·(d+2)·2⁻²⁴ times
// |norm2| + 2·Σ|x·c| (Higham 2002, §3.1, with the float32 unit roundoff),
// maximised over the centers, plus 2⁻¹²⁰ for products that underflow.
func reference(idx []int32, best, second []float64, x []float32, d int, cs, norm2 []float32, j0, j1 int) (tol []float64) {
	tol = make([]float64, len(idx))
	for i := range idx {
		xi := x[i*d : (i+1)*d]
		for j := j0; j < j1; j++ {
			var dot, abs float64
			for t, v := range xi {
				p := float64(v) * float64(cs[j*d+t])
				dot += p
				abs += math.Abs(p)
			}
			v := float64(norm2[j]) - 2*dot
			tol[i] = math.Max(tol[i], 4*float64(d+2)*u32*(math.Abs(float64(norm2[j]))+2*abs)+0x1p-120)
			if v < best[i] {
				second[i], best[i], idx[i] = best[i], v, int32(j)
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
	x, cs           []float32 // rows m×d, centers k×d row-major
	exact           bool      // integer data: every order gives the same bits
}

// check runs kernel f on p with guard regions (NaN after every output,
// NaN in the padded lanes of the packed rows, centers outside [j0, j1)
// that would win if they were read as in range, NaN norms after j1) and
// compares it with the reference.
func check(t *testing.T, f best2Func, p problem) {
	t.Helper()
	const pad = 5
	nan := float32(math.NaN())
	norm2 := norms(p.cs, p.k, p.d, p.k+pad, nan)
	for j := range p.k {
		if j < p.j0 || j >= p.j1 {
			norm2[j] = -math.MaxFloat32 // would win everything
		}
	}
	x := Pack(make([]float32, PackedLen(p.m, p.d)), p.x, p.m, p.d, nan)
	cs := append(append([]float32(nil), p.cs[:p.j1*p.d]...), nan, nan)
	idx := make([]int32, p.m+pad)
	best := make([]float32, p.m+pad)
	second := make([]float32, p.m+pad)
	for i := range idx {
		idx[i], best[i], second[i] = -7, nan, nan
		if i < p.m {
			best[i], second[i] = inf, inf
		}
	}
	wIdx := make([]int32, p.m)
	wBest := make([]float64, p.m)
	wSecond := make([]float64, p.m)
	for i := range wIdx {
		wIdx[i], wBest[i], wSecond[i] = -7, math.Inf(1), math.Inf(1)
	}
	f(idx[:p.m], best[:p.m], second[:p.m], x, p.d, cs[:p.j1*p.d], norm2[:p.j1], p.j0, p.j1)
	tol := reference(wIdx, wBest, wSecond, p.x, p.d, p.cs, norm2, p.j0, p.j1)
	for i := p.m; i < p.m+pad; i++ {
		require.Equal(t, int32(-7), idx[i], "wrote idx past m")
		require.True(t, math.IsNaN(float64(best[i])) && math.IsNaN(float64(second[i])), "wrote best/second past m")
	}
	compare(t, p.exact, wIdx, wBest, wSecond, tol, idx[:p.m], best[:p.m], second[:p.m])
}

// compare checks kernel results against the reference: bit for bit on
// exact data, within tol (and the same index where the reference's two
// best are more than 2·tol apart) otherwise.
func compare(t *testing.T, exact bool, wIdx []int32, wBest, wSecond, tol []float64, idx []int32, best, second []float32) {
	t.Helper()
	for i := range idx {
		if exact {
			require.Equal(t, wIdx[i], idx[i], "row %d", i)
			require.Equal(t, wBest[i], float64(best[i]), "row %d", i)
			require.Equal(t, wSecond[i], float64(second[i]), "row %d", i)
			continue
		}
		require.InDelta(t, wBest[i], float64(best[i]), tol[i], "row %d best", i)
		if !math.IsInf(wSecond[i], 1) {
			require.InDelta(t, wSecond[i], float64(second[i]), tol[i], "row %d second", i)
		} else {
			require.True(t, math.IsInf(float64(second[i]), 1), "row %d second", i)
		}
		if wSecond[i]-wBest[i] > 2*tol[i] {
			require.Equal(t, wIdx[i], idx[i], "row %d", i)
		}
	}
}

// randomProblem draws a problem of the given shape; scale sets the
// magnitude of rows and centers, integer data makes every sum exact.
func randomProblem(rnd *rand.Rand, m, k, d int, scale float64, integer bool) problem {
	p := problem{m: m, k: k, d: d, x: make([]float32, m*d), cs: make([]float32, k*d), exact: integer}
	gen := func() float32 {
		if integer {
			return float32(rnd.IntN(7) - 3)
		}
		return float32(rnd.NormFloat64() * scale)
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

// Magnitudes of the random problems: unit, huge (squares near 10³⁴, within
// the float32 range) and tiny (products below the smallest normal float32,
// 2⁻¹²⁶).
var scales = []float64{1, 1e17, 1e-21}

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
					m := 1 + rnd.IntN(39)
					check(t, kn.fn, randomProblem(rnd, m, k, d, 1, (d+k)%3 == 0))
				}
			}
			for _, s := range [][3]int{{37, 131, 67}, {101, 77, 129}, {9, 257, 3}, {64, 64, 32}, {17, 300, 1}, {33, 9, 513}} {
				for _, scale := range scales {
					check(t, kn.fn, randomProblem(rnd, s[0], s[1], s[2], scale, false))
				}
				check(t, kn.fn, randomProblem(rnd, s[0], s[1], s[2], 1, true))
			}
		})
	}
}

// TestBest2NearTies: rows exactly between two centers and one float32 ulp
// either side, on a line of integers (exact arithmetic), so that every
// kernel must break ties towards the lower index and keep the exact
// values.
func TestBest2NearTies(t *testing.T) {
	for _, kn := range kernels() {
		t.Run(kn.name, func(t *testing.T) {
			for _, d := range []int{1, 3, 16, 17, 33} {
				k := 19
				p := problem{k: k, d: d, cs: make([]float32, k*d), exact: true}
				for j := range k {
					p.cs[j*d] = float32(2 * j)
				}
				for j := range k - 1 {
					for _, v := range []float32{float32(2*j + 1), float32(2 * j), float32(2*j + 2)} {
						row := make([]float32, d)
						row[0] = v
						p.x = append(p.x, row...)
						p.m++
					}
				}
				p.j1 = k
				check(t, kn.fn, p)
				// One ulp either side of the midpoints: not exact, but the
				// index must still be the nearer center when the gap
				// exceeds the rounding bound.
				q := p
				q.exact = false
				q.x = append([]float32(nil), p.x...)
				for i := range q.m {
					if i%2 == 0 {
						q.x[i*d] = math.Nextafter32(q.x[i*d], 100)
					} else {
						q.x[i*d] = math.Nextafter32(q.x[i*d], -100)
					}
				}
				check(t, kn.fn, q)
			}
		})
	}
}

// TestBest2Continue: two calls over consecutive center ranges give the
// answer of one call over their union.
func TestBest2Continue(t *testing.T) {
	for _, kn := range kernels() {
		rnd := rand.New(rand.NewPCG(3, 3))
		p := randomProblem(rnd, 37, 45, 7, 1, true)
		x := Pack(make([]float32, PackedLen(p.m, p.d)), p.x, p.m, p.d, 0)
		norm2 := norms(p.cs, p.k, p.d, p.k, 0)
		run := func(cuts ...int) ([]int32, []float32, []float32) {
			idx, best, second := make([]int32, p.m), make([]float32, p.m), make([]float32, p.m)
			for i := range best {
				best[i], second[i] = inf, inf
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
	c, n := make([]float32, 6), make([]float32, 3)
	x := make([]float32, PackedLen(2, 2))
	f32s := func(n int) []float32 { return make([]float32, n) }
	ok := func() { Best2(make([]int32, 2), f32s(2), f32s(2), x, 2, c, n, 0, 3) }
	require.NotPanics(t, ok)
	for name, f := range map[string]func(){
		"best":   func() { Best2(make([]int32, 2), f32s(1), f32s(2), x, 2, c, n, 0, 3) },
		"second": func() { Best2(make([]int32, 2), f32s(2), f32s(1), x, 2, c, n, 0, 3) },
		"x":      func() { Best2(make([]int32, 2), f32s(2), f32s(2), x[:31], 2, c, n, 0, 3) },
		"c":      func() { Best2(make([]int32, 2), f32s(2), f32s(2), x, 2, c[:5], n, 0, 3) },
		"norm2":  func() { Best2(make([]int32, 2), f32s(2), f32s(2), x, 2, c, n[:2], 0, 3) },
		"range":  func() { Best2(make([]int32, 2), f32s(2), f32s(2), x, 2, c, n, 2, 1) },
		"d":      func() { Best2(make([]int32, 2), f32s(2), f32s(2), x, 0, c, n, 0, 3) },
		"pack":   func() { Pack(f32s(31), f32s(4), 2, 2, 0) },
		"shift":  func() { PackShift(f32s(32), f32s(2), f32s(4), f32s(0), 2) },
		"r2":     func() { PackShift(f32s(32), f32s(1), f32s(4), f32s(2), 2) },
		"rows":   func() { PackShift(f32s(32), f32s(2), f32s(3), f32s(2), 2) },
	} {
		require.Panics(t, f, name)
	}
}

// TestPack: the packed layout puts element t of row i at
// i/Panel·Panel·d + t·Panel + i%Panel and pads the last panel.
func TestPack(t *testing.T) {
	src := make([]float32, 21*3)
	for i := range src {
		src[i] = float32(i)
	}
	dst := Pack(make([]float32, PackedLen(21, 3)), src, 21, 3, -1)
	require.Len(t, dst, 2*Panel*3)
	for i := range 2 * Panel {
		for q := range 3 {
			want := float32(-1)
			if i < 21 {
				want = src[i*3+q]
			}
			require.Equal(t, want, dst[i/Panel*Panel*3+q*Panel+i%Panel])
		}
	}
}

// TestPackShift: every PackShift equals Pack of the rows minus the shift
// (one float32 subtraction each, bit for bit), with squared norms within
// float32 rounding of the exact sum, on every d from 1 to 40 and row
// counts around panel boundaries, at unit, huge and tiny magnitudes; dst
// and r2 are guarded.
func TestPackShift(t *testing.T) {
	rnd := rand.New(rand.NewPCG(4, 4))
	for _, kn := range kernels() {
		for _, scale := range scales {
			for d := 1; d <= 40; d++ {
				for _, m := range []int{0, 1, 15, 16, 17, 32, 47, 80} {
					x := make([]float32, m*d)
					shift := make([]float32, d)
					for i := range x {
						x[i] = float32(rnd.NormFloat64() * 10 * scale)
					}
					for i := range shift {
						shift[i] = float32(rnd.NormFloat64() * scale)
					}
					sx := make([]float32, m*d)
					want := make([]float64, m)
					for i := range m {
						for q := range d {
							sx[i*d+q] = x[i*d+q] - shift[q]
							want[i] += float64(sx[i*d+q]) * float64(sx[i*d+q])
						}
					}
					n := PackedLen(m, d)
					nan := float32(math.NaN())
					dst := make([]float32, n+3)
					r2 := make([]float32, m+3)
					for i := range dst {
						dst[i] = nan
					}
					for i := range r2 {
						r2[i] = nan
					}
					got := kn.pack(dst[:n], r2[:m], x, shift, m)
					require.Equal(t, Pack(make([]float32, n), sx, m, d, 0), got, "%s d=%d m=%d", kn.name, d, m)
					for i := range m {
						require.InDelta(t, want[i], float64(r2[i]), float64(2*d)*u32*want[i]+float64(d)*0x1p-148, "%s d=%d m=%d row %d", kn.name, d, m, i)
					}
					for i := n; i < n+3; i++ {
						require.True(t, math.IsNaN(float64(dst[i])), "wrote past dst")
					}
					for i := m; i < m+3; i++ {
						require.True(t, math.IsNaN(float64(r2[i])), "wrote past r2")
					}
				}
			}
		}
	}
}

// FuzzBest2 compares every kernel with the documented loop on shapes and
// values taken from the fuzzer's bytes.
func FuzzBest2(f *testing.F) {
	f.Add(uint8(3), uint8(9), uint8(5), uint8(0), uint8(9), int64(1), false)
	f.Add(uint8(1), uint8(1), uint8(1), uint8(0), uint8(1), int64(2), true)
	f.Add(uint8(33), uint8(40), uint8(33), uint8(3), uint8(30), int64(3), true)
	f.Fuzz(func(t *testing.T, m, k, d, j0, j1 uint8, seed int64, integer bool) {
		mm, kk, dd := 1+int(m%70), 1+int(k%80), 1+int(d%70)
		rnd := rand.New(rand.NewPCG(uint64(seed), 9))
		// Magnitudes 10⁻¹⁸ … 10¹⁷: squares stay within the float32 range.
		p := randomProblem(rnd, mm, kk, dd, math.Pow(10, float64(seed%36-18)), integer)
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
	x := Pack(make([]float32, PackedLen(m, d)), p.x, m, d, 0)
	norm2 := norms(p.cs, k, d, k, 0)
	idx, best, second := make([]int32, m), make([]float32, m), make([]float32, m)
	b.ReportAllocs()
	for b.Loop() {
		for i := range best {
			best[i], second[i] = inf, inf
		}
		f(idx, best, second, x, d, p.cs, norm2, 0, k)
	}
	b.ReportMetric(2*float64(m*d*k)*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
}

func BenchmarkBest2(b *testing.B) {
	for _, kn := range kernels() {
		for _, s := range [][3]int{{256, 2, 8}, {256, 16, 64}, {256, 32, 64}, {256, 64, 256}} {
			b.Run(fmt.Sprintf("%s/m=%d/d=%d/k=%d", kn.name, s[0], s[1], s[2]), func(b *testing.B) { benchmarkBest2(b, kn.fn, s[0], s[1], s[2]) })
		}
	}
}

// BenchmarkPackShift times PackShift on a tile of 256 rows.
func BenchmarkPackShift(b *testing.B) {
	for _, kn := range kernels() {
		for _, d := range []int{16, 64} {
			b.Run(fmt.Sprintf("%s/d=%d", kn.name, d), func(b *testing.B) {
				const m = 256
				x, shift := make([]float32, m*d), make([]float32, d)
				for i := range x {
					x[i] = float32(i % 97)
				}
				dst, r2 := make([]float32, PackedLen(m, d)), make([]float32, m)
				b.ReportAllocs()
				for b.Loop() {
					kn.pack(dst, r2, x, shift, m)
				}
			})
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

// TestAddScaled: where it runs, AddScaled gives the bits of gonum's
// floats.AddScaled on the widened row (gonum's amd64 assembly multiplies
// and adds without fusing), for every length from 0 to 40 and weights
// 1, 0.3 and 7.5e-300 (products that underflow); it writes nothing past
// len(x).
func TestAddScaled(t *testing.T) {
	rnd := rand.New(rand.NewPCG(8, 8))
	for n := range 41 {
		for _, alpha := range []float64{1, 0.3, 7.5e-300} {
			x := make([]float32, n)
			wide := make([]float64, n)
			dst := make([]float64, n+2)
			for i := range x {
				x[i] = float32(rnd.NormFloat64() * 1e3)
				wide[i] = float64(x[i])
				dst[i] = rnd.NormFloat64()
			}
			dst[n], dst[n+1] = 7, 7
			want := append([]float64(nil), dst[:n]...)
			floats.AddScaled(want, alpha, wide)
			if !AddScaled(dst[:n], alpha, x) {
				require.Equal(t, "go", Kernel())
				continue
			}
			for i := range n {
				require.Equal(t, math.Float64bits(want[i]), math.Float64bits(dst[i]), "n=%d alpha=%v i=%d", n, alpha, i)
			}
			require.Equal(t, []float64{7, 7}, dst[n:])
		}
	}
	require.Panics(t, func() { AddScaled(make([]float64, 1), 1, make([]float32, 2)) })
}
