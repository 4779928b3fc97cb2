package nearest_test

import (
	"fmt"

	"github.com/centroidlab/centroid/internal/nearest"
)

// Three docking-station rows of (trips per day, weekend share ×100) and two
// centers; the middle row is exactly between them, so the search rechecks
// it directly and the lower index wins the tie.
func ExampleSearcher_Assign() {
	centers := []float64{100, 20, 300, 20}
	rows := []float64{120, 25, 200, 20, 290, 18}
	var c nearest.Centers
	c.Pack(centers, 2, 2)
	var s nearest.Searcher
	dst := make([]int, 3)
	rechecked := s.Assign(dst, rows, 3, &c, func(i, j int) float64 {
		var sum float64
		for t := range 2 {
			e := rows[i*2+t] - centers[j*2+t]
			sum += e * e
		}
		return sum
	})
	fmt.Println(dst, rechecked)
	// Output: [0 0 1] 1
}

// A served model's search: three station profiles (trips per day, weekend
// share ×100) and a new station; the answer and both losses are those of a
// direct scan with distance.SqEuclidean.
func ExampleSet_Nearest2() {
	centers := []float64{100, 20, 300, 20, 200, 60}
	s := nearest.NewSet(centers, 3, 2, nearest.SquaredEuclidean)
	j, loss, second := s.Nearest2([]float64{190, 50})
	fmt.Println(j, loss, second)
	// Output: 2 200 9000
}
