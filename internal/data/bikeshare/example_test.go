package bikeshare_test

import (
	"fmt"
	"strings"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
)

func ExampleGenerate() {
	stations, x := bikeshare.Generate(120, 1)
	rows, cols := x.Dims()
	fmt.Println(bikeshare.Operator, rows, "stations,", cols, "features")
	fmt.Println(strings.Join(bikeshare.Features(), " "))
	kinds := bikeshare.Kinds()
	for _, s := range stations[:3] {
		fmt.Printf("%s %-18s %-20s %v\n", s.ID, s.Name, kinds[s.Kind], s.Features)
	}
	// Output:
	// Riverton Bikes 120 stations, 6 features
	// trips_per_day weekend_share peak_hour_ratio mean_trip_minutes return_imbalance elevation_m
	// RB-001 Museum Row 1       old town             [169 0.283 0.167 27.9 9.3 14]
	// RB-002 Boardwalk 1        waterfront leisure   [131 0.504 0.196 41.4 3.5 7]
	// RB-003 North Rail Halt 1  commuter hub         [278 0.109 0.586 9.2 0.3 18]
}

func ExampleNewStations() {
	for _, s := range bikeshare.NewStations(2, 1) {
		fmt.Println(s.ID, s.Name, s.Features)
	}
	// Output:
	// RB-N01 Ridge Road 1 (new) [81 0.291 0.313 14.7 -12.5 116]
	// RB-N02 Summit Lane 1 (new) [42 0.319 0.384 11.6 -3.7 115]
}
