package main

import (
	"context"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"time"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/asm/f32"
	"github.com/centroidlab/centroid/internal/asm/f64"
	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/internal/nearest"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

func main() {
	var (
		ns      = flag.String("n", "1e4,1e5", "rows of the grid, comma separated (1e4 = 10000)")
		ds      = flag.String("d", "2,16,64,256", "dimensions of the grid")
		ks      = flag.String("k", "8,64,256", "clusters of the grid")
		iters   = flag.Int("iters", 30, "pass limit of every run (solvers are exact: all run the same passes)")
		reps    = flag.Int("reps", 1, "repetitions per measurement; the fastest counts")
		rows    = flag.Int("rows", 1<<15, "rows of the kernel/Dgemm/naive rate measurement (at most n)")
		naive   = flag.Int("naive-rows", 4096, "rows of the naive triple loop (at most -rows)")
		workers = flag.String("workers-n", "1e5", "smallest n at which 1 and 2 workers are compared")
		wd      = flag.String("workers-d", "2,16", "dimensions at which 1 and 2 workers are compared")
		wk      = flag.String("workers-k", "8,64,256", "clusters at which 1 and 2 workers are compared")
		sets    = flag.String("sets", "s1,s2,s3,s4,a1,a2,a3,unbalance,letter", "shared datasets to run (empty: none)")
		maxCost = flag.Float64("max-gflop", 2000, "skip grid cells whose Lloyd run would exceed this many GFLOP (2·n·d·k·iters)")
		pass    = flag.String("pass", "16:64,32:64,64:256", "d:k shapes of the Lloyd pass table (empty: none)")
		passN   = flag.Int("pass-n", 1e5, "rows of the Lloyd pass table")
		f32s    = flag.String("f32", "16:64,16:256,32:64,32:256,64:64,64:256", "d:k shapes of the float32-vs-float64 table (empty: none)")
		f32N    = flag.Int("f32-n", 1e5, "rows of the float32-vs-float64 table")
		only32  = flag.Bool("f32-only", false, "print only the float32-vs-float64 table")
	)
	flag.Parse()
	cfg := config{iters: *iters, reps: max(1, *reps), rows: *rows, naiveRows: *naive, workersN: parseInts(*workers)[0], maxGFLOP: *maxCost,
		workersD: set(parseInts(*wd)), workersK: set(parseInts(*wk))}
	fmt.Printf("# benchreport\n\n%s, GOMAXPROCS %d, %s\n\n", runtime.Version(), runtime.GOMAXPROCS(0), cpuName())
	fmt.Printf("flags: %s\n\n", strings.Join(os.Args[1:], " "))
	cfg.peak = peakRate()
	fmt.Printf("Kernel: %s. One-thread peak (f64.PeakLoop, 12 chains of vector fused multiply-adds): %.1f GFLOP/s.\n\n", f64.Kernel(), cfg.peak/1e9)
	if *f32s != "" {
		cfg.float32(*f32N, parseShapes(*f32s))
	}
	if *only32 {
		return
	}
	if *pass != "" {
		cfg.passes(*passN, parseShapes(*pass))
	}
	if *sets != "" {
		cfg.datasets(strings.Split(*sets, ","))
	}
	cfg.grid(parseInts(*ns), parseInts(*ds), parseInts(*ks))
}

type config struct {
	iters, reps, rows, naiveRows, workersN int
	maxGFLOP, peak                         float64
	workersD, workersK                     map[int]bool
}

func set(v []int) map[int]bool {
	m := map[int]bool{}
	for _, x := range v {
		m[x] = true
	}
	return m
}

var methods = []kmeans.Method{kmeans.Lloyd{}, kmeans.Elkan{}, kmeans.Hamerly{}, kmeans.Yinyang{}}

func name(m kmeans.Method) string {
	if m == nil {
		return "auto"
	}
	s := fmt.Sprintf("%T", m)
	return s[strings.LastIndexByte(s, '.')+1:]
}

// run is the fastest of reps calls of Cluster.
type run struct {
	secs   float64
	res    *kmeans.Result
	method string
}

func (c config) cluster(x *mat.Dense, k, iters, workers int, m kmeans.Method) run {
	best := run{secs: math.Inf(1)}
	for range c.reps {
		start := time.Now()
		res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: k},
			&kmeans.Settings{Restarts: 1, Seed: 1, MaxIterations: iters, Workers: workers, SwapTrials: -1}, m)
		secs := time.Since(start).Seconds()
		if err != nil {
			fmt.Fprintln(os.Stderr, "benchreport:", err)
			os.Exit(1)
		}
		if secs < best.secs {
			best = run{secs: secs, res: res, method: res.Stats.Method}
		}
	}
	return best
}

