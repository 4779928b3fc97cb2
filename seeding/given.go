package seeding

import (
	"context"
	"fmt"
	"math/rand/v2"

	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/internal/rowset"
)

// Given seeds with centers the caller already has: a warm start from an
// earlier model (kmeans.Model.ScaledCenters), centers computed elsewhere
// (by a distributed or streaming seeding), or one fixed start for a
// reproducible comparison of methods. Centers must be k×d in the
// clustering space, the space of the data Seed receives (after the
// scaler): finite, accepted by the metric and distinct. Seed copies them
// into dst and ignores rnd (which may be nil) and the weights.
//
// Every restart of kmeans.Cluster gets the same centers, so use it with
// Settings.Restarts = 1.
type Given struct {
	// Centers holds the k initial centers, one per row. It is read, never
	// modified or retained.
	Centers mat.Matrix
}

var _ Seeder = Given{}

// Seed implements Seeder. It returns an error wrapping ErrShape if Centers
// is nil or its shape differs from dst's, or if dst shares memory with data
// or Centers; ErrParameter if a center is not finite, is rejected by the
// metric (a zero center under Cosine) or equals another.
func (g Given) Seed(dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, _ *rand.Rand) error {
	if dst == nil || data == nil {
		return fmt.Errorf("%w: nil dst or data", ErrShape)
	}
	_, dd := data.Dims()
	return g.seed(dst, dd, data.RawMatrix().Data, m)
}

// SeedFloat32 implements Float32Seeder: Seed with float32 data, of which
// only the number of columns is read.
func (g Given) SeedFloat32(_ context.Context, dst *mat.Dense, data blas32.General, weights []float64, m distance.Metric, _ *rand.Rand) error {
	if dst == nil {
		return fmt.Errorf("%w: nil dst", ErrShape)
	}
	return g.seed(dst, data.Cols, nil, m)
}

// seed is Seed for data of dd columns whose float64 storage (nil for
// float32 data) dst must not share.
func (g Given) seed(dst *mat.Dense, dd int, data []float64, m distance.Metric) error {
	k, d, err := check.Matrix(g.Centers, ErrShape)
	if err != nil {
		return fmt.Errorf("Given.Centers: %w", err)
	}
	out := dst.RawMatrix()
	if out.Rows != k || out.Cols != d {
		return fmt.Errorf("%w: Given has %d×%d centers, dst is %d×%d", ErrShape, k, d, out.Rows, out.Cols)
	}
	if dd != d {
		return fmt.Errorf("%w: Given centers have %d columns, data has %d", ErrShape, d, dd)
	}
	if overlap(out.Data, data) {
		return fmt.Errorf("%w: dst shares memory with data", ErrShape)
	}
	c, _ := check.RowMajor(g.Centers)
	if overlap(out.Data, c) {
		return fmt.Errorf("%w: dst shares memory with Given.Centers", ErrShape)
	}
	if m == nil {
		m = distance.Euclidean{}
	}
	seen := rowset.New(k)
	for j := range k {
		row := c[j*d : (j+1)*d]
		if err := distance.CheckRow(m, row); err != nil {
			return fmt.Errorf("%w: given center %d: %w", ErrParameter, j, err)
		}
		if !seen.Add(row) {
			return fmt.Errorf("%w: given center %d repeats an earlier one", ErrParameter, j)
		}
	}
	for j := range k {
		dst.SetRow(j, c[j*d:(j+1)*d])
	}
	return nil
}
