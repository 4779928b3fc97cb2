package seeding_test

import (
	"errors"
	"fmt"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/seeding"
)

// stations is a small fictional bike-share network: for each docking
// station, trips per day (in hundreds) and the share of its trips made at
// weekends. Three kinds of station show up: commuter hubs (busy, weekday
// trips), leisure spots (weekend trips) and quiet residential streets.
var stations = []struct {
	name    string
	trips   float64
	weekend float64
	docks   float64
}{
	{"Central Station", 4.1, 0.12, 40},
	{"Market Square", 3.8, 0.18, 30},
	{"Tech Park", 3.5, 0.08, 25},
	{"Riverside Park", 1.6, 0.62, 20},
	{"Lakeshore", 1.4, 0.70, 15},
	{"Botanic Garden", 1.2, 0.66, 15},
	{"Elm Street", 0.5, 0.30, 10},
	{"Hillcrest", 0.4, 0.35, 10},
	{"Oak Avenue", 0.6, 0.28, 12},
}

func stationData() *mat.Dense {
	data := mat.NewDense(len(stations), 2, nil)
	for i, s := range stations {
		data.SetRow(i, []float64{s.trips, s.weekend})
	}
	return data
}

// printStations prints the station each center was taken from.
func printStations(centers *mat.Dense) {
	k, _ := centers.Dims()
	for j := range k {
		c := centers.RawRowView(j)
		for _, s := range stations {
			if s.trips == c[0] && s.weekend == c[1] {
				fmt.Printf("center %d: %-15s %.1f hundred trips/day, %2.0f%% at weekends\n", j, s.name, c[0], 100*c[1])
			}
		}
	}
}

func ExamplePlusPlus() {
	centers := mat.NewDense(3, 2, nil)
	rnd := rand.New(rand.NewPCG(2024, 1))
	err := seeding.PlusPlus{}.Seed(centers, stationData(), nil, distance.Euclidean{}, rnd)
	if err != nil {
		fmt.Println(err)
		return
	}
	// One center per kind of station: residential, commuter hub, leisure.
	printStations(centers)
	// Output:
	// center 0: Oak Avenue      0.6 hundred trips/day, 28% at weekends
	// center 1: Market Square   3.8 hundred trips/day, 18% at weekends
	// center 2: Lakeshore       1.4 hundred trips/day, 70% at weekends
}

func ExampleRandom() {
	// Weight each station by its number of docks: a station with 40 docks
	// is drawn as often as four stations with 10.
	weights := make([]float64, len(stations))
	for i, s := range stations {
		weights[i] = s.docks
	}
	centers := mat.NewDense(3, 2, nil)
	rnd := rand.New(rand.NewPCG(2024, 1))
	if err := (seeding.Random{}).Seed(centers, stationData(), weights, nil, rnd); err != nil {
		fmt.Println(err)
		return
	}
	printStations(centers)
	// Output:
	// center 0: Hillcrest       0.4 hundred trips/day, 35% at weekends
	// center 1: Riverside Park  1.6 hundred trips/day, 62% at weekends
	// center 2: Lakeshore       1.4 hundred trips/day, 70% at weekends
}

func ExampleUniform() {
	centers := mat.NewDense(2, 2, nil)
	rnd := rand.New(rand.NewPCG(2024, 1))
	if err := (seeding.Uniform{}).Seed(centers, stationData(), nil, nil, rnd); err != nil {
		fmt.Println(err)
		return
	}
	// Centers are points of the box 0.4–4.1 hundred trips/day × 8–70% weekend share.
	fmt.Printf("%.2f\n", mat.Formatted(centers))
	// Output:
	// ⎡3.76  0.63⎤
	// ⎣2.41  0.51⎦
}

func ExamplePlusPlus_tooFewStations() {
	// Asking for more centers than there are distinct stations is an error.
	centers := mat.NewDense(10, 2, nil)
	err := seeding.PlusPlus{}.Seed(centers, stationData(), nil, nil, rand.New(rand.NewPCG(1, 1)))
	fmt.Println(errors.Is(err, seeding.ErrK))
	// Output:
	// true
}
