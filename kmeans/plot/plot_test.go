package plot

import (
	"bytes"
	"context"
	"fmt"
	"image/color"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"testing"

	"github.com/centroidlab/centroid/kmeans/choosek"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/plot/vg"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
)

// blobs returns n rows around k centres in d dimensions (invented test
// data).
func blobs(n, d, k int, seed uint64) *mat.Dense {
	rnd := rand.New(rand.NewPCG(seed, 3))
	centres := make([]float64, k*d)
	for i := range centres {
		centres[i] = 10 * rnd.Float64()
	}
	x := mat.NewDense(n, d, nil)
	for i := range n {
		c := i % k
		for j := range d {
			x.Set(i, j, centres[c*d+j]+0.5*rnd.NormFloat64())
		}
	}
	return x
}

// figures builds one figure of each kind from a small sweep.
func figures(t *testing.T, o *choosek.Options) map[string]*Figure {
	t.Helper()
	x := blobs(150, 3, 4, 1)
	sw, err := choosek.Sweep(context.Background(), kmeans.Problem{Data: x}, []int{1, 2, 3, 4, 5, 6}, &kmeans.Settings{Seed: 1, Restarts: 3}, nil, o)
	require.NoError(t, err)
	res := sw.Recommended()
	s, err := validate.SilhouetteValues(nil, x, res.Assignments, distance.Euclidean{})
	require.NoError(t, err)
	ind, err := Indices(sw)
	require.NoError(t, err)
	sil, err := Silhouette(s, res.Assignments)
	require.NoError(t, err)
	pcs, err := Components(x, res.Assignments, res.Model.Centers())
	require.NoError(t, err)
	return map[string]*Figure{"indices": ind, "silhouette": sil, "components": pcs}
}

var svgSize = regexp.MustCompile(`<svg width="([0-9.]+)pt" height="([0-9.]+)pt"`)

// TestFilesSizeAndDeterminism saves every figure as PNG and SVG at a
// requested size, decodes the PNG (image/png) and reads the SVG's width
// and height, and checks a second save gives the same bytes.
func TestFilesSizeAndDeterminism(t *testing.T) {
	dir := t.TempDir()
	opts := []*choosek.Options{
		{GapReferences: 3, Stability: choosek.StabilityOptions{Resamples: 3}},
		{SkipGap: true, SkipStability: true, DunnRows: -1},
	}
	if raceOn {
		opts = opts[:1] // text rendering is ten times slower under the race detector
	}
	custom := &Size{Width: 5 * vg.Inch, Height: 3 * vg.Inch, DPI: 100}
	for oi, o := range opts {
		for name, fig := range figures(t, o) {
			for _, ext := range []string{".png", ".svg"} {
				for _, sz := range []*Size{nil, custom} {
					w, h, dpi := fig.Width, fig.Height, DefaultDPI
					if sz != nil {
						w, h, dpi = sz.Width, sz.Height, sz.DPI
					}
					path := filepath.Join(dir, name+strconv.Itoa(oi)+ext)
					require.NoError(t, fig.Save(path, sz))
					first, err := os.ReadFile(path)
					require.NoError(t, err)
					if sz == custom {
						require.NoError(t, fig.Save(path, sz))
						second, err := os.ReadFile(path)
						require.NoError(t, err)
						assert.Equal(t, first, second, "%s is not deterministic", path)
					}
					if ext == ".png" {
						img, err := png.Decode(bytes.NewReader(first))
						require.NoError(t, err)
						b := img.Bounds()
						assert.Equal(t, int(math.Round(float64(w)/72*float64(dpi))), b.Dx(), path)
						assert.Equal(t, int(math.Round(float64(h)/72*float64(dpi))), b.Dy(), path)
						continue
					}
					m := svgSize.FindSubmatch(first)
					require.NotNil(t, m, "no svg size in %s", path)
					sw, _ := strconv.ParseFloat(string(m[1]), 64)
					sh, _ := strconv.ParseFloat(string(m[2]), 64)
					assert.InDelta(t, w.Points(), sw, 0.01)
					assert.InDelta(t, h.Points(), sh, 0.01)
				}
			}
		}
	}
}

