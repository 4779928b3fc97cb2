package plot

import (
	"fmt"
	"image/color"
	"math"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/centroidlab/centroid/kmeans/choosek"
)

// Indices returns a figure of the evidence of a sweep against k, one panel
// per line of evidence: the agreement of the criteria (the combined score
// of every k, with the 0.8 line of clear evidence), the cost
// (within-cluster sum of squares) with its knee, the mean silhouette (with
// its 95% interval when estimated), Davies–Bouldin, Caliński–Harabasz, Dunn
// (if computed), the gap statistic with ±s_k bars (if computed), and
// stability (mean ARI between resamples and the weakest cluster's mean
// Jaccard, with Hennig's 0.6 and 0.75 lines). A dashed vertical line marks
// the recommended k in every panel, a ring marks the k each criterion
// ranks first, and the title gives the recommended k with its combined
// score. The last tile explains how to read the figure. The default width
// is 10 inches.
//
// It returns an error wrapping ErrInput if sw is nil or has no points.
func Indices(sw *choosek.Result) (*Figure, error) {
	if sw == nil || len(sw.Points) == 0 {
		return nil, fmt.Errorf("%w: empty sweep", ErrInput)
	}
	rec := sw.Recommendation
	first := map[choosek.Criterion]int{}
	for _, v := range rec.Preferences {
		first[v.By] = v.K
	}
	type series struct {
		name   string
		value  func(*choosek.Point) float64
		lo, hi func(*choosek.Point) float64 // error bar ends, nil for none
	}
	type panel struct {
		title  string
		by     choosek.Criterion // the criterion this panel shows; -1 for none
		ring   int               // the k ringed on the first series, 0 for none
		series []series
		hlines []float64
	}
	combined := make(map[int]float64, len(rec.Standings))
	for _, s := range rec.Standings {
		combined[s.K] = s.Combined
	}
	panels := []panel{
		{title: "agreement: combined score of the criteria", by: -1, ring: rec.K, hlines: []float64{0.8}, series: []series{{
			name:  "combined score",
			value: func(p *choosek.Point) float64 { return valueOr(combined, p.K) },
		}}},
		{title: "cost: within-cluster sum of squares (knee)", by: choosek.ByKnee, series: []series{{name: "cost", value: func(p *choosek.Point) float64 { return p.Cost }}}},
		{title: "silhouette (higher is better)", by: choosek.BySilhouette, series: []series{{
			name:  "silhouette",
			value: func(p *choosek.Point) float64 { return p.Silhouette.Mean },
			lo:    func(p *choosek.Point) float64 { return p.Silhouette.Lo },
			hi:    func(p *choosek.Point) float64 { return p.Silhouette.Hi },
		}}},
		{title: "Davies–Bouldin (lower is better)", by: choosek.ByDaviesBouldin, series: []series{{name: "Davies–Bouldin", value: func(p *choosek.Point) float64 { return p.DaviesBouldin }}}},
		{title: "Calinski–Harabasz (higher is better)", by: choosek.ByCalinskiHarabasz, series: []series{{name: "Calinski–Harabasz", value: func(p *choosek.Point) float64 { return p.CalinskiHarabasz }}}},
		{title: "Dunn (higher is better)", by: choosek.ByDunn, series: []series{{name: "Dunn", value: func(p *choosek.Point) float64 { return p.Dunn }}}},
		{title: "gap statistic ± s_k (rule)", by: choosek.ByGap, series: []series{{
			name:  "gap",
			value: func(p *choosek.Point) float64 { return p.Gap },
			lo:    func(p *choosek.Point) float64 { return p.Gap - p.GapSE },
			hi:    func(p *choosek.Point) float64 { return p.Gap + p.GapSE },
		}}},
		{title: "stability: mean ARI (●), weakest cluster's Jaccard (■)", by: -1, hlines: []float64{0.6, 0.75}, series: []series{
			{name: "mean ARI", value: func(p *choosek.Point) float64 {
				return stab(p, func(s *choosek.Stability) float64 { return s.MeanARI })
			}},
			{name: "min Jaccard", value: func(p *choosek.Point) float64 { return stab(p, (*choosek.Stability).MinJaccard) }},
		}},
	}
	kmin, kmax := sw.Points[0].K, sw.Points[len(sw.Points)-1].K
	var plots []*gplot.Plot
	for _, pn := range panels {
		p := gplot.New()
		p.Title.Text = pn.title
		if pn.by >= 0 && first[pn.by] != 0 {
			p.Title.Text += fmt.Sprintf(": k = %d", first[pn.by])
		}
		p.Title.TextStyle.Font.Size = 10
		p.X.Label.Text = "k"
		p.X.Min, p.X.Max = float64(kmin)-0.5, float64(kmax)+0.5
		p.X.Tick.Marker = intTicks{}
		p.Add(plotter.NewGrid())
		any := false
		for si, s := range pn.series {
			var xys plotter.XYs
			var errs plotter.YErrors
			for i := range sw.Points {
				pt := &sw.Points[i]
				v := s.value(pt)
				if !finite(v) {
					continue
				}
				xys = append(xys, plotter.XY{X: float64(pt.K), Y: v})
				if s.lo != nil {
					lo, hi := s.lo(pt), s.hi(pt)
					if !finite(lo) || !finite(hi) {
						lo, hi = v, v
					}
					errs = append(errs, struct{ Low, High float64 }{v - lo, hi - v})
				}
			}
			if len(xys) == 0 {
				continue
			}
			any = true
			col := seriesColor(si)
			line, points, err := plotter.NewLinePoints(xys)
			if err != nil {
				return nil, fmt.Errorf("%w: %s: %w", ErrInput, s.name, err)
			}
			line.Color = col
			line.Width = vg.Points(1.2)
			points.Color = col
			points.Radius = vg.Points(2.5)
			points.Shape = clusterGlyph(si * len(palette))
			p.Add(line, points)
			if s.lo != nil {
				bars, err := plotter.NewYErrorBars(struct {
					plotter.XYs
					plotter.YErrors
				}{xys, errs})
				if err != nil {
					return nil, fmt.Errorf("%w: %s: %w", ErrInput, s.name, err)
				}
				bars.Color = col
				bars.CapWidth = vg.Points(4)
				p.Add(bars)
			}
			ring := pn.ring
			if pn.by >= 0 {
				ring = first[pn.by]
			}
			if si == 0 && ring != 0 {
				for _, xy := range xys {
					if int(xy.X) == ring {
						ring, _ := plotter.NewScatter(plotter.XYs{xy})
						ring.GlyphStyle = draw.GlyphStyle{Color: ClusterColor(1), Radius: vg.Points(6), Shape: draw.RingGlyph{}}
						p.Add(ring)
					}
				}
			}
		}
		if !any {
			continue
		}
		for _, h := range pn.hlines {
			p.Add(hline{y: h})
		}
		p.Add(vline{x: float64(rec.K)})
		plots = append(plots, p)
	}
	cols := 3
	rows := (len(plots) + cols) / cols // one tile more for the key
	title := fmt.Sprintf("choosing k: k = %d recommended, combined score %.2f", rec.K, rec.Combined)
	switch {
	case rec.K == 1:
		title = "choosing k: k = 1 recommended, no cluster structure found"
	case rec.Clear:
		title += ", clear structure"
	default:
		title += ", weak evidence"
	}
	fig := &Figure{
		Title:  title,
		Width:  10 * vg.Inch,
		Height: vg.Length(rows)*2.4*vg.Inch + 0.5*vg.Inch,
		// Each panel needs room for its axes, ticks and title.
		minWidth:  vg.Length(cols) * 1.2 * vg.Inch,
		minHeight: vg.Length(rows)*0.8*vg.Inch + 0.5*vg.Inch,
	}
	fig.draw = func(c draw.Canvas) {
		grid := make([][]*gplot.Plot, rows)
		for r := range grid {
			grid[r] = make([]*gplot.Plot, cols)
			for j := range cols {
				if i := r*cols + j; i < len(plots) {
					grid[r][j] = plots[i]
				}
			}
		}
		tiles := draw.Tiles{Rows: rows, Cols: cols, PadX: vg.Points(12), PadY: vg.Points(10), PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(8)}
		canvases := alignPanels(grid, tiles, c)
		for r := range grid {
			for j, p := range grid[r] {
				if p != nil && sound(p, canvases[r][j]) {
					p.Draw(canvases[r][j])
				}
			}
		}
		if k := canvases[rows-1][cols-1]; finite(float64(k.Max.Y)) && finite(float64(k.Min.Y)) {
			key(k)
		}
	}
	return fig, nil
}

