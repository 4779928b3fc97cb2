package serve

import (
	"encoding/json"
	"fmt"
	"math"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
)

// psiByHand is the population stability index written out from its
// definition, Σ (o − e)·ln(o/e), with the floor applied to both shares.
func psiByHand(o, e []float64) float64 {
	var s float64
	for j := range o {
		oj, ej := o[j], e[j]
		if oj < 1e-4 {
			oj = 1e-4
		}
		if ej < 1e-4 {
			ej = 1e-4
		}
		s += (oj - ej) * math.Log(oj/ej)
	}
	return s
}

func TestPSI(t *testing.T) {
	// (0.5−0.6)·ln(0.5/0.6) + (0.5−0.4)·ln(0.5/0.4) = 0.1·ln(1.2) + 0.1·ln(1.25),
	// worked by hand.
	assert.InDelta(t, 0.1*math.Log(1.2)+0.1*math.Log(1.25), PSI([]float64{0.5, 0.5}, []float64{0.6, 0.4}), 1e-15)
	assert.Zero(t, PSI([]float64{0.2, 0.8}, []float64{0.2, 0.8}))
	// An empty cluster is floored instead of making the index infinite.
	got := PSI([]float64{0, 1}, []float64{0.5, 0.5})
	assert.InDelta(t, psiByHand([]float64{0, 1}, []float64{0.5, 0.5}), got, 1e-12)
	assert.False(t, math.IsInf(got, 0))
	assert.Panics(t, func() { PSI([]float64{1}, []float64{0.5, 0.5}) })
}

// TestDriftOnTrainingRows feeds the training rows back: the shares must
// match the training shares (PSI 0) and the share beyond the training 99th
// percentile must equal the count done here by hand, at most 1%.
func TestDriftOnTrainingRows(t *testing.T) {
	m, res, x := demoModel(t, false)
	dr, err := NewDrift(m)
	require.NoError(t, err)
	s := dr.Snapshot()
	assert.Equal(t, "no data", s.Reading)
	assert.Zero(t, s.PSI)

	n, _ := x.Dims()
	as := make([]kmeans.Assignment, n)
	require.NoError(t, m.AssignBatch(as, x))
	for _, a := range as[:n/2] {
		dr.Observe(a)
	}
	dr.ObserveBatch(as[n/2:])
	s = dr.Snapshot()
	assert.Equal(t, int64(n), s.Rows)
	assert.Equal(t, "stable", s.Reading)
	assert.InDelta(t, 0, s.PSI, 1e-12)
	beyond := 0
	tr := m.Training()
	for i, a := range as {
		if a.Distance > tr.Clusters[res.Assignments[i]].Distances.P99 {
			beyond++
		}
	}
	assert.InDelta(t, float64(beyond)/float64(n), s.BeyondP99, 1e-15)
	assert.LessOrEqual(t, s.BeyondP99, 0.01)
	for j, c := range s.Clusters {
		assert.Equal(t, int64(res.Sizes[j]), c.Rows)
		assert.InDelta(t, float64(res.Sizes[j])/float64(n), c.Observed, 1e-15)
		assert.InDelta(t, c.Expected, c.Observed, 1e-15)
	}
}

// TestDriftShift feeds only hillside stations (one latent kind), far from
// the training mix, and far-away rows.
func TestDriftShift(t *testing.T) {
	m, _, _ := demoModel(t, false)
	dr, err := NewDrift(m)
	require.NoError(t, err)
	var hills []bikeshare.Station
	for _, s := range bikeshare.NewStations(1000, 9) {
		if s.Kind == bikeshare.Hillside {
			hills = append(hills, s)
		}
	}
	counts := make([]float64, m.K())
	for _, s := range hills {
		a, err := m.Assign(s.Features)
		require.NoError(t, err)
		dr.Observe(a)
		counts[a.Cluster]++
	}
	for j := range counts {
		counts[j] /= float64(len(hills))
	}
	snap := dr.Snapshot()
	assert.InDelta(t, psiByHand(counts, m.Training().Shares()), snap.PSI, 1e-12)
	assert.Greater(t, snap.PSI, PSIMajor)
	assert.Equal(t, "major shift", snap.Reading)

	// Rows from a very different network lie beyond the 99th percentile.
	far := make([]float64, bikeshare.NumFeatures)
	far[bikeshare.TripsPerDay], far[bikeshare.ElevationM] = 1500, 500
	for range 10 {
		a, err := m.Assign(far)
		require.NoError(t, err)
		dr.Observe(a)
	}
	assert.Greater(t, dr.Snapshot().BeyondP99, snap.BeyondP99)

	dr.ObserveError(fmt.Errorf("row 3: %w", kmeans.ErrNotFinite))
	dr.ObserveError(&FieldError{Field: "x", Problem: FieldUnknown})
	dr.Observe(kmeans.Assignment{Cluster: 99})
	dr.ObserveBatch([]kmeans.Assignment{{Cluster: -1}})
	dr.ObserveBatch(nil)
	snap = dr.Snapshot()
	assert.Equal(t, int64(1), snap.NonFinite)
	assert.Equal(t, int64(3), snap.Rejected)
	b, err := json.Marshal(snap)
	require.NoError(t, err)
	var back DriftSnapshot
	require.NoError(t, json.Unmarshal(b, &back))
	assert.Equal(t, snap.PSI, back.PSI)
	assert.Contains(t, string(b), `"beyond_p99"`)
}

