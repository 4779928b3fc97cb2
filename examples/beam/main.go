package main

import (
	"context"
	"flag"
	"fmt"
	"os"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/log"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/runners"

	// Runners this binary can submit to; the Dataflow runner and the
	// gs:// filesystem come with the build tag "dataflow" (dataflow.go),
	// since they bring in the Google Cloud client libraries.
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/runners/flink"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/runners/prism"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/runners/spark"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/runners/universal"
)

func main() {
	var o options
	o.register(flag.CommandLine)
	flag.Parse()
	beam.Init() // on a worker, this serves the pipeline and never returns
	runner := *runners.Runner
	if runner == "" || runner == "prism" {
		runner = "prism"
		log.SetupLogging("warn", "text") // prism reports every job at Info
	}
	o.execute = func(ctx context.Context, p *beam.Pipeline) error {
		_, err := beam.Run(ctx, runner, p)
		return err
	}
	if err := run(context.Background(), &o, os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "beam:", err)
		os.Exit(1)
	}
}
