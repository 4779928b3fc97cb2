package kbeam

import (
	"encoding/csv"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"testing"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/log"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/register"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/seeding"
)

func TestMain(m *testing.M) {
	beam.Init()
	// The prism runner logs every job at Info; keep warnings and errors.
	log.SetupLogging("warn", "text")
	os.Exit(m.Run())
}

func init() {
	register.DoFn2x1[[]byte, func(Block), error](&genFn{})
	register.DoFn2x0[[]byte, func(Block)](&matrixFn{})
}

// genFn emits N rows of D values in blocks of Rows, drawn from K
// well-separated Gaussian blobs; block b draws from its own generator, so
// the rows do not depend on the order blocks are made in.
type genFn struct {
	N, D, K, Rows int
	Seed          uint64
	blobs         []float64
}

func (g *genFn) ProcessElement(_ []byte, emit func(Block)) error {
	for b := 0; b*g.Rows < g.N; b++ {
		emit(g.block(b))
	}
	return nil
}

func (g *genFn) block(b int) Block {
	lo, hi := b*g.Rows, min(g.N, (b+1)*g.Rows)
	rnd := rand.New(rand.NewPCG(g.Seed, uint64(b)))
	x := make([]float64, (hi-lo)*g.D)
	for i := range hi - lo {
		c := rnd.IntN(g.K)
		for j := range g.D {
			x[i*g.D+j] = g.centers()[c*g.D+j] + rnd.NormFloat64()
		}
	}
	return Block{Seq: uint64(b), First: uint64(lo), X: x}
}

// centers returns the K×D blob centers, uniform in [0, 20)ᴰ.
func (g *genFn) centers() []float64 {
	if g.blobs == nil {
		rnd := rand.New(rand.NewPCG(g.Seed, 0xc0ffee))
		g.blobs = make([]float64, g.K*g.D)
		for i := range g.blobs {
			g.blobs[i] = 20 * rnd.Float64()
		}
	}
	return g.blobs
}

// matrix returns the rows genFn emits, in row order.
func (g *genFn) matrix() *mat.Dense {
	x := make([]float64, 0, g.N*g.D)
	for b := 0; b*g.Rows < g.N; b++ {
		x = append(x, g.block(b).X...)
	}
	return mat.NewDense(g.N, g.D, x)
}

func (g *genFn) source() Source {
	return func(s beam.Scope) beam.PCollection {
		return beam.ParDo(s, g, beam.Impulse(s))
	}
}

// matrixFn emits the rows of a small matrix carried in the DoFn itself.
type matrixFn struct {
	X     []float64
	W     []float64
	D     int
	Rows  int
	NaNAt int // 1 + the index of a value to replace by NaN (0: none)
}

func (f *matrixFn) ProcessElement(_ []byte, emit func(Block)) {
	n := len(f.X) / f.D
	for b := 0; b*f.Rows < n; b++ {
		lo, hi := b*f.Rows, min(n, (b+1)*f.Rows)
		blk := Block{Seq: uint64(b), First: uint64(lo), X: slices.Clone(f.X[lo*f.D : hi*f.D])}
		if i := f.NaNAt - 1 - lo*f.D; f.NaNAt > 0 && i >= 0 && i < len(blk.X) {
			blk.X[i] = math.NaN()
		}
		if f.W != nil {
			blk.W = f.W[lo:hi]
		}
		emit(blk)
	}
}

// matrixSource returns a Source of the rows of x (small data only: the
// rows travel inside the pipeline's description) in blocks of rows.
func matrixSource(x *mat.Dense, w []float64, rows int) Source {
	r, c := x.Dims()
	data := make([]float64, 0, r*c)
	for i := range r {
		data = append(data, x.RawRowView(i)...)
	}
	return func(s beam.Scope) beam.PCollection {
		return beam.ParDo(s, &matrixFn{X: data, W: w, D: c, Rows: rows}, beam.Impulse(s))
	}
}

// lloydSettings are the in-memory settings that run plain Lloyd for
// exactly passes passes from given centers: one restart and no random-swap
// refinement.
func lloydSettings(passes int) *kmeans.Settings {
	return &kmeans.Settings{Restarts: 1, MaxIterations: passes, SwapTrials: -1}
}

