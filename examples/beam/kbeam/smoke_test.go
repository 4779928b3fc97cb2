package kbeam

import (
	"context"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

func TestSmoke(t *testing.T) {
	g := &genFn{N: 20000, D: 4, K: 5, Rows: 1000, Seed: 3}
	x := g.matrix()
	c0 := x.Slice(0, 5, 0, 4).(*mat.Dense)
	c := mat.DenseCopyOf(c0).RawMatrix().Data
	for _, it := range []Iteration{Driven, Unrolled} {
		res, err := Cluster(context.Background(), Problem{Rows: g.source(), D: 4, K: 5, Centers: c}, &Settings{MaxPasses: 10, Iteration: it})
		require.NoError(t, err)
		ref, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 5, Seeder: seeding.Given{Centers: c0}}, lloydSettings(10), kmeans.Lloyd{})
		require.NoError(t, err)
		t.Log(it, res.Passes, res.Pipelines, res.Status, ref.Iterations, ref.Status, res.Cost, ref.Cost)
		require.Less(t, relDiff(res.Model.Centers().RawMatrix().Data, ref.Model.Centers().RawMatrix().Data), 1e-9)
	}
}