// seedSecs times k-means++ seeding alone on the given number of workers
// (the fastest of reps).
func (c config) seedSecs(x *mat.Dense, k, workers int) float64 {
	_, d := x.Dims()
	best := math.Inf(1)
	for range c.reps {
		dst := mat.NewDense(k, d, nil)
		start := time.Now()
		if err := (seeding.PlusPlus{Workers: workers}).Seed(dst, x, nil, distance.Euclidean{}, rand.New(rand.NewPCG(1, 0))); err != nil {
			fmt.Fprintln(os.Stderr, "benchreport:", err)
			os.Exit(1)
		}
		best = math.Min(best, time.Since(start).Seconds())
	}
	return best
}

// solvers runs every solver (and the automatic choice, which replaces the
// run of the solver it picks) on x and prints one table row.
func (c config) solvers(label string, x *mat.Dense, k, iters int) map[string]run {
	auto := c.cluster(x, k, iters, 0, nil)
	runs := map[string]run{"auto": auto}
	for _, m := range methods {
		if name(m) == auto.method {
			runs[name(m)] = auto
			continue
		}
		runs[name(m)] = c.cluster(x, k, iters, 0, m)
	}
	lloyd := runs["Lloyd"]
	fastest := lloyd
	seed := c.seedSecs(x, k, runtime.GOMAXPROCS(0))
	cells := []string{label, strconv.Itoa(lloyd.res.Iterations), ms(seed), ms(lloyd.secs)}
	for _, m := range methods[1:] {
		r := runs[name(m)]
		if r.res.Iterations != lloyd.res.Iterations || r.res.Cost != lloyd.res.Cost {
			fmt.Fprintf(os.Stderr, "benchreport: %s differs from Lloyd on %s\n", name(m), label)
			os.Exit(1)
		}
		cells = append(cells, fmt.Sprintf("%.2f× (%.2f×) / %.1f×", lloyd.secs/r.secs, passes(lloyd.secs, seed)/passes(r.secs, seed),
			float64(lloyd.res.Stats.Distances)/float64(r.res.Stats.Distances)))
		if r.secs < fastest.secs {
			fastest = r
		}
	}
	cells = append(cells, fmt.Sprintf("%s %.2f", auto.method, auto.secs/fastest.secs))
	fmt.Println("| " + strings.Join(cells, " | ") + " |")
	return runs
}

const solverHeader = "| cell | passes | seeding ms | Lloyd ms | Elkan: time (passes only) / distances | Hamerly: time (passes only) / distances | Yinyang: time (passes only) / distances | auto: pick, time ÷ fastest |\n|---|---|---|---|---|---|---|---|"

// passes returns the time of a run without seeding, at least 1% of it so
// that noise cannot make it vanish.
func passes(secs, seed float64) float64 { return math.Max(secs-seed, secs/100) }

func (c config) datasets(names []string) {
	fmt.Println("## Shared datasets (speed-up over Lloyd: wall time (wall time minus seeding) / distance evaluations)")
	fmt.Println()
	fmt.Printf("k = published number of classes; pass limit 300 (all runs converge).\n\n")
	fmt.Println(solverHeader)
	ks := map[string]int{"s1": 15, "s2": 15, "s3": 15, "s4": 15, "a1": 20, "a2": 35, "a3": 50, "unbalance": 8, "letter": 26, "iris": 3, "wine": 3, "seeds": 3}
	for _, n := range names {
		s, err := reference.Load(n)
		if err != nil {
			fmt.Fprintln(os.Stderr, "benchreport: skipping", n+":", err)
			continue
		}
		r, d := s.X.Dims()
		c.solvers(fmt.Sprintf("%s (%d×%d, k=%d)", n, r, d, ks[n]), s.X, ks[n], 300)
	}
	fmt.Println()
}