// TestEncodeMatchesSave checks Encode writes the bytes Save writes, and
// that the extension's case does not matter.
func TestEncodeMatchesSave(t *testing.T) {
	fig, err := Silhouette([]float64{0.5, 0.4, 0.9, 0.7}, []int{0, 0, 1, 1})
	require.NoError(t, err)
	path := filepath.Join(t.TempDir(), "s.PNG")
	require.NoError(t, fig.Save(path, nil))
	saved, err := os.ReadFile(path)
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, fig.Encode(&buf, PNG, nil))
	assert.Equal(t, saved, buf.Bytes())
	f, err := FormatOf("x.Svg")
	require.NoError(t, err)
	assert.Equal(t, SVG, f)
}

// TestSilhouettePixels decodes a silhouette plot and checks every cluster's
// colour fills an area that grows with the cluster's total silhouette.
func TestSilhouettePixels(t *testing.T) {
	// Three clusters with known silhouettes: sums 10, 20 and 40.
	var s []float64
	var a []int
	for c, n := range []int{20, 25, 50} {
		for range n {
			s = append(s, []float64{0.5, 0.8, 0.8}[c])
			a = append(a, c)
		}
	}
	fig, err := Silhouette(s, a)
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, fig.Encode(&buf, PNG, nil))
	img, err := png.Decode(&buf)
	require.NoError(t, err)
	count := make([]int, 3)
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			for c := range count {
				want := ClusterColor(c)
				if r>>8 == uint32(want.R) && g>>8 == uint32(want.G) && bl>>8 == uint32(want.B) {
					count[c]++
				}
			}
		}
	}
	t.Logf("pixels per cluster colour: %v", count)
	for c := range count {
		assert.Positive(t, count[c])
	}
	// Areas are proportional to Σ s(i) (10 : 20 : 40) up to anti-aliased
	// edges.
	assert.InDelta(t, 2, float64(count[1])/float64(count[0]), 0.3)
	assert.InDelta(t, 2, float64(count[2])/float64(count[1]), 0.3)
}

func TestBadInput(t *testing.T) {
	x := blobs(20, 2, 2, 1)
	assign := make([]int, 20)
	nan := mat.DenseCopyOf(x)
	nan.Set(2, 1, math.NaN())
	cases := []struct {
		name string
		err  error
	}{
		{"nil sweep", second(Indices(nil))},
		{"empty sweep", second(Indices(&choosek.Result{}))},
		{"no values", second(Silhouette(nil, nil))},
		{"length mismatch", second(Silhouette([]float64{0.1, 0.2}, []int{0}))},
		{"NaN silhouette", second(Silhouette([]float64{math.NaN()}, []int{0}))},
		{"silhouette above 1", second(Silhouette([]float64{1.5}, []int{0}))},
		{"negative label", second(Silhouette([]float64{0.5}, []int{-1}))},
		{"label beyond rows", second(Silhouette([]float64{0.5}, []int{3}))},
		{"nil matrix", second(Components(nil, nil, nil))},
		{"one column", second(Components(mat.NewDense(3, 1, []float64{1, 2, 3}), []int{0, 0, 1}, nil))},
		{"one row", second(Components(mat.NewDense(1, 2, []float64{1, 2}), []int{0}, nil))},
		{"short assignments", second(Components(x, assign[:3], nil))},
		{"negative cluster", second(Components(x, append(make([]int, 19), -2), nil))},
		{"NaN row", second(Components(nan, assign, nil))},
		{"centers width", second(Components(x, assign, mat.NewDense(2, 3, nil)))},
	}
	for _, c := range cases {
		assert.ErrorIs(t, c.err, ErrInput, c.name)
	}
	fig, err := Silhouette([]float64{0.5, 0.4}, []int{0, 1})
	require.NoError(t, err)
	dir := t.TempDir()
	assert.ErrorIs(t, fig.Save(filepath.Join(dir, "a.jpg"), nil), ErrFormat)
	assert.ErrorIs(t, fig.Save(filepath.Join(dir, "noext"), nil), ErrFormat)
	assert.ErrorIs(t, fig.Encode(&bytes.Buffer{}, Format(7), nil), ErrFormat)
	assert.ErrorIs(t, fig.Encode(&bytes.Buffer{}, PNG, &Size{Width: -1}), ErrSize)
	assert.ErrorIs(t, fig.Encode(&bytes.Buffer{}, SVG, &Size{DPI: -5}), ErrSize)
	assert.ErrorIs(t, fig.Encode(&bytes.Buffer{}, PNG, &Size{Width: 1000 * vg.Inch, Height: 1000 * vg.Inch}), ErrSize)
	assert.ErrorIs(t, (&Figure{}).Save(filepath.Join(dir, "empty.png"), nil), ErrInput)
	var none *Figure
	assert.ErrorIs(t, none.Encode(&bytes.Buffer{}, SVG, nil), ErrInput)
	assert.Error(t, fig.Save(filepath.Join(dir, "missing", "a.png"), nil))
	for _, name := range []string{"a.jpg", "empty.png"} {
		_, err = os.Stat(filepath.Join(dir, name))
		assert.True(t, os.IsNotExist(err), "no file %s for bad input", name)
	}
	assert.Equal(t, "png svg Format(7)", PNG.String()+" "+SVG.String()+" "+Format(7).String())
}

