package scale_test

import (
	"fmt"
	"log"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/scale"
)

// stations is a week of usage at three docking stations of a fictional
// bike-share operator: trips per day, median trip minutes and number of
// docks (the same at every station).
var (
	stationNames = []string{"Harbour", "Old Mill", "Market Square"}
	stations     = mat.NewDense(3, 3, []float64{
		150, 12, 20,
		250, 12, 20,
		350, 18, 20,
	})
)

// printScaled applies s to every station and prints the result.
func printScaled(s scale.Scaler) {
	y := make([]float64, s.Dim())
	for i, name := range stationNames {
		s.Apply(y, stations.RawRowView(i))
		fmt.Printf("%-13s %7.4f %7.4f %7.4f\n", name, y[0], y[1], y[2])
	}
}

func ExampleZScore() {
	s, err := scale.ZScore{}.Learn(stations, nil)
	if err != nil {
		log.Fatal(err)
	}
	// Trips: mean 250, population std 100·√(2/3); minutes: mean 14, std √8;
	// docks are constant and map to 0.
	printScaled(s)
	// Output:
	// Harbour       -1.2247 -0.7071  0.0000
	// Old Mill       0.0000 -0.7071  0.0000
	// Market Square  1.2247  1.4142  0.0000
}

func ExampleMinMax() {
	s, err := scale.MinMax{}.Learn(stations, nil)
	if err != nil {
		log.Fatal(err)
	}
	printScaled(s)
	// Output:
	// Harbour        0.0000  0.0000  0.0000
	// Old Mill       0.5000  0.0000  0.0000
	// Market Square  1.0000  1.0000  0.0000
}

func ExampleMedianIQR() {
	s, err := scale.MedianIQR{}.Learn(stations, nil)
	if err != nil {
		log.Fatal(err)
	}
	median, iqr := s.(scale.Affine).Affine()
	fmt.Println("median:", median)
	fmt.Println("IQR:   ", iqr, "(1 for the constant docks)")
	printScaled(s)
	// Output:
	// median: [250 12 20]
	// IQR:    [200 6 1] (1 for the constant docks)
	// Harbour       -0.5000  0.0000  0.0000
	// Old Mill       0.0000  0.0000  0.0000
	// Market Square  0.5000  1.0000  0.0000
}

func ExampleMedianIQR_weights() {
	// Weights are days of data per station: Market Square was observed on
	// four of six days, so it holds the median and the third quartile of
	// trips (cumulative weights 1, 2, 6 against targets 1.5, 3 and 4.5); the
	// first quartile falls at Old Mill.
	s, err := scale.MedianIQR{}.Learn(stations, []float64{1, 1, 4})
	if err != nil {
		log.Fatal(err)
	}
	median, iqr := s.(scale.Affine).Affine()
	fmt.Println("median:", median)
	fmt.Println("IQR:   ", iqr)
	// Output:
	// median: [350 18 20]
	// IQR:    [100 6 1]
}

func ExampleUnitLength() {
	s, err := scale.UnitLength{}.Learn(mat.NewDense(2, 2, []float64{3, 4, 0, 0}), nil)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(s.Apply(make([]float64, 2), []float64{30, 40}))
	fmt.Println(s.Apply(make([]float64, 2), []float64{0, 0}))
	fmt.Println(s.Invert(make([]float64, 2), []float64{0.6, 0.8}))
	// Output:
	// [0.6 0.8]
	// [0 0]
	// scale: scaler is not invertible: unitlength
}

func ExampleEncode() {
	s, err := scale.MinMax{}.Learn(stations, nil)
	if err != nil {
		log.Fatal(err)
	}
	b, err := scale.Encode(s)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(string(b))

	d, err := scale.Decode(b)
	if err != nil {
		log.Fatal(err)
	}
	raw := make([]float64, 3)
	if err := d.Invert(raw, []float64{0.5, 0.5, 0}); err != nil {
		log.Fatal(err)
	}
	fmt.Println(d.Kind(), d.Dim(), raw)

	none, _ := scale.Encode(nil)
	fmt.Println(string(none))
	// Output:
	// {"kind":"minmax","version":1,"dim":3,"offset":[150,12,20],"divisor":[200,6,1]}
	// minmax 3 [250 15 20]
	// null
}

func ExampleDecode() {
	for _, doc := range []string{
		`null`,
		`{"kind":"zscore","version":1,"dim":2,"offset":[250,14],"divisor":[0,2]}`,
	} {
		s, err := scale.Decode([]byte(doc))
		fmt.Println(s, err)
	}
	// Output:
	// <nil> <nil>
	// <nil> scale: invalid encoded scaler: divisor of column 0 is 0
}