func (c config) grid(ns, ds, ks []int) {
	type cell struct{ n, d, k int }
	var kern, work []cell
	fmt.Println("## Grid: seeded blobs (speed-up over Lloyd: wall time (wall time minus seeding) / distance evaluations)")
	fmt.Println()
	fmt.Printf("Data: internal/synth.Blobs(n, d, %d, 1); one restart, seed 1, at most %d passes, 2 workers.\n\n", synth.GridClusters, c.iters)
	fmt.Println(solverHeader)
	for _, n := range ns {
		for _, d := range ds {
			var x *mat.Dense
			for _, k := range ks {
				if gf := 2 * float64(n) * float64(d) * float64(k) * float64(c.iters) / 1e9; gf > c.maxGFLOP {
					fmt.Printf("| n=%s d=%d k=%d | skipped: Lloyd would need up to %.0f GFLOP (-max-gflop %.0f) |\n", exp(n), d, k, gf, c.maxGFLOP)
					continue
				}
				if x == nil {
					x = synth.Blobs(n, d, synth.GridClusters, 1)
				}
				c.solvers(fmt.Sprintf("n=%s d=%d k=%d", exp(n), d, k), x, k, c.iters)
				kern = append(kern, cell{n, d, k})
				if n >= c.workersN && c.workersD[d] && c.workersK[k] {
					work = append(work, cell{n, d, k})
				}
			}
			runtime.GC()
		}
	}
	fmt.Println()
	fmt.Println("## Assignment kernel vs gonum Dgemm vs naive loop (GFLOP/s, 2·rows·d·k flops)")
	fmt.Println()
	fmt.Printf("Rows: min(n, %d) (naive: min(n, %d)); centers: the first k rows. Kernel = nearest.Searcher.Assign (shift, dot products, fused argmin, rechecks) in tiles as Lloyd runs it; Dgemm = blas64.Gemm(NoTrans, Trans) writing the rows×k product; naive = i, j, t triple loop writing the rows×k product. Threads: GOMAXPROCS 1, then 2 (kernel: rows split in two goroutines).\n\n", c.rows, c.naiveRows)
	fmt.Println("| d | k | kernel 1T | Dgemm 1T | naive 1T | kernel ÷ peak 1T | kernel ÷ Dgemm 1T | kernel 2T | Dgemm 2T | kernel ÷ Dgemm 2T |\n|---|---|---|---|---|---|---|---|---|---|")
	seen := map[[2]int]bool{}
	for _, ce := range kern {
		if seen[[2]int{ce.d, ce.k}] {
			continue
		}
		seen[[2]int{ce.d, ce.k}] = true
		c.kernelRow(ce.d, ce.k)
	}
	fmt.Println()
	if len(work) == 0 {
		return
	}
	fmt.Println("## Workers: wall time with 1 worker ÷ with 2 workers (in brackets: without k-means++ seeding, timed alone on the same workers)")
	fmt.Println()
	fmt.Println("| cell | seeding ms (1 / 2 workers) | Lloyd | Elkan | Hamerly | Yinyang |\n|---|---|---|---|---|---|")
	for _, ce := range work {
		x := synth.Blobs(ce.n, ce.d, synth.GridClusters, 1)
		seed1, seed2 := c.seedSecs(x, ce.k, 1), c.seedSecs(x, ce.k, 2)
		cells := []string{fmt.Sprintf("n=%s d=%d k=%d", exp(ce.n), ce.d, ce.k), ms(seed1) + " / " + ms(seed2)}
		for _, m := range methods {
			one := c.cluster(x, ce.k, c.iters, 1, m)
			two := c.cluster(x, ce.k, c.iters, 2, m)
			cells = append(cells, fmt.Sprintf("%.2f× (%.2f×)", one.secs/two.secs, passes(one.secs, seed1)/passes(two.secs, seed2)))
		}
		fmt.Println("| " + strings.Join(cells, " | ") + " |")
		runtime.GC()
	}
	fmt.Println()
}

