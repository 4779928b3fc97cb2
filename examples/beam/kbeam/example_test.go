package kbeam_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"github.com/centroidlab/centroid/examples/beam/kbeam"
)

// Riverton Bikes stations (invented): trips per day and the share of
// weekend trips, clustered on the prism runner in this process.
func Example() {
	dir, _ := os.MkdirTemp("", "kbeam-example")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "stations.csv")
	_ = os.WriteFile(path, []byte(`station,trips_per_day,weekend_share
Harbor Gate,410,0.18
Mill Street,395,0.21
Old Depot,430,0.17
Riverside Park,120,0.62
Lantern Hill,135,0.58
Quarry Lake,110,0.66
`), 0o600)

	ctx := context.Background()
	in, err := kbeam.OpenCSV(ctx, path, &kbeam.CSVOptions{Columns: []string{"trips_per_day", "weekend_share"}, Keep: "station"})
	if err != nil {
		fmt.Println(err)
		return
	}
	res, err := kbeam.Cluster(ctx, kbeam.Problem{
		Rows:     in.Source(),
		D:        in.Dim(),
		K:        2,
		Centers:  []float64{400, 0.2, 100, 0.6}, // or nil for k-means‖
		Features: in.Columns(),
	}, &kbeam.Settings{MaxPasses: 10})
	if err != nil {
		fmt.Println(err)
		return
	}
	c := res.Model.Centers()
	fmt.Println(res.Status, res.Passes, res.Sizes)
	fmt.Printf("%.1f %.3f\n%.1f %.3f\n", c.At(0, 0), c.At(0, 1), c.At(1, 0), c.At(1, 1))
	// Output:
	// converged 2 [3 3]
	// 411.7 0.187
	// 121.7 0.620
}
