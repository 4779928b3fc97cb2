package serve

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"runtime"
	"sync/atomic"
	"time"

	"github.com/centroidlab/centroid/kmeans"
)

// Drift watches the rows a model labels and compares them with the model's
// training data, so a service can tell when today's traffic no longer
// looks like the data the model was made from. It counts, per cluster, the
// rows assigned and the rows farther from their center than the training
// 99th percentile of that cluster ([kmeans.Quantiles] P99), plus rows that could not
// be labelled.
//
// Recording is cheap enough for the hot path: a few atomic additions on
// one of several padded shards, chosen at random so that concurrent callers
// rarely touch the same cache line (the choice only spreads contention; the
// totals do not depend on it). Counters only grow; start a new Drift to
// start over (Holder does so with every new model).
//
// A Drift is safe for concurrent use by multiple goroutines. Create it with
// NewDrift.
type Drift struct {
	k        int
	expected []float64 // training weight shares
	p99      []float64 // training P99 per cluster
	stride   int       // counters per shard, padded to a cache line
	mask     uint32    // shards − 1
	counts   []atomic.Int64
	since    time.Time
}

// Counter layout within a shard.
const (
	offRejected  = 0 // rows refused for other reasons
	offNonFinite = 1 // rows refused for NaN or ±Inf
	offClusters  = 2 // then k assigned counts, then k beyond-P99 counts
)

// NewDrift returns a monitor for the answers of m. It returns an error
// wrapping [kmeans.ErrModel] if m has no training summary (a model decoded from a
// version 1 document).
func NewDrift(m *kmeans.Model) (*Drift, error) {
	if m == nil || m.K() == 0 {
		return nil, fmt.Errorf("%w: model has no centers", kmeans.ErrModel)
	}
	tr := m.Training()
	if tr == nil {
		return nil, fmt.Errorf("%w: model has no training summary to compare with", kmeans.ErrModel)
	}
	shards := min(64, 1<<bits.Len(uint(4*runtime.GOMAXPROCS(0)-1)))
	stride := (offClusters + 2*m.K() + 7) &^ 7 // 8 counters = 64 bytes
	d := &Drift{
		k:        m.K(),
		expected: tr.Shares(),
		p99:      make([]float64, m.K()),
		stride:   stride,
		mask:     uint32(shards - 1),
		counts:   make([]atomic.Int64, shards*stride),
		since:    time.Now().UTC(),
	}
	for j, c := range tr.Clusters {
		d.p99[j] = c.Distances.P99
	}
	return d, nil
}

// shard returns the counters of a randomly chosen shard.
func (d *Drift) shard() []atomic.Int64 {
	s := int(rand.Uint32()&d.mask) * d.stride
	return d.counts[s : s+d.stride]
}

// Observe records one answer of the model. An Assignment whose Cluster is
// out of range (not from this model) counts as rejected. It allocates
// nothing.
func (d *Drift) Observe(a kmeans.Assignment) {
	sh := d.shard()
	if a.Cluster < 0 || a.Cluster >= d.k {
		sh[offRejected].Add(1)
		return
	}
	sh[offClusters+a.Cluster].Add(1)
	if a.Distance > d.p99[a.Cluster] {
		sh[offClusters+d.k+a.Cluster].Add(1)
	}
}

// ObserveBatch records the answers as, adding them up first so that a
// batch costs at most 2k+1 atomic additions. It allocates nothing for
// k ≤ 32.
func (d *Drift) ObserveBatch(as []kmeans.Assignment) {
	if len(as) == 0 {
		return
	}
	var buf [2*32 + 1]int64
	var local []int64
	if 2*d.k+1 <= len(buf) {
		local = buf[:2*d.k+1]
	} else {
		local = make([]int64, 2*d.k+1)
	}
	for _, a := range as {
		if a.Cluster < 0 || a.Cluster >= d.k {
			local[2*d.k]++
			continue
		}
		local[a.Cluster]++
		if a.Distance > d.p99[a.Cluster] {
			local[d.k+a.Cluster]++
		}
	}
	sh := d.shard()
	for j, v := range local[:2*d.k] {
		if v != 0 {
			sh[offClusters+j].Add(v)
		}
	}
	if v := local[2*d.k]; v != 0 {
		sh[offRejected].Add(v)
	}
}

// ObserveError records a row the model refused: as non-finite if err wraps
// [kmeans.ErrNotFinite], else as rejected.
func (d *Drift) ObserveError(err error) {
	if errors.Is(err, kmeans.ErrNotFinite) {
		d.shard()[offNonFinite].Add(1)
		return
	}
	d.shard()[offRejected].Add(1)
}

