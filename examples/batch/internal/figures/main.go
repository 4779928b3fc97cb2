package main

import (
	"bufio"
	"context"
	"flag"
	"fmt"
	"image/color"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"
	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/kmeans/stream/parquet"
	"github.com/centroidlab/centroid/seeding"
)

func main() {
	mb := flag.Bool("minibatch", false, "mini-batch against full Lloyd on a 10⁷ × 16 mixture")
	files := flag.Bool("files", false, "stream CSV and Parquet about 10× the memory budget")
	scaleRun := flag.Bool("scale", false, "10⁸ × 8 Parquet with a 1 GiB budget")
	n := flag.Int("n", 10_000_000, "rows of the mini-batch data")
	scaleRows := flag.Int("scale-rows", 100_000_000, "rows of the scale file")
	png := flag.String("png", filepath.Join("docs", "minibatch.png"), "where to draw the mini-batch curve")
	flag.Parse()
	ctx := context.Background()
	var err error
	switch {
	case *mb:
		err = miniBatchFigure(ctx, *n, *png)
	case *files:
		err = filesFigure(ctx)
	case *scaleRun:
		err = scaleFigure(ctx, *scaleRows)
	default:
		flag.Usage()
		os.Exit(2)
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "figures:", err)
		os.Exit(1)
	}
}

// point is one cost-against-time measurement.
type point struct{ secs, cost float64 }

// miniBatchFigure: the same k-means‖ seeds, full Lloyd in memory against
// mini-batch with growing numbers of batches; cost of every model measured
// exactly over all rows (not timed).
func miniBatchFigure(ctx context.Context, n int, png string) error {
	// More true clusters than k, so that Lloyd has work to do after good
	// seeds: a mixture of 50 Gaussians (synth.Blobs) summarised by 16.
	const d, k, mixture = 16, 16, 50
	fmt.Printf("## Mini-batch against full Lloyd: %d × %d mixture of %d Gaussians, k = %d\n\n", n, d, mixture, k)
	X := synth.Blobs(n, d, mixture, 2026)
	t0 := time.Now()
	seeds := mat.NewDense(k, d, nil)
	if err := (seeding.Parallel{Workers: 2}).Seed(seeds, X, nil, distance.Euclidean{}, rand.New(rand.NewPCG(1, 1))); err != nil {
		return err
	}
	fmt.Printf("k-means‖ seeding in memory: %.2f s\n\n", time.Since(t0).Seconds())
	var lloyd []point
	start := time.Now()
	res, err := kmeans.Cluster(ctx, kmeans.Problem{Data: X, K: k, Seeder: seeding.Given{Centers: seeds}},
		&kmeans.Settings{Restarts: 1, Progress: func(p kmeans.Progress) {
			lloyd = append(lloyd, point{time.Since(start).Seconds(), p.Cost})
		}}, kmeans.Lloyd{})
	if err != nil {
		return err
	}
	lloydSecs := time.Since(start).Seconds()
	fmt.Printf("full Lloyd: %d passes, %.3f s, cost %.6g (%s)\n\n", res.Iterations, lloydSecs, res.Cost, res.Status)
	score := func(c *mat.Dense) (float64, error) {
		src, err := stream.NewMatrix(X, nil)
		if err != nil {
			return 0, err
		}
		r, err := stream.Cluster(ctx, stream.Problem{Source: src, K: k, Centers: c}, &stream.Settings{MaxPasses: 1, BlockRows: 1 << 16}, stream.Exact{})
		if err != nil {
			return 0, err
		}
		return r.Cost, nil
	}
	fmt.Println("| batches (1024 rows) | rows used | time (s) | time / Lloyd's | cost / Lloyd's |")
	fmt.Println("|---:|---:|---:|---:|---:|")
	var mbPoints []point
	var stopped point
	for _, batches := range []int{10, 25, 50, 100, 200, 400, 800, 1600, 3200, 6400, 0} {
		rows := make(chan []float64, 4096)
		go func() {
			defer close(rows)
			for i := range n {
				rows <- X.RawRowView(i)
			}
		}()
		src, err := stream.NewChan(rows, d, nil)
		if err != nil {
			return err
		}
		patience := -1
		if batches == 0 {
			patience = 0 // the default stopping rule
		}
		t := time.Now()
		r, err := stream.Cluster(ctx, stream.Problem{Source: src, K: k, Centers: seeds}, &stream.Settings{Seed: 1, SampleRows: 1024},
			stream.MiniBatch{MaxBatches: batches, Patience: patience})
		secs := time.Since(t).Seconds()
		src.Close()
		for range rows { // drain the producer
		}
		if err != nil {
			return err
		}
		c, err := score(r.Model.ScaledCenters())
		if err != nil {
			return err
		}
		label := strconv.Itoa(batches)
		if batches == 0 {
			label = fmt.Sprintf("%d (stopping rule, %s)", r.Batches, r.Status)
			stopped = point{secs, c}
		} else {
			mbPoints = append(mbPoints, point{secs, c})
		}
		fmt.Printf("| %s | %d | %.3f | %.4f | %.4f |\n", label, r.Rows, secs, secs/lloydSecs, c/res.Cost)
	}
	fmt.Println()
	return drawCurve(png, lloyd, mbPoints, stopped, res.Cost)
}

