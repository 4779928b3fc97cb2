package plot

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Components returns a scatter plot of the rows of X on their first two
// principal components (gonum stat.PC, unweighted, on the centred columns),
// each row coloured and shaped by its cluster in assign, with the centers
// (rows of centers, in the same space as X) projected the same way and
// drawn as large outlined markers labelled with the cluster number. The
// axis labels give each component's share of the total variance. Pass the
// rows in the clustering space (scaled) so that the picture shows the
// geometry k-means saw. Each component's sign is fixed so that its largest
// loading is positive, so the picture does not flip between runs. The
// default size is 7 × 6 inches.
//
// It returns an error wrapping ErrInput if X is nil, has fewer than two
// rows or columns or a value that is not finite, if len(assign) differs
// from the number of rows or a label is negative, if centers (which may be
// nil) has a different number of columns, or if the principal components
// cannot be computed.
func Components(X mat.Matrix, assign []int, centers mat.Matrix) (*Figure, error) {
	if X == nil {
		return nil, fmt.Errorf("%w: nil matrix", ErrInput)
	}
	n, d := X.Dims()
	switch {
	case n < 2 || d < 2:
		return nil, fmt.Errorf("%w: a %d×%d matrix has no two principal components (need 2 rows and 2 columns)", ErrInput, n, d)
	case len(assign) != n:
		return nil, fmt.Errorf("%w: %d assignments for %d rows", ErrInput, len(assign), n)
	}
	if centers != nil {
		if _, cd := centers.Dims(); cd != d {
			return nil, fmt.Errorf("%w: centers have %d columns, data has %d", ErrInput, cd, d)
		}
	}
	k := 0
	for i, a := range assign {
		if a < 0 {
			return nil, fmt.Errorf("%w: label %d is %d", ErrInput, i, a)
		}
		k = max(k, a+1)
	}
	for _, m := range []mat.Matrix{X, centers} {
		if m == nil {
			continue
		}
		r, c := m.Dims()
		for i := range r {
			for j := range c {
				if !finite(m.At(i, j)) {
					return nil, fmt.Errorf("%w: value (%d, %d) is %v", ErrInput, i, j, m.At(i, j))
				}
			}
		}
	}
	var pc stat.PC
	if !pc.PrincipalComponents(X, nil) {
		return nil, fmt.Errorf("%w: principal components could not be computed", ErrInput)
	}
	var vecs mat.Dense
	pc.VectorsTo(&vecs)
	vars := pc.VarsTo(nil)
	var total float64
	for _, v := range vars {
		total += v
	}
	mean := make([]float64, d)
	for j := range d {
		mean[j] = stat.Mean(mat.Col(nil, j, X), nil)
	}
	// Fix the signs: the largest loading of each component is positive.
	sign := [2]float64{1, 1}
	for c := range 2 {
		best := 0.0
		for j := range d {
			if v := vecs.At(j, c); math.Abs(v) > math.Abs(best) {
				best = v
			}
		}
		if best < 0 {
			sign[c] = -1
		}
	}
	project := func(m mat.Matrix, i int) plotter.XY {
		var xy [2]float64
		for c := range 2 {
			for j := range d {
				xy[c] += (m.At(i, j) - mean[j]) * vecs.At(j, c)
			}
			xy[c] *= sign[c]
		}
		return plotter.XY{X: xy[0], Y: xy[1]}
	}
	byCluster := make([]plotter.XYs, k)
	for i, a := range assign {
		byCluster[a] = append(byCluster[a], project(X, i))
	}

	p := gplot.New()
	share := func(c int) float64 {
		if total > 0 && c < len(vars) {
			return 100 * vars[c] / total
		}
		return 0
	}
	p.X.Label.Text = fmt.Sprintf("first principal component (%.1f%% of variance)", share(0))
	p.Y.Label.Text = fmt.Sprintf("second principal component (%.1f%% of variance)", share(1))
	p.Add(plotter.NewGrid())
	radius := vg.Points(2.2)
	if n > 2000 {
		radius = vg.Points(1.4)
	}
	for c, xys := range byCluster {
		if len(xys) == 0 {
			continue
		}
		s, err := plotter.NewScatter(xys)
		if err != nil {
			return nil, fmt.Errorf("%w: %w", ErrInput, err)
		}
		col := ClusterColor(c)
		col.A = 0xD0
		s.GlyphStyle = draw.GlyphStyle{Color: col, Radius: radius, Shape: clusterGlyph(c)}
		p.Add(s)
	}
	if centers != nil {
		kc, _ := centers.Dims()
		var xys plotter.XYs
		var labels []string
		for c := range kc {
			xys = append(xys, project(centers, c))
			labels = append(labels, fmt.Sprint(c))
		}
		if kc > 0 {
			marks, err := plotter.NewScatter(xys)
			if err != nil {
				return nil, fmt.Errorf("%w: %w", ErrInput, err)
			}
			marks.GlyphStyleFunc = func(i int) draw.GlyphStyle {
				return draw.GlyphStyle{Color: ClusterColor(i), Radius: vg.Points(6), Shape: centerGlyph{clusterGlyph(i)}}
			}
			names, err := plotter.NewLabels(plotter.XYLabels{XYs: xys, Labels: labels})
			if err != nil {
				return nil, fmt.Errorf("%w: %w", ErrInput, err)
			}
			for i := range names.TextStyle {
				names.TextStyle[i].Font.Size = vg.Points(11)
				names.TextStyle[i].Color = black
			}
			names.Offset = vg.Point{X: vg.Points(9), Y: vg.Points(2)}
			p.Add(marks, names)
		}
	}
	return &Figure{
		Title:  fmt.Sprintf("%d rows, %d clusters on the first two principal components (centers outlined)", n, len(nonEmpty(byCluster))),
		Width:  7 * vg.Inch,
		Height: 6 * vg.Inch,
		draw:   func(c draw.Canvas) { p.Draw(c) },
	}, nil
}

func nonEmpty(groups []plotter.XYs) []int {
	var out []int
	for c, g := range groups {
		if len(g) > 0 {
			out = append(out, c)
		}
	}
	return out
}

// centerGlyph draws a cluster's marker with a black outline, so that
// centers stand out from the rows.
type centerGlyph struct{ inner draw.GlyphDrawer }

func (g centerGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	outline := sty
	outline.Color = black
	outline.Radius = sty.Radius + vg.Points(1.5)
	filled := g.inner
	switch g.inner.(type) {
	case draw.RingGlyph:
		filled = draw.CircleGlyph{}
	case draw.SquareGlyph:
		filled = draw.BoxGlyph{}
	case draw.TriangleGlyph:
		filled = draw.PyramidGlyph{}
	}
	c.SetColor(outline.Color)
	filled.DrawGlyph(c, outline, pt)
	c.SetColor(sty.Color)
	filled.DrawGlyph(c, sty, pt)
}
