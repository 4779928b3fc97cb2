package serve

import (
	"context"
	"encoding/json"
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// TestServeAllocs checks that the vector and named-field paths allocate
// nothing.
func TestServeAllocs(t *testing.T) {
	for _, d := range []int{6, 40} {
		x := blobs(300, d, 5, 4)
		names := make([]string, d)
		for i := range names {
			names[i] = fmt.Sprintf("f%02d", i)
		}
		for _, sc := range []scale.Scaler{nil, &scale.ZScore{}} {
			res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 5, Scaler: sc}, &kmeans.Settings{Restarts: 1}, nil)
			require.NoError(t, err)
			m, err := res.Model.WithFeatures(names)
			require.NoError(t, err)
			row := x.RawRowView(7)
			rec := make(Record, d)
			fields := make(map[string]float64, d)
			for i, name := range names {
				rec[i] = Field{name, row[i]}
				fields[name] = row[i]
			}
			batch := mat.NewDense(20, d, x.RawMatrix().Data[:20*d])
			dst := make([]kmeans.Assignment, 20)
			labels := make([]int, 20)
			dr, err := NewDrift(m)
			require.NoError(t, err)
			var sink kmeans.Assignment
			calls := map[string]func(){
				"Nearest":      func() { sink.Cluster, sink.Distance, _ = m.Nearest(row) },
				"Assign":       func() { sink, _ = m.Assign(row) },
				"AssignRecord": func() { sink, _ = AssignRecord(m, rec) },
				"AssignMap":    func() { sink, _ = AssignMap(m, fields) },
				"AssignBatch":  func() { _ = m.AssignBatch(dst, batch) },
				"NearestBatch": func() { _ = m.NearestBatch(labels, nil, batch) },
				"Observe":      func() { dr.Observe(sink) },
				"ObserveBatch": func() { dr.ObserveBatch(dst) },
			}
			for name, call := range calls {
				assert.Zero(t, testing.AllocsPerRun(50, call), "%s d=%d scaler=%v", name, d, sc)
			}
			want, err := m.Assign(row)
			require.NoError(t, err)
			for _, got := range []func() (kmeans.Assignment, error){
				func() (kmeans.Assignment, error) { return AssignRecord(m, rec) },
				func() (kmeans.Assignment, error) { return AssignMap(m, fields) },
			} {
				a, err := got()
				require.NoError(t, err)
				require.Equal(t, want, a)
			}
		}
	}
}

// TestHolderSwapUnderLoad has readers label probe rows while a writer
// swaps between two models whose answers differ on every probe; each
// reader's answers must all come from the model it loaded.
func TestHolderSwapUnderLoad(t *testing.T) {
	_, x := bikeshare.Generate(300, 8)
	resA, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 4, Scaler: &scale.ZScore{}}, &kmeans.Settings{Restarts: 2, Seed: 1}, nil)
	require.NoError(t, err)
	resB, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 7, Scaler: &scale.MinMax{}}, &kmeans.Settings{Restarts: 2, Seed: 2}, nil)
	require.NoError(t, err)
	a, b := resA.Model, resB.Model
	probes := bikeshare.NewStations(64, 4)
	answers := map[*kmeans.Model][]kmeans.Assignment{}
	for _, m := range []*kmeans.Model{a, b} {
		for _, p := range probes {
			as, err := m.Assign(p.Features)
			require.NoError(t, err)
			answers[m] = append(answers[m], as)
		}
	}
	// The two models must be told apart by every probe.
	for i := range probes {
		require.NotEqual(t, answers[a][i].Distance, answers[b][i].Distance, "probe %d", i)
	}

	var h Holder
	assert.Nil(t, h.Load())
	assert.Nil(t, h.Model())
	_, err = h.Swap(a)
	require.NoError(t, err)

	readers, swaps := 8, 2000
	if testing.Short() {
		swaps = 300
	}
	var stop atomic.Bool
	var wrong, reads atomic.Int64
	var wg sync.WaitGroup
	for r := range readers {
		wg.Go(func() {
			for i := r; !stop.Load(); i++ {
				s := h.Load()
				want := answers[s.Model]
				for p := range probes {
					got, err := s.Model.Assign(probes[(i+p)%len(probes)].Features)
					if err != nil || got != want[(i+p)%len(probes)] {
						wrong.Add(1)
					}
				}
				reads.Add(1)
			}
		})
	}
	for i := range swaps {
		next := a
		if i%2 == 0 {
			next = b
		}
		_, err := h.Swap(next)
		require.NoError(t, err)
	}
	// On a busy machine the swaps can finish before every reader has been
	// scheduled; let each reader complete some reads before stopping.
	for reads.Load() < int64(4*readers) {
		runtime.Gosched()
	}
	stop.Store(true)
	wg.Wait()
	assert.Zero(t, wrong.Load())
	assert.GreaterOrEqual(t, reads.Load(), int64(4*readers))
}

func TestHolderRefuses(t *testing.T) {
	_, x := bikeshare.Generate(200, 8)
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 3}, &kmeans.Settings{Restarts: 1}, nil)
	require.NoError(t, err)
	named, err := res.Model.WithFeatures(bikeshare.Features())
	require.NoError(t, err)
	other := bikeshare.Features()
	other[0] = "trips_per_week"
	renamed, err := res.Model.WithFeatures(other)
	require.NoError(t, err)

	h := Holder{Accept: SameSchema}
	_, err = h.Swap(nil)
	require.ErrorIs(t, err, kmeans.ErrModel)
	_, err = h.Swap(&kmeans.Model{})
	require.ErrorIs(t, err, kmeans.ErrModel)
	prev, err := h.Swap(named)
	require.NoError(t, err)
	assert.Nil(t, prev)
	for name, bad := range map[string]*kmeans.Model{"renamed": renamed, "unnamed": res.Model} {
		_, err = h.Swap(bad)
		require.ErrorIs(t, err, kmeans.ErrSchema, name)
		assert.Same(t, named, h.Model(), "a refused swap keeps the old model")
	}
	s := h.Load()
	sum, err := named.Checksum()
	require.NoError(t, err)
	assert.Equal(t, sum, s.Checksum)
	assert.NotNil(t, s.Drift)
	prev, err = h.Swap(named.WithCreated(s.Since))
	require.NoError(t, err)
	assert.Same(t, s, prev)

	// The document is encoded once per Served: the same bytes each time.
	want, err := json.Marshal(named)
	require.NoError(t, err)
	doc, err := s.Document()
	require.NoError(t, err)
	again, err := s.Document()
	require.NoError(t, err)
	assert.Equal(t, string(want), string(doc))
	assert.Same(t, &doc[0], &again[0])
	plain := &Served{Model: named} // not made by Swap: encoded on each call
	doc, err = plain.Document()
	require.NoError(t, err)
	assert.Equal(t, string(want), string(doc))
}
