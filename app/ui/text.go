package ui

import (
	"image"
	"image/color"
	"image/draw"

	"fyne.io/fyne/v2/theme"
	"golang.org/x/image/font"
	"golang.org/x/image/font/basicfont"
	"golang.org/x/image/font/opentype"
	"golang.org/x/image/math/fixed"
)

// glyphFace keeps each glyph of a face once rasterized, at whole-pixel
// positions: the plots write the same few characters every frame, and an
// outline font is slow to rasterize afresh. Not safe for concurrent use;
// each view has its own.
type glyphFace struct {
	font.Face
	cache map[rune]glyph
}

type glyph struct {
	dr      image.Rectangle // relative to the dot
	mask    *image.Alpha
	advance fixed.Int26_6
	ok      bool
}

// newTextFace returns the window theme's text font at size pixels, or a
// built-in bitmap font if it cannot be read.
func newTextFace(size float64) font.Face {
	var face font.Face = basicfont.Face7x13
	if f, err := opentype.Parse(theme.DefaultTextFont().Content()); err == nil {
		if ff, err := opentype.NewFace(f, &opentype.FaceOptions{Size: size, DPI: 72, Hinting: font.HintingFull}); err == nil {
			face = ff
		}
	}
	return &glyphFace{Face: face, cache: map[rune]glyph{}}
}

func (f *glyphFace) Glyph(dot fixed.Point26_6, r rune) (image.Rectangle, image.Image, image.Point, fixed.Int26_6, bool) {
	g, hit := f.cache[r]
	if !hit {
		dr, mask, mp, adv, ok := f.Face.Glyph(fixed.Point26_6{}, r)
		a := image.NewAlpha(image.Rect(0, 0, dr.Dx(), dr.Dy()))
		if ok && mask != nil {
			draw.Draw(a, a.Bounds(), mask, mp, draw.Src)
		}
		g = glyph{dr: dr, mask: a, advance: adv, ok: ok}
		f.cache[r] = g
	}
	off := image.Pt(dot.X.Round(), dot.Y.Round())
	return g.dr.Add(off), g.mask, image.Point{}, g.advance, g.ok
}

// drawText writes s with its baseline at y; ax is the horizontal anchor
// (0 left, 0.5 centre, 1 right).
func drawText(img *image.RGBA, face font.Face, s string, x, y, ax float64, c color.Color) {
	d := font.Drawer{Dst: img, Src: image.NewUniform(c), Face: face}
	w := d.MeasureString(s)
	d.Dot = fixed.Point26_6{X: fixed.Int26_6((x - ax*float64(w)/64) * 64), Y: fixed.Int26_6(y * 64)}
	d.DrawString(s)
}

// fillRect paints a rectangle in one colour, without blending.
func fillRect(img *image.RGBA, x0, y0, x1, y1 int, c color.RGBA) {
	draw.Draw(img, image.Rect(x0, y0, x1, y1), image.NewUniform(c), image.Point{}, draw.Src)
}

// hline draws a horizontal line of one pixel; dash > 0 leaves gaps.
func hline(img *image.RGBA, x0, x1, y int, c color.RGBA, dash int) {
	line(img, image.Pt(x0, y), image.Pt(1, 0), x1-x0, c, dash)
}

// vline draws a vertical line of one pixel; dash > 0 leaves gaps.
func vline(img *image.RGBA, x, y0, y1 int, c color.RGBA, dash int) {
	line(img, image.Pt(x, y0), image.Pt(0, 1), y1-y0, c, dash)
}

// line paints n pixels from start in steps of step, skipping every other
// run of dash pixels when dash > 0 (counted from the image's origin, so
// dashes line up from line to line).
func line(img *image.RGBA, start, step image.Point, n int, c color.RGBA, dash int) {
	for i := range max(n, 0) {
		p := start.Add(step.Mul(i))
		if along := p.X*step.X + p.Y*step.Y; dash > 0 && (along/dash)%2 == 1 {
			continue
		}
		if p.In(img.Rect) {
			img.SetRGBA(p.X, p.Y, c)
		}
	}
}
