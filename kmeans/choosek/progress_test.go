package choosek

import (
	"context"
	"fmt"
	"math"
	"sync"
	"sync/atomic"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
)

// TestSweepProgress checks the promises of Options.Progress: serialised
// calls, Overall never decreasing and ending at 1, every stage's Done
// growing to 1, at least one report per k and stage, each k's clustering
// before its other stages, and the gap after everything else.
func TestSweepProgress(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {6, 0}, {0, 6}}, []int{80, 70, 60}, 1, 5)
	ks := sweepRange(1, 6)
	for _, workers := range []int{1, 3} {
		t.Run(fmt.Sprint("workers ", workers), func(t *testing.T) {
			var (
				calls    []Progress
				inside   atomic.Int32
				overlaps atomic.Int32
			)
			o := &Options{GapReferences: 3, Stability: StabilityOptions{Resamples: 4}, Progress: func(p Progress) {
				if inside.Add(1) > 1 {
					overlaps.Add(1)
				}
				calls = append(calls, p)
				inside.Add(-1)
			}}
			_, err := Sweep(context.Background(), kmeans.Problem{Data: x}, ks, &kmeans.Settings{Seed: 2, Restarts: 3, Workers: workers}, nil, o)
			require.NoError(t, err)
			assert.Zero(t, overlaps.Load(), "calls overlapped")
			require.NotEmpty(t, calls)
			// Jobs: 6 clusterings, 5 index sets, 5·4 resamples, 6·(3+1) gap clusterings.
			assert.Len(t, calls, 6+5+20+24)
			type at struct {
				k int
				s Stage
			}
			last := map[at]float64{}
			clustered := map[int]bool{}
			gapStarted := false
			prev := 0.0
			for i, c := range calls {
				assert.GreaterOrEqual(t, c.Overall, prev, "call %d: Overall fell", i)
				prev = c.Overall
				assert.Greater(t, c.Done, last[at{c.K, c.Stage}], "call %d: Done did not grow", i)
				assert.LessOrEqual(t, c.Done, 1.0)
				last[at{c.K, c.Stage}] = c.Done
				switch c.Stage {
				case StageClustering:
					assert.False(t, gapStarted)
					clustered[c.K] = true
				case StageIndices, StageStability:
					assert.True(t, clustered[c.K], "call %d: %v of k = %d before its clustering", i, c.Stage, c.K)
					assert.False(t, gapStarted, "call %d: %v after the gap started", i, c.Stage)
				case StageGap:
					gapStarted = true
				}
			}
			assert.InDelta(t, 1, prev, 1e-12, "the last report finishes the sweep")
			for _, k := range ks {
				stages := []Stage{StageClustering, StageGap}
				if k >= 2 {
					stages = append(stages, StageIndices, StageStability)
				}
				for _, s := range stages {
					assert.Equal(t, 1.0, last[at{k, s}], "k = %d %v did not reach 1", k, s)
				}
			}
			assert.Zero(t, last[at{1, StageIndices}], "no indices at k = 1")
		})
	}
	assert.Equal(t, "clustering indices stability gap Stage(9)", fmt.Sprint(StageClustering, " ", StageIndices, " ", StageStability, " ", StageGap, " ", Stage(9)))
}

// TestSweepCancelMidway cancels a sweep from its first progress report and
// checks that it returns the context's error, that no job starts after the
// cancellation and that no report follows it.
func TestSweepCancelMidway(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {6, 0}, {0, 6}}, []int{80, 70, 60}, 1, 5)
	for _, stage := range []Stage{StageClustering, StageStability, StageGap} {
		t.Run(stage.String(), func(t *testing.T) {
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			var mu sync.Mutex
			canceled := false
			startedAfter, reportsAfter := 0, 0
			testHookStart = func(int, Stage) {
				mu.Lock()
				defer mu.Unlock()
				if canceled {
					startedAfter++
				}
			}
			defer func() { testHookStart = nil }()
			o := &Options{GapReferences: 3, Stability: StabilityOptions{Resamples: 4}, Progress: func(p Progress) {
				mu.Lock()
				defer mu.Unlock()
				if canceled {
					reportsAfter++
				}
				if p.Stage == stage && !canceled {
					canceled = true
					cancel()
				}
			}}
			r, err := Sweep(ctx, kmeans.Problem{Data: x}, sweepRange(1, 8), &kmeans.Settings{Seed: 2, Restarts: 3, Workers: 2}, nil, o)
			require.ErrorIs(t, err, context.Canceled)
			assert.Nil(t, r)
			mu.Lock()
			defer mu.Unlock()
			assert.True(t, canceled)
			assert.Zero(t, startedAfter, "jobs started after the cancellation")
			assert.Zero(t, reportsAfter, "reports after the cancellation")
		})
	}
}

