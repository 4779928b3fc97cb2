package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"text/tabwriter"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/validate"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// sweepRow is the evidence for one k.
type sweepRow struct {
	k                 int
	res               *kmeans.Result
	cost, sil, db, ch float64
}

func run(ctx context.Context, w io.Writer, o options) error {
	if o.kmin < 2 || o.kmax < o.kmin {
		return fmt.Errorf("need 2 ≤ kmin ≤ kmax, got %d..%d", o.kmin, o.kmax)
	}
	_, X := bikeshare.Generate(o.stations, o.seed)
	names, units := bikeshare.Features(), bikeshare.Units()
	n, d := X.Dims()
	fmt.Fprintf(w, "%s: %d docking stations × %d usage features (invented demo data, seed %d)\n", bikeshare.Operator, n, d, o.seed)
	fmt.Fprintf(w, "features: %s\n", featureList(names, units))
	fmt.Fprintln(w, "scaling: z-score per feature (weighted mean and population standard deviation)")

	// Sweep k.
	settings := &kmeans.Settings{Restarts: 10, Seed: o.seed}
	var rows []sweepRow
	for k := o.kmin; k <= o.kmax; k++ {
		res, err := kmeans.Cluster(ctx, kmeans.Problem{Data: X, K: k, Scaler: &scale.ZScore{}}, settings, nil)
		if err != nil {
			return fmt.Errorf("k=%d: %w", k, err)
		}
		Z := scaled(X, res.Model)
		r := sweepRow{k: k, res: res, cost: res.Cost}
		if r.sil, err = validate.Silhouette(Z, res.Assignments, distance.Euclidean{}); err != nil {
			return err
		}
		if r.db, err = validate.DaviesBouldin(Z, res.Assignments); err != nil {
			return err
		}
		if r.ch, err = validate.CalinskiHarabasz(Z, res.Assignments); err != nil {
			return err
		}
		rows = append(rows, r)
	}
	fmt.Fprintln(w, "\nk sweep (scaled space; silhouette and Calinski–Harabasz: higher is better; Davies–Bouldin: lower is better)")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "k\tcost\tsilhouette\tDavies–Bouldin\tCalinski–Harabasz\t")
	for _, r := range rows {
		fmt.Fprintf(tw, "%d\t%.1f\t%.3f\t%.3f\t%.1f\t\n", r.k, r.cost, r.sil, r.db, r.ch)
	}
	tw.Flush()

	best := pick(rows)
	fmt.Fprintf(w, "\nchosen k = %d: the highest mean silhouette (%.3f); ties go to the smaller k\n", best.k, best.sil)
	fmt.Fprintf(w, "  Davies–Bouldin lowest at k = %d, Calinski–Harabasz highest at k = %d\n", argBest(rows, func(r sweepRow) float64 { return -r.db }), argBest(rows, func(r sweepRow) float64 { return r.ch }))

	profile(w, X, best.res, names, units)

	// Save, reload, label proposed stations.
	if err := os.MkdirAll(o.out, 0o755); err != nil {
		return err
	}
	path := filepath.Join(o.out, "model.json")
	doc, err := json.MarshalIndent(best.res.Model, "", " ")
	if err != nil {
		return err
	}
	if err := os.WriteFile(path, doc, 0o644); err != nil {
		return err
	}
	fmt.Fprintf(w, "\nmodel saved to %s (%d bytes)\n", path, len(doc))
	b, err := os.ReadFile(path)
	if err != nil {
		return err
	}
	var m kmeans.Model
	if err := json.Unmarshal(b, &m); err != nil {
		return fmt.Errorf("reloading %s: %w", path, err)
	}
	fmt.Fprintln(w, "reloaded; labelling proposed stations:")
	for _, s := range bikeshare.NewStations(4, o.seed) {
		c, dist, err := m.Nearest(s.Features)
		if err != nil {
			return err
		}
		fmt.Fprintf(w, "  %s %-28s → cluster %d (distance %.2f)\n", s.ID, s.Name, c, dist)
	}
	return nil
}

func featureList(names, units []string) string {
	parts := make([]string, len(names))
	for i := range names {
		parts[i] = fmt.Sprintf("%s (%s)", names[i], units[i])
	}
	return strings.Join(parts, ", ")
}

