package stream_test

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/scale"
)

// Riverton Bikes exports its docking stations as CSV; the source reads two
// columns by name, block by block.
func ExampleNewCSV() {
	const doc = `station,trips_per_day,weekend_share,district
RB-001,412,0.18,Rail
RB-002,95,0.52,Quay
RB-003,n/a,0.25,Hill
`
	src, err := stream.NewCSV(strings.NewReader(doc), "stations.csv", &stream.Options{Columns: []string{"trips_per_day", "weekend_share"}})
	if err != nil {
		fmt.Println(err)
		return
	}
	buf := make([]float64, 8*src.Dim()) // room for 8 rows
	_, err = src.Read(buf)
	fmt.Println(err)
	var re *stream.RowError
	fmt.Println(errors.As(err, &re), re.Line, re.Column)
	// Output:
	// stations.csv: line 4, column "trips_per_day": "n/a" is not a number
	// true 4 trips_per_day
}

// With Skip, bad rows are counted instead.
func ExampleOptions_skip() {
	const doc = "trips_per_day,weekend_share\n412,0.18\nNaN,0.2\n95,0.52\n"
	src, _ := stream.NewCSV(strings.NewReader(doc), "stations.csv", &stream.Options{Skip: true})
	buf := make([]float64, 8*src.Dim())
	n, _ := src.Read(buf)
	fmt.Println(n, buf[:n*2], src.Rejected())
	_, err := src.Read(buf)
	fmt.Println(err == io.EOF)
	// Output:
	// 2 [412 0.18 95 0.52] 1
	// true
}

// stationRows returns a fictional network of 3000 stations of three kinds,
// in trips per day and weekend share.
func stationRows() *mat.Dense {
	rnd := rand.New(rand.NewPCG(3, 3))
	kinds := [][2]float64{{420, 0.15}, {90, 0.55}, {180, 0.30}}
	X := mat.NewDense(3000, 2, nil)
	for i := range 3000 {
		k := kinds[i%3]
		X.Set(i, 0, k[0]*(1+0.1*rnd.NormFloat64()))
		X.Set(i, 1, k[1]*(1+0.1*rnd.NormFloat64()))
	}
	return X
}

// Exact Lloyd over a reopenable source, seeded by k-means‖: the scaler is
// learned in two passes, the seeds in six, then one pass per iteration.
func ExampleCluster() {
	src, _ := stream.NewMatrix(stationRows(), &stream.Options{Columns: []string{"trips_per_day", "weekend_share"}})
	res, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: 3, Scaler: scale.ZScore{}},
		&stream.Settings{Seed: 1, BlockRows: 500}, stream.Exact{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(res.Method, res.Status, res.Rows, "rows")
	fmt.Println(res.Scaling)
	fmt.Println(res.Seeding)
	fmt.Println("passes:", res.Passes, "of which Lloyd:", res.Iterations)
	c := res.Model.Centers()
	for j := range 3 {
		fmt.Printf("%4.0f trips/day, %.2f at weekends, %d stations\n", c.At(j, 0), c.At(j, 1), res.Sizes[j])
	}
	fmt.Println(res.Model.Features())
	// The three kinds the stations were drawn from: 420, 90 and 180 trips.
	// Output:
	// exact Lloyd converged 3000 rows
	// zscore learned exactly in 2 passes
	// k-means‖: 5 rounds, 30 candidates, 6 passes
	// passes: 11 of which Lloyd: 3
	//  180 trips/day, 0.30 at weekends, 1004 stations
	//  422 trips/day, 0.15 at weekends, 1000 stations
	//   90 trips/day, 0.55 at weekends, 996 stations
	// [trips_per_day weekend_share]
}

// Mini-batch on a channel: one pass, seeds and scaler from the first rows.
func ExampleMiniBatch() {
	X := stationRows()
	ch := make(chan []float64)
	go func() {
		defer close(ch)
		for i := range 3000 {
			ch <- X.RawRowView(i)
		}
	}()
	src, _ := stream.NewChan(ch, 2, nil)
	res, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: 3, Scaler: scale.ZScore{}},
		&stream.Settings{Seed: 1, SampleRows: 1000}, stream.MiniBatch{BatchSize: 256})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(res.Method, res.Batches, "batches,", res.Rows, "rows, exact cost:", res.Exact)
	fmt.Println(res.Seeding)
	c := res.Model.Centers()
	for j := range 3 {
		fmt.Printf("%4.0f trips/day, %.2f at weekends\n", c.At(j, 0), c.At(j, 1))
	}
	// Output:
	// mini-batch 12 batches, 3000 rows, exact cost: false
	// greedy k-means++ on the first 1000 rows
	//  422 trips/day, 0.15 at weekends
	//   90 trips/day, 0.55 at weekends
	//  180 trips/day, 0.30 at weekends
}
