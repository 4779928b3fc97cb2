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
