package reference

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"sync"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// ErrMissing means the datasets folder or a file in it was not found.
var ErrMissing = errors.New("dataset: reference data not found")

// Env is the environment variable naming the datasets folder.
const Env = "CENTROID_DATASETS"

// Dir returns the datasets folder: $CENTROID_DATASETS if set, else
// ../shared/datasets next to the module root found by walking up from the
// working directory to go.mod.
func Dir() string {
	if d := os.Getenv(Env); d != "" {
		return d
	}
	wd, err := os.Getwd()
	if err != nil {
		return filepath.Join("..", "shared", "datasets")
	}
	for d := wd; ; {
		if _, err := os.Stat(filepath.Join(d, "go.mod")); err == nil {
			return filepath.Join(d, "..", "shared", "datasets")
		}
		parent := filepath.Dir(d)
		if parent == d {
			return filepath.Join("..", "shared", "datasets")
		}
		d = parent
	}
}

// Set is one loaded dataset: the feature columns, the ground-truth labels
// (nil if the file has no label column) and the column names.
type Set struct {
	Name    string
	X       *mat.Dense
	Labels  []int
	Columns []string
}

// Load reads Dir()/name+".csv". A final column named "label" becomes Labels.
// It returns an error wrapping ErrMissing if the file does not exist.
func Load(name string) (*Set, error) {
	path := filepath.Join(Dir(), name+".csv")
	f, err := os.Open(path)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, fmt.Errorf("%w: %s (set %s to the shared datasets folder)", ErrMissing, path, Env)
		}
		return nil, err
	}
	defer f.Close()
	return read(name, f)
}

func read(name string, r io.Reader) (*Set, error) {
	cr := csv.NewReader(r)
	header, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("dataset %s: header: %w", name, err)
	}
	hasLabel := len(header) > 0 && header[len(header)-1] == "label"
	d := len(header)
	if hasLabel {
		d--
	}
	var vals []float64
	var labels []int
	for line := 2; ; line++ {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("dataset %s: line %d: %w", name, line, err)
		}
		for j := 0; j < d; j++ {
			v, err := strconv.ParseFloat(rec[j], 64)
			if err != nil {
				return nil, fmt.Errorf("dataset %s: line %d column %d: %w", name, line, j+1, err)
			}
			vals = append(vals, v)
		}
		if hasLabel {
			l, err := strconv.Atoi(rec[d])
			if err != nil {
				return nil, fmt.Errorf("dataset %s: line %d label: %w", name, line, err)
			}
			labels = append(labels, l)
		}
	}
	if len(vals) == 0 {
		return nil, fmt.Errorf("dataset %s: no rows", name)
	}
	return &Set{Name: name, X: mat.NewDense(len(vals)/d, d, vals), Labels: labels, Columns: header[:d]}, nil
}

// skipNotice prints one line per test binary when reference data is
// missing.
var skipNotice sync.Once

// LoadOrSkip loads name or skips the test with a clear message when the
// reference data is absent. Other errors fail the test. When the
// environment variable CI is set (as .ci/run sets it), missing data fails
// the test instead: a CI run must not pass by skipping its references.
func LoadOrSkip(tb testing.TB, name string) *Set {
	tb.Helper()
	s, err := Load(name)
	if errors.Is(err, ErrMissing) {
		if os.Getenv("CI") != "" {
			tb.Fatalf("reference dataset %q is missing and CI is set: %v (set %s)", name, err, Env)
		}
		skipNotice.Do(func() {
			fmt.Fprintf(os.Stderr, "reference datasets not found in %s: tests that need them are skipped (set %s)\n", Dir(), Env)
		})
		tb.Skipf("skipping: reference dataset %q not available: %v", name, err)
	}
	if err != nil {
		tb.Fatal(err)
	}
	return s
}
