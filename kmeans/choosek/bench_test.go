package choosek

import (
	"context"
	"testing"
	"time"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// benchSweepRows is the size of the Riverton Bikes network of the sweep
// benchmarks (invented data, six usage features).
const benchSweepRows = 20000

// benchSweepKs are the swept ks.
var benchSweepKs = []int{1, 2, 3, 4, 5, 6, 7, 8}

func benchSweepProblem() kmeans.Problem {
	_, X := bikeshare.Generate(benchSweepRows, 1)
	return kmeans.Problem{Data: X, Scaler: &scale.ZScore{}}
}

// BenchmarkSweep20000x6 measures, in the same run, one default Cluster at
// k = 8 and a default Sweep over k = 1..8 on 20 000 stations × 6 features,
// and reports their ratio (sweep/cluster): the cost of choosing k in units
// of one clustering.
func BenchmarkSweep20000x6(b *testing.B) {
	p := benchSweepProblem()
	ctx := context.Background()
	var cluster, sweep time.Duration
	b.ReportAllocs()
	for b.Loop() {
		q := p
		q.K = benchSweepKs[len(benchSweepKs)-1]
		t0 := time.Now()
		if _, err := kmeans.Cluster(ctx, q, nil, nil); err != nil {
			b.Fatal(err)
		}
		t1 := time.Now()
		if _, err := Sweep(ctx, p, benchSweepKs, nil, nil, nil); err != nil {
			b.Fatal(err)
		}
		cluster += t1.Sub(t0)
		sweep += time.Since(t1)
	}
	b.ReportMetric(float64(sweep)/float64(cluster), "sweep/cluster")
	b.ReportMetric(cluster.Seconds()/float64(b.N), "cluster-s/op")
	b.ReportMetric(sweep.Seconds()/float64(b.N), "sweep-s/op")
}
