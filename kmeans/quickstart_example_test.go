package kmeans_test

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// quickStart is the README's quick start, verbatim between the markers.
func quickStart(ctx context.Context, X *mat.Dense) error {
	// quick start: begin
	// X is an n×d *mat.Dense (any mat.Matrix works) in raw units.
	res, err := kmeans.Cluster(ctx, kmeans.Problem{
		Data:     X,
		K:        2,
		Scaler:   &scale.ZScore{}, // features in different units
		Features: []string{"trips_per_day", "weekend_share"},
	}, &kmeans.Settings{Seed: 42}, nil) // nil Settings = defaults, nil Method = automatic choice
	if err != nil {
		return err
	}
	fmt.Println(res.Cost > 0, res.Sizes, res.Status)

	// Save the model; a service loads it and labels new records
	// (safe for concurrent use, no allocation).
	doc, err := json.Marshal(res.Model)
	if err != nil {
		return err
	}
	m, err := kmeans.ReadModel(bytes.NewReader(doc), nil) // size-limited, checksummed
	if err != nil {
		return err
	}
	cluster, dist, err := m.Nearest([]float64{412, 0.18})
	if err != nil {
		return err
	}
	fmt.Printf("cluster %d at distance %.2f\n", cluster, dist)
	// quick start: end
	return nil
}

// The quick start of the README on six Riverton Bikes stations.
func Example_quickStart() {
	X := mat.NewDense(6, 2, []float64{
		420, 0.18, 390, 0.21, 450, 0.16, // hubs
		95, 0.52, 80, 0.61, 110, 0.48, // waterfront
	})
	if err := quickStart(context.Background(), X); err != nil {
		fmt.Println(err)
	}
	// Output:
	// true [3 3] converged
	// cluster 0 at distance 0.05
}