// alignPanels lays the panels out with gplot.Align. gonum/plot divides by
// the vertical distance between the lowest and the highest glyph of a plot,
// which is zero for some canvas heights (one glyph box is both); the data
// area then gets a NaN edge, which spreads to the row and column through
// the alignment, and drawing such a plot does not end. alignPanels lowers
// the top of the figure by half a point until every panel is sound, at
// most eight times; the caller skips a panel that still is not.
func alignPanels(grid [][]*gplot.Plot, tiles draw.Tiles, c draw.Canvas) [][]draw.Canvas {
	var out [][]draw.Canvas
	for range 8 {
		out = gplot.Align(grid, tiles, c)
		ok := true
		for r := range grid {
			for j, p := range grid[r] {
				ok = ok && (p == nil || sound(p, out[r][j]))
			}
		}
		if ok {
			break
		}
		c.Max.Y -= vg.Points(0.5)
	}
	return out
}

// sound reports whether p has a finite, non-empty data area in c.
func sound(p *gplot.Plot, c draw.Canvas) bool {
	for _, v := range []vg.Length{c.Min.X, c.Min.Y, c.Max.X, c.Max.Y} {
		if !finite(float64(v)) {
			return false
		}
	}
	d := p.DataCanvas(c)
	for _, v := range []vg.Length{d.Min.X, d.Min.Y, d.Max.X, d.Max.Y} {
		if !finite(float64(v)) {
			return false
		}
	}
	return d.Max.X > d.Min.X && d.Max.Y > d.Min.Y
}