// scaled returns the data in the model's clustering space.
func scaled(X *mat.Dense, m *kmeans.Model) *mat.Dense {
	n, d := X.Dims()
	Z := mat.NewDense(n, d, nil)
	for i := range n {
		m.Scaler().Apply(Z.RawRowView(i), X.RawRowView(i))
	}
	return Z
}

// pick returns the row with the highest silhouette, the smaller k on ties.
func pick(rows []sweepRow) sweepRow {
	best := rows[0]
	for _, r := range rows[1:] {
		if r.sil > best.sil {
			best = r
		}
	}
	return best
}

func argBest(rows []sweepRow, score func(sweepRow) float64) int {
	best := rows[0]
	for _, r := range rows[1:] {
		if score(r) > score(best) {
			best = r
		}
	}
	return best.k
}

// profile prints each cluster in original units: size and share, feature
// means, and the features that set it apart (difference of the cluster mean
// from the overall mean in overall standard deviations, |z| ≥ 0.75).
func profile(w io.Writer, X *mat.Dense, res *kmeans.Result, names, units []string) {
	n, d := X.Dims()
	means, sds := make([]float64, d), make([]float64, d)
	col := make([]float64, n)
	for j := range d {
		mat.Col(col, j, X)
		means[j], sds[j] = stat.PopMeanStdDev(col, nil)
	}
	fmt.Fprintln(w, "\ncluster profiles (original units)")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprint(tw, "cluster\tstations\tshare\t")
	for j := range d {
		fmt.Fprintf(tw, "%s\t", names[j])
	}
	fmt.Fprintln(tw)
	k := res.Model.K()
	cm := make([][]float64, k)
	for c := range k {
		cm[c] = make([]float64, d)
		var members int
		for i, a := range res.Assignments {
			if a == c {
				members++
				for j := range d {
					cm[c][j] += X.At(i, j)
				}
			}
		}
		for j := range d {
			cm[c][j] /= float64(members)
		}
		fmt.Fprintf(tw, "%d\t%d\t%.0f%%\t", c, res.Sizes[c], 100*float64(res.Sizes[c])/float64(n))
		for j := range d {
			fmt.Fprintf(tw, "%.*f\t", decimals(sds[j]), cm[c][j])
		}
		fmt.Fprintln(tw)
	}
	fmt.Fprint(tw, "all\t", n, "\t100%\t")
	for j := range d {
		fmt.Fprintf(tw, "%.*f\t", decimals(sds[j]), means[j])
	}
	fmt.Fprintln(tw)
	tw.Flush()
	fmt.Fprintln(w, "\nwhat sets each cluster apart (cluster mean − overall mean, in overall standard deviations):")
	for c := range k {
		type feat struct {
			j int
			z float64
		}
		var fs []feat
		for j := range d {
			if sds[j] > 0 {
				fs = append(fs, feat{j, (cm[c][j] - means[j]) / sds[j]})
			}
		}
		slices.SortStableFunc(fs, func(a, b feat) int {
			switch {
			case math.Abs(a.z) > math.Abs(b.z):
				return -1
			case math.Abs(a.z) < math.Abs(b.z):
				return 1
			}
			return 0
		})
		var parts []string
		for _, f := range fs {
			if math.Abs(f.z) < 0.75 || len(parts) == 3 {
				break
			}
			dir := "high"
			if f.z < 0 {
				dir = "low"
			}
			parts = append(parts, fmt.Sprintf("%s %s (%+.1f sd, %.*f %s)", dir, names[f.j], f.z, decimals(sds[f.j]), cm[c][f.j], units[f.j]))
		}
		if len(parts) == 0 {
			parts = append(parts, "close to the network average on every feature")
		}
		fmt.Fprintf(w, "  cluster %d: %s\n", c, strings.Join(parts, "; "))
	}
}

// decimals picks a print precision from a feature's spread.
func decimals(v float64) int {
	switch a := math.Abs(v); {
	case a >= 100:
		return 0
	case a >= 10:
		return 1
	case a >= 1:
		return 2
	}
	return 3
}