// relDiff returns max |a−b| / max(1, max |b|) over the elements.
func relDiff(a, b []float64) float64 {
	scale := 1.0
	for _, v := range b {
		scale = math.Max(scale, math.Abs(v))
	}
	var d float64
	for i := range a {
		d = math.Max(d, math.Abs(a[i]-b[i]))
	}
	return d / scale
}

// datasetsDir returns the shared reference datasets folder:
// $CENTROID_DATASETS, or ../../../shared/datasets from this package's
// module root (examples/beam), where the core's tests find it too.
func datasetsDir() string {
	if d := os.Getenv("CENTROID_DATASETS"); d != "" {
		return d
	}
	return filepath.Join("..", "..", "..", "..", "shared", "datasets")
}

// datasetOrSkip returns the path of a reference dataset, skipping the
// test with a clear message when the folder is absent.
func datasetOrSkip(t testing.TB, name string) string {
	t.Helper()
	p := filepath.Join(datasetsDir(), name+".csv")
	if _, err := os.Stat(p); err != nil {
		t.Skipf("skipping: reference dataset %s not available (set CENTROID_DATASETS to the shared datasets folder): %v", p, err)
	}
	return p
}

// loadCSV reads the named numeric columns of a CSV file with a header,
// independently of the package's reader.
func loadCSV(t testing.TB, path string, columns []string) *mat.Dense {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	idx := make([]int, len(columns))
	for i, c := range columns {
		idx[i] = slices.Index(recs[0], c)
		if idx[i] < 0 {
			t.Fatalf("%s has no column %q", path, c)
		}
	}
	x := mat.NewDense(len(recs)-1, len(columns), nil)
	for r, rec := range recs[1:] {
		for i, j := range idx {
			v, err := strconv.ParseFloat(rec[j], 64)
			if err != nil {
				t.Fatal(err)
			}
			x.Set(r, i, v)
		}
	}
	return x
}

// plusPlus draws k initial centers from x with k-means++ (seed fixed),
// the same for the pipeline and the in-memory reference.
func plusPlus(t testing.TB, x *mat.Dense, k int, m distance.Metric) *mat.Dense {
	t.Helper()
	_, d := x.Dims()
	c := mat.NewDense(k, d, nil)
	if err := (seeding.PlusPlus{}).Seed(c, x, nil, m, rand.New(rand.NewPCG(7, 7))); err != nil {
		t.Fatal(err)
	}
	return c
}

// bruteLloyd runs passes Lloyd passes from c0 with the rule this package
// documents (an empty cluster keeps its center), written out directly:
// the nearest center by squared Euclidean distance, ties to the lower
// index, then each center the weighted mean of its rows. It returns the
// centers of the last assignment pass, its sizes and the passes run
// (stopping when no center moves).
func bruteLloyd(x *mat.Dense, w []float64, c0 *mat.Dense, passes int) ([]float64, []int, int) {
	n, d := x.Dims()
	k, _ := c0.Dims()
	cur := mat.DenseCopyOf(c0).RawMatrix().Data
	var sizes []int
	for p := 1; ; p++ {
		sum := make([]float64, k*d)
		wt := make([]float64, k)
		sizes = make([]int, k)
		for i := range n {
			row := x.RawRowView(i)
			best, bd := 0, math.Inf(1)
			for j := range k {
				var s float64
				for c := range d {
					diff := row[c] - cur[j*d+c]
					s += diff * diff
				}
				if s < bd {
					best, bd = j, s
				}
			}
			wi := 1.0
			if w != nil {
				wi = w[i]
			}
			sizes[best]++
			wt[best] += wi
			for c := range d {
				sum[best*d+c] += wi * row[c]
			}
		}
		next := slices.Clone(cur)
		for j := range k {
			if wt[j] > 0 {
				for c := range d {
					next[j*d+c] = sum[j*d+c] / wt[j]
				}
			}
		}
		if p == passes || slices.Equal(next, cur) {
			return cur, sizes, p
		}
		cur = next
	}
}

func nan() float64 { return math.NaN() }

var (
	streamErrEmpty  = stream.ErrEmpty
	streamErrColumn = stream.ErrColumn
)
