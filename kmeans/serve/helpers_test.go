package serve

import (
	"bytes"
	"context"
	"encoding/json"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// demoModel clusters 500 demo stations (z-scored, k = 5) and names the
// features; it returns the model, the clustering and the data.
func demoModel(t testing.TB, weights bool) (*kmeans.Model, *kmeans.Result, *mat.Dense) {
	_, x := bikeshare.Generate(500, 11)
	var w []float64
	if weights {
		n, _ := x.Dims()
		w = make([]float64, n)
		for i := range w {
			w[i] = float64(i%4) / 2 // includes weight-zero rows
		}
	}
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 5, Weights: w, Scaler: &scale.ZScore{}}, &kmeans.Settings{Restarts: 3, Seed: 3}, nil)
	require.NoError(t, err)
	m, err := res.Model.WithFeatures(bikeshare.Features())
	require.NoError(t, err)
	return m.WithCreated(time.Date(2025, 3, 1, 9, 30, 0, 0, time.UTC)), res, x
}

// blobs returns n rows of dimension d drawn around k well-separated centres
// (invented data for property tests only).
func blobs(n, d, k int, seed uint64) *mat.Dense {
	rnd := rand.New(rand.NewPCG(seed, 7))
	centres := make([]float64, k*d)
	for i := range centres {
		centres[i] = rnd.Float64() * 100
	}
	x := mat.NewDense(n, d, nil)
	for i := range n {
		c := rnd.IntN(k)
		for j := range d {
			x.Set(i, j, centres[c*d+j]+rnd.NormFloat64()*3)
		}
	}
	return x
}

// v1Model decodes a version 1 document (Euclidean, no scaler) with the
// given centers: a model with no schema and no training summary, built
// through the public decoder.
func v1Model(t testing.TB, centers [][]float64) *kmeans.Model {
	doc, err := json.Marshal(map[string]any{
		"format": "centroid/kmeans-model", "version": 1, "metric": "euclidean",
		"k": len(centers), "dim": len(centers[0]), "centers": centers, "scaler": nil,
	})
	require.NoError(t, err)
	m, err := kmeans.ReadModel(bytes.NewReader(doc), nil)
	require.NoError(t, err)
	return m
}

// clusterRows clusters the given rows (no scaler) into k clusters; the
// model carries the training summary of that clustering.
func clusterRows(t testing.TB, rows [][]float64, k int) (*kmeans.Model, *kmeans.Result) {
	x := mat.NewDense(len(rows), len(rows[0]), nil)
	for i, r := range rows {
		x.SetRow(i, r)
	}
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: k}, &kmeans.Settings{Seed: 1}, nil)
	require.NoError(t, err)
	return res.Model, res
}

// Serving benchmarks. Rows rotate through 4096 distinct training rows so
// that branch predictors cannot learn one answer.
const serveRows = 4096

func serveModel(b *testing.B, d, k int, sc scale.Scaler) (*kmeans.Model, *mat.Dense) {
	x := blobs(serveRows, d, k, 21)
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: k, Scaler: sc}, &kmeans.Settings{Restarts: 1, Seed: 1}, nil)
	if err != nil {
		b.Fatal(err)
	}
	return res.Model, x
}
