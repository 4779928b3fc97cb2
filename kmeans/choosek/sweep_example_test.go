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
// read how far the criteria agree on each k.
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
	fmt.Printf("recommended k = %d (combined score %.2f, clear structure: %v)\n", rec.K, rec.Combined, rec.Clear)
	for _, s := range rec.Standings[1:] {
		fmt.Printf("k = %d  agreement %.2f  ranked first by %v\n", s.K, s.Combined, s.First)
	}
	st := sw.Point(rec.K).Stability
	fmt.Printf("stability at k = %d: weakest cluster %s (mean Jaccard %.2f)\n", rec.K, st.Reading(), st.MinJaccard())
	fmt.Println("sizes:", sw.Recommended().Sizes)
	// Output:
	// recommended k = 3 (combined score 0.97, clear structure: true)
	// k = 2  agreement 0.41  ranked first by []
	// k = 3  agreement 0.97  ranked first by [silhouette Davies–Bouldin Calinski–Harabasz Dunn knee]
	// k = 4  agreement 0.85  ranked first by []
	// k = 5  agreement 0.52  ranked first by [gap]
	// k = 6  agreement 0.33  ranked first by []
	// k = 7  agreement 0.24  ranked first by []
	// stability at k = 3: weakest cluster reproduced (mean Jaccard 1.00)
	// sizes: [76 74 50]
}

// A sweep reports its jobs as they finish. Jobs of different ks run at
// the same time, so this example counts the reports per stage instead of
// printing them in the order they came.
func ExampleSweep_progress() {
	_, X := bikeshare.Generate(300, 2)
	reports := map[choosek.Stage]int{}
	var last choosek.Progress
	opts := &choosek.Options{GapReferences: 4, Stability: choosek.StabilityOptions{Resamples: 3},
		Progress: func(p choosek.Progress) { reports[p.Stage]++; last = p }}
	_, err := choosek.Sweep(context.Background(), kmeans.Problem{Data: X, Scaler: &scale.ZScore{}},
		[]int{1, 2, 3, 4, 5}, &kmeans.Settings{Seed: 1, Restarts: 4}, nil, opts)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range []choosek.Stage{choosek.StageClustering, choosek.StageIndices, choosek.StageStability, choosek.StageGap} {
		fmt.Printf("%-10s %2d reports\n", s, reports[s])
	}
	fmt.Printf("last: %s, overall %.0f%%\n", last.Stage, 100*last.Overall)
	// Output:
	// clustering  5 reports
	// indices     4 reports
	// stability  12 reports
	// gap        25 reports
	// last: gap, overall 100%
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
	for j, v := range st.Readings() {
		fmt.Printf("cluster %d: Jaccard %.2f, %s\n", j, st.Jaccard[j], v)
	}
	// Output:
	// mean ARI between resamples: 0.81
	// cluster 0: Jaccard 0.94, reproduced
	// cluster 1: Jaccard 0.95, reproduced
}
