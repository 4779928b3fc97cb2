package kmeans

import (
	"context"
	"fmt"
	"math"
	"runtime"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/seeding"
)

// Problem says what to cluster.
type Problem struct {
	// Data holds one row per item and one column per feature (n×d). It is
	// never modified or retained. *mat.Dense, and float32 data such as a
	// Dense32 (any RawMatrixer32), are used in place without a copy when
	// no Scaler is set; other matrices are copied once. Float32 data gives
	// the result of its float64 conversion (see the package doc).
	Data mat.Matrix
	// K is the number of clusters, 1 ≤ K ≤ the number of distinct rows with
	// positive weight.
	K int
	// Weights holds one non-negative weight per row; nil means all ones.
	// Rows of weight zero take part in assignment but not in centers or
	// cost.
	Weights []float64
	// Metric is the dissimilarity; nil means distance.Euclidean{}. It must
	// implement distance.Objective (Euclidean, Manhattan, Cosine).
	Metric distance.Metric
	// Seeder picks the initial centers; nil means seeding.PlusPlus{}.
	Seeder seeding.Seeder
	// Scaler, if not nil, is learned on Data (with Weights) and applied to
	// every row before clustering; the Model applies it to new rows. Nil
	// means the raw data is the clustering space.
	Scaler scale.Scaler
	// Features, if not nil, names the d columns of Data; the Model carries
	// them as its schema (see Model.WithFeatures and Model.AssignRecord).
	// Names must be non-empty and distinct, else Cluster returns an error
	// wrapping ErrSchema.
	Features []string
}

// Default values used for zero fields of Settings.
const (
	DefaultRestarts      = 10
	DefaultMaxIterations = 300
)

// Largest values of Settings fields that size memory: Cluster keeps a few
// values per restart and one goroutine per worker.
const (
	MaxRestarts = 1 << 16
	MaxWorkers  = 1 << 12
)

// Settings sets the limits and resources of a call to Cluster. The zero
// value, and a nil *Settings, mean the documented defaults.
type Settings struct {
	// Restarts is the number of independent seedings; the result with the
	// lowest Cost wins, ties going to the lowest restart index. Zero means
	// DefaultRestarts (10), or DefaultRefinedRestarts (2) when the
	// automatic random-swap refinement runs (see SwapTrials). Negative or
	// above MaxRestarts is an error.
	Restarts int
	// MaxIterations limits the assignment passes of each restart. Zero
	// means DefaultMaxIterations (300). Negative is an error.
	MaxIterations int
	// Tolerance, if positive, also stops a restart when a pass lowers the
	// cost by no more than Tolerance times the cost (relative improvement).
	// Zero means iterate to a fixed point (no row changes cluster) or
	// MaxIterations. Negative, NaN or ≥ 1 is an error.
	Tolerance float64
	// Seed drives all randomness. Every value, zero included, is a valid
	// fixed seed: the same inputs and Seed give bit-identical results.
	Seed uint64
	// Workers is the number of goroutines; zero means runtime.GOMAXPROCS(0).
	// Results do not depend on it. Negative or above MaxWorkers is an
	// error.
	Workers int
	// SwapTrials sets the random-swap refinement of the winning restart
	// (see the package documentation, "Refinement"): zero means the
	// automatic rule: refine when the metric is Euclidean, k ≥ MinSwapK
	// and d ≤ MaxSwapDim, with at most DefaultSwapTrialsPerK·k trials, and
	// then, if Restarts is zero, run DefaultRefinedRestarts restarts
	// instead of DefaultRestarts. Negative turns it off; positive is the
	// largest number of trials (any k and d, under Euclidean; other
	// metrics are not refined).
	SwapTrials int
	// SwapPatience stops the refinement after this many trials in a row
	// without an accepted swap. Zero means DefaultSwapPatience·k; negative
	// is an error.
	SwapPatience int
	// Progress, if not nil, is called after every assignment pass of every
	// restart. Calls are serialised (never concurrent) but restarts run
	// concurrently, so calls of different restarts interleave. It must not
	// call Cluster on the same Settings.
	Progress func(Progress)
}

// Progress reports one assignment pass.
type Progress struct {
	Restart   int     // restart index, from 0
	Iteration int     // pass number within the restart, from 1
	Cost      float64 // cost of this pass's assignments to the centers it used
	Moved     int     // rows whose cluster changed (all rows on the first pass)
}

// Resolve returns a copy of s (nil means the zero Settings) with every
// zero field replaced by its default, or an error wrapping ErrSettings if a
// field is out of range. Cluster calls it; code that runs many clusterings
// with one Settings (choosing k, streaming) calls it once.
func (s *Settings) Resolve() (Settings, error) {
	var r Settings
	if s != nil {
		r = *s
	}
	switch {
	case r.Restarts < 0 || r.Restarts > MaxRestarts:
		return r, fmt.Errorf("%w: Restarts = %d, want 0 ≤ Restarts ≤ %d", ErrSettings, r.Restarts, MaxRestarts)
	case r.MaxIterations < 0:
		return r, fmt.Errorf("%w: MaxIterations = %d", ErrSettings, r.MaxIterations)
	case r.Workers < 0 || r.Workers > MaxWorkers:
		return r, fmt.Errorf("%w: Workers = %d, want 0 ≤ Workers ≤ %d", ErrSettings, r.Workers, MaxWorkers)
	case r.SwapPatience < 0:
		return r, fmt.Errorf("%w: SwapPatience = %d", ErrSettings, r.SwapPatience)
	case math.IsNaN(r.Tolerance) || r.Tolerance < 0 || r.Tolerance >= 1:
		return r, fmt.Errorf("%w: Tolerance = %v, want 0 ≤ Tolerance < 1", ErrSettings, r.Tolerance)
	}
	if r.Restarts == 0 {
		r.Restarts = DefaultRestarts
	}
	if r.MaxIterations == 0 {
		r.MaxIterations = DefaultMaxIterations
	}
	if r.Workers == 0 {
		r.Workers = runtime.GOMAXPROCS(0)
	}
	return r, nil
}

// Status says why a restart stopped.
type Status int

const (
	// NotTerminated is the zero Status: the run has not stopped.
	NotTerminated Status = iota
	// Converged means the last pass moved no row: a fixed point.
	Converged
	// CostTolerance means a pass improved the cost by no more than
	// Settings.Tolerance (relative).
	CostTolerance
	// IterationLimit means Settings.MaxIterations passes ran without
	// convergence.
	IterationLimit
	// Canceled means the context was cancelled or its deadline passed.
	Canceled
)

// String returns the status name.
func (s Status) String() string {
	switch s {
	case NotTerminated:
		return "not terminated"
	case Converged:
		return "converged"
	case CostTolerance:
		return "cost tolerance"
	case IterationLimit:
		return "iteration limit"
	case Canceled:
		return "canceled"
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Stopped reports whether the run reached a normal stop (Converged or
// CostTolerance).
func (s Status) Stopped() bool { return s == Converged || s == CostTolerance }

// Err returns nil for a normal stop (Converged, CostTolerance) and an
// error otherwise: wrapping ErrIterationLimit for IterationLimit,
// context.Canceled for Canceled, and ErrNotTerminated for NotTerminated or
// an unknown value. A caller that must have a fixed point can write
// `if err := res.Status.Err(); err != nil`.
func (s Status) Err() error {
	switch s {
	case Converged, CostTolerance:
		return nil
	case IterationLimit:
		return ErrIterationLimit
	case Canceled:
		return fmt.Errorf("kmeans: %w", context.Canceled)
	}
	return fmt.Errorf("%w: %v", ErrNotTerminated, s)
}
