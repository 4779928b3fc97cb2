package kbeam

import "github.com/apache/beam/sdks/v2/go/pkg/beam"

// Source adds the transforms that produce the rows to a pipeline's scope
// and returns them as a PCollection of Block. Cluster calls it once per
// pipeline it builds. CSV.Read is a Source; so is any function that emits
// Blocks with dense Seq numbers and unique row indices.
type Source func(s beam.Scope) beam.PCollection
