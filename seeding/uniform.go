package seeding

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/centroidlab/centroid/internal/rowset"

	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// maxRedraws is the number of draws Uniform makes for one center before it
// gives up on a bounding box too narrow (a few ulps wide) to hold k distinct
// representable points.
const maxRedraws = 1000

// Uniform draws k points independently and uniformly from the bounding box
// of the rows with positive weight. A coordinate in which the box has zero
// width is that constant. The centers are usually not rows of data; weights
// only decide which rows span the box.
//
// Duplicates: a point equal to an earlier center, or rejected by the metric
// (the zero vector under Cosine), is redrawn, so Uniform never returns two
// equal centers. It first counts the distinct positive-weight rows and
// returns an error wrapping ErrK if there are fewer than k; it also returns
// ErrK in the freak case where 1000 draws for one center all repeat earlier
// centers (a box only a few ulps wide).
//
// Cost: O(n·d) time to check the input, count distinct rows (stopping once k
// are found) and find the box, plus O(k·d) expected for the draws. Memory:
// O(k·d); nothing proportional to n.
type Uniform struct{}

// Seed implements Seeder.
func (u Uniform) Seed(dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	in, err := checkInput(dst, data, weights, m, rnd)
	if err != nil {
		return err
	}
	return u.seed(in, rnd)
}

// SeedFloat32 implements Float32Seeder: Seed on float32 data, read in
// place; ctx is not checked.
func (u Uniform) SeedFloat32(_ context.Context, dst *mat.Dense, data blas32.General, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	in, err := checkInput32(dst, data, weights, m, rnd)
	if err != nil {
		return err
	}
	return u.seed(in, rnd)
}

func (Uniform) seed(in *input, rnd *rand.Rand) error {
	if got := in.distinct(); got < in.k {
		return fmt.Errorf("%w: k = %d but data has only %d distinct rows with positive weight", ErrK, in.k, got)
	}
	lo, hi := in.box()
	centers := make([]float64, in.k*in.d)
	set := rowset.New(in.k)
	for j := range in.k {
		c := centers[j*in.d : (j+1)*in.d : (j+1)*in.d]
		for try := 0; ; try++ {
			if try == maxRedraws {
				return fmt.Errorf("%w: %d draws in the bounding box did not give a new center (box too narrow)", ErrK, maxRedraws)
			}
			for col := range c {
				c[col] = between(lo[col], hi[col], rnd)
			}
			if distance.CheckRow(in.m, c) == nil && set.Add(c) {
				break
			}
		}
	}
	for j := range in.k {
		in.dst.SetRow(j, centers[j*in.d:(j+1)*in.d])
	}
	return nil
}

// distinct counts the distinct rows with positive weight, stopping at k.
func (in *input) distinct() int {
	set := rowset.New(in.k)
	buf := make([]float64, in.d)
	for i := 0; i < in.n && set.Len() < in.k; i++ {
		if in.weight(i) > 0 && !set.Has(in.rowTo(buf, i)) {
			set.Add(in.rowKept(i))
		}
	}
	return set.Len()
}

// box returns the coordinate-wise minimum and maximum of the rows with
// positive weight.
func (in *input) box() (lo, hi []float64) {
	lo = make([]float64, in.d)
	hi = make([]float64, in.d)
	for col := range lo {
		lo[col] = math.Inf(1)
		hi[col] = math.Inf(-1)
	}
	buf := make([]float64, in.d)
	for i := range in.n {
		if in.weight(i) == 0 {
			continue
		}
		for col, v := range in.rowTo(buf, i) {
			lo[col] = min(lo[col], v)
			hi[col] = max(hi[col], v)
		}
	}
	return lo, hi
}

// between returns a uniform draw from [lo, hi], or lo without drawing when
// lo == hi. It stays finite and inside the interval for any finite bounds.
func between(lo, hi float64, rnd *rand.Rand) float64 {
	if lo == hi {
		return lo
	}
	u := rnd.Float64()
	var v float64
	if w := hi - lo; !math.IsInf(w, 0) {
		v = lo + u*w
	} else {
		v = (1-u)*lo + u*hi // hi − lo overflows; the products do not
	}
	return min(max(v, lo), hi)
}