func drawCurve(path string, lloyd, mb []point, stopped point, final float64) error {
	p := gplot.New()
	p.Title.Text = "Cost against time, 10⁷ × 16 mixture of 50, k = 16, same k-means|| seeds"
	p.X.Label.Text = "seconds (log scale)"
	p.Y.Label.Text = "cost above full Lloyd's final cost (%)"
	p.X.Scale = gplot.LogScale{}
	p.X.Tick.Marker = gplot.LogTicks{Prec: -1}
	p.Add(plotter.NewGrid())
	line := func(pts []point, c color.Color, name string) error {
		xy := make(plotter.XYs, len(pts))
		for i, q := range pts {
			xy[i] = plotter.XY{X: math.Max(q.secs, 1e-3), Y: math.Min(100*(q.cost/final-1), 10)}
		}
		l, s, err := plotter.NewLinePoints(xy)
		if err != nil {
			return err
		}
		l.Color, s.Color = c, c
		p.Add(l, s)
		p.Legend.Add(name, l, s)
		return nil
	}
	blue := color.RGBA{0, 114, 178, 255}   // colour-blind safe (Okabe–Ito)
	orange := color.RGBA{230, 159, 0, 255} // colour-blind safe (Okabe–Ito)
	if err := line(lloyd, blue, "full Lloyd, per pass"); err != nil {
		return err
	}
	if err := line(mb, orange, "mini-batch, by number of batches"); err != nil {
		return err
	}
	st, err := plotter.NewScatter(plotter.XYs{{X: math.Max(stopped.secs, 1e-3), Y: math.Min(100*(stopped.cost/final-1), 10)}})
	if err != nil {
		return err
	}
	st.Shape = draw.CrossGlyph{}
	st.Color = color.Black
	st.Radius = vg.Points(5)
	p.Add(st)
	p.Legend.Add("mini-batch, default stopping rule", st)
	p.Legend.Top, p.Legend.Left = true, true
	p.Y.Min, p.Y.Max = -0.5, 10 // points above 10% are drawn at 10%
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	if err := p.Save(8*vg.Inch, 5*vg.Inch, path); err != nil {
		return err
	}
	fmt.Printf("curve drawn to %s\n\n", path)
	return nil
}

// buildBatch builds the batch command into dir.
func buildBatch(dir string) (string, error) {
	bin := filepath.Join(dir, "batch")
	cmd := exec.Command("go", "build", "-o", bin, "./examples/batch")
	cmd.Stderr = os.Stderr
	return bin, cmd.Run()
}

// runResult is one run of the command.
type runResult struct {
	secs   float64
	rssMiB float64
	out    string
	passes []passLine
}

type passLine struct {
	pass      int
	stage     string
	rowsPerS  float64
	cost      float64
	hasCostOf bool
}

var passRe = regexp.MustCompile(`msg="pass done" pass=(\d+) stage=(\w+) rows=\d+ rows_per_s=([0-9.e+]+)(?: cost=([0-9.e+]+))?`)

var rssRe = regexp.MustCompile(`Maximum resident set size \(kbytes\): (\d+)`)

