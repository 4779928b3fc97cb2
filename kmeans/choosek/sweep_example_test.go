package choosek_test

import (
	"context"
	"fmt"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/choosek"
	"github.com/centroidlab/centroid/scale"
)

// Riverton Bikes (invented demo data) asks how many kinds of docking
// station it has: sweep k from 1 to 7 on the z-scored usage features and
// read the votes.
func ExampleSweep() {
	_, X := bikeshare.Generate(200, 1)
	sw, err := choosek.Sweep(context.Background(), kmeans.Problem{Data: X, Scaler: &scale.ZScore{}},
		[]int{1, 2, 3, 4, 5, 6, 7}, &kmeans.Settings{Seed: 1}, nil,
		&choosek.Options{GapReferences: 5, Stability: choosek.StabilityOptions{Resamples: 5}})
	if err != nil {
		fmt.Println(err)
		return
	}
	rec := sw.Recommendation
	fmt.Printf("recommended k = %d (%d of %d votes)\n", rec.K, rec.Support, rec.Cast)
	for _, v := range rec.Votes {
		fmt.Printf("%-18s k = %d\n", v.By, v.K)
	}
	st := sw.Point(rec.K).Stability
	fmt.Printf("stability at k = %d: %s (weakest cluster's mean Jaccard %.2f)\n", rec.K, st.Verdict(), st.MinJaccard())
	fmt.Println("sizes:", sw.Recommended().Sizes)
	// Output:
	// recommended k = 3 (5 of 6 votes)
	// silhouette         k = 3
	// Davies–Bouldin     k = 3
	// Calinski–Harabasz  k = 3
	// Dunn               k = 3
	// knee               k = 3
	// gap                k = 5
	// stability at k = 3: stable (weakest cluster's mean Jaccard 1.00)
	// sizes: [76 74 50]
}

// Two well-separated groups of stations are reproduced by every resample on
// 80% subsamples.
func ExampleMeasureStability() {
	_, X := bikeshare.Generate(120, 3)
	p := kmeans.Problem{Data: X, K: 2, Scaler: &scale.ZScore{}}
	st, err := choosek.MeasureStability(context.Background(), p, nil, &kmeans.Settings{Seed: 1}, nil, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean ARI between resamples: %.2f\n", st.MeanARI)
	for j, v := range st.Verdicts() {
		fmt.Printf("cluster %d: Jaccard %.2f, %s\n", j, st.Jaccard[j], v)
	}
	// Output:
	// mean ARI between resamples: 0.81
	// cluster 0: Jaccard 0.94, stable
	// cluster 1: Jaccard 0.95, stable
}
