package kmeans_test

import (
	"context"
	"encoding/json"
	"fmt"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// Six docking stations of a fictional bike-share scheme, described by trips
// per day and the share of trips taken at weekends: two kinds of station in
// very different units, so the features are z-scored first.
func ExampleCluster() {
	stations := mat.NewDense(6, 2, []float64{
		420, 0.18, // rail-station hubs: many trips, mostly weekdays
		390, 0.21,
		450, 0.16,
		95, 0.52, // waterfront: few trips, half of them at weekends
		80, 0.61,
		110, 0.48,
	})
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{
		Data:   stations,
		K:      2,
		Scaler: &scale.ZScore{},
	}, &kmeans.Settings{Seed: 1}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("status:", res.Status)
	fmt.Println("assignments:", res.Assignments)
	fmt.Println("sizes:", res.Sizes)
	c := res.Model.Centers()
	for j := range res.Model.K() {
		fmt.Printf("center %d: %.0f trips/day, %.2f weekend share\n", j, c.At(j, 0), c.At(j, 1))
	}
	// Output:
	// status: converged
	// assignments: [0 0 0 1 1 1]
	// sizes: [3 3]
	// center 0: 420 trips/day, 0.18 weekend share
	// center 1: 95 trips/day, 0.54 weekend share
}

// A fitted model labels new rows in raw units and survives a JSON round trip.
func ExampleModel_Nearest() {
	stations := mat.NewDense(6, 2, []float64{
		420, 0.18, 390, 0.21, 450, 0.16,
		95, 0.52, 80, 0.61, 110, 0.48,
	})
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: stations, K: 2, Scaler: &scale.ZScore{}}, &kmeans.Settings{Seed: 1}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	doc, err := json.Marshal(res.Model)
	if err != nil {
		fmt.Println(err)
		return
	}
	var m kmeans.Model
	if err := json.Unmarshal(doc, &m); err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range [][]float64{{400, 0.2}, {70, 0.58}} {
		c, d, err := m.Nearest(s)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%v -> cluster %d (distance %.2f)\n", s, c, d)
	}
	_, _, err = m.Nearest([]float64{400})
	fmt.Println(err)
	// Output:
	// [400 0.2] -> cluster 0 (distance 0.15)
	// [70 0.58] -> cluster 1 (distance 0.28)
	// kmeans: dimension mismatch: row has 1 values, model has 2 features
}

// Float32 rows are clustered in place, with the result of their float64
// conversion: the same assignments and the same cost, bit for bit. The
// rows are six stations of the fictional Riverton Bikes scheme (hundreds
// of trips per day, share of weekend trips in tenths): three quiet, three
// busy; each group's cost is 1/3 (squared distances 2/36 + 5/36 + 5/36
// from its mean), so the total is 2/3.
func ExampleDense32() {
	x := kmeans.NewDense32(6, 2, []float32{
		0, 0, 0.5, 0, 0, 0.5,
		10, 10, 10.5, 10, 10, 10.5,
	})
	s := &kmeans.Settings{Seed: 1}
	r32, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 2}, s, nil)
	if err != nil {
		panic(err)
	}
	r64, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: mat.DenseCopyOf(x), K: 2}, s, nil)
	if err != nil {
		panic(err)
	}
	fmt.Printf("%v %.12f\n", r32.Assignments, r32.Cost)
	fmt.Println(r32.Cost == r64.Cost, slices.Equal(r32.Assignments, r64.Assignments))
	// Output:
	// [0 0 0 1 1 1] 0.666666666667
	// true true
}
