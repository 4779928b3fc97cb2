package validate_test

import (
	"encoding/json"
	"fmt"
	"os"

	"github.com/centroidlab/centroid/validate"
)

// A segmentation of eight Riverton Bikes stations checked against the kind
// each station was planned as: one commuter hub landed with the leisure
// stations.
func ExampleCompare() {
	planned := []int{0, 0, 0, 1, 1, 1, 2, 2}
	found := []int{5, 5, 7, 7, 7, 7, 9, 9}
	r, err := validate.Compare(planned, found, nil, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	r.WriteTo(os.Stdout)
	b, _ := json.Marshal(r)
	fmt.Println(string(b)[:60] + "…")
	// By hand: 5 pairs together in both, 7 in the plan, 8 found, of 28:
	// ARI = (5 − 7·8/28) / ((7+8)/2 − 7·8/28) = 3/5.5; purity = (2+3+2)/8.
	// Output:
	// 8 rows: 3 true classes, 3 found clusters
	//   adjusted Rand (ARI)    0.5455   higher is better, 1 for identical partitions, about 0 by chance
	//   NMI                    0.7550   higher is better, 0 to 1
	//   AMI                    0.6218   higher is better, at most 1, about 0 by chance
	//   V-measure              0.7550   higher is better, 0 to 1
	//   homogeneity            0.7402   higher is better, 0 to 1
	//   completeness           0.7704   higher is better, 0 to 1
	//   Fowlkes–Mallows        0.6682   higher is better, 0 to 1
	//   purity                 0.8750   higher is better, up to 1, rewards many clusters
	//   inverse purity         0.8750   higher is better, up to 1, rewards few clusters
	// {"format":"centroid.external-report","version":1,"rows":8,"t…
}