// kernelRow times the kernel, Dgemm and the naive loop on one d×k shape.
func (c config) kernelRow(d, k int) {
	n := max(c.rows, k)
	x := synth.Blobs(n, d, synth.GridClusters, 2).RawMatrix().Data
	cs := x[:k*d]
	flops := func(rows int) float64 { return 2 * float64(rows) * float64(d) * float64(k) }
	var packed nearest.Centers
	packed.Pack(cs, k, d)
	direct := func(i, j int) float64 { return distance.SqEuclidean(x[i*d:(i+1)*d], cs[j*d:(j+1)*d]) }
	kernel := func(lo, hi int) {
		var s nearest.Searcher
		tile := min(256, max(16, (8192/d)&^3))
		dst := make([]int, tile)
		for t0 := lo; t0 < hi; t0 += tile {
			t1 := min(hi, t0+tile)
			s.Assign(dst, x[t0*d:t1*d], t1-t0, &packed, func(i, j int) float64 { return direct(t0+i, j) })
		}
	}
	xs := blas64.General{Rows: n, Cols: d, Stride: d, Data: x}
	cm := blas64.General{Rows: k, Cols: d, Stride: d, Data: cs}
	out := blas64.General{Rows: n, Cols: k, Stride: k, Data: make([]float64, n*k)}
	gemm := func() { blas64.Gemm(blas.NoTrans, blas.Trans, 1, xs, cm, 0, out) }
	nr := min(n, c.naiveRows)
	naive := func() {
		for i := range nr {
			xi := x[i*d : (i+1)*d]
			for j := range k {
				var s float64
				for t := range d {
					s += xi[t] * cs[j*d+t]
				}
				out.Data[i*k+j] = s
			}
		}
	}
	prev := runtime.GOMAXPROCS(1)
	k1 := flops(n) / c.best(func() { kernel(0, n) })
	g1 := flops(n) / c.best(gemm)
	n1 := flops(nr) / c.best(naive)
	runtime.GOMAXPROCS(2)
	k2 := flops(n) / c.best(func() {
		var wg sync.WaitGroup
		wg.Go(func() { kernel(0, n/2) })
		wg.Go(func() { kernel(n/2, n) })
		wg.Wait()
	})
	g2 := flops(n) / c.best(gemm)
	runtime.GOMAXPROCS(prev)
	fmt.Printf("| %d | %d | %.2f | %.2f | %.2f | %.0f%% | %.2f | %.2f | %.2f | %.2f |\n", d, k, k1/1e9, g1/1e9, n1/1e9, 100*k1/c.peak, k1/g1, k2/1e9, g2/1e9, k2/g2)
}

// peakRate returns the one-thread rate of f64.PeakLoop in flop/s (the
// fastest of five runs).
func peakRate() float64 {
	prev := runtime.GOMAXPROCS(1)
	defer runtime.GOMAXPROCS(prev)
	best := 0.0
	for range 5 {
		start := time.Now()
		flops := f64.PeakLoop(1 << 22)
		best = math.Max(best, flops/time.Since(start).Seconds())
	}
	return best
}

