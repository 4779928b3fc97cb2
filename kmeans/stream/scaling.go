package stream

import (
	"encoding/json"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// scalerKind says how a scaler is learned from a stream.
type scalerKind int

const (
	noScaler     scalerKind = iota
	zscoreExact             // two passes: mean and range, then the corrected sums of squares
	minmaxExact             // one pass: the range
	sampleScaler            // Learn on a uniform sample of SampleRows rows
)

func kindOf(s scale.Scaler) scalerKind {
	switch s.(type) {
	case nil:
		return noScaler
	case scale.ZScore, *scale.ZScore:
		return zscoreExact
	case scale.MinMax, *scale.MinMax:
		return minmaxExact
	}
	return sampleScaler
}

// firstKeySeed separates the draw of the first k-means‖ candidate from the
// other uses of Settings.Seed.
const firstKeySeed = 0x6b6d6561_6e737c7c

// learnScaler learns p.Scaler over a reopenable source. If wantFirst, the
// first pass also draws the first k-means‖ candidate (the row of smallest
// key, a uniform draw), kept in j.first once scaled. ZScore and MinMax
// reproduce scale's Learn on all rows bit for bit: the same sums in the
// same (row) order.
func (j *job) learnScaler(wantFirst bool) error {
	kind := kindOf(j.p.Scaler)
	if kind == noScaler {
		return nil
	}
	d := j.d
	lo, hi, mean := make([]float64, d), make([]float64, d), make([]float64, d)
	var sample *rowSample
	if kind == sampleScaler {
		sample = newRowSample(j.set.SampleRows, d, mix64(j.set.Seed^0x73616d706c65))
	}
	first := make([]float64, d)
	bestKey := uint64(math.MaxUint64)
	var n int64
	hook := j.begin(StageScale)
	err := j.rd.pass(j.ctx, func(x []float64, m int, at int64) error {
		for t := range m {
			row := x[t*d : (t+1)*d]
			i := at + int64(t)
			if wantFirst {
				if key := rowKey(j.set.Seed^firstKeySeed, i); key < bestKey {
					bestKey = key
					copy(first, row)
				}
			}
			if sample != nil {
				sample.add(i, row)
				continue
			}
			if i == 0 {
				copy(lo, row)
				copy(hi, row)
			} else {
				for c, v := range row {
					lo[c] = min(lo[c], v)
					hi[c] = max(hi[c], v)
				}
			}
			for c, v := range row {
				mean[c] += 1 * v
			}
		}
		n = at + int64(m)
		hook(n, false)
		return nil
	})
	if err != nil {
		return err
	}
	hook(n, true)
	switch kind {
	case sampleScaler:
		rows, _ := sample.sorted()
		learned, err := j.p.Scaler.Learn(mat.NewDense(len(rows)/d, d, rows), nil)
		if err != nil {
			return fmt.Errorf("%w: scaler: %w", kmeans.ErrData, err)
		}
		if learned.Dim() != d {
			return fmt.Errorf("%w: scaler learned %d columns, data has %d", kmeans.ErrData, learned.Dim(), d)
		}
		j.scaler = learned
		j.res.Scaling = fmt.Sprintf("%s learned on a uniform sample of %d of %d rows", learned.Kind(), len(rows)/d, n)
	case minmaxExact:
		for c := range hi {
			hi[c] -= lo[c]
			if hi[c] == 0 {
				hi[c] = 1
			}
		}
		if j.scaler, err = affineScaler("minmax", lo, hi); err != nil {
			return err
		}
		j.res.Scaling = "minmax learned exactly in 1 pass"
	case zscoreExact:
		total := float64(n)
		for c := range mean {
			mean[c] /= total
		}
		ss, comp := make([]float64, d), make([]float64, d)
		hook := j.begin(StageScale)
		err := j.rd.pass(j.ctx, func(x []float64, m int, at int64) error {
			for t := range m {
				for c, v := range x[t*d : (t+1)*d] {
					e := v - mean[c]
					ss[c] += 1 * e * e
					comp[c] += 1 * e
				}
			}
			hook(at+int64(m), false)
			return nil
		})
		if err != nil {
			return err
		}
		hook(n, true)
		std := ss
		for c := range std {
			if lo[c] == hi[c] {
				mean[c], std[c] = lo[c], 1
				continue
			}
			std[c] = math.Sqrt(max(0, (ss[c]-comp[c]*comp[c]/total)/total))
			if std[c] == 0 {
				std[c] = 1
			}
		}
		if j.scaler, err = affineScaler("zscore", mean, std); err != nil {
			return err
		}
		j.res.Scaling = "zscore learned exactly in 2 passes"
	}
	if wantFirst {
		j.first = make([]float64, d)
		j.scaler.Apply(j.first, first)
	}
	return nil
}

// affineScaler returns the scaler of package scale of the given kind
// ("zscore", "minmax") with these parameters, through its documented,
// versioned encoding: scale has no constructor from parameters.
func affineScaler(kind string, shift, div []float64) (scale.Scaler, error) {
	for c := range shift {
		if math.IsInf(shift[c], 0) || math.IsNaN(shift[c]) || !(div[c] > 0) || math.IsInf(div[c], 1) {
			return nil, fmt.Errorf("%w: scaler: statistics of column %d overflow (%v, %v)", kmeans.ErrData, c, shift[c], div[c])
		}
	}
	version, err := scalerVersion()
	if err != nil {
		return nil, err
	}
	doc, err := json.Marshal(struct {
		Kind    string    `json:"kind"`
		Version int       `json:"version"`
		Dim     int       `json:"dim"`
		Offset  []float64 `json:"offset"`
		Divisor []float64 `json:"divisor"`
	}{kind, version, len(shift), shift, div})
	if err != nil {
		return nil, fmt.Errorf("%w: scaler: %w", kmeans.ErrData, err)
	}
	s, err := scale.Decode(doc)
	if err != nil {
		return nil, fmt.Errorf("%w: scaler: %w", kmeans.ErrData, err)
	}
	return s, nil
}

// scalerVersion returns the version scale writes, read from a document it
// encodes.
func scalerVersion() (int, error) {
	z, err := scale.ZScore{}.Learn(mat.NewDense(2, 1, []float64{0, 1}), nil)
	if err != nil {
		return 0, err
	}
	b, err := scale.Encode(z)
	if err != nil {
		return 0, err
	}
	var doc struct {
		Version int `json:"version"`
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		return 0, err
	}
	return doc.Version, nil
}
