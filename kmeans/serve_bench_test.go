package kmeans

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/scale"
)

// Serving benchmarks. Rows rotate through 4096 distinct training rows so
// that branch predictors cannot learn one answer.
const serveRows = 4096

func serveModel(b *testing.B, d, k int, sc scale.Scaler) (*Model, *mat.Dense) {
	x := blobs(serveRows, d, k, 21)
	res, err := Cluster(context.Background(), Problem{Data: x, K: k, Scaler: sc}, &Settings{Restarts: 1, Seed: 1}, nil)
	if err != nil {
		b.Fatal(err)
	}
	return res.Model, x
}

func benchmarkServeNearest(b *testing.B, d, k int, sc scale.Scaler, margin bool) {
	m, x := serveModel(b, d, k, sc)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; b.Loop(); i++ {
		row := x.RawRowView(i % serveRows)
		var err error
		if margin {
			_, err = m.Assign(row)
		} else {
			_, _, err = m.Nearest(row)
		}
		if err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkServeNearestD16K32(b *testing.B) { benchmarkServeNearest(b, 16, 32, nil, false) }
func BenchmarkServeNearestD16K32ZScore(b *testing.B) {
	benchmarkServeNearest(b, 16, 32, &scale.ZScore{}, false)
}
func BenchmarkServeAssignD16K32ZScore(b *testing.B) {
	benchmarkServeNearest(b, 16, 32, &scale.ZScore{}, true)
}
func BenchmarkServeNearestD64K256(b *testing.B) { benchmarkServeNearest(b, 64, 256, nil, false) }

// BenchmarkServeAssignBatch labels 4096 rows per operation and reports
// rows per second.
func BenchmarkServeAssignBatch(b *testing.B) {
	for _, s := range []struct{ d, k int }{{6, 5}, {16, 32}} {
		b.Run(fmt.Sprintf("d=%d/k=%d", s.d, s.k), func(b *testing.B) {
			m, x := serveModel(b, s.d, s.k, &scale.ZScore{})
			dst := make([]Assignment, serveRows)
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := m.AssignBatch(dst, x); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(serveRows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
		})
	}
}

// variantRows is the number of training rows the variant benchmarks rotate
// through.
const variantRows = 20000

// spreadBlobs returns n rows around k centers uniform in [0, 100]^d with
// standard deviation sd in every coordinate: sd = 1 gives well-separated
// clusters, sd = 20 overlapping ones.
func spreadBlobs(n, d, k int, sd float64, seed uint64) *mat.Dense {
	rnd := rand.New(rand.NewPCG(seed, 11))
	c := make([]float64, k*d)
	for i := range c {
		c[i] = rnd.Float64() * 100
	}
	x := mat.NewDense(n, d, nil)
	for i := range n {
		j := rnd.IntN(k)
		for t := range d {
			x.Set(i, t, c[j*d+t]+rnd.NormFloat64()*sd)
		}
	}
	return x
}

// serveVariants are the searches BenchmarkServeVariants compares with
// Model.Nearest: a plain scan and the pruning layers, cumulative.
var serveVariants = []struct {
	name string
	v    variant
}{
	{"plain", variant{}},
	{"abandon", variant{abandon: true}},
	{"projection", variant{abandon: true, projection: true}},
	{"skip", variant{abandon: true, projection: true, skip: true}},
}

// BenchmarkServeVariants times Model.Nearest ("nearest": the vector kernel
// with its exact recheck, or with -tags purego the interleaved scan)
// against a plain scan of one center at a time with distance.SqEuclidean's
// arithmetic ("plain") and the pruning layers of the search it replaced,
// cumulative: early abandon, projection order, center–center skips. Data:
// well-separated and overlapping clusters, rows rotating through the
// training rows; select with e.g. -bench 'ServeVariants/overlap/d=16'.
func BenchmarkServeVariants(b *testing.B) {
	for _, kind := range []struct {
		name string
		sd   float64
	}{{"separated", 1}, {"overlap", 20}} {
		for _, s := range []struct{ d, k int }{{2, 8}, {16, 32}, {64, 256}} {
			b.Run(fmt.Sprintf("%s/d=%d/k=%d", kind.name, s.d, s.k), func(b *testing.B) {
				x := spreadBlobs(variantRows, s.d, s.k, kind.sd, 3)
				res, err := Cluster(context.Background(), Problem{Data: x, K: s.k}, &Settings{Restarts: 1, Seed: 1, MaxIterations: 20}, Lloyd{})
				if err != nil {
					b.Fatal(err)
				}
				m := res.Model
				b.Run("nearest", func(b *testing.B) {
					b.ReportAllocs()
					for i := 0; b.Loop(); i++ {
						if _, _, err := m.Nearest(x.RawRowView(i % variantRows)); err != nil {
							b.Fatal(err)
						}
					}
				})
				ix := newSearchIndex(m.centers, m.k, m.d, m.kind)
				for _, v := range serveVariants {
					b.Run(v.name, func(b *testing.B) {
						b.ReportAllocs()
						var sink int
						for i := 0; b.Loop(); i++ {
							j, _, _ := m.searchVariant(ix, v.v, x.RawRowView(i%variantRows), false)
							sink += j
						}
						_ = sink
					})
				}
			})
		}
	}
}

// BenchmarkServeBuild times making a model of many centers (the serving
// search is built in newModel), at the sizes that once took seconds.
func BenchmarkServeBuild(b *testing.B) {
	for _, s := range []struct{ k, d int }{{80000, 1}, {174000, 6}} {
		b.Run(fmt.Sprintf("k=%d/d=%d", s.k, s.d), func(b *testing.B) {
			rnd := rand.New(rand.NewPCG(1, 2))
			c := make([]float64, s.k*s.d)
			for i := range c {
				c[i] = rnd.NormFloat64()
			}
			b.ReportAllocs()
			for b.Loop() {
				newModel(c, s.k, s.d, distance.Euclidean{}, nil)
			}
		})
	}
}

func BenchmarkServeReadModel(b *testing.B) {
	m, _ := serveModel(b, 16, 32, &scale.ZScore{})
	doc, err := json.Marshal(m)
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(doc)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ReadModel(bytes.NewReader(doc), nil); err != nil {
			b.Fatal(err)
		}
	}
}
