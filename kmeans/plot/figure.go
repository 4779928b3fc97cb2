package plot

import (
	"errors"
	"fmt"
	"image/color"
	"io"
	"os"
	"path/filepath"
	"strings"

	gplot "gonum.org/v1/plot"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Errors returned by this package. Wrapped errors can be tested with
// errors.Is.
var (
	// ErrInput means the data to plot is missing, inconsistent or not
	// finite.
	ErrInput = errors.New("plot: invalid input")
	// ErrFormat means the file extension or format is neither PNG nor SVG.
	ErrFormat = errors.New("plot: unsupported format")
	// ErrSize means a Size field is negative or not finite.
	ErrSize = errors.New("plot: invalid size")
)

// Format is an output file format.
type Format int

const (
	// PNG is a raster image (Portable Network Graphics).
	PNG Format = iota
	// SVG is a vector image (Scalable Vector Graphics).
	SVG
)

// String returns the format's usual file extension without the dot.
func (f Format) String() string {
	switch f {
	case PNG:
		return "png"
	case SVG:
		return "svg"
	}
	return fmt.Sprintf("Format(%d)", int(f))
}

// FormatOf returns the format named by the extension of path (".png" or
// ".svg", in any case). It returns an error wrapping ErrFormat for any
// other extension.
func FormatOf(path string) (Format, error) {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".png":
		return PNG, nil
	case ".svg":
		return SVG, nil
	}
	return 0, fmt.Errorf("%w: %q (use .png or .svg)", ErrFormat, filepath.Ext(path))
}

// maxPixels bounds the raster size a Size may ask for (the PNG canvas is
// held in memory).
const maxPixels = 1 << 27

// DefaultDPI is the resolution of PNG output when Size.DPI is zero.
const DefaultDPI = 96

// Size sets the size of a saved figure. A nil *Size and zero fields mean
// the figure's defaults.
type Size struct {
	// Width and Height of the picture (vg.Inch, vg.Centimeter, …; one
	// vg.Points is 1/72 inch). Zero means the figure's default.
	Width, Height vg.Length
	// DPI is the resolution of PNG output in dots per inch: a PNG is
	// round(Width·DPI/72pt) by round(Height·DPI/72pt) pixels. Zero means
	// DefaultDPI (96). SVG output ignores it. A size of more than 2^27
	// pixels (at DPI) is refused with ErrSize.
	DPI int
}

// Figure is a picture ready to be written. Build one with Indices,
// Silhouette or Components; set Title to replace the default title. A
// Figure can be saved any number of times and in both formats.
type Figure struct {
	// Title is drawn above the picture; empty means none.
	Title string
	// Width and Height are the default size.
	Width, Height vg.Length
	draw          func(c draw.Canvas)
	// minWidth and minHeight are the smallest size the figure can be
	// drawn at (zero: no limit); below it gonum/plot's axes get no room.
	minWidth, minHeight vg.Length
}

// Save writes the figure to the file path in the format named by its
// extension (".png" or ".svg"), creating or truncating the file. It returns
// an error wrapping ErrFormat for another extension, ErrSize for an invalid
// size, ErrInput for a Figure not built by this package, or the file
// system's error; no file is created for the first three.
func (f *Figure) Save(path string, size *Size) (err error) {
	format, err := FormatOf(path)
	if err != nil {
		return err
	}
	if _, err := f.resolve(size); err != nil {
		return err
	}
	file, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := file.Close(); err == nil {
			err = cerr
		}
	}()
	return f.Encode(file, format, size)
}

// Encode writes the figure to w in the given format. It returns an error
// wrapping ErrFormat for an unknown format, ErrSize for an invalid size,
// ErrInput for a Figure not built by this package, or the writer's error.
func (f *Figure) Encode(w io.Writer, format Format, size *Size) error {
	s, err := f.resolve(size)
	if err != nil {
		return err
	}
	var (
		canvas vg.CanvasWriterTo
		vc     vg.CanvasSizer
	)
	switch format {
	case PNG:
		c := vgimg.NewWith(vgimg.UseWH(s.Width, s.Height), vgimg.UseDPI(s.DPI), vgimg.UseBackgroundColor(color.White))
		canvas, vc = vgimg.PngCanvas{Canvas: c}, c
	case SVG:
		c := vgsvg.New(s.Width, s.Height)
		canvas, vc = c, c
	default:
		return fmt.Errorf("%w: %v", ErrFormat, format)
	}
	dc := draw.New(vc)
	if format == SVG {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
	}
	if f.Title != "" {
		sty := titleStyle(13)
		h := sty.Height(f.Title)
		dc.FillText(sty, vg.Point{X: (dc.Min.X + dc.Max.X) / 2, Y: dc.Max.Y - h/4}, f.Title)
		dc.Max.Y -= 1.5 * h
	}
	f.draw(dc)
	_, err = canvas.WriteTo(w)
	return err
}

// resolve checks the figure and the size and fills in the defaults.
func (f *Figure) resolve(size *Size) (Size, error) {
	if f == nil || f.draw == nil {
		return Size{}, fmt.Errorf("%w: empty figure (build one with Indices, Silhouette or Components)", ErrInput)
	}
	var s Size
	if size != nil {
		s = *size
	}
	if s.Width < 0 || s.Height < 0 || s.DPI < 0 || !finite(float64(s.Width)) || !finite(float64(s.Height)) {
		return s, fmt.Errorf("%w: %v × %v at %d dpi", ErrSize, s.Width, s.Height, s.DPI)
	}
	if s.Width == 0 {
		s.Width = f.Width
	}
	if s.Height == 0 {
		s.Height = f.Height
	}
	if s.DPI == 0 {
		s.DPI = DefaultDPI
	}
	if s.Width < f.minWidth || s.Height < f.minHeight {
		return s, fmt.Errorf("%w: %v × %v is too small for this figure, want at least %v × %v", ErrSize, s.Width, s.Height, f.minWidth, f.minHeight)
	}
	px := float64(s.Width.Dots(float64(s.DPI))) * float64(s.Height.Dots(float64(s.DPI)))
	if !(s.Width > 0 && s.Height > 0) || px > maxPixels {
		return s, fmt.Errorf("%w: %v × %v at %d dpi (at most %g pixels)", ErrSize, s.Width, s.Height, s.DPI, float64(maxPixels))
	}
	return s, nil
}

// titleStyle returns a centred text style of the given size in points
// with gonum/plot's default font.
func titleStyle(points vg.Length) text.Style {
	sty := gplot.New().Title.TextStyle
	sty.Font.Size = points
	sty.XAlign, sty.YAlign = draw.XCenter, draw.YTop
	return sty
}
