package seeding

import (
	"context"
	"math/rand/v2"

	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// Seeder picks initial centers for k-means.
//
// Seed writes k = dst.RawMatrix().Rows centers into dst (k×d) chosen from
// data (n×d, already in the clustering space) where row i has weight
// weights[i] (nil = all ones; zero-weight rows are never chosen). Randomness
// comes only from rnd, so the same rnd state gives the same centers. Seed
// never modifies data or weights and never returns two equal centers while
// data holds at least k distinct rows of positive weight; if it holds fewer,
// Seed returns an error wrapping ErrK. Seeders are safe for concurrent use
// with distinct rnd values.
//
// The seeders of this package treat a nil metric m as distance.Euclidean,
// reject rows that distance.CheckRow rejects (NaN, ±Inf, the zero vector
// under Cosine) with its error, reject a dst that shares its backing array
// with data (ErrShape), and leave dst unchanged when they return an error.
type Seeder interface {
	Seed(dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) error
}

// Concurrent is implemented by seeders that can spread their work over
// several goroutines without changing their centers. kmeans.Cluster calls
// WithWorkers with its goroutines per restart, so a seeder left at its
// zero value uses them.
type Concurrent interface {
	Seeder
	// WithWorkers returns the seeder with n goroutines, or the seeder
	// itself if it already has a number of its own.
	WithWorkers(n int) Seeder
}

// ContextSeeder is implemented by seeders that can stop early when a
// context ends; kmeans.Cluster calls SeedContext instead of Seed when the
// seeder implements it, so that cancelling a call also stops its seeding.
// SeedContext returns an error wrapping ctx.Err() (context.Cause) when it
// stops early, leaving dst unchanged.
type ContextSeeder interface {
	Seeder
	SeedContext(ctx context.Context, dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) error
}

// Float32Seeder is implemented by seeders that read float32 rows in place.
// kmeans.Cluster calls SeedFloat32 when the clustering space is float32
// (a kmeans.Dense32 without a scaler), so that seeding makes no float64
// copy of the data; a seeder without it receives a float64 copy of the
// rows, made once per Cluster call. data holds n = data.Rows rows of
// data.Cols values, row i at data.Data[i·data.Stride:]; it is never
// modified. SeedFloat32 gives exactly the centers that Seed gives on the
// float64 conversion of data (every float32 is exactly a float64) from the
// same rnd state, and stops early when ctx ends as SeedContext does
// (seeders that do not check ctx say so).
type Float32Seeder interface {
	Seeder
	SeedFloat32(ctx context.Context, dst *mat.Dense, data blas32.General, weights []float64, m distance.Metric, rnd *rand.Rand) error
}