// passes prints the Lloyd pass table: for each d:k shape, n rows of the
// 50-blob mixture from one fixed start (rows j·n/k), the time of one pass
// (a 20-pass Cluster call minus a 10-pass one, over 10, so that fixed
// costs cancel) on 1 and 2 workers, and whole Cluster calls (Lloyd and
// the automatic choice, k-means++ seeding, at most -iters passes).
func (c config) passes(n int, shapes [][2]int) {
	fmt.Printf("## Lloyd pass and whole Cluster, n=%s (rate: 2·n·d·k per pass)\n\n", exp(n))
	fmt.Println("| d | k | pass ms 1W | GFLOP/s 1W | ÷ peak | pass ms 2W | 1W ÷ 2W | Cluster Lloyd ms 1W / 2W | Cluster auto ms 1W / 2W (pick) |\n|---|---|---|---|---|---|---|---|---|")
	for _, sh := range shapes {
		d, k := sh[0], sh[1]
		x := synth.Blobs(n, d, synth.GridClusters, 1)
		start := mat.NewDense(k, d, nil)
		for j := range k {
			start.SetRow(j, x.RawRowView(j*(n/k)))
		}
		timed := func(passes, workers int) float64 {
			best := math.Inf(1)
			for range c.reps {
				t0 := time.Now()
				res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: k, Seeder: seeding.Given{Centers: start}},
					&kmeans.Settings{Restarts: 1, MaxIterations: passes, Workers: workers, SwapTrials: -1}, kmeans.Lloyd{})
				if err != nil {
					fmt.Fprintln(os.Stderr, "benchreport:", err)
					os.Exit(1)
				}
				if res.Iterations != passes {
					fmt.Fprintf(os.Stderr, "benchreport: d=%d k=%d converged after %d passes\n", d, k, res.Iterations)
					os.Exit(1)
				}
				best = math.Min(best, time.Since(t0).Seconds())
			}
			return best
		}
		pass := func(workers int) float64 { return math.Max(timed(20, workers)-timed(10, workers), 1e-9) / 10 }
		p1, p2 := pass(1), pass(2)
		rate := 2 * float64(n) * float64(d) * float64(k) / p1
		l1, l2 := c.cluster(x, k, c.iters, 1, kmeans.Lloyd{}), c.cluster(x, k, c.iters, 2, kmeans.Lloyd{})
		a1, a2 := c.cluster(x, k, c.iters, 1, nil), c.cluster(x, k, c.iters, 2, nil)
		fmt.Printf("| %d | %d | %.2f | %.1f | %.0f%% | %.2f | %.2f× | %s / %s | %s / %s (%s) |\n", d, k, p1*1e3, rate/1e9, 100*rate/c.peak, p2*1e3, p1/p2,
			ms(l1.secs), ms(l2.secs), ms(a1.secs), ms(a2.secs), a1.method)
		runtime.GC()
	}
	fmt.Println()
}

// parseShapes parses "d:k,d:k".
func parseShapes(s string) [][2]int {
	var out [][2]int
	for _, f := range strings.Split(s, ",") {
		dk := strings.Split(strings.TrimSpace(f), ":")
		if len(dk) != 2 {
			fmt.Fprintf(os.Stderr, "benchreport: bad shape %q (want d:k)\n", f)
			os.Exit(2)
		}
		v := parseInts(dk[0] + "," + dk[1])
		out = append(out, [2]int{v[0], v[1]})
	}
	return out
}

// best returns the fastest of reps+1 timings of f in seconds (the first
// call warms up caches).
func (c config) best(f func()) float64 {
	b := math.Inf(1)
	for range c.reps + 1 {
		start := time.Now()
		f()
		b = math.Min(b, time.Since(start).Seconds())
	}
	return b
}

func ms(s float64) string { return fmt.Sprintf("%.1f", s*1e3) }

func exp(n int) string {
	e := 0
	m := n
	for m >= 10 && m%10 == 0 {
		m /= 10
		e++
	}
	if m == 1 {
		return fmt.Sprintf("1e%d", e)
	}
	return strconv.Itoa(n)
}

func parseInts(s string) []int {
	var out []int
	for _, f := range strings.Split(s, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || v < 1 {
			fmt.Fprintf(os.Stderr, "benchreport: bad number %q\n", f)
			os.Exit(2)
		}
		out = append(out, int(v))
	}
	return out
}

func cpuName() string {
	b, err := os.ReadFile("/proc/cpuinfo")
	if err != nil {
		return runtime.GOARCH
	}
	for _, line := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(line, "model name") {
			if i := strings.IndexByte(line, ':'); i >= 0 {
				return strings.TrimSpace(line[i+1:])
			}
		}
	}
	return runtime.GOARCH
}

