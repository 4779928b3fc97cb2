package main

import (
	"context"
	"io"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/choosek"
	"github.com/centroidlab/centroid/scale"
)

// sweep is the one place the command calls the choose-k sweep (package
// choosek is being redesigned): it clusters X for every k in ks and
// returns the recommended k and a printable report.
func sweep(ctx context.Context, X *mat.Dense, features []string, sc scale.Scaler, ks []int, seed uint64) (int, io.WriterTo, error) {
	res, err := choosek.Sweep(ctx, kmeans.Problem{Data: X, Scaler: sc, Features: features}, ks, &kmeans.Settings{Seed: seed}, nil, nil)
	if err != nil {
		return 0, nil, err
	}
	return res.Recommendation.K, res, nil
}
