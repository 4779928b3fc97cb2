package parquet_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/kmeans/stream/parquet"
)

// Riverton Bikes keeps its station statistics in Parquet; the source reads
// two numeric columns by name and carries the station id along.
func ExampleOpen() {
	dir, _ := os.MkdirTemp("", "stations")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "stations.parquet")
	f, _ := os.Create(path)
	w, _ := parquet.NewWriter(f, []parquet.Field{
		{Name: "station", Kind: parquet.String},
		{Name: "trips_per_day", Kind: parquet.Float64},
		{Name: "weekend_share", Kind: parquet.Float64},
	}, nil)
	for i, row := range [][2]float64{{412, 0.18}, {95, 0.52}, {430, 0.15}, {88, 0.58}} {
		_ = w.Write(fmt.Sprintf("RB-%03d", i+1), row[0], row[1])
	}
	_ = w.Close()
	_ = f.Close()

	src, err := parquet.Open(path, &stream.Options{Columns: []string{"trips_per_day", "weekend_share"}, Keep: []string{"station"}})
	if err != nil {
		fmt.Println(err)
		return
	}
	defer src.Close()
	buf := make([]float64, 8*src.Dim())
	n, _ := src.Read(buf)
	fmt.Println(n, "rows:", buf[:n*2], src.Kept(0))

	_ = src.Reopen()
	res, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: 2}, &stream.Settings{Seed: 1}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(res.Sizes, res.Model.Features())
	// Output:
	// 4 rows: [412 0.18 95 0.52 430 0.15 88 0.58] [RB-001 RB-002 RB-003 RB-004]
	// [2 2] [trips_per_day weekend_share]
}
