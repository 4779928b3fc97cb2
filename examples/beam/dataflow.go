//go:build dataflow

package main

// Built with -tags dataflow, the command can also submit to Google Cloud
// Dataflow and read and write gs:// paths.
import (
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem/gcs"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/runners/dataflow"
)
