package kbeam

import (
	"math"
	"math/rand/v2"
	"os"
	"reflect"
	"testing"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/log"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/register"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
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
			x[i*g.D+j] = g.center(c, j) + rnd.NormFloat64()
		}
	}
	return Block{Seq: uint64(b), First: uint64(lo), X: x}
}

// center is coordinate j of blob c.
func (g *genFn) center(c, j int) float64 {
	rnd := rand.New(rand.NewPCG(g.Seed^0xc0ffee, uint64(c*g.D+j)))
	return 20 * rnd.Float64()
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
	X    []float64
	W    []float64
	D    int
	Rows int
}

func (f *matrixFn) ProcessElement(_ []byte, emit func(Block)) {
	n := len(f.X) / f.D
	for b := 0; b*f.Rows < n; b++ {
		lo, hi := b*f.Rows, min(n, (b+1)*f.Rows)
		blk := Block{Seq: uint64(b), First: uint64(lo), X: f.X[lo*f.D : hi*f.D]}
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
// exactly passes passes from given centers: one restart, and no
// refinement after Lloyd where the core has one (its Settings.SwapTrials,
// -1 turning it off, exists on branches that this module may be built
// against; set it when present).
func lloydSettings(passes int) *kmeans.Settings {
	s := &kmeans.Settings{Restarts: 1, MaxIterations: passes}
	if f := reflect.ValueOf(s).Elem().FieldByName("SwapTrials"); f.IsValid() && f.CanSet() {
		f.SetInt(-1)
	}
	return s
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