// float32 prints the float32-vs-float64 table: for each d:k shape, n rows
// of the 50-blob mixture rounded to float32 (kmeans.Dense32Of) and their
// float64 conversion (mat.DenseCopyOf, the same values), one Lloyd pass on
// one worker (a 20-pass run minus a 10-pass run from one fixed start, over
// 10) and whole Cluster calls (nil Method, k-means++ seeding, one restart,
// at most -iters passes) on 1 and 2 workers. The two widths are measured
// alternately, each the fastest of -reps, and must give the same cost and
// passes (the command stops otherwise).
func (c config) float32(n int, shapes [][2]int) {
	fmt.Printf("## Float32 rows vs float64 rows, n=%s (f32 kernel: %s)\n\n", exp(n), f32.Kernel())
	fmt.Println("Same values in both widths (float32 data and its float64 conversion); ratio = float64 time ÷ float32 time, both measured alternately in this run.")
	fmt.Println()
	fmt.Println("| d | k | pass ms f64 / f32 (1W) | pass ratio | GFLOP/s f32 1W (÷ f32 peak) | Cluster ms f64 / f32 1W | ratio 1W | Cluster ms f64 / f32 2W | ratio 2W | passes |\n|---|---|---|---|---|---|---|---|---|---|")
	peak32 := peakRate32()
	for _, sh := range shapes {
		d, k := sh[0], sh[1]
		x32 := kmeans.Dense32Of(synth.Blobs(n, d, synth.GridClusters, 1))
		x64 := mat.DenseCopyOf(x32)
		start := mat.NewDense(k, d, nil)
		for j := range k {
			start.SetRow(j, x64.RawRowView(j*(n/k)))
		}
		call := func(x mat.Matrix, seeder seeding.Seeder, passes, workers int, m kmeans.Method) (float64, *kmeans.Result) {
			t0 := time.Now()
			res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: k, Seeder: seeder},
				&kmeans.Settings{Restarts: 1, Seed: 1, MaxIterations: passes, Workers: workers, SwapTrials: -1}, m)
			secs := time.Since(t0).Seconds()
			if err != nil {
				fmt.Fprintln(os.Stderr, "benchreport:", err)
				os.Exit(1)
			}
			return secs, res
		}
		// best runs f64 and f32 alternately reps times and returns the
		// fastest of each; the results must agree.
		best := func(seeder seeding.Seeder, passes, workers int, m kmeans.Method) (t64, t32 float64, iters int) {
			t64, t32 = math.Inf(1), math.Inf(1)
			for range c.reps {
				a, r64 := call(x64, seeder, passes, workers, m)
				b, r32 := call(x32, seeder, passes, workers, m)
				if r64.Cost != r32.Cost || r64.Iterations != r32.Iterations {
					fmt.Fprintf(os.Stderr, "benchreport: float32 differs from float64 at d=%d k=%d\n", d, k)
					os.Exit(1)
				}
				t64, t32, iters = math.Min(t64, a), math.Min(t32, b), r64.Iterations
			}
			return t64, t32, iters
		}
		given := seeding.Given{Centers: start}
		a20, b20, _ := best(given, 20, 1, kmeans.Lloyd{})
		a10, b10, _ := best(given, 10, 1, kmeans.Lloyd{})
		p64, p32 := math.Max(a20-a10, 1e-9)/10, math.Max(b20-b10, 1e-9)/10
		rate := 2 * float64(n) * float64(d) * float64(k) / p32
		w1a, w1b, iters := best(nil, c.iters, 1, nil)
		w2a, w2b, _ := best(nil, c.iters, 2, nil)
		fmt.Printf("| %d | %d | %.2f / %.2f | %.2f× | %.1f (%.0f%%) | %s / %s | %.2f× | %s / %s | %.2f× | %d |\n", d, k, p64*1e3, p32*1e3, p64/p32,
			rate/1e9, 100*rate/peak32, ms(w1a), ms(w1b), w1a/w1b, ms(w2a), ms(w2b), w2a/w2b, iters)
		runtime.GC()
	}
	fmt.Println()
}

// peakRate32 returns the one-thread rate of f32.PeakLoop in flop/s (the
// fastest of five runs).
func peakRate32() float64 {
	prev := runtime.GOMAXPROCS(1)
	defer runtime.GOMAXPROCS(prev)
	best := 0.0
	for range 5 {
		start := time.Now()
		flops := f32.PeakLoop(1 << 22)
		best = math.Max(best, flops/time.Since(start).Seconds())
	}
	return best
}