// runBatch runs the command under /usr/bin/time -v and reads its peak RSS
// (the child's own: getrusage of a Go parent's child also counts the
// parent's pages at fork) and its pass lines.
func runBatch(bin string, args ...string) (*runResult, error) {
	cmd := exec.Command("/usr/bin/time", append([]string{"-v", bin}, args...)...)
	cmd.Env = append(os.Environ(), "GOMEMLIMIT=")
	var out strings.Builder
	cmd.Stdout = &out
	stderr, err := cmd.StderrPipe()
	if err != nil {
		return nil, err
	}
	t := time.Now()
	if err := cmd.Start(); err != nil {
		return nil, err
	}
	r := &runResult{}
	sc := bufio.NewScanner(stderr)
	var tail []string
	for sc.Scan() {
		line := sc.Text()
		if m := rssRe.FindStringSubmatch(line); m != nil {
			kb, _ := strconv.ParseFloat(m[1], 64)
			r.rssMiB = kb / 1024
		}
		if m := passRe.FindStringSubmatch(line); m != nil {
			pl := passLine{stage: m[2]}
			pl.pass, _ = strconv.Atoi(m[1])
			pl.rowsPerS, _ = strconv.ParseFloat(m[3], 64)
			if m[4] != "" {
				pl.cost, _ = strconv.ParseFloat(m[4], 64)
				pl.hasCostOf = true
			}
			r.passes = append(r.passes, pl)
		}
		tail = append(tail, line)
		if len(tail) > 20 {
			tail = tail[1:]
		}
	}
	err = cmd.Wait()
	r.secs = time.Since(t).Seconds()
	r.out = out.String()
	if err != nil {
		return r, fmt.Errorf("%s %s: %w\n%s\n%s", bin, strings.Join(args, " "), err, r.out, strings.Join(tail, "\n"))
	}
	return r, nil
}

