package plot_test

import (
	"context"
	"fmt"
	"image/png"
	"os"
	"path/filepath"

	"github.com/centroidlab/centroid/kmeans/choosek"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/plot/vg"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/plot"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/validate"
)

// pngSize returns the pixel size of a PNG file.
func pngSize(path string) string {
	f, err := os.Open(path)
	if err != nil {
		return err.Error()
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		return err.Error()
	}
	return fmt.Sprintf("%d×%d pixels", img.Bounds().Dx(), img.Bounds().Dy())
}

// Draw the evidence of a sweep over k for the invented Riverton Bikes
// stations, then the silhouettes and the principal components of the
// recommended clustering, in the clustering (z-scored) space.
func Example() {
	dir, err := os.MkdirTemp("", "plot-example")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)

	_, X := bikeshare.Generate(150, 1)
	sw, err := choosek.Sweep(context.Background(), kmeans.Problem{Data: X, Scaler: &scale.ZScore{}},
		[]int{1, 2, 3, 4, 5, 6}, &kmeans.Settings{Seed: 1}, nil,
		&choosek.Options{GapReferences: 5, Stability: choosek.StabilityOptions{Resamples: 5}})
	if err != nil {
		fmt.Println(err)
		return
	}
	fig, err := plot.Indices(sw)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(fig.Title)
	if err := fig.Save(filepath.Join(dir, "indices.png"), nil); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("indices.png:", pngSize(filepath.Join(dir, "indices.png")))

	res := sw.Recommended()
	n, d := X.Dims()
	Z := mat.NewDense(n, d, nil)
	for i := range n {
		res.Model.Scaler().Apply(Z.RawRowView(i), X.RawRowView(i))
	}
	s, err := validate.SilhouetteValues(nil, Z, res.Assignments, distance.Euclidean{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fig, err = plot.Silhouette(s, res.Assignments)
	if err != nil {
		fmt.Println(err)
		return
	}
	if err := fig.Save(filepath.Join(dir, "silhouette.svg"), nil); err != nil {
		fmt.Println(err)
		return
	}
	fig, err = plot.Components(Z, res.Assignments, res.Model.ScaledCenters())
	if err != nil {
		fmt.Println(err)
		return
	}
	fig.Title = "Riverton Bikes stations"
	size := &plot.Size{Width: 4 * vg.Inch, Height: 3 * vg.Inch, DPI: 150}
	if err := fig.Save(filepath.Join(dir, "pca.png"), size); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("pca.png:", pngSize(filepath.Join(dir, "pca.png")))
	// Output:
	// choosing k: k = 3 recommended, combined score 1.00, clear structure
	// indices.png: 960×739 pixels
	// pca.png: 600×450 pixels
}
