package profile_test

import (
	"context"
	"fmt"
	"log"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/profile"
	"github.com/centroidlab/centroid/scale"
)

// Riverton Bikes clusters 200 of its docking stations into five groups and
// asks what sets each group apart, in trips, minutes and metres.
func ExampleExplain() {
	_, X := bikeshare.Generate(200, 7)
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{
		Data:     X,
		K:        5,
		Scaler:   &scale.ZScore{},
		Features: bikeshare.Features(), // the model's schema
	}, &kmeans.Settings{Seed: 7}, nil)
	if err != nil {
		log.Fatal(err)
	}
	rep, err := profile.Explain(X, res.Assignments, &profile.Options{
		Names: res.Model.Features(), // name the columns as the model does
		Units: bikeshare.Units(),
		K:     res.Model.K(),
		Noun:  "stations",
	})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Print(rep)
	// Output:
	// 200 stations · 5 clusters · 6 features, in original units
	// shift = (cluster mean − overall mean) / overall sd; a feature sets a cluster apart when |shift| ≥ 0.5
	//
	// all 200 stations
	//   feature            median    middle half   mean     sd
	//   trips_per_day         165     92 –   263    188    114  trips/day
	//   weekend_share       0.279  0.159 – 0.398  0.286  0.138  fraction
	//   peak_hour_ratio     0.326  0.211 – 0.490  0.347  0.151  fraction
	//   mean_trip_minutes    16.2   10.9 –  26.3   19.5   10.6  minutes
	//   return_imbalance     0.40  -7.00 –  5.10  -0.51   7.16  bikes/day
	//   elevation_m          28.0   14.0 –  95.0   55.7   54.0  m
	//
	// cluster 0 · 50 stations (25.0%)
	//   set apart by (mean vs overall mean)
	//     elevation_m       137.9  m          vs   55.7  overall  (+1.5 sd)
	//     return_imbalance  -9.98  bikes/day  vs  -0.51  overall  (-1.3 sd)
	//     trips_per_day        64  trips/day  vs    188  overall  (-1.1 sd)
	//     peak_hour_ratio   0.439  fraction   vs  0.347  overall  (+0.6 sd)
	//   feature            median     middle half
	//   trips_per_day          60      47 –    76  trips/day
	//   weekend_share       0.279   0.236 – 0.351  fraction
	//   peak_hour_ratio     0.455   0.389 – 0.490  fraction
	//   mean_trip_minutes    15.7    13.5 –  19.7  minutes
	//   return_imbalance    -9.90  -12.10 – -7.80  bikes/day
	//   elevation_m         134.0   119.0 – 159.0  m
	//
	// cluster 1 · 43 stations (21.5%)
	//   set apart by (mean vs overall mean)
	//     mean_trip_minutes   36.1  minutes    vs   19.5  overall  (+1.6 sd)
	//     weekend_share      0.445  fraction   vs  0.286  overall  (+1.2 sd)
	//     peak_hour_ratio    0.188  fraction   vs  0.347  overall  (-1.1 sd)
	//     elevation_m         11.5  m          vs   55.7  overall  (-0.8 sd)
	//     return_imbalance    3.80  bikes/day  vs  -0.51  overall  (+0.6 sd)
	//   feature            median    middle half
	//   trips_per_day         179    128 –   217  trips/day
	//   weekend_share       0.424  0.394 – 0.488  fraction
	//   peak_hour_ratio     0.181  0.150 – 0.227  fraction
	//   mean_trip_minutes    34.4   31.6 –  40.3  minutes
	//   return_imbalance     3.00   1.00 –  5.70  bikes/day
	//   elevation_m           7.0    4.0 –  16.0  m
	//
	// cluster 2 · 41 stations (20.5%)
	//   set apart by (mean vs overall mean)
	//     peak_hour_ratio    0.550  fraction   vs  0.347  overall  (+1.3 sd)
	//     trips_per_day        329  trips/day  vs    188  overall  (+1.2 sd)
	//     weekend_share      0.137  fraction   vs  0.286  overall  (-1.1 sd)
	//     return_imbalance    4.90  bikes/day  vs  -0.51  overall  (+0.8 sd)
	//     mean_trip_minutes   12.0  minutes    vs   19.5  overall  (-0.7 sd)
	//     elevation_m         23.4  m          vs   55.7  overall  (-0.6 sd)
	//   feature            median    middle half
	//   trips_per_day         327    278 –   376  trips/day
	//   weekend_share       0.125  0.109 – 0.158  fraction
	//   peak_hour_ratio     0.555  0.521 – 0.579  fraction
	//   mean_trip_minutes    11.6    9.9 –  13.5  minutes
	//   return_imbalance     5.30   2.40 –  7.90  bikes/day
	//   elevation_m          21.0   17.0 –  28.0  m
	//
	// cluster 3 · 33 stations (16.5%)
	//   set apart by (mean vs overall mean)
	//     peak_hour_ratio   0.203  fraction   vs  0.347  overall  (-1.0 sd)
	//     weekend_share     0.387  fraction   vs  0.286  overall  (+0.7 sd)
	//     elevation_m        17.5  m          vs   55.7  overall  (-0.7 sd)
	//     return_imbalance   3.60  bikes/day  vs  -0.51  overall  (+0.6 sd)
	//   feature            median    middle half
	//   trips_per_day         130    112 –   158  trips/day
	//   weekend_share       0.387  0.347 – 0.419  fraction
	//   peak_hour_ratio     0.207  0.170 – 0.232  fraction
	//   mean_trip_minutes    21.7   19.8 –  24.0  minutes
	//   return_imbalance     3.20   0.10 –  8.00  bikes/day
	//   elevation_m          15.0   12.0 –  21.0  m
	//
	// cluster 4 · 33 stations (16.5%)
	//   set apart by (mean vs overall mean)
	//     mean_trip_minutes    8.6  minutes    vs   19.5  overall  (-1.0 sd)
	//     weekend_share      0.155  fraction   vs  0.286  overall  (-1.0 sd)
	//     trips_per_day        262  trips/day  vs    188  overall  (+0.6 sd)
	//   feature            median    middle half
	//   trips_per_day         245    186 –   341  trips/day
	//   weekend_share       0.154  0.123 – 0.182  fraction
	//   peak_hour_ratio     0.298  0.265 – 0.349  fraction
	//   mean_trip_minutes     8.6    7.4 –   9.2  minutes
	//   return_imbalance    -1.50  -5.50 –  0.20  bikes/day
	//   elevation_m          68.0   50.0 –  80.0  m
}