func TestDriftModerate(t *testing.T) {
	// Two clusters with training shares 0.5/0.5 (sizes 2 and 2): 65/35
	// traffic gives 0.15·ln(1.3) + 0.15·ln(1/0.7) ≈ 0.093 (stable), 70/30
	// gives 0.2·ln(1.4) + 0.2·ln(5/3) ≈ 0.169 (moderate).
	m, res := clusterRows(t, [][]float64{{0}, {0}, {10}, {10}}, 2)
	require.Equal(t, []int{2, 2}, res.Sizes)
	require.Equal(t, []float64{0.5, 0.5}, m.Training().Shares())
	for _, c := range []struct {
		a, b    int
		reading string
	}{{65, 35, "stable"}, {70, 30, "moderate shift"}} {
		dr, err := NewDrift(m)
		require.NoError(t, err)
		for i := range c.a + c.b {
			cl := 0
			if i >= c.a {
				cl = 1
			}
			dr.Observe(kmeans.Assignment{Cluster: cl})
		}
		s := dr.Snapshot()
		assert.InDelta(t, psiByHand([]float64{float64(c.a) / 100, float64(c.b) / 100}, []float64{0.5, 0.5}), s.PSI, 1e-12)
		assert.Equal(t, c.reading, s.Reading, "%d/%d", c.a, c.b)
	}
	dr, err := NewDrift(m)
	require.NoError(t, err)
	for range DriftMinRows - 1 {
		dr.Observe(kmeans.Assignment{Cluster: 0})
	}
	assert.Equal(t, "too few rows", dr.Snapshot().Reading)
	dr.Observe(kmeans.Assignment{Cluster: 0})
	assert.Equal(t, "major shift", dr.Snapshot().Reading)
}

func TestDriftConcurrent(t *testing.T) {
	m, _, _ := demoModel(t, false)
	dr, err := NewDrift(m)
	require.NoError(t, err)
	var wg sync.WaitGroup
	const workers, per = 16, 2000
	for w := range workers {
		wg.Go(func() {
			for i := range per {
				dr.Observe(kmeans.Assignment{Cluster: (w + i) % m.K()})
			}
		})
	}
	wg.Wait()
	s := dr.Snapshot()
	assert.Equal(t, int64(workers*per), s.Rows)
	for j, c := range s.Clusters {
		want := 0
		for w := range workers {
			for i := range per {
				if (w+i)%m.K() == j {
					want++
				}
			}
		}
		assert.Equal(t, int64(want), c.Rows)
	}
}

func TestNewDriftErrors(t *testing.T) {
	_, err := NewDrift(nil)
	require.ErrorIs(t, err, kmeans.ErrModel)
	_, err = NewDrift(&kmeans.Model{})
	require.ErrorIs(t, err, kmeans.ErrModel)
	// A version 1 document has no training summary to compare with.
	_, err = NewDrift(v1Model(t, [][]float64{{0}, {1}}))
	require.ErrorIs(t, err, kmeans.ErrModel)

	// k > 32: ObserveBatch adds up on the heap. Forty distinct rows in
	// forty clusters: every training distance, hence every P99, is 0.
	k := 40
	rows := make([][]float64, k)
	for i := range rows {
		rows[i] = []float64{float64(i)}
	}
	m, res := clusterRows(t, rows, k)
	for j, c := range m.Training().Clusters {
		require.Equal(t, 1, res.Sizes[j])
		require.Zero(t, c.Distances.P99)
	}
	dr, err := NewDrift(m)
	require.NoError(t, err)
	dr.ObserveBatch([]kmeans.Assignment{{Cluster: 39, Distance: 1}, {Cluster: 0}})
	s := dr.Snapshot()
	assert.Equal(t, int64(2), s.Rows)
	assert.Equal(t, 0.5, s.BeyondP99)
	assert.Equal(t, 1.0, s.Clusters[39].BeyondP99)
	assert.Zero(t, s.Clusters[0].BeyondP99)
}
