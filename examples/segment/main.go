// Command segment is centroid's main job end to end on invented demo data:
// Riverton Bikes, a fictional city bike-share operator, groups its docking
// stations by how they are used so that rebalancing crews, maintenance and
// pricing can be planned per group.
//
// It generates the stations deterministically, z-scores the six usage
// features (they come in trips, fractions, minutes, bikes and metres),
// sweeps k with kmeans.Sweep (silhouette, Davies–Bouldin,
// Calinski–Harabasz, Dunn, the knee of the cost curve, the gap statistic
// and resample stability), takes the recommended k (or the one given with
// -k), profiles every cluster in original units, draws the evidence
// (indices.png, silhouette.png, pca.png in the output folder), saves the
// model as JSON, reloads it and labels a few proposed stations.
//
// Run it from the module root:
//
//	go run ./examples/segment
//	go run ./examples/segment -stations 400 -kmax 9 -out /tmp/segment -format svg
//
// The output folder defaults to out/segment; the report names every file
// it writes.
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"path/filepath"
)

func main() {
	o := defaults()
	flag.IntVar(&o.stations, "stations", o.stations, "number of docking stations to generate")
	flag.Uint64Var(&o.seed, "seed", o.seed, "seed for the demo data and the clustering")
	flag.IntVar(&o.kmin, "kmin", o.kmin, "smallest k of the sweep (1 lets the gap statistic say there is no structure)")
	flag.IntVar(&o.kmax, "kmax", o.kmax, "largest k of the sweep")
	flag.IntVar(&o.k, "k", o.k, "use this k instead of the recommended one (0: the recommendation)")
	flag.IntVar(&o.refs, "gap-refs", o.refs, "reference data sets of the gap statistic (0: skip the gap statistic)")
	flag.IntVar(&o.resamples, "resamples", o.resamples, "subsamples clustered again per k for stability (0: skip stability)")
	flag.StringVar(&o.out, "out", o.out, "folder for the model and the plots (created if missing)")
	flag.StringVar(&o.format, "format", o.format, "plot format: png or svg")
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
	k          int
	refs       int
	resamples  int
	out        string
	format     string
}

// defaults returns the options of a plain `go run ./examples/segment`.
func defaults() options {
	return options{stations: 300, seed: 2026, kmin: 1, kmax: 8, refs: 10, resamples: 10, out: filepath.Join("out", "segment"), format: "png"}
}
