package plot

import (
	"image/color"
	"math"

	"gonum.org/v1/plot/vg/draw"
)

// palette is the colour-blind-safe cluster palette (see the package
// documentation for how it was chosen).
var palette = [...]color.NRGBA{
	{0x1E, 0x5A, 0x96, 0xFF}, // dark blue
	{0xB4, 0x2D, 0x00, 0xFF}, // rust
	{0x00, 0xD2, 0xA5, 0xFF}, // aqua green
	{0xF0, 0xB4, 0x2D, 0xFF}, // amber
	{0xC3, 0xB4, 0xFF, 0xFF}, // lavender
	{0x87, 0x1E, 0x3C, 0xFF}, // wine
	{0x00, 0x87, 0xFF, 0xFF}, // bright blue
	{0x96, 0xC3, 0x69, 0xFF}, // sage
}

// Palette returns the eight cluster colours in order (a new slice on every
// call). Cluster j uses colour j mod 8.
func Palette() []color.NRGBA { return append([]color.NRGBA(nil), palette[:]...) }

// ClusterColor returns the colour of cluster j: Palette()[j mod 8]. It
// panics if j is negative.
func ClusterColor(j int) color.NRGBA { return palette[j%len(palette)] }

// glyphs are the marker shapes, changed every len(palette) clusters.
var glyphs = [...]draw.GlyphDrawer{
	draw.CircleGlyph{}, draw.BoxGlyph{}, draw.PyramidGlyph{},
	draw.RingGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{},
}

// clusterGlyph returns the marker shape of cluster j.
func clusterGlyph(j int) draw.GlyphDrawer {
	return glyphs[(j/len(palette))%len(glyphs)]
}

// Neutral colours for axes decorations and reference lines.
var (
	grey  = color.NRGBA{0x80, 0x80, 0x80, 0xFF}
	black = color.NRGBA{0, 0, 0, 0xFF}
)

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
