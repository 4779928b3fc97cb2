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
