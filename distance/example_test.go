package distance_test

import (
	"fmt"
	"math"

	"github.com/centroidlab/centroid/distance"
)

// Two docking stations described by trips per day and average trip minutes.
// The features have different units, so in a real clustering they are scaled
// first (package scale); the raw values keep the arithmetic easy to follow.
var (
	harbourSteps   = []float64{120, 14} // busy, short trips
	centralStation = []float64{84, 29}  // fewer, longer trips
)

func ExampleEuclidean() {
	// √((120−84)² + (14−29)²) = √(1296 + 225) = √1521 = 39
	d := distance.Euclidean{}.Distance(harbourSteps, centralStation)
	fmt.Println(d)
	fmt.Println(distance.SqEuclidean(harbourSteps, centralStation))
	// Output:
	// 39
	// 1521
}

func ExampleManhattan() {
	// |120−84| + |14−29| = 36 + 15 = 51
	d := distance.Manhattan{}.Distance(harbourSteps, centralStation)
	fmt.Println(d)
	// Output:
	// 51
}

func ExampleCosine() {
	// Cosine compares the mix of the features, not their size: a quiet
	// station with half the trips and half the minutes has the same profile
	// as Harbour Steps.
	quietHarbour := []float64{60, 7}
	c := distance.Cosine{}
	fmt.Printf("%.4f\n", c.Distance(harbourSteps, centralStation))
	fmt.Printf("%.4f\n", c.Distance(harbourSteps, quietHarbour))
	// A station that never reported has no profile at all.
	fmt.Println(c.CheckRow([]float64{0, 0}))
	// Output:
	// 0.0233
	// 0.0000
	// distance: zero vector has no direction under cosine
}

func ExampleBetween() {
	d, err := distance.Between(distance.Manhattan{}, harbourSteps, centralStation)
	fmt.Println(d, err)

	// A station whose trip-minutes sensor failed.
	broken := []float64{97, math.NaN()}
	_, err = distance.Between(distance.Manhattan{}, harbourSteps, broken)
	fmt.Println(err)

	// A row that lost a feature.
	_, err = distance.Between(distance.Euclidean{}, harbourSteps, []float64{97})
	fmt.Println(err)
	// Output:
	// 51 <nil>
	// distance: value is NaN or infinite: element 1 is NaN
	// distance: vectors have different lengths: 2 and 1
}

func ExampleByName() {
	for _, name := range []string{"euclidean", "manhattan", "cityblock"} {
		m, err := distance.ByName(name)
		if err != nil {
			fmt.Println(err)
			continue
		}
		fmt.Println(m.Name(), m.Distance(harbourSteps, centralStation))
	}
	m, _ := distance.ByName("minkowski", 3) // (36³ + 15³)^⅓
	fmt.Printf("%s %.3f\n", m.Name(), m.Distance(harbourSteps, centralStation))
	// Output:
	// euclidean 39
	// manhattan 51
	// distance: unknown metric: "cityblock"
	// minkowski 36.848
}
