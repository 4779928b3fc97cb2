// Package plot draws the pictures that help choose and judge a k-means
// clustering, with gonum.org/v1/plot: the validity indices of a sweep
// against k, a silhouette plot, and a scatter of the rows on their first two
// principal components coloured by cluster.
//
// Each function builds a Figure; Figure.Save writes it as PNG or SVG,
// chosen by the file extension (".png", ".svg"), and Figure.Encode writes
// it to an io.Writer:
//
//	fig, err := plot.Indices(sweep)
//	err = fig.Save("indices.png", nil)
//	err = fig.Save("indices.svg", &plot.Size{Width: 8 * vg.Inch, Height: 6 * vg.Inch})
//
// # Palette
//
// Clusters are coloured with Palette, eight colours of our own choosing,
// picked greedily from a grid of sRGB colours of CIELAB lightness 30–78
// and chroma 25–75 so that the smallest CIELAB ΔE*ab between any two of
// them is as large as possible both for normal colour vision and under
// simulated deuteranopia and protanopia (the full-severity simulation
// matrices of Machado, Oliveira and Fernandes, "A physiologically-based
// model for simulation of color vision deficiency", IEEE TVCG 15(6), 2009),
// with tritanopia weighted less:
//
//	index  hex      name         why
//	0      #1E5A96  dark blue    dark; blue survives red–green deficiency
//	1      #B42D00  rust         mid-dark; reads as brown-olive to deuteranopes, far from blue
//	2      #00D2A5  aqua green   light; separated from rust by lightness
//	3      #F0B42D  amber        light and yellow: the other end of the blue–yellow axis
//	4      #C3B4FF  lavender     light and bluish: apart from amber on blue–yellow
//	5      #871E3C  wine         darkest: separated by lightness
//	6      #0087FF  bright blue  mid lightness, saturated blue
//	7      #96C369  sage         light yellow-green
//
// Any prefix of the list keeps the separation (the greedy order), so
// plots with few clusters use the most distinct colours. The smallest
// pairwise ΔE*ab is about 37 for normal vision, 31 under deuteranopia, 29
// under protanopia and 19 under tritanopia (the package tests recompute
// these). Beyond eight clusters the colours repeat with a different glyph
// shape (circle, square, triangle, ring, open square, open triangle), so
// 48 clusters stay distinguishable; lightness differences keep the palette
// readable in greyscale too.
//
// # Determinism
//
// Figures use no randomness and gonum/plot's embedded fonts (Liberation,
// via go-fonts), so the same input gives the same picture on any machine;
// PNG and SVG output is byte-for-byte identical between runs.
//
// # Errors
//
// Bad input returns an error wrapping ErrInput; an unknown file extension
// or format name returns ErrFormat. Inputs are never modified.
package plot
