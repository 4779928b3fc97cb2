package validate_test

import (
	"fmt"

	"github.com/centroidlab/centroid/validate"
)

func ExampleKnee() {
	// Cost (within-cluster sum of squares) of clustering the docking
	// stations of a bike-share network into k groups, for k = 1..8.
	k := []float64{1, 2, 3, 4, 5, 6, 7, 8}
	cost := []float64{9800, 4100, 1700, 1450, 1280, 1150, 1060, 990}
	i, err := validate.Knee(k, cost, nil) // accept a bend after one flat step
	if err != nil {
		fmt.Println(err)
		return
	}
	bend, _ := validate.KneeCurve(k, cost)
	fmt.Printf("elbow at k = %v (%.2f below the chord)\n", k[i], bend[i])
	// Output:
	// elbow at k = 3 (0.63 below the chord)
}
