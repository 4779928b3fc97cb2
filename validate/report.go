package validate

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"

	"gonum.org/v1/gonum/mat"
)

// ReportFormat and ReportVersion name the JSON form of a Report. The
// version changes when a key changes meaning or disappears; new keys may be
// added within a version, so readers should ignore keys they do not know.
const (
	ReportFormat  = "centroid.external-report"
	ReportVersion = 1
)

// Report holds every external index of a found labelling against a ground
// truth, as Compare computes them. Its JSON form (encoding/json) uses the
// keys of the struct tags, stable within ReportVersion; NaN never occurs.
//
// Directions and ranges (see each function for the exact conventions):
//
//	key              index                         better  range
//	ari              AdjustedRand                  higher  [−1, 1]; ≈ 0 by chance, 1 identical
//	nmi              NMI (arithmetic mean)         higher  [0, 1]
//	ami              AMI (arithmetic mean)         higher  ≤ 1; ≈ 0 by chance, 1 identical
//	v_measure        VMeasure (β = 1)              higher  [0, 1]
//	homogeneity      VMeasureParts                 higher  [0, 1]; 1: every cluster holds one class
//	completeness     VMeasureParts                 higher  [0, 1]; 1: every class lies in one cluster
//	fowlkes_mallows  FowlkesMallows                higher  [0, 1]
//	purity           Purity(truth, found)          higher  (0, 1]; rewards many small clusters
//	inverse_purity   Purity(found, truth)          higher  (0, 1]; rewards few large clusters
//	centroid_index   CentroidIndex (when centers)  lower   0, 1, 2, …; 0: the centers match one to one
type Report struct {
	Format  string `json:"format"`
	Version int    `json:"version"`
	// Rows is the number of rows compared; TruthClasses and FoundClusters
	// the numbers of distinct labels in each labelling.
	Rows          int `json:"rows"`
	TruthClasses  int `json:"truth_classes"`
	FoundClusters int `json:"found_clusters"`

	ARI            float64 `json:"ari"`
	NMI            float64 `json:"nmi"`
	AMI            float64 `json:"ami"`
	VMeasure       float64 `json:"v_measure"`
	Homogeneity    float64 `json:"homogeneity"`
	Completeness   float64 `json:"completeness"`
	FowlkesMallows float64 `json:"fowlkes_mallows"`
	Purity         float64 `json:"purity"`
	InversePurity  float64 `json:"inverse_purity"`
	// CentroidIndex is CI between the found and the true centers, or nil
	// when either set was not given.
	CentroidIndex *int `json:"centroid_index,omitempty"`
}

// Compare scores the labelling found against truth (the same rows in the
// same order) with every external index, and, when both trueCenters and
// foundCenters are given (one center per row, in the same units), the
// centroid index between them. Either center set may be nil to skip CI.
//
// It returns the errors of the indices: ErrEmpty, ErrLength (different
// numbers of rows, or centers of different dimensions), ErrLabel
// (a negative label) and ErrNotFinite (a center holding NaN or ±Inf).
// Its inputs are not modified.
func Compare(truth, found []int, trueCenters, foundCenters *mat.Dense) (*Report, error) {
	t, err := contingency("truth", "found", truth, found)
	if err != nil {
		return nil, err
	}
	r := &Report{Format: ReportFormat, Version: ReportVersion, Rows: len(truth)}
	r.TruthClasses, r.FoundClusters = t.Dims()
	steps := []struct {
		dst *float64
		fn  func(a, b []int) (float64, error)
	}{
		{&r.ARI, AdjustedRand}, {&r.NMI, NMI}, {&r.AMI, AMI}, {&r.FowlkesMallows, FowlkesMallows}, {&r.Purity, Purity},
	}
	for _, s := range steps {
		if *s.dst, err = s.fn(truth, found); err != nil {
			return nil, err
		}
	}
	if r.InversePurity, err = Purity(found, truth); err != nil {
		return nil, err
	}
	if r.Homogeneity, r.Completeness, r.VMeasure, err = VMeasureParts(truth, found); err != nil {
		return nil, err
	}
	if trueCenters != nil && foundCenters != nil {
		ci, err := CentroidIndex(foundCenters, trueCenters)
		if err != nil {
			return nil, err
		}
		r.CentroidIndex = &ci
	}
	return r, nil
}

// DecodeReport decodes the JSON form of a Report, checking its format and
// version; an error wraps ErrParameter.
func DecodeReport(b []byte) (*Report, error) {
	dec := json.NewDecoder(bytes.NewReader(b))
	var r Report
	if err := dec.Decode(&r); err != nil {
		return nil, fmt.Errorf("%w: report: %v", ErrParameter, err)
	}
	if r.Format != ReportFormat || r.Version != ReportVersion {
		return nil, fmt.Errorf("%w: report format %q version %d, want %q version %d", ErrParameter, r.Format, r.Version, ReportFormat, ReportVersion)
	}
	return &r, nil
}

// WriteTo prints the report as a table, one index per line with its
// direction and range.
func (r *Report) WriteTo(w io.Writer) (int64, error) {
	var b bytes.Buffer
	fmt.Fprintf(&b, "%d rows: %d true classes, %d found clusters\n", r.Rows, r.TruthClasses, r.FoundClusters)
	line := func(name string, v float64, better, rng string) {
		fmt.Fprintf(&b, "  %-20s %8.4f   %s is better, %s\n", name, v, better, rng)
	}
	line("adjusted Rand (ARI)", r.ARI, "higher", "1 for identical partitions, about 0 by chance")
	line("NMI", r.NMI, "higher", "0 to 1")
	line("AMI", r.AMI, "higher", "at most 1, about 0 by chance")
	line("V-measure", r.VMeasure, "higher", "0 to 1")
	line("homogeneity", r.Homogeneity, "higher", "0 to 1")
	line("completeness", r.Completeness, "higher", "0 to 1")
	line("Fowlkes–Mallows", r.FowlkesMallows, "higher", "0 to 1")
	line("purity", r.Purity, "higher", "up to 1, rewards many clusters")
	line("inverse purity", r.InversePurity, "higher", "up to 1, rewards few clusters")
	if r.CentroidIndex != nil {
		fmt.Fprintf(&b, "  %-20s %8d   lower is better, 0 when the centers match one to one\n", "centroid index (CI)", *r.CentroidIndex)
	}
	n, err := w.Write(b.Bytes())
	return int64(n), err
}