// meanRate is the mean rows/s of the passes of a stage.
func (r *runResult) meanRate(stage string) float64 {
	var s float64
	n := 0
	for _, p := range r.passes {
		if p.stage == stage {
			s += p.rowsPerS
			n++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return s / float64(n)
}

// writeFiles writes X as CSV (x0…) and Parquet into dir.
func writeFiles(dir string, X *mat.Dense) (csvPath, pqPath string, err error) {
	n, d := X.Dims()
	names := make([]string, d)
	fields := make([]parquet.Field, d)
	for j := range d {
		names[j] = fmt.Sprintf("x%d", j)
		fields[j] = parquet.Field{Name: names[j], Kind: parquet.Float64}
	}
	csvPath = filepath.Join(dir, "rows.csv")
	f, err := os.Create(csvPath)
	if err != nil {
		return "", "", err
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString(strings.Join(names, ",") + "\n")
	var b []byte
	for i := range n {
		b = b[:0]
		for j, v := range X.RawRowView(i) {
			if j > 0 {
				b = append(b, ',')
			}
			b = strconv.AppendFloat(b, v, 'g', -1, 64)
		}
		b = append(b, '\n')
		w.Write(b)
	}
	if err := w.Flush(); err != nil {
		return "", "", err
	}
	f.Close()
	pqPath = filepath.Join(dir, "rows.parquet")
	if err := writeParquet(pqPath, fields, n, func(i int) []float64 { return X.RawRowView(i) }); err != nil {
		return "", "", err
	}
	return csvPath, pqPath, nil
}

func writeParquet(path string, fields []parquet.Field, n int, row func(i int) []float64) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer f.Close()
	bw := bufio.NewWriterSize(f, 1<<20)
	w, err := parquet.NewWriter(bw, fields, nil)
	if err != nil {
		return err
	}
	for i := range n {
		if err := w.WriteFloats(row(i)); err != nil {
			return err
		}
	}
	if err := w.Close(); err != nil {
		return err
	}
	return bw.Flush()
}

func fileMiB(path string) float64 {
	st, err := os.Stat(path)
	if err != nil {
		return math.NaN()
	}
	return float64(st.Size()) / (1 << 20)
}

// filesFigure streams a CSV about 10× the budget, and the same rows as
// Parquet, and compares the pass rates with an in-memory Lloyd pass.
func filesFigure(ctx context.Context) error {
	const d, k, budget, budgetMiB = 8, 8, "32MiB", 32
	n := 2_400_000
	dir, err := os.MkdirTemp("", "centroid-files")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	bin, err := buildBatch(dir)
	if err != nil {
		return err
	}
	X := synth.Blobs(n, d, k, 7)
	csvPath, pqPath, err := writeFiles(dir, X)
	if err != nil {
		return err
	}
	// In-memory Lloyd pass rate on the same rows, same process kind: run
	// through the command with a budget that fits, 1 restart, exact.
	// The time between two progress calls is one assignment pass and one
	// update; the first call also follows the seeding, so it is left out.
	var stamps []time.Time
	_, err = kmeans.Cluster(ctx, kmeans.Problem{Data: X, K: k}, &kmeans.Settings{Restarts: 1, Seed: 1, Workers: 2,
		Progress: func(kmeans.Progress) { stamps = append(stamps, time.Now()) }}, kmeans.Lloyd{})
	if err != nil {
		return err
	}
	if len(stamps) < 2 {
		return fmt.Errorf("in-memory Lloyd made %d passes; need 2 to time one", len(stamps))
	}
	memRate := float64(n) * float64(len(stamps)-1) / stamps[len(stamps)-1].Sub(stamps[0]).Seconds()
	fmt.Printf("## Streaming files about 10× the memory budget (%s), %d rows × %d columns, k = %d\n\n", budget, n, d, k)
	fmt.Printf("in-memory Lloyd pass rate (kmeans.Lloyd, same rows, %d passes timed): %.3g rows/s\n\n", len(stamps)-1, memRate)
	fmt.Println("| input | file size | × budget | peak RSS (MiB) | RSS / budget | Lloyd pass rows/s | / in-memory | seeding pass rows/s | passes | wall (s) |")
	fmt.Println("|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|")
	for _, in := range []string{csvPath, pqPath} {
		r, err := runBatch(bin, "cluster", "-in", in, "-k", strconv.Itoa(k), "-seed", "1", "-model", filepath.Join(dir, "m.json"), "-memory", budget, "-method", "exact")
		if err != nil {
			return err
		}
		size := fileMiB(in)
		lr := r.meanRate("lloyd")
		fmt.Printf("| %s | %.0f MiB | %.1f | %.1f | %.2f | %.3g | %.3f | %.3g | %d | %.1f |\n", filepath.Ext(in), size, size/budgetMiB, r.rssMiB, r.rssMiB/budgetMiB, lr, lr/memRate, r.meanRate("seed"), len(r.passes), r.secs)
	}
	fmt.Println()
	return nil
}

// scaleFigure writes a 10⁸ × 8 Parquet file and clusters it with a 1 GiB
// budget, exact and mini-batch only.
func scaleFigure(ctx context.Context, n int) error {
	const d, k = 8, 10
	dir, err := os.MkdirTemp("", "centroid-scale")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	bin, err := buildBatch(dir)
	if err != nil {
		return err
	}
	path := filepath.Join(dir, "big.parquet")
	fields := make([]parquet.Field, d)
	for j := range d {
		fields[j] = parquet.Field{Name: fmt.Sprintf("x%d", j), Kind: parquet.Float64}
	}
	// A mixture as synth.Blobs draws it, generated row by row.
	rnd := rand.New(rand.NewPCG(5, 5))
	centers := make([]float64, k*d)
	for i := range centers {
		centers[i] = rnd.Float64() * 100
	}
	row := make([]float64, d)
	t := time.Now()
	if err := writeParquet(path, fields, n, func(int) []float64 {
		c := centers[rnd.IntN(k)*d:]
		for j := range row {
			row[j] = c[j] + rnd.NormFloat64()*4
		}
		return row
	}); err != nil {
		return err
	}
	fmt.Printf("## Scale: %d × %d Parquet (%.1f GiB, written in %.0f s), k = %d, -memory 1GiB\n\n", n, d, fileMiB(path)/1024, time.Since(t).Seconds(), k)
	fmt.Println("| method | passes | wall (s) | peak RSS (MiB) | seeding rows/s | Lloyd / mini-batch pass rows/s | cost | cost / exact |")
	fmt.Println("|---|---:|---:|---:|---:|---:|---:|---:|")
	var exactCost float64
	for _, method := range []string{"exact", "minibatch"} {
		r, err := runBatch(bin, "cluster", "-in", path, "-k", strconv.Itoa(k), "-seed", "1", "-model", filepath.Join(dir, method+".json"), "-memory", "1GiB", "-method", method)
		if err != nil {
			return err
		}
		cost := parseCost(r.out)
		if method == "exact" {
			exactCost = cost
		}
		rate := r.meanRate("lloyd")
		if method == "minibatch" {
			rate = r.meanRate("minibatch")
		}
		fmt.Printf("| %s | %d | %.0f | %.0f | %.3g | %.3g | %.6g | %.5f |\n", method, len(r.passes), r.secs, r.rssMiB, r.meanRate("seed"), rate, cost, cost/exactCost)
	}
	fmt.Println()
	return nil
}

var costRe = regexp.MustCompile(`cost: ([0-9.e+]+)`)

func parseCost(out string) float64 {
	m := costRe.FindStringSubmatch(out)
	if m == nil {
		return math.NaN()
	}
	v, _ := strconv.ParseFloat(m[1], 64)
	return v
}
