package validate_test

import (
	"fmt"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/validate"
)

// Six docking stations of a bike-share operator, grouped by their usage
// pattern in March and again in April. Worked by hand (Hubert & Arabie
// 1985): Index = 2 pairs together in both months, Σ C(aᵢ,2) = 6,
// Σ C(bⱼ,2) = 3, C(6,2) = 15, so Expected = 1.2, Max = 4.5 and
// ARI = (2 − 1.2)/(4.5 − 1.2) = 8/33.
func ExampleAdjustedRand() {
	march := []int{0, 0, 0, 1, 1, 1} // 0 = commuter, 1 = leisure
	april := []int{0, 0, 1, 1, 2, 2} // 2 = a new "mixed" pattern
	ari, err := validate.AdjustedRand(march, april)
	if err != nil {
		fmt.Println(err)
		return
	}
	same, _ := validate.AdjustedRand(march, []int{7, 7, 7, 3, 3, 3})
	fmt.Printf("ARI %.4f (8/33 = %.4f), renamed copy %.1f\n", ari, 8.0/33, same)
	// Output:
	// ARI 0.2424 (8/33 = 0.2424), renamed copy 1.0
}

// The same stations: I = (2/3) ln 2 nats, H(March) = ln 2, H(April) = ln 3,
// so NMI = I / ((ln 2 + ln 3)/2) = (4/3) ln 2 / ln 6 and, with the Max
// normalisation, I / ln 3.
func ExampleNMI() {
	march := []int{0, 0, 0, 1, 1, 1}
	april := []int{0, 0, 1, 1, 2, 2}
	nmi, err := validate.NMI(march, april)
	if err != nil {
		fmt.Println(err)
		return
	}
	nmiMax, _ := validate.NMIWith(march, april, validate.Max)
	fmt.Printf("NMI %.4f, max-normalised %.4f\n", nmi, nmiMax)
	// Output:
	// NMI 0.5158, max-normalised 0.4206
}

// Hub locations (km east, km north) found by two runs. The second run put
// two centers at the station hub near (0, 0) and none at (5, 0): the hub
// at (5, 0) is mapped to by no center of the second run, so CI = 1.
func ExampleCentroidIndex() {
	first := mat.NewDense(3, 2, []float64{
		0, 0,
		5, 0,
		0, 5,
	})
	second := mat.NewDense(3, 2, []float64{
		0.1, 0,
		0.2, 0.1,
		0, 5.1,
	})
	ci, err := validate.CentroidIndex(first, second)
	if err != nil {
		fmt.Println(err)
		return
	}
	self, _ := validate.CentroidIndex(first, first)
	fmt.Println("CI", ci, "self", self)
	// Output:
	// CI 1 self 0
}

func ExampleContingency() {
	march := []int{0, 0, 0, 1, 1, 1}
	april := []int{0, 0, 1, 1, 2, 2}
	t, err := validate.Contingency(march, april)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Print(t)
	// Output:
	// a\b  0  1  2  sum
	//   0  2  1  .    3
	//   1  .  1  2    3
	// sum  2  2  2    6
}

// A stability check in the spirit of Hennig (2007): the stations were
// clustered once; a refit on a bootstrap draw of the rows (row 2 drawn
// twice, rows 3 and 7 not drawn) is compared cluster by cluster. By hand:
// C*0 = {0,1,2}, C*1 = {4,5}, C*2 = {6}; the refit has D1 = {0,1},
// D0 = {2,4,5}, D2 = {6}; best Jaccard 2/3 (D1), 2/3 (D0) and 1 (D2).
func ExampleClusterJaccard() {
	ref := []int{0, 0, 0, 1, 1, 1, 2, 2}
	rows := []int{0, 1, 2, 2, 4, 5, 6, 0}
	refit := []int{1, 1, 0, 0, 0, 0, 2, 1}
	labels, best, err := validate.ClusterJaccard(ref, refit, rows)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, l := range labels {
		fmt.Printf("cluster %d: %.2f %v\n", l, best[i], validate.ReadJaccard(best[i]))
	}
	// Output:
	// cluster 0: 0.67 partly reproduced
	// cluster 1: 0.67 partly reproduced
	// cluster 2: 1.00 reproduced
}
