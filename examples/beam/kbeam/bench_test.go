package kbeam

import (
	"bufio"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

// benchPasses is the number of Lloyd passes every benchmark runs, from
// the same given centers, so that the strategies do the same work.
const benchPasses = 5

var benchRows = DefaultBlockRows

// benchmarkCluster times one clustering of n×d generated rows into k
// clusters: in memory (kmeans.Cluster with kmeans.Lloyd), or on prism with
// the given iteration. Run with -cpu 1,2 to see how prism scales with the
// cores it may use.
func benchmarkCluster(b *testing.B, n, d, k int, it Iteration, inMemory bool) {
	g := &genFn{N: n, D: d, K: k, Rows: benchRows, Seed: 11}
	var x *mat.Dense
	if inMemory {
		x = g.matrix()
	}
	c0 := (&genFn{N: k, D: d, K: k, Rows: k, Seed: 12}).matrix()
	c := c0.RawMatrix().Data
	b.ResetTimer()
	for range b.N {
		if inMemory {
			res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: k, Seeder: seeding.Given{Centers: c0}}, lloydSettings(benchPasses), kmeans.Lloyd{})
			if err != nil || res.Iterations != benchPasses {
				b.Fatal(err, res.Iterations)
			}
			continue
		}
		res, err := Cluster(context.Background(), Problem{Rows: g.source(), D: d, K: k, Centers: c}, &Settings{MaxPasses: benchPasses, Iteration: it})
		if err != nil || res.Passes != benchPasses {
			b.Fatal(err, res.Passes)
		}
	}
}

func BenchmarkInMemory1e6x16k64(b *testing.B) { benchmarkCluster(b, 1e6, 16, 64, Driven, true) }
func BenchmarkDriven1e6x16k64(b *testing.B)   { benchmarkCluster(b, 1e6, 16, 64, Driven, false) }
func BenchmarkUnrolled1e6x16k64(b *testing.B) { benchmarkCluster(b, 1e6, 16, 64, Unrolled, false) }

// BenchmarkBlockRows compares rows per element on 10⁵ rows, one row per
// element against DefaultBlockRows.
func BenchmarkBlockRows(b *testing.B) {
	for _, r := range []int{1, DefaultBlockRows} {
		b.Run(fmt.Sprint(r), func(b *testing.B) {
			benchRows = r
			defer func() { benchRows = DefaultBlockRows }()
			benchmarkCluster(b, 1e5, 16, 64, Unrolled, false)
		})
	}
}

// benchmarkCSV times the two iterations on the generated rows read from
// a CSV file, so that driven pays for parsing the input in every pass.
func benchmarkCSV(b *testing.B, n, d, k int, it Iteration) {
	g := &genFn{N: n, D: d, K: k, Rows: DefaultBlockRows, Seed: 11}
	path := filepath.Join(b.TempDir(), "rows.csv")
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	w := bufio.NewWriter(f)
	for j := range d {
		if j > 0 {
			w.WriteByte(',')
		}
		fmt.Fprintf(w, "c%d", j)
	}
	w.WriteByte('\n')
	x := g.matrix()
	for i := range n {
		for j, v := range x.RawRowView(i) {
			if j > 0 {
				w.WriteByte(',')
			}
			w.WriteString(strconv.FormatFloat(v, 'g', -1, 64))
		}
		w.WriteByte('\n')
	}
	if err := w.Flush(); err != nil {
		b.Fatal(err)
	}
	f.Close()
	in, err := OpenCSV(context.Background(), path, nil)
	if err != nil {
		b.Fatal(err)
	}
	c := (&genFn{N: k, D: d, K: k, Rows: k, Seed: 12}).matrix().RawMatrix().Data
	b.ResetTimer()
	for range b.N {
		res, err := Cluster(context.Background(), Problem{Rows: in.Source(), D: d, K: k, Centers: c}, &Settings{MaxPasses: benchPasses, Iteration: it})
		if err != nil || res.Passes != benchPasses {
			b.Fatal(err, res.Passes)
		}
	}
}

func BenchmarkCSVDriven1e6x16k64(b *testing.B)   { benchmarkCSV(b, 1e6, 16, 64, Driven) }
func BenchmarkCSVUnrolled1e6x16k64(b *testing.B) { benchmarkCSV(b, 1e6, 16, 64, Unrolled) }
