package validate_test

import (
	"fmt"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/validate"
)

func ExampleSilhouette() {
	X, groups := stations() // commuter, leisure and mixed docking stations
	s, err := validate.Silhouette(X, groups, distance.Euclidean{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean silhouette %.4f\n", s)
	per, _ := validate.ClusterSilhouettes(X, groups, distance.Euclidean{})
	for c, v := range per {
		fmt.Printf("group %d: %.4f\n", c, v)
	}
	// Output:
	// mean silhouette 0.7616
	// group 0: 0.7699
	// group 1: 0.7134
	// group 2: 0.8215
}
