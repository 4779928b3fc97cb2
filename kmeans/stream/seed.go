package stream

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/blocks"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

// seedKey separates the k-means‖ row draws from other uses of the seed.
const seedKey = 0x7061_7261_6c6c_656c

// initialCenters returns the k×d starting centers on a reopenable source:
// the given ones (checked) or k-means‖ over passes.
func (j *job) initialCenters() ([]float64, error) {
	if j.p.Centers != nil {
		c, err := j.givenCenters()
		j.res.Seeding = "given centers"
		return c, err
	}
	sp := j.p.Seeding
	sp.Workers = j.set.Workers
	pl, err := sp.Plan(j.k, j.d, j.metric, mix64(j.set.Seed^seedKey))
	if err != nil {
		return nil, fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
	}
	if j.first != nil {
		if err := pl.SetFirst(j.first); err != nil {
			return nil, fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
		}
	}
	before := j.rd.passes
	for !pl.Done() {
		var split blocks.Split
		if j.rd.n >= 0 {
			split = blocks.Of(int(j.rd.n))
		} else {
			split = blocks.Split{0, math.MaxInt} // the first-candidate pass: one part
		}
		parts := make([]*seeding.ParallelPart, split.Count())
		for b := range parts {
			parts[b] = pl.NewPart()
		}
		hook := j.begin(StageSeed)
		b := 0
		err := j.rd.pass(j.ctx, func(x []float64, m int, at int64) error {
			z, err := j.prepare(x, m, at)
			if err != nil {
				return err
			}
			for t := 0; t < m; {
				i := int(at) + t
				for i >= split[b+1] {
					b++
				}
				end := min(m, split[b+1]-int(at))
				if err := pl.Add(parts[b], uint64(i), z[t*j.d:end*j.d], nil); err != nil {
					return fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
				}
				t = end
			}
			hook(at+int64(m), false)
			return nil
		})
		if err != nil {
			return nil, err
		}
		hook(j.rd.n, true)
		merged := pl.NewPart()
		for _, q := range parts {
			merged.Merge(q)
		}
		if err := pl.Next(merged); err != nil {
			return nil, seedingErr(err)
		}
	}
	dst := mat.NewDense(j.k, j.d, nil)
	if err := pl.Centers(dst, rand.New(rand.NewPCG(j.set.Seed, seedKey))); err != nil {
		return nil, seedingErr(err)
	}
	j.res.Seeding = fmt.Sprintf("k-means‖: %d rounds, %d candidates, %d passes", pl.Rounds(), pl.Candidates().RawMatrix().Rows, j.rd.passes-before)
	c := dst.RawMatrix().Data
	return c, j.unitCenters(c)
}

func seedingErr(err error) error {
	if errors.Is(err, seeding.ErrK) {
		return fmt.Errorf("%w: %w", kmeans.ErrK, err)
	}
	return fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
}

// givenCenters checks p.Centers as seeding.Given does and copies them.
func (j *job) givenCenters() ([]float64, error) {
	dst := mat.NewDense(j.k, j.d, nil)
	if err := (seeding.Given{Centers: j.p.Centers}).Seed(dst, mat.NewDense(1, j.d, nil), nil, j.metric, nil); err != nil {
		return nil, fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
	}
	c := dst.RawMatrix().Data
	return c, j.unitCenters(c)
}

// unitCenters scales each center to unit length under Cosine, as
// kmeans.Cluster does with seeded centers.
func (j *job) unitCenters(c []float64) error {
	if !j.cosine {
		return nil
	}
	d := j.d
	for r := range j.k {
		row := c[r*d : (r+1)*d]
		var s float64
		for _, v := range row {
			s += v * v
		}
		if !(s > 0) {
			return fmt.Errorf("%w: a zero center under cosine", kmeans.ErrSeeding)
		}
		s = math.Sqrt(s)
		for i := range row {
			row[i] /= s
		}
	}
	return nil
}
