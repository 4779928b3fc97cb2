package kmeans

import (
	"math"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/nearest"
)

// Lloyd is the standard k-means iteration (S. P. Lloyd, "Least squares
// quantization in PCM", IEEE Trans. Information Theory 28(2), 1982): every
// pass computes the loss of every row against every center. It works with
// every distance.Objective.
//
// Under Euclidean the pass runs the blocked kernel of internal/nearest
// (‖c‖² − 2x·c on shifted rows, argmin fused, in AVX-512 or AVX2 assembly
// where the processor has it; rows with a near-tie recomputed by the
// direct loss), which gives exactly the assignments of the direct
// computation; other metrics compute Metric.Loss directly. Float32 rows
// (Space.X32) run the float32 kernel of internal/asm/f32 with its own
// rounding bound, rows with a near tie there going through the float64
// one-row kernel and, if still close, the direct loss: the same
// assignments again. Extra memory: the packed centers (k·d, twice for
// float32 rows: float32 for the kernel, float64 for the recheck) and, per
// worker, one tile of shifted rows (at most 64 KiB or 16 rows; 32 KiB of
// float32).
type Lloyd struct{}

var _ Method = Lloyd{}

// Start returns Lloyd's per-restart state (packed centers and scratch
// under Euclidean, nothing otherwise).
func (Lloyd) Start(sp *Space, k int) (Pass, error) {
	if sp.arith == distance.SquaredDifferences {
		return &lloydKernel{sp: sp, k: k}, nil
	}
	return lloydPass{sp: sp, k: k}, nil
}

type lloydPass struct {
	sp *Space
	k  int
}

func (p lloydPass) Assign(st *Step) {
	sp, k, d := p.sp, p.k, p.sp.D
	sp.Parallel(func(b int) {
		part := &st.Blocks[b]
		part.Reset()
		lo, hi := sp.Block(b)
		moved := 0
		var buf []float64
		if sp.X32 != nil {
			buf = make([]float64, d)
		}
		for i := lo; i < hi; i++ {
			x := sp.RowTo(buf, i)
			best, bestLoss := 0, math.Inf(1)
			for j := range k {
				if l := sp.Metric.Loss(x, st.Centers[j*d:(j+1)*d]); l < bestLoss {
					best, bestLoss = j, l
				}
			}
			if st.Assign[i] != best {
				moved++
				st.Assign[i] = best
			}
			sp.Add(part, i, best, bestLoss)
		}
		st.Moved.Add(int64(moved))
		st.Distances.Add(int64(hi-lo) * int64(k))
	})
}

// lloydKernel is Lloyd's pass for the Euclidean metric through the blocked
// kernel of internal/nearest: ‖c‖² − 2x·c on rows and centers shifted by the
// mean of the centers, argmin fused; a row whose two best values are within
// the kernel's rounding bound is recomputed with the direct loss against
// every center, so the assignments are exactly those of the direct
// computation (Lloyd's rule, lowest index on ties).
type lloydKernel struct {
	sp       *Space
	k        int
	packed   nearest.Centers
	packed32 nearest.Centers32
	pool     scratchPool[scratch]
}

func (p *lloydKernel) Assign(st *Step) {
	sp, k, d := p.sp, p.k, p.sp.D
	if sp.X32 != nil {
		p.assign32(st)
		return
	}
	p.packed.Pack(st.Centers, k, d)
	tile := kernelTile(d)
	sp.Parallel(func(b int) {
		ks := p.pool.get()
		defer p.pool.put(ks)
		part := &st.Blocks[b]
		part.Reset()
		lo, hi := sp.Block(b)
		moved, evals := 0, int64(hi-lo)*int64(k)
		ks.res = growInts(ks.res, tile)
		for t0 := lo; t0 < hi; t0 += tile {
			t1 := min(hi, t0+tile)
			direct := func(i, j int) float64 { return sp.Loss(t0+i, st.Centers[j*d:(j+1)*d]) }
			evals += int64(ks.s.Assign(ks.res, sp.X[t0*d:t1*d], t1-t0, &p.packed, direct)) * int64(k)
			for i := t0; i < t1; i++ {
				a := ks.res[i-t0]
				if st.Assign[i] != a {
					moved++
					st.Assign[i] = a
				}
				var loss float64
				if st.NeedCost {
					loss = sp.Loss(i, st.Centers[a*d:(a+1)*d])
					evals++
				}
				sp.Add(part, i, a, loss)
			}
		}
		st.Moved.Add(int64(moved))
		st.Distances.Add(evals)
	})
}

// assign32 is Assign for float32 rows: the float32 kernel, then the
// float64 one-row kernel and the direct loss for the rows it leaves
// uncertain (nearest.Searcher32). Each row the float64 kernel measures
// counts k evaluations more, and k more again if it is measured directly.
func (p *lloydKernel) assign32(st *Step) {
	sp, k, d := p.sp, p.k, p.sp.D
	p.packed32.Pack(st.Centers, k, d)
	tile := kernelTile(d)
	sp.Parallel(func(b int) {
		ks := p.pool.get()
		defer p.pool.put(ks)
		part := &st.Blocks[b]
		part.Reset()
		lo, hi := sp.Block(b)
		moved, evals := 0, int64(hi-lo)*int64(k)
		ks.res = growInts(ks.res, tile)
		for t0 := lo; t0 < hi; t0 += tile {
			t1 := min(hi, t0+tile)
			direct := func(i, j int) float64 { return nearest.SqDist(sp.row32(t0+i), st.Centers[j*d:(j+1)*d]) }
			wide, rechecked := ks.s32.Assign(ks.res, sp.X32[t0*d:t1*d], t1-t0, &p.packed32, direct)
			evals += int64(wide+rechecked) * int64(k)
			for i := t0; i < t1; i++ {
				a := ks.res[i-t0]
				if st.Assign[i] != a {
					moved++
					st.Assign[i] = a
				}
				var loss float64
				if st.NeedCost {
					loss = nearest.SqDist(sp.row32(i), st.Centers[a*d:(a+1)*d])
					evals++
				}
				sp.Add(part, i, a, loss)
			}
		}
		st.Moved.Add(int64(moved))
		st.Distances.Add(evals)
	})
}
