package kbeam

import (
	"context"
	"strings"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem/local" // local paths, the default scheme
)

// joinPath joins a directory and a name on any filesystem (local paths
// and URLs such as gs://bucket/dir alike).
func joinPath(dir, name string) string {
	return strings.TrimSuffix(dir, "/") + "/" + name
}

// writeStateFn writes the State it receives to Path.
type writeStateFn struct {
	Path string
}

func (f *writeStateFn) ProcessElement(ctx context.Context, st State) error {
	return writeFile(ctx, f.Path, encodeState(st))
}

// writeSeedFn writes the k-means‖ state it receives to Path.
type writeSeedFn struct {
	Path string
}

func (f *writeSeedFn) ProcessElement(ctx context.Context, st seedState) error {
	return writeFile(ctx, f.Path, encodeSeedState(st))
}

func writeState(s beam.Scope, st beam.PCollection, path string) {
	beam.ParDo0(s.Scope("kbeam.WriteState"), &writeStateFn{Path: path}, st)
}

func writeSeed(s beam.Scope, st beam.PCollection, path string) {
	beam.ParDo0(s.Scope("kbeam.WriteSeed"), &writeSeedFn{Path: path}, st)
}

func writeFile(ctx context.Context, path string, b []byte) error {
	fs, err := filesystem.New(ctx, path)
	if err != nil {
		return err
	}
	defer fs.Close()
	return filesystem.Write(ctx, fs, path, b)
}

func readFile(ctx context.Context, path string) ([]byte, error) {
	fs, err := filesystem.New(ctx, path)
	if err != nil {
		return nil, err
	}
	defer fs.Close()
	return filesystem.Read(ctx, fs, path)
}
