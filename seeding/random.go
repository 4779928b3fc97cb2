package seeding

import (
	"context"
	"fmt"
	"math/rand/v2"

	"github.com/centroidlab/centroid/internal/rowset"

	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// maxRejections is the number of consecutive draws of an already chosen
// value after which Random removes the chosen values from its sampling
// distribution in one pass over the data.
const maxRejections = 16

// Random picks k distinct rows of data as centers. Weights act as
// multiplicities: each center is drawn with probability proportional to the
// total weight of the rows holding its value, among the values not chosen
// yet (sampling without replacement by value). Zero-weight rows are never
// chosen. Random ignores the metric except to check rows.
//
// Duplicates: rows are distinct by value (−0 equals +0), so Random never
// returns two equal centers; with fewer than k distinct positive-weight rows
// it returns an error wrapping ErrK.
//
// Cost: O(n·d) time to check the input and O(n) for a running sum of the
// weights, then O(log n + d) expected per draw while the chosen values hold
// at most about half of the total weight. A draw that hits a chosen value is
// redrawn; after 16 misses in a row Random drops the chosen values from the
// running sum in an O(n·d) pass, which bounds the worst case (chosen values
// holding nearly all the weight, or fewer than k distinct rows) by O(n·d·k).
// Memory: n float64 plus a set of at most k row references.
type Random struct{}

// Seed implements Seeder.
func (r Random) Seed(dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	in, err := checkInput(dst, data, weights, m, rnd)
	if err != nil {
		return err
	}
	return r.seed(in, rnd)
}

func (Random) seed(in *input, rnd *rand.Rand) error {
	cum := make([]float64, in.n)
	in.cumWeights(cum)
	chosen := make([]int, 0, in.k)
	set := rowset.New(in.k)
	buf := make([]float64, in.d)
	misses := 0
	for len(chosen) < in.k {
		i := pick(cum, rnd)
		if r := in.rowTo(buf, i); !set.Has(r) {
			set.Add(in.rowKept(i))
			chosen = append(chosen, i)
			misses = 0
			continue
		}
		misses++
		if misses < maxRejections {
			continue
		}
		misses = 0
		if !in.cumUnchosen(cum, set) {
			return fmt.Errorf("%w: k = %d but data has only %d distinct rows with positive weight", ErrK, in.k, len(chosen))
		}
	}
	in.writeRows(chosen)
	return nil
}

// cumUnchosen fills cum with the running sum of the weights of rows whose
// value is not in set and reports whether any such row has positive weight.
func (in *input) cumUnchosen(cum []float64, set *rowset.Set) bool {
	var s float64
	buf := make([]float64, in.d)
	for i := range cum {
		if w := in.weight(i); w > 0 && !set.Has(in.rowTo(buf, i)) {
			s += w
		}
		cum[i] = s
	}
	return s > 0
}

// SeedFloat32 implements Float32Seeder: Seed on float32 data, read in
// place (the k rows chosen are widened into new slices); ctx is not
// checked.
func (r Random) SeedFloat32(_ context.Context, dst *mat.Dense, data blas32.General, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	in, err := checkInput32(dst, data, weights, m, rnd)
	if err != nil {
		return err
	}
	return r.seed(in, rnd)
}

var (
	_ Float32Seeder = Random{}
	_ Float32Seeder = Uniform{}
	_ Float32Seeder = PlusPlus{}
	_ Float32Seeder = Given{}
	_ Seeder        = Random{}
	_ Seeder        = Uniform{}
	_ Seeder        = PlusPlus{}
)
