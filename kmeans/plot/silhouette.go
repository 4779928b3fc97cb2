package plot

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Silhouette returns a silhouette plot (Rousseeuw 1987): one horizontal
// bar per row of length s(i), the rows of each cluster sorted from the
// largest to the smallest silhouette and stacked cluster after cluster
// (cluster 0 on top), filled in the cluster's colour, with a dashed line
// at the mean silhouette. values are per-row silhouettes such as
// validate.SilhouetteValues returns and assign the rows' clusters. The
// default size is 7 × 6 inches.
//
// It returns an error wrapping ErrInput if values is empty, the lengths
// differ, a label is negative, or a value is not finite or outside [−1, 1].
func Silhouette(values []float64, assign []int) (*Figure, error) {
	if len(values) == 0 || len(values) != len(assign) {
		return nil, fmt.Errorf("%w: %d silhouette values for %d assignments", ErrInput, len(values), len(assign))
	}
	k := 0
	var mean float64
	for i, v := range values {
		if !finite(v) || v < -1 || v > 1 {
			return nil, fmt.Errorf("%w: silhouette %d is %v, want a value in [−1, 1]", ErrInput, i, v)
		}
		if assign[i] < 0 {
			return nil, fmt.Errorf("%w: label %d is %d", ErrInput, i, assign[i])
		}
		k = max(k, assign[i]+1)
		mean += v
	}
	if k > len(values) {
		return nil, fmt.Errorf("%w: label %d for %d rows", ErrInput, k-1, len(values))
	}
	mean /= float64(len(values))
	groups := make([][]float64, k)
	for i, v := range values {
		groups[assign[i]] = append(groups[assign[i]], v)
	}
	lo := 0.0
	for _, g := range groups {
		slices.SortFunc(g, func(a, b float64) int { return cmp.Compare(b, a) })
		if len(g) > 0 {
			lo = min(lo, g[len(g)-1])
		}
	}
	gap := max(2, len(values)/60)
	bars := &silhouetteBars{groups: groups, gap: gap}
	p := gplot.New()
	p.X.Label.Text = "silhouette s(i)"
	p.Y.Label.Text = "cluster: its mean s(i); rows sorted by s(i)"
	p.X.Min, p.X.Max = math.Floor(lo*10)/10, 1
	p.Add(bars)
	p.Y.Min, p.Y.Max = 0, float64(bars.height())
	p.Y.Tick.Marker = bars.ticks()
	p.Add(vline{x: mean})
	return &Figure{
		Title:  fmt.Sprintf("silhouette plot: %d rows, %d clusters, mean s = %.3f (dashed)", len(values), bars.clusters(), mean),
		Width:  7 * vg.Inch,
		Height: 6 * vg.Inch,
		draw:   func(c draw.Canvas) { p.Draw(c) },
	}, nil
}

// silhouetteBars draws the sorted silhouettes of every cluster as one
// filled step outline per cluster, cluster 0 at the top.
type silhouetteBars struct {
	groups [][]float64
	gap    int // empty rows between clusters
}

func (b *silhouetteBars) clusters() int {
	c := 0
	for _, g := range b.groups {
		if len(g) > 0 {
			c++
		}
	}
	return c
}

// height is the total number of rows drawn, gaps included.
func (b *silhouetteBars) height() int {
	h := 0
	for _, g := range b.groups {
		if len(g) > 0 {
			h += len(g) + b.gap
		}
	}
	return h
}

// tops returns the y of the top of each cluster's block.
func (b *silhouetteBars) tops() []int {
	top := make([]int, len(b.groups))
	y := b.height() - b.gap/2
	for c, g := range b.groups {
		top[c] = y
		if len(g) > 0 {
			y -= len(g) + b.gap
		}
	}
	return top
}

func (b *silhouetteBars) ticks() gplot.ConstantTicks {
	var ticks gplot.ConstantTicks
	top := b.tops()
	for c := len(b.groups) - 1; c >= 0; c-- {
		if g := b.groups[c]; len(g) > 0 {
			var sum float64
			for _, v := range g {
				sum += v
			}
			label := fmt.Sprintf("%d: %.2f", c, sum/float64(len(g)))
			ticks = append(ticks, gplot.Tick{Value: float64(top[c]) - float64(len(g))/2, Label: label})
		}
	}
	return ticks
}

func (b *silhouetteBars) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, trY := p.Transforms(&c)
	top := b.tops()
	for cl, g := range b.groups {
		if len(g) == 0 {
			continue
		}
		var path vg.Path
		y := float64(top[cl])
		path.Move(vg.Point{X: trX(0), Y: trY(y)})
		for _, s := range g {
			path.Line(vg.Point{X: trX(s), Y: trY(y)})
			y--
			path.Line(vg.Point{X: trX(s), Y: trY(y)})
		}
		path.Line(vg.Point{X: trX(0), Y: trY(y)})
		path.Close()
		c.SetColor(ClusterColor(cl))
		c.Fill(path)
	}
	x0 := trX(0)
	c.StrokeLine2(draw.LineStyle{Color: black, Width: vg.Points(0.6)}, x0, c.Min.Y, x0, c.Max.Y)
}
