package figures

import (
	"bytes"
	"fmt"
	"io"
	"strings"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Format is an image file format.
type Format string

const (
	PNG Format = "png"
	SVG Format = "svg"
)

// ParseFormat maps "png" or "svg" to a Format.
func ParseFormat(s string) (Format, error) {
	switch Format(s) {
	case PNG, SVG:
		return Format(s), nil
	}
	return "", fmt.Errorf("figures: unknown format %q (want png or svg)", s)
}

// pngDPI gives PNGs twice the pixels of a 72-dpi screen, sharp on
// high-density displays and in print.
const pngDPI = 144

// Figure is one picture, ready to encode.
type Figure struct {
	// Name is a short file-name stem, e.g. "mass" or "flow".
	Name string
	// Title and Caption describe the figure in words; Caption says how to
	// read it.
	Title, Caption string
	// Width and Height are the size of the picture.
	Width, Height vg.Length

	draw func(c draw.Canvas)
}

// Encode writes the figure in the given format.
func (f Figure) Encode(w io.Writer, format Format) error {
	switch format {
	case PNG:
		c := vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(f.Width, f.Height), vgimg.UseDPI(pngDPI), vgimg.UseBackgroundColor(paper))}
		f.draw(draw.New(c))
		_, err := c.WriteTo(w)
		return err
	case SVG:
		c := vgsvg.New(f.Width, f.Height)
		f.draw(draw.New(c))
		var buf bytes.Buffer
		if _, err := c.WriteTo(&buf); err != nil {
			return err
		}
		_, err := io.WriteString(w, withFontFallbacks(buf.String()))
		return err
	}
	return fmt.Errorf("figures: unknown format %q (want png or svg)", format)
}

// withFontFallbacks lets a viewer without Liberation Sans use a
// metric-compatible face installed locally instead of its default serif; no
// font is ever fetched.
func withFontFallbacks(svg string) string {
	return strings.ReplaceAll(svg, "font-family:Liberation Sans;", "font-family:'Liberation Sans',Arimo,Arial,Helvetica,sans-serif;")
}
