package stream

import (
	"context"
	"fmt"
	"math"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// job is the state of one call to Cluster.
type job struct {
	ctx    context.Context
	p      Problem
	set    Settings
	d, k   int
	metric distance.Objective
	cosine bool
	rd     *reader
	asg    *assigner
	res    *Result

	scaler   scale.Scaler // learned, or nil
	first    []float64    // first k-means‖ candidate (scaled), drawn in an earlier pass
	training *kmeans.Training

	// Per-block scratch.
	scaled []float64
	inv    []float64 // 1/‖z‖ per row (Cosine)
	near   []int
	loss   []float64
	cost   float64 // last cost, for progress (NaN before)
}

// begin starts a pass of the given stage and returns its progress hook.
func (j *job) begin(stage Stage) func(rows int64, done bool) {
	j.res.Stages[stage]++
	if j.set.Progress == nil {
		return func(int64, bool) {}
	}
	pass := j.rd.passes + 1
	total := j.rd.n
	return func(rows int64, done bool) {
		j.set.Progress(Progress{Stage: stage, Pass: pass, Rows: rows, Total: total, Cost: j.cost, Done: done})
	}
}

// prepare maps the m raw rows of x into the clustering space and returns
// them: x itself without a scaler, else the scratch block. Under Cosine it
// also fills j.inv. first is the index of the first row, for messages.
func (j *job) prepare(x []float64, m int, first int64) ([]float64, error) {
	d := j.d
	z := x
	if j.scaler != nil {
		j.scaled = grow(j.scaled, m*d)
		z = j.scaled
		for i := range m {
			j.scaler.Apply(z[i*d:(i+1)*d], x[i*d:(i+1)*d])
		}
		for i, v := range z {
			if v-v != 0 {
				return nil, fmt.Errorf("%w: row %d column %d is %v after scaling", kmeans.ErrData, first+int64(i/d), i%d, v)
			}
		}
	}
	if j.cosine {
		j.inv = grow(j.inv, m)
		for i := range m {
			row := z[i*d : (i+1)*d]
			if err := distance.CheckRow(j.metric, row); err != nil {
				return nil, fmt.Errorf("%w: row %d: %w", kmeans.ErrMetric, first+int64(i), err)
			}
			var s float64
			for _, v := range row {
				s += v * v
			}
			j.inv[i] = 1 / math.Sqrt(s)
		}
	}
	return z, nil
}

// search assigns the m rows of z to the current centers of j.asg, into
// j.near and j.loss.
func (j *job) search(z []float64, m int) {
	j.near = growInts(j.near, m)
	j.loss = grow(j.loss, m)
	j.asg.assign(j.near, j.loss, z, m)
}

// distance converts a loss to the distance Model.Nearest reports.
func (j *job) distance(loss float64) float64 {
	if j.asg.euclid {
		return math.Sqrt(loss)
	}
	return loss
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

func growInts(s []int, n int) []int {
	if cap(s) < n {
		return make([]int, n)
	}
	return s[:n]
}
