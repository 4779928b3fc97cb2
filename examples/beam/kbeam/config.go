package kbeam

import (
	"fmt"
	"math"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

// Config says what every stage of a clustering needs to know. The
// transforms copy it into their DoFns, which the runner ships to its
// workers.
type Config struct {
	// K is the number of clusters and D the number of values per row.
	K, D int
	// Metric is distance.Euclidean (nil) or distance.Cosine. Manhattan is
	// refused with an error wrapping kmeans.ErrMetric: its center rule,
	// the coordinate-wise median, is not a function of per-block sums and
	// cannot be merged in a combine.
	Metric distance.Objective
	// Seed drives the k-means‖ draws. The same Seed gives the centers
	// kmeans/stream's k-means‖ gives on the same rows.
	Seed uint64
	// Seeding holds the k-means‖ options (Rounds, Oversampling); its
	// Workers is ignored.
	Seeding seeding.Parallel
}

// spec is the part of a Config that DoFns carry; its fields are exported
// because the SDK ships DoFns as JSON.
type spec struct {
	K, D         int
	Metric       string
	Seed         uint64
	Rounds       int
	Oversampling float64
}

// spec checks c and returns its shippable form.
func (c Config) spec() (spec, error) {
	if c.K < 1 {
		return spec{}, fmt.Errorf("%w: K = %d, want ≥ 1", kmeans.ErrK, c.K)
	}
	if c.D < 1 {
		return spec{}, fmt.Errorf("%w: D = %d, want ≥ 1", kmeans.ErrData, c.D)
	}
	if c.K > 1<<20 || c.D > 1<<20 || c.K*c.D > 1<<26 {
		return spec{}, fmt.Errorf("%w: K·D = %d·%d is above the limit of 2²⁶ center values", kmeans.ErrSettings, c.K, c.D)
	}
	name := "euclidean"
	if c.Metric != nil {
		name = c.Metric.Name()
	}
	s := spec{K: c.K, D: c.D, Metric: name, Seed: c.Seed, Rounds: c.Seeding.Rounds, Oversampling: c.Seeding.Oversampling}
	if _, err := s.space(); err != nil {
		return spec{}, err
	}
	if _, err := (seeding.Parallel{Rounds: s.Rounds, Oversampling: s.Oversampling}).Plan(s.K, s.D, nil, 0); err != nil {
		return spec{}, fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
	}
	return s, nil
}

// space is the metric and shape the stages compute with.
type space struct {
	k, d   int
	metric distance.Objective
	rule   distance.CenterRule
	cosine bool
}

func (s spec) space() (space, error) {
	var m distance.Objective
	switch s.Metric {
	case "euclidean":
		m = distance.Euclidean{}
	case "cosine":
		m = distance.Cosine{}
	case "manhattan":
		return space{}, fmt.Errorf("%w: manhattan's center rule, the coordinate-wise median, cannot be merged from per-block sums; load the rows and use kmeans.Cluster", kmeans.ErrMetric)
	default:
		return space{}, fmt.Errorf("%w: %q; the pipeline supports euclidean and cosine", kmeans.ErrMetric, s.Metric)
	}
	return space{k: s.K, d: s.D, metric: m, rule: m.Rule(), cosine: s.Metric == "cosine"}, nil
}

// nearest returns the center of centers (k×d) with the smallest loss to x
// (ties to the lowest index) and that loss: the direct computation that
// kmeans.Lloyd's kernel reproduces exactly.
func (sp *space) nearest(x, centers []float64) (int, float64) {
	d := sp.d
	best, bl := 0, math.Inf(1)
	for j := range sp.k {
		if l := sp.metric.Loss(x, centers[j*d:(j+1)*d]); l < bl {
			best, bl = j, l
		}
	}
	return best, bl
}

// assign adds the rows of b to p, each to its nearest center, as
// kmeans.Space.Add does: under Cosine the sums are of unit rows. unit is
// scratch of length d.
func (sp *space) assign(p *kmeans.Partial, b *Block, centers, unit []float64) error {
	d := sp.d
	for t := range b.Rows(d) {
		x := b.X[t*d : (t+1)*d]
		if err := distance.CheckRow(sp.metric, x); err != nil {
			return fmt.Errorf("%w: row %d: %w", ErrInput, b.First+uint64(t), err)
		}
		j, loss := sp.nearest(x, centers)
		row := x
		if sp.cosine {
			inv := invNorm(x)
			for i, v := range x {
				unit[i] = v * inv
			}
			row = unit
		}
		p.Add(j, row, b.weight(t), loss)
	}
	return nil
}

// invNorm returns 1/‖x‖ computed as kmeans does.
func invNorm(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v * v
	}
	return 1 / math.Sqrt(s)
}

// unitRows scales each of the k rows of c (k×d) to unit length; it
// returns an error wrapping kmeans.ErrSeeding for a zero row.
func unitRows(c []float64, d int) error {
	for r := 0; r < len(c)/d; r++ {
		row := c[r*d : (r+1)*d]
		var s float64
		for _, v := range row {
			s += v * v
		}
		if !(s > 0) {
			return fmt.Errorf("%w: center %d is zero, which has no direction under cosine", kmeans.ErrSeeding, r)
		}
		s = math.Sqrt(s)
		for i := range row {
			row[i] /= s
		}
	}
	return nil
}