func second(_ *Figure, err error) error { return err }

// TestComponentsDoesNotModify checks the inputs are left alone.
func TestComponentsDoesNotModify(t *testing.T) {
	x := blobs(30, 3, 3, 2)
	before := mat.DenseCopyOf(x)
	a := make([]int, 30)
	for i := range a {
		a[i] = i % 3
	}
	_, err := Components(x, a, nil)
	require.NoError(t, err)
	assert.True(t, mat.Equal(before, x))
}

// Colour vision deficiency simulation matrices for linear RGB at full
// severity, from G. M. Machado, M. M. Oliveira and L. A. F. Fernandes, "A
// physiologically-based model for simulation of color vision deficiency",
// IEEE TVCG 15(6), 2009 (values from memory).
var (
	protanopia   = [3][3]float64{{0.152286, 1.052583, -0.204868}, {0.114503, 0.786281, 0.099216}, {-0.003882, -0.048116, 1.051998}}
	deuteranopia = [3][3]float64{{0.367322, 0.860646, -0.227968}, {0.280085, 0.672501, 0.047413}, {-0.011820, 0.042940, 0.968881}}
	tritanopia   = [3][3]float64{{1.255528, -0.076749, -0.178779}, {-0.078411, 0.930809, 0.147602}, {0.004733, 0.691367, 0.303900}}
	normal       = [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
)

// lab converts an sRGB colour seen through the simulation m to CIELAB (D65
// white), with the sRGB transfer function and matrix of IEC 61966-2-1 and
// the CIE 1976 L*a*b* formulas.
func lab(c color.NRGBA, m [3][3]float64) [3]float64 {
	lin := func(v uint8) float64 {
		x := float64(v) / 255
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	rgb := [3]float64{lin(c.R), lin(c.G), lin(c.B)}
	var s [3]float64
	for i := range 3 {
		s[i] = min(1, max(0, m[i][0]*rgb[0]+m[i][1]*rgb[1]+m[i][2]*rgb[2]))
	}
	X := 0.4124564*s[0] + 0.3575761*s[1] + 0.1804375*s[2]
	Y := 0.2126729*s[0] + 0.7151522*s[1] + 0.0721750*s[2]
	Z := 0.0193339*s[0] + 0.1191920*s[1] + 0.9503041*s[2]
	f := func(t float64) float64 {
		if t > 216.0/24389 {
			return math.Cbrt(t)
		}
		return (24389.0/27*t + 16) / 116
	}
	fx, fy, fz := f(X/0.95047), f(Y), f(Z/1.08883)
	return [3]float64{116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)}
}

// TestPaletteSeparation recomputes the separation the package
// documentation claims: the smallest CIELAB ΔE*ab between two palette
// colours for normal vision and under simulated deficiencies.
func TestPaletteSeparation(t *testing.T) {
	pal := Palette()
	require.Len(t, pal, 8)
	for _, c := range []struct {
		name string
		m    [3][3]float64
		min  float64
	}{{"normal", normal, 36}, {"deuteranopia", deuteranopia, 30}, {"protanopia", protanopia, 28}, {"tritanopia", tritanopia, 18}} {
		worst := math.Inf(1)
		for i := range pal {
			for j := i + 1; j < len(pal); j++ {
				a, b := lab(pal[i], c.m), lab(pal[j], c.m)
				worst = min(worst, math.Sqrt((a[0]-b[0])*(a[0]-b[0])+(a[1]-b[1])*(a[1]-b[1])+(a[2]-b[2])*(a[2]-b[2])))
			}
		}
		t.Logf("%s: smallest ΔE*ab %.1f", c.name, worst)
		assert.GreaterOrEqual(t, worst, c.min, c.name)
	}
	for i, c := range pal {
		l := lab(c, normal)[0]
		assert.True(t, l >= 29 && l <= 79, "colour %d lightness %.0f: too dark or too light on white", i, l)
		assert.Equal(t, c, ClusterColor(i+8), "colours repeat every 8 clusters")
	}
	pal[0] = color.NRGBA{}
	assert.NotEqual(t, pal[0], Palette()[0], "Palette returns a copy")
	assert.NotEqual(t, clusterGlyph(0), clusterGlyph(8), "shape changes when colours repeat")
}

// TestIntTicks checks the k axis labels only integers, at most about 12.
func TestIntTicks(t *testing.T) {
	for _, c := range []struct {
		lo, hi float64
		labels int
	}{{0.5, 8.5, 8}, {1.5, 30.5, 6}, {0.5, 100.5, 10}} { // steps 1, 5 and 10
		var labels int
		for _, tk := range (intTicks{}).Ticks(c.lo, c.hi) {
			assert.Equal(t, math.Round(tk.Value), tk.Value)
			if tk.Label != "" {
				labels++
			}
		}
		assert.Equal(t, c.labels, labels, "%v", c)
	}
}

// TestIndicesTitleAndSizes checks the figure names the recommended k with
// its combined score, refuses sizes too small for its panels, and finishes
// at canvas heights where gonum/plot's data area degenerates (around 3
// inches for this sweep: without alignPanels, drawing does not end).
func TestIndicesTitleAndSizes(t *testing.T) {
	x := blobs(150, 3, 4, 1)
	sw, err := choosek.Sweep(context.Background(), kmeans.Problem{Data: x}, []int{1, 2, 3, 4, 5, 6}, &kmeans.Settings{Seed: 1, Restarts: 3}, nil,
		&choosek.Options{GapReferences: 3, Stability: choosek.StabilityOptions{Resamples: 3}})
	require.NoError(t, err)
	fig, err := Indices(sw)
	require.NoError(t, err)
	rec := sw.Recommendation
	assert.Contains(t, fig.Title, fmt.Sprintf("k = %d recommended, combined score %.2f", rec.K, rec.Combined))
	assert.NotContains(t, fig.Title, "votes")
	assert.ErrorIs(t, fig.Encode(&bytes.Buffer{}, SVG, &Size{Width: 2 * vg.Inch, Height: 6 * vg.Inch}), ErrSize)
	assert.ErrorIs(t, fig.Encode(&bytes.Buffer{}, SVG, &Size{Width: 6 * vg.Inch, Height: 2 * vg.Inch}), ErrSize)
	for _, h := range []vg.Length{3, 3.02, 3.04, 3.06, 3.08, 3.1} {
		var buf bytes.Buffer
		require.NoError(t, fig.Encode(&buf, PNG, &Size{Width: 5 * vg.Inch, Height: h * vg.Inch, DPI: 50}))
		img, err := png.Decode(&buf)
		require.NoError(t, err)
		assert.Equal(t, int(math.Round(float64(h*vg.Inch)/72*50)), img.Bounds().Dy())
	}
}
