// Command segment is centroid's main job end to end on invented demo data:
// Riverton Bikes, a fictional city bike-share operator, groups its docking
// stations by how they are used so that rebalancing crews, maintenance and
// pricing can be planned per group.
//
// It generates the stations deterministically, z-scores the six usage
// features (they come in trips, fractions, minutes, bikes and metres),
// sweeps k, picks k by a documented rule, clusters, profiles every cluster
// in original units, saves the model as JSON, reloads it and labels a few
// proposed stations.
//
// Run it from the module root:
//
//	go run ./examples/segment
//	go run ./examples/segment -stations 400 -kmin 2 -kmax 9 -out /tmp/segment
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
)

func main() {
	var o options
	flag.IntVar(&o.stations, "stations", 300, "number of docking stations to generate")
	flag.Uint64Var(&o.seed, "seed", 2026, "seed for the demo data and the clustering")
	flag.IntVar(&o.kmin, "kmin", 2, "smallest k of the sweep")
	flag.IntVar(&o.kmax, "kmax", 8, "largest k of the sweep")
	flag.StringVar(&o.out, "out", "segment-out", "folder for the saved model (created if missing)")
	flag.Parse()
	if err := run(context.Background(), os.Stdout, o); err != nil {
		fmt.Fprintln(os.Stderr, "segment:", err)
		os.Exit(1)
	}
}

type options struct {
	stations   int
	seed       uint64
	kmin, kmax int
	out        string
}
