package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestGridSmoke runs the report on one tiny grid cell with the worker
// comparison on and checks that every table is printed with a row for the
// cell. The command itself stops if any solver's passes or cost differ from
// Lloyd's, which would end this test with a failure too.
func TestGridSmoke(t *testing.T) {
	out, err := os.Create(filepath.Join(t.TempDir(), "report.md"))
	require.NoError(t, err)
	stdout := os.Stdout
	os.Stdout = out
	cfg := config{iters: 5, reps: 1, rows: 512, naiveRows: 256, workersN: 2000, maxGFLOP: 1,
		workersD: set([]int{4}), workersK: set([]int{8})}
	cfg.peak = peakRate()
	cfg.passes(2000, [][2]int{{4, 8}})
	cfg.float32(2000, [][2]int{{4, 8}})
	cfg.grid([]int{2000}, []int{4}, []int{8})
	os.Stdout = stdout
	require.NoError(t, out.Close())
	b, err := os.ReadFile(out.Name())
	require.NoError(t, err)
	report := string(b)
	for _, want := range []string{"## Lloyd pass and whole Cluster", "| 4 | 8 | ", "## Grid: seeded blobs", "## Assignment kernel vs gonum Dgemm", "## Workers:", "| 4 | 8 |", "## Float32 rows vs float64 rows"} {
		require.Contains(t, report, want)
	}
	require.Equal(t, 2, strings.Count(report, "| n="+exp(2000)+" d=4 k=8 |"), report)
}

func TestParseInts(t *testing.T) {
	require.Equal(t, []int{10000, 16, 100000}, parseInts("1e4,16,1e5"))
	require.Equal(t, [][2]int{{16, 64}, {32, 64}}, parseShapes("16:64, 32:64"))
}
