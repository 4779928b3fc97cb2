package profile_test

import (
	"context"
	"fmt"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/profile"
	"github.com/centroidlab/centroid/scale"
	"gonum.org/v1/gonum/mat"
)

// Six docking stations of a fictional bike-share scheme: profile the two
// clusters in trips per day and weekend share.
func ExampleDescribe() {
	stations := mat.NewDense(6, 2, []float64{
		420, 0.18,
		390, 0.21,
		450, 0.16,
		95, 0.52,
		80, 0.61,
		110, 0.48,
	})
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: stations, K: 2, Scaler: &scale.ZScore{}}, &kmeans.Settings{Seed: 1}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	pf, err := profile.Describe(stations, res, &profile.ProfileOptions{
		Features: []string{"trips_per_day", "weekend_share"},
		Units:    []string{"trips/day", "fraction"},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Print(pf)
	// Output:
	// 6 rows, total weight 6, 2 clusters, 2 features
	//
	// all rows
	//     feature        unit        mean     sd    min     q1  median     q3    max
	//     trips_per_day  trips/day    258    164     80     95     250    420    450
	//     weekend_share  fraction   0.360  0.181  0.160  0.180   0.345  0.520  0.610
	//
	// cluster 0: 3 rows, 50.0% of the weight
	//   sets it apart (|z| ≥ 0.5): high trips_per_day (+1.0 sd), low weekend_share (-1.0 sd)
	//     feature        unit        mean     sd    min     q1  median     q3    max      z
	//     trips_per_day  trips/day    420     24    390    390     420    450    450  +0.99
	//     weekend_share  fraction   0.183  0.021  0.160  0.160   0.180  0.210  0.210  -0.97
	//
	// cluster 1: 3 rows, 50.0% of the weight
	//   sets it apart (|z| ≥ 0.5): low trips_per_day (-1.0 sd), high weekend_share (+1.0 sd)
	//     feature        unit        mean     sd    min     q1  median     q3    max      z
	//     trips_per_day  trips/day     95     12     80     80      95    110    110  -0.99
	//     weekend_share  fraction   0.537  0.054  0.480  0.480   0.520  0.610  0.610  +0.97
}