// DriftSnapshot is a reading of a Drift monitor, ready for encoding/json.
type DriftSnapshot struct {
	// Since is when the monitor started.
	Since time.Time `json:"since"`
	// Rows counts the rows assigned; Rejected and NonFinite the rows
	// refused (NonFinite: NaN or ±Inf values).
	Rows      int64 `json:"rows"`
	Rejected  int64 `json:"rejected"`
	NonFinite int64 `json:"non_finite"`
	// PSI is the population stability index of the cluster shares against
	// the training shares, Σ (o − e)·ln(o/e) over clusters, with shares
	// below PSIFloor raised to it so that empty clusters stay finite. Zero
	// when no row has been assigned.
	PSI float64 `json:"psi"`
	// Reading is PSI in words, by the usual thresholds (common practice):
	// "stable" below 0.1, "moderate shift" from 0.1 to 0.25, "major shift"
	// above; "no data" without rows and "too few rows" below
	// DriftMinRows, where shares are too noisy to read.
	Reading string `json:"reading"`
	// BeyondP99 is the share of assigned rows farther from their center
	// than the training 99th percentile of their cluster; on data like the
	// training data it stays near 0.01 (at most 0.01 on the training rows
	// themselves).
	BeyondP99 float64 `json:"beyond_p99"`
	// Clusters holds one entry per cluster.
	Clusters []ClusterDrift `json:"clusters"`
}

// ClusterDrift is one cluster's part of a DriftSnapshot.
type ClusterDrift struct {
	// Rows assigned to the cluster, and their share of all assigned rows.
	Rows     int64   `json:"rows"`
	Observed float64 `json:"observed_share"`
	// Expected is the cluster's share of the training weight.
	Expected float64 `json:"expected_share"`
	// BeyondP99 is the share of the cluster's rows beyond its training
	// 99th percentile distance.
	BeyondP99 float64 `json:"beyond_p99"`
}

// PSIFloor is the smallest share used in the population stability index
// (a common choice, common practice).
const PSIFloor = 1e-4

// PSI thresholds of DriftSnapshot.Reading (common practice), and the
// number of rows below which it is not read (a rule of thumb, common
// practice).
const (
	PSIModerate  = 0.1
	PSIMajor     = 0.25
	DriftMinRows = 50
)

// Snapshot sums the shards. Counters are read one at a time, so a snapshot
// taken under traffic may miss rows recorded while it runs; each count is
// exact once traffic stops.
func (d *Drift) Snapshot() DriftSnapshot {
	s := DriftSnapshot{Since: d.since, Clusters: make([]ClusterDrift, d.k)}
	beyond := make([]int64, d.k)
	for shard := 0; shard <= int(d.mask); shard++ {
		sh := d.counts[shard*d.stride : (shard+1)*d.stride]
		s.Rejected += sh[offRejected].Load()
		s.NonFinite += sh[offNonFinite].Load()
		for j := range d.k {
			s.Clusters[j].Rows += sh[offClusters+j].Load()
			beyond[j] += sh[offClusters+d.k+j].Load()
		}
	}
	var far int64
	for j := range d.k {
		s.Rows += s.Clusters[j].Rows
		far += beyond[j]
		s.Clusters[j].Expected = d.expected[j]
		if n := s.Clusters[j].Rows; n > 0 {
			s.Clusters[j].BeyondP99 = float64(beyond[j]) / float64(n)
		}
	}
	if s.Rows == 0 {
		s.Reading = "no data"
		return s
	}
	s.BeyondP99 = float64(far) / float64(s.Rows)
	observed := make([]float64, d.k)
	for j := range d.k {
		observed[j] = float64(s.Clusters[j].Rows) / float64(s.Rows)
		s.Clusters[j].Observed = observed[j]
	}
	s.PSI = PSI(observed, d.expected)
	switch {
	case s.Rows < DriftMinRows:
		s.Reading = "too few rows"
	case s.PSI < PSIModerate:
		s.Reading = "stable"
	case s.PSI <= PSIMajor:
		s.Reading = "moderate shift"
	default:
		s.Reading = "major shift"
	}
	return s
}

// PSI returns the population stability index Σ (o_j − e_j)·ln(o_j/e_j) of
// the observed shares o against the expected shares e, each share raised
// to at least PSIFloor. The index is from credit scoring (N. Siddiqi,
// Credit Risk Scorecards, Wiley 2006; from memory). It panics if the
// slices differ in length.
func PSI(observed, expected []float64) float64 {
	if len(observed) != len(expected) {
		panic("serve: PSI of slices of different lengths")
	}
	var s float64
	for j, o := range observed {
		o, e := math.Max(o, PSIFloor), math.Max(expected[j], PSIFloor)
		s += (o - e) * math.Log(o/e)
	}
	return s
}
