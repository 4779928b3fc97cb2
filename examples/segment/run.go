package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/centroidlab/centroid/kmeans/choosek"
	"github.com/centroidlab/centroid/kmeans/profile"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/plot"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/validate"
)

// Effort of the sweep: enough restarts for 300 stations, few for the
// gap statistic's reference sets and the stability resamples, so that the
// whole job takes a few seconds.
const (
	sweepRestarts    = 10
	gapRestarts      = 2
	resampleRestarts = 3
)

func run(ctx context.Context, w io.Writer, o options) error {
	switch {
	case o.stations < 2:
		return fmt.Errorf("need at least 2 stations, got %d", o.stations)
	case o.kmin < 1 || o.kmax < o.kmin:
		return fmt.Errorf("need 1 ≤ kmin ≤ kmax, got %d..%d", o.kmin, o.kmax)
	case o.k != 0 && (o.k < o.kmin || o.k > o.kmax):
		return fmt.Errorf("-k %d is outside the sweep %d..%d", o.k, o.kmin, o.kmax)
	case o.format != "png" && o.format != "svg":
		return fmt.Errorf("-format %q: want png or svg", o.format)
	}
	stations, X := bikeshare.Generate(o.stations, o.seed)
	names, units := bikeshare.Features(), bikeshare.Units()
	n, d := X.Dims()
	fmt.Fprintf(w, "%s: %d docking stations × %d usage features (invented demo data, seed %d)\n", bikeshare.Operator, n, d, o.seed)
	fmt.Fprintf(w, "features: %s\n", featureList(names, units))
	fmt.Fprintln(w, "scaling: z-score per feature (mean and population standard deviation); all scores are measured on the scaled features")

	// Sweep k and read the evidence.
	var ks []int
	for k := o.kmin; k <= o.kmax; k++ {
		ks = append(ks, k)
	}
	opts := &choosek.Options{
		SkipGap:       o.refs == 0,
		GapReferences: o.refs,
		GapRestarts:   gapRestarts,
		SkipStability: o.resamples == 0,
		Stability:     choosek.StabilityOptions{Resamples: o.resamples, Restarts: resampleRestarts},
	}
	problem := kmeans.Problem{Data: X, Scaler: &scale.ZScore{}, Features: names}
	sw, err := choosek.Sweep(ctx, problem, ks, &kmeans.Settings{Restarts: sweepRestarts, Seed: o.seed}, nil, opts)
	if err != nil {
		return fmt.Errorf("sweep: %w", err)
	}
	fmt.Fprintf(w, "\nk sweep: k = %d..%d, %d restarts per k", o.kmin, o.kmax, sweepRestarts)
	if !opts.SkipGap {
		fmt.Fprintf(w, "; gap statistic with %d reference sets", o.refs)
	}
	if !opts.SkipStability {
		fmt.Fprintf(w, "; stability from %d resamples on 80%% subsamples", o.resamples)
	}
	fmt.Fprintln(w, "\n(silhouette, Calinski–Harabasz, Dunn, gap, ARI and Jaccard: higher is better; Davies–Bouldin: lower is better)")
	if _, err := sw.WriteTo(w); err != nil {
		return err
	}

	k := sw.Recommendation.K
	how := "the recommendation"
	if o.k != 0 {
		k, how = o.k, "-k"
	}
	pt := sw.Point(k)
	res := pt.Result
	fmt.Fprintf(w, "\nchosen k = %d (%s)\n", k, how)
	truth := bikeshare.KindsOf(stations)
	if ari, err := validate.AdjustedRand(truth, res.Assignments); err == nil {
		fmt.Fprintf(w, "agreement with the %d latent station kinds (known only because the data is invented): adjusted Rand index %.3f\n", bikeshare.NumKinds, ari)
	}

	// Profiles in original units, named by the model's schema.
	pf, err := profile.Explain(X, res.Assignments, &profile.Options{Names: res.Model.Features(), Units: units, K: res.Model.K(), Noun: "stations"})
	if err != nil {
		return fmt.Errorf("profiles: %w", err)
	}
	fmt.Fprintln(w, "\ncluster profiles (original units)")
	if _, err := pf.WriteTo(w); err != nil {
		return err
	}
	fmt.Fprintln(w, "\nwhat sets each cluster apart (cluster mean − overall mean, in overall standard deviations):")
	for c, cl := range pf.Clusters {
		fmt.Fprintf(w, "  cluster %d (%d stations): %s\n", c, cl.Rows, pf.Gist(c))
	}

	// Plots and the model go to the output folder.
	if err := os.MkdirAll(o.out, 0o755); err != nil {
		return err
	}
	files, err := drawPlots(o, sw, res, X)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "\nplots written to %s:\n", o.out)
	for _, f := range files {
		fmt.Fprintf(w, "  %s\n", f)
	}

	path := filepath.Join(o.out, "model.json")
	doc, err := json.MarshalIndent(res.Model, "", " ")
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
		fmt.Fprintf(w, "  %s %-28s → cluster %d (distance %.2f; %s)\n", s.ID, s.Name, c, dist, firstContrast(pf, c))
	}
	return nil
}

// drawPlots writes the three figures into o.out and returns their paths.
func drawPlots(o options, sw *choosek.Result, res *kmeans.Result, X *mat.Dense) ([]string, error) {
	Z := scaled(X, res.Model)
	var files []string
	save := func(name string, fig *plot.Figure, err error) error {
		if err != nil {
			return fmt.Errorf("%s plot: %w", name, err)
		}
		path := filepath.Join(o.out, name+"."+o.format)
		if err := fig.Save(path, nil); err != nil {
			return err
		}
		files = append(files, path)
		return nil
	}
	fig, err := plot.Indices(sw)
	if err := save("indices", fig, err); err != nil {
		return nil, err
	}
	if res.Model.K() >= 2 {
		s, err := validate.SilhouetteValues(nil, Z, res.Assignments, distance.Euclidean{})
		if err != nil {
			return nil, fmt.Errorf("silhouette plot: %w", err)
		}
		fig, err = plot.Silhouette(s, res.Assignments)
		if err := save("silhouette", fig, err); err != nil {
			return nil, err
		}
	}
	fig, err = plot.Components(Z, res.Assignments, res.Model.ScaledCenters())
	if err := save("pca", fig, err); err != nil {
		return nil, err
	}
	return files, nil
}

// scaled returns the stations in the clustering space: the raw features
// with the model's learned scaler applied.
func scaled(X *mat.Dense, m *kmeans.Model) *mat.Dense {
	n, d := X.Dims()
	Z := mat.NewDense(n, d, nil)
	for i := range n {
		m.Scaler().Apply(Z.RawRowView(i), X.RawRowView(i))
	}
	return Z
}

func featureList(names, units []string) string {
	parts := make([]string, len(names))
	for i := range names {
		parts[i] = fmt.Sprintf("%s (%s)", names[i], units[i])
	}
	return strings.Join(parts, ", ")
}

// firstContrast describes the cluster by its most distinctive feature.
func firstContrast(pf *profile.Report, c int) string {
	s := pf.Clusters[c].Standouts
	if len(s) == 0 {
		return "an average station"
	}
	dir := "high"
	if pf.Clusters[c].Shift[s[0]] < 0 {
		dir = "low"
	}
	return fmt.Sprintf("%s %s", dir, pf.Names[s[0]])
}
