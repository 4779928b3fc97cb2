package seeding_test

import (
	"fmt"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/seeding"
)

func ExampleParallel() {
	centers := mat.NewDense(3, 2, nil)
	rnd := rand.New(rand.NewPCG(2024, 1))
	if err := (seeding.Parallel{}).Seed(centers, stationData(), nil, nil, rnd); err != nil {
		fmt.Println(err)
		return
	}
	// One center per kind of station, found in 6 passes over the data
	// instead of k-means++'s one pass per center.
	printStations(centers)
	// Output:
	// center 0: Lakeshore       1.4 hundred trips/day, 70% at weekends
	// center 1: Market Square   3.8 hundred trips/day, 18% at weekends
	// center 2: Elm Street      0.5 hundred trips/day, 30% at weekends
}

// A job whose rows live elsewhere (a file read block by block, workers on
// other machines) drives k-means‖ pass by pass: each worker adds its rows
// to a part, the parts merge, and Next ends the pass.
func ExampleParallelPlan() {
	data := stationData().RawMatrix().Data // 9 stations × 2 features
	pl, err := seeding.Parallel{}.Plan(3, 2, nil, 42)
	if err != nil {
		fmt.Println(err)
		return
	}
	for !pl.Done() {
		// Two workers: stations 0–4 and 5–8, each row with its own index.
		a, b := pl.NewPart(), pl.NewPart()
		if err := pl.Add(a, 0, data[:5*2], nil); err != nil {
			fmt.Println(err)
			return
		}
		if err := pl.Add(b, 5, data[5*2:], nil); err != nil {
			fmt.Println(err)
			return
		}
		a.Merge(b)
		if err := pl.Next(a); err != nil {
			fmt.Println(err)
			return
		}
	}
	centers := mat.NewDense(3, 2, nil)
	if err := pl.Centers(centers, rand.New(rand.NewPCG(1, 1))); err != nil {
		fmt.Println(err)
		return
	}
	// Nine stations are soon all candidates (φ = 0), which ends the
	// rounds early: the first-candidate pass and three sampling passes.
	fmt.Println("passes:", pl.Passes())
	printStations(centers)
	// Output:
	// passes: 4
	// center 0: Market Square   3.8 hundred trips/day, 18% at weekends
	// center 1: Elm Street      0.5 hundred trips/day, 30% at weekends
	// center 2: Botanic Garden  1.2 hundred trips/day, 66% at weekends
}