// TestSweepSample checks the sample of the expensive criteria: drawn above
// SampleRows rows and not at or below, the same for any number of workers,
// used by Dunn's index (recomputed here with package validate on the
// sample rows and the sweep's assignments restricted to them) and by the
// stability resamples.
func TestSweepSample(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {7, 0}, {0, 7}, {7, 7}}, []int{300, 250, 250, 200}, 1, 8)
	n, _ := x.Dims()
	o := &Options{SampleRows: 300, GapReferences: 3, Stability: StabilityOptions{Resamples: 3}}
	run := func(workers int) *Result {
		r, err := Sweep(context.Background(), kmeans.Problem{Data: x}, sweepRange(1, 6), &kmeans.Settings{Seed: 4, Restarts: 3, Workers: workers}, nil, o)
		require.NoError(t, err)
		return r
	}
	r := run(1)
	assert.Equal(t, n, r.Rows)
	assert.Equal(t, 300, r.SampleRows)
	one := sweepText(t, r)
	for _, w := range []int{2, 4} {
		assert.Equal(t, one, sweepText(t, run(w)), "Workers %d changed the result", w)
	}
	rows := subsample(n, 300, sweepMix(4, sampleStream, 0))
	zs := selectRows(x, rows)
	for _, p := range r.Points[1:] {
		a := make([]int, len(rows))
		for t, i := range rows {
			a[t] = p.Result.Assignments[i]
		}
		dunn, err := validate.Dunn(zs, a)
		require.NoError(t, err)
		assert.Equal(t, dunn, p.Dunn, "k=%d: Dunn on the sample", p.K)
		require.NotNil(t, p.Stability)
		assert.Equal(t, 300, p.Stability.Rows)
		sil, err := validate.Silhouette(x, p.Result.Assignments, nil)
		require.NoError(t, err)
		assert.Equal(t, sil, p.Silhouette.Mean, "k=%d: the silhouette uses every row (n ≤ ExactSilhouetteRows)", p.K)
	}
	assert.Equal(t, 4, r.Recommendation.K, "four separated clusters")

	o.SampleRows = n
	r, err := Sweep(context.Background(), kmeans.Problem{Data: x}, []int{2, 3}, &kmeans.Settings{Seed: 4, Restarts: 2}, nil, o)
	require.NoError(t, err)
	assert.Equal(t, n, r.SampleRows, "no sample at SampleRows = n")
	assert.Equal(t, n, r.Points[0].Stability.Rows)
	o.SampleRows = -1
	r, err = Sweep(context.Background(), kmeans.Problem{Data: x}, []int{2, 3}, &kmeans.Settings{Seed: 4, Restarts: 2}, nil, o)
	require.NoError(t, err)
	assert.Equal(t, n, r.SampleRows, "never sample with SampleRows < 0")
}

// TestSweepDefaultSample checks the default limit: 4000 rows are not
// sampled, 4001 are.
func TestSweepDefaultSample(t *testing.T) {
	if sweepRace || testing.Short() {
		t.Skip("sweeps 4001 rows")
	}
	for _, n := range []int{DefaultSampleRows, DefaultSampleRows + 1} {
		x := sweepUniform(n, 2, 3)
		r, err := Sweep(context.Background(), kmeans.Problem{Data: x}, []int{2, 3}, &kmeans.Settings{Seed: 1, Restarts: 1}, nil,
			&Options{SkipGap: true, Stability: StabilityOptions{Resamples: 2, Restarts: 1}})
		require.NoError(t, err)
		assert.Equal(t, min(n, 4000), r.SampleRows)
		assert.Equal(t, min(n, 4000), r.Points[0].Stability.Rows)
		assert.False(t, math.IsNaN(r.Points[0].Dunn), "Dunn is computed on up to DefaultDunnRows rows")
	}
}