// valueOr returns m[k], NaN if k is not in m.
func valueOr(m map[int]float64, k int) float64 {
	if v, ok := m[k]; ok {
		return v
	}
	return math.NaN()
}

// stab returns f of the point's stability, NaN without one.
func stab(p *choosek.Point, f func(*choosek.Stability) float64) float64 {
	if p.Stability == nil {
		return math.NaN()
	}
	return f(p.Stability)
}

// seriesColor is the colour of the i-th series of a panel.
func seriesColor(i int) color.NRGBA {
	if i == 0 {
		return ClusterColor(0)
	}
	return ClusterColor(5)
}

// key writes how to read the panels into an empty tile.
func key(c draw.Canvas) {
	sty := titleStyle(9)
	sty.XAlign, sty.YAlign = draw.XLeft, draw.YTop
	lines := []string{
		"How to read this figure",
		"dashed line: the recommended k",
		"ring: the k that panel's criterion ranks first",
		"agreement: mean of the criteria's scores in [0, 1];",
		"0.8 and above with a reproduced k is clear",
		"bars: 95% interval (sampled silhouette), ±s_k (gap)",
		"stability (Hennig 2007, common practice): a cluster",
		"below 0.6 is not reproduced, from 0.75 reproduced",
		"the recommendation is a heuristic: read the scores",
	}
	y := c.Max.Y - vg.Points(20)
	for _, l := range lines {
		c.FillText(sty, vg.Point{X: c.Min.X + vg.Points(30), Y: y}, l)
		y -= sty.Height(l) * 1.3
	}
}

// vline is a dashed vertical line across the whole data area.
type vline struct{ x float64 }

func (v vline) Plot(c draw.Canvas, p *gplot.Plot) {
	trX, _ := p.Transforms(&c)
	x := trX(v.x)
	c.StrokeLine2(draw.LineStyle{Color: ClusterColor(1), Width: vg.Points(1.2), Dashes: []vg.Length{vg.Points(4), vg.Points(3)}}, x, c.Min.Y, x, c.Max.Y)
}

// hline is a dotted horizontal reference line across the data area.
type hline struct{ y float64 }

func (h hline) Plot(c draw.Canvas, p *gplot.Plot) {
	_, trY := p.Transforms(&c)
	y := trY(h.y)
	c.StrokeLine2(draw.LineStyle{Color: grey, Width: vg.Points(0.8), Dashes: []vg.Length{vg.Points(1), vg.Points(2)}}, c.Min.X, y, c.Max.X, y)
}

// DataRange includes the line's y in the axis range.
func (h hline) DataRange() (xmin, xmax, ymin, ymax float64) {
	return math.Inf(1), math.Inf(-1), h.y, h.y
}

// intTicks labels integer values with a step of 1, 2, 5, 10, … so that
// there are at most about 12 labels.
type intTicks struct{}

func (intTicks) Ticks(lo, hi float64) []gplot.Tick {
	first, last := int(math.Ceil(lo)), int(math.Floor(hi))
	step := 1
	for _, s := range []int{1, 2, 5, 10, 20, 50, 100, 200, 500, 1000} {
		step = s
		if (last-first)/s <= 12 {
			break
		}
	}
	var ticks []gplot.Tick
	for v := first; v <= last; v++ {
		t := gplot.Tick{Value: float64(v)}
		if v%step == 0 {
			t.Label = fmt.Sprint(v)
		}
		ticks = append(ticks, t)
	}
	return ticks
}
