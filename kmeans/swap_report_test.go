package kmeans

import (
	"context"
	"fmt"
	"os"
	"slices"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/reference"
)

// TestSwapReport prints the refinement table of BENCHMARKS.md: for every
// reference set and the generated grid, the worst cost ÷ the cost of the
// published partition and the seeds with a wrong center over ten seeds, for
// the previous default (ten k-means++ restarts, no refinement) and the
// current default, and the median time of each against one plain restart,
// all measured in one run. It runs only with CENTROID_SWAP_REPORT=1 (about
// ten minutes).
func TestSwapReport(t *testing.T) {
	if os.Getenv("CENTROID_SWAP_REPORT") == "" {
		t.Skip("set CENTROID_SWAP_REPORT=1 to print the refinement table")
	}
	type set struct {
		name   string
		x      *mat.Dense
		labels []int
		k      int
	}
	var sets []set
	for _, c := range []struct {
		name string
		k    int
	}{{"s1", 15}, {"s2", 15}, {"s3", 15}, {"s4", 15}, {"a1", 20}, {"a2", 35}, {"a3", 50}, {"unbalance", 8}} {
		s := reference.LoadOrSkip(t, c.name)
		sets = append(sets, set{c.name, s.X, s.Labels, c.k})
	}
	gx, gl := gridMixture(100000, 1)
	sets = append(sets, set{"grid 10×10 (100 000 rows)", gx, gl, 100})
	fmt.Println("| set | k | previous default: wrong seeds, worst cost ÷ partition | default: wrong seeds, worst cost ÷ partition, mean trials | time ÷ one plain restart: previous default / default | default ÷ previous default |")
	fmt.Println("|---|---|---|---|---|---|")
	for _, s := range sets {
		truth := labelMeans(s.x, s.labels, s.k)
		trueCost := partitionCost(s.x, s.labels, truth)
		run := func(seed uint64, set Settings) (wrong bool, ratio float64, secs float64, trials int) {
			set.Seed = seed
			t0 := time.Now()
			res, err := Cluster(context.Background(), Problem{Data: s.x, K: s.k}, &set, nil)
			secs = time.Since(t0).Seconds()
			require.NoError(t, err)
			found := res.Model.Centers()
			wrong = orphans(found, truth) > 0 || orphans(truth, found) > 0
			return wrong, res.Cost / trueCost, secs, res.Stats.SwapTrials
		}
		var prevT, defT, plainT []float64
		prevWrong, defWrong, trials := 0, 0, 0
		prevWorst, defWorst := 0.0, 0.0
		for seed := range uint64(10) {
			w, r, sec, _ := run(seed, Settings{Restarts: 10, SwapTrials: -1})
			prevT = append(prevT, sec)
			prevWorst = max(prevWorst, r)
			if w {
				prevWrong++
			}
			w, r, sec, tr := run(seed, Settings{})
			defT = append(defT, sec)
			defWorst = max(defWorst, r)
			trials += tr
			if w {
				defWrong++
			}
			_, _, sec, _ = run(seed, Settings{Restarts: 1, SwapTrials: -1})
			plainT = append(plainT, sec)
		}
		med := func(v []float64) float64 { v = slices.Clone(v); slices.Sort(v); return (v[4] + v[5]) / 2 }
		p, d, one := med(prevT), med(defT), med(plainT)
		fmt.Printf("| %s | %d | %d/10, %.4f | %d/10, %.4f, %d | %.1f× / %.1f× | %.2f× |\n",
			s.name, s.k, prevWrong, prevWorst, defWrong, defWorst, trials/10, p/one, d/one, d/p)
	}
}
