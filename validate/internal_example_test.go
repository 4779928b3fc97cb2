package validate_test

import (
	"fmt"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/validate"
)

// stations is a fictional bike-share operator's docking stations described
// by the percentage of their trips that start in the weekday morning peak
// and the percentage on weekends, with a grouping into commuter, leisure and
// mixed stations.
func stations() (*mat.Dense, []int) {
	X := mat.NewDense(8, 2, []float64{
		42, 10, // commuter: busy 7–9 am, quiet at weekends
		38, 12,
		45, 8,
		10, 55, // leisure: parks and the waterfront
		12, 48,
		8, 60,
		25, 30, // mixed
		28, 27,
	})
	return X, []int{0, 0, 0, 1, 1, 1, 2, 2}
}

func ExampleDaviesBouldin() {
	X, groups := stations()
	db, err := validate.DaviesBouldin(X, groups)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("Davies-Bouldin %.4f (lower is better)\n", db)
	// Output:
	// Davies-Bouldin 0.2112 (lower is better)
}

func ExampleCalinskiHarabasz() {
	X, groups := stations()
	ch, err := validate.CalinskiHarabasz(X, groups)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("Calinski-Harabasz %.1f (higher is better)\n", ch)
	// Output:
	// Calinski-Harabasz 91.4 (higher is better)
}
