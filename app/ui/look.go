package ui

import (
	"image/color"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"teeter/sim/study/plot"
)

// teeter's look: one palette for everything the window draws itself (the
// robot view, the traces, the controller view) and for the toolkit's
// widgets, in a light and a dark variant; the variant follows the system
// setting. Drawings read the palette in pal, set by applyLook.

// Palette is one variant's colours. Plots drawn elsewhere (the study plots)
// take Paper, Ink, Grid and Traces to match the window.
type Palette struct {
	Paper, Panel, Raised, Ink, Faint, Grid, Accent, Alarm color.RGBA
	// Traces are the signal colours, in turn; Reference is a pinned run.
	Traces    []color.RGBA
	Reference color.RGBA

	Ground, GroundLine, Torso, Limb, Outline, Joint, Actuator     color.RGBA
	Slack, SlackEdge, Pad, PadLoad, Ballast, IMU, COM, COP, Shove color.RGBA
	Support                                                       color.NRGBA // translucent: not premultiplied

	BlockFill, BlockEdge, BlockSelected, Wire color.RGBA
}

// The torso and ground keep one colour in both variants: they are the
// robot and the floor, whatever the room's light.
var (
	torsoBlue   = color.RGBA{0x2f, 0x6d, 0x9e, 0xff}
	groundBrown = color.RGBA{0x8a, 0x7f, 0x6c, 0xff}
	signalRed   = color.RGBA{0xc0, 0x39, 0x2b, 0xff}
	loadGreen   = color.RGBA{0x2e, 0x8b, 0x57, 0xff}
	slackAmber  = color.RGBA{0xe0, 0x9f, 0x1f, 0xff}
)

var lightPalette = Palette{
	Paper: color.RGBA{0xf5, 0xf3, 0xee, 0xff}, Panel: color.RGBA{0xea, 0xe7, 0xdf, 0xff}, Raised: color.RGBA{0xd9, 0xd4, 0xc8, 0xff},
	Ink: color.RGBA{0x26, 0x2a, 0x2e, 0xff}, Faint: color.RGBA{0x6e, 0x72, 0x76, 0xff},
	Grid: color.RGBA{0xdc, 0xd8, 0xcf, 0xff}, Accent: color.RGBA{0x1f, 0x7a, 0x74, 0xff}, Alarm: signalRed,
	Traces: []color.RGBA{torsoBlue, signalRed, loadGreen,
		{0x8e, 0x44, 0xad, 0xff}, {0xd3, 0x54, 0x00, 0xff}, {0x16, 0xa0, 0x85, 0xff}},
	Reference: color.RGBA{0xb5, 0xb1, 0xa8, 0xff},
	Ground:    groundBrown, GroundLine: color.RGBA{0x4a, 0x42, 0x36, 0xff}, Torso: torsoBlue,
	Limb: color.RGBA{0x7d, 0xa4, 0xc4, 0xff}, Outline: color.RGBA{0x1c, 0x2b, 0x38, 0xff},
	Joint: color.RGBA{0xf5, 0xf3, 0xee, 0xff}, Actuator: color.RGBA{0x3c, 0x3c, 0x3c, 0xff},
	Slack: slackAmber, SlackEdge: signalRed, Pad: color.RGBA{0x55, 0x55, 0x55, 0xff}, PadLoad: loadGreen,
	Ballast: color.RGBA{0x6b, 0x4c, 0x9a, 0xff}, IMU: color.RGBA{0xd3, 0x54, 0x00, 0xff},
	COM: color.RGBA{0x11, 0x11, 0x11, 0xff}, COP: loadGreen, Shove: signalRed,
	Support:   color.NRGBA{0x2e, 0x8b, 0x57, 0x70},
	BlockFill: color.RGBA{0xfb, 0xfa, 0xf6, 0xff}, BlockEdge: color.RGBA{0x5a, 0x6b, 0x7a, 0xff},
	BlockSelected: slackAmber, Wire: color.RGBA{0x7a, 0x86, 0x91, 0xff},
}

var darkPalette = Palette{
	Paper: color.RGBA{0x1d, 0x21, 0x24, 0xff}, Panel: color.RGBA{0x26, 0x2b, 0x2f, 0xff}, Raised: color.RGBA{0x37, 0x3e, 0x44, 0xff},
	Ink: color.RGBA{0xe4, 0xe1, 0xda, 0xff}, Faint: color.RGBA{0x9a, 0x9d, 0x9f, 0xff},
	Grid: color.RGBA{0x34, 0x3a, 0x3f, 0xff}, Accent: color.RGBA{0x4f, 0xb3, 0xa9, 0xff}, Alarm: color.RGBA{0xe0, 0x5a, 0x4a, 0xff},
	Traces: []color.RGBA{{0x6c, 0xa6, 0xd6, 0xff}, {0xe8, 0x6a, 0x5c, 0xff}, {0x5c, 0xbf, 0x85, 0xff},
		{0xb7, 0x86, 0xd6, 0xff}, {0xf0, 0x8c, 0x3c, 0xff}, {0x4f, 0xc9, 0xb0, 0xff}},
	Reference: color.RGBA{0x5e, 0x64, 0x69, 0xff},
	Ground:    groundBrown, GroundLine: color.RGBA{0xb8, 0xad, 0x98, 0xff}, Torso: torsoBlue,
	Limb: color.RGBA{0x7d, 0xa4, 0xc4, 0xff}, Outline: color.RGBA{0xd5, 0xdd, 0xe4, 0xff},
	Joint: color.RGBA{0x1d, 0x21, 0x24, 0xff}, Actuator: color.RGBA{0xc8, 0xc8, 0xc8, 0xff},
	Slack: slackAmber, SlackEdge: color.RGBA{0xe0, 0x5a, 0x4a, 0xff}, Pad: color.RGBA{0xa0, 0xa0, 0xa0, 0xff}, PadLoad: color.RGBA{0x5c, 0xbf, 0x85, 0xff},
	Ballast: color.RGBA{0xa3, 0x84, 0xd0, 0xff}, IMU: color.RGBA{0xf0, 0x8c, 0x3c, 0xff},
	COM: color.RGBA{0xee, 0xee, 0xee, 0xff}, COP: color.RGBA{0x5c, 0xbf, 0x85, 0xff}, Shove: color.RGBA{0xe8, 0x6a, 0x5c, 0xff},
	Support:   color.NRGBA{0x5c, 0xbf, 0x85, 0x60},
	BlockFill: color.RGBA{0x26, 0x2b, 0x2f, 0xff}, BlockEdge: color.RGBA{0x8a, 0x99, 0xa6, 0xff},
	BlockSelected: slackAmber, Wire: color.RGBA{0x6f, 0x7a, 0x84, 0xff},
}

// pal is the palette in use.
var pal = &lightPalette

// paletteFor gives the palette of a variant.
func paletteFor(v fyne.ThemeVariant) *Palette {
	if v == theme.VariantDark {
		return &darkPalette
	}
	return &lightPalette
}

// look is the toolkit theme made from the palettes: the default theme's
// fonts and icons, our colours and a slightly tighter spacing, so the
// window fits a 1280 x 800 screen.
type look struct{}

func (look) Color(n fyne.ThemeColorName, v fyne.ThemeVariant) color.Color {
	p := paletteFor(v)
	switch n {
	case theme.ColorNameBackground:
		return p.Panel
	case theme.ColorNameForeground:
		return p.Ink
	case theme.ColorNameInputBackground, theme.ColorNameMenuBackground, theme.ColorNameOverlayBackground, theme.ColorNameHeaderBackground:
		return p.Paper
	case theme.ColorNameButton:
		return p.Raised
	case theme.ColorNamePrimary, theme.ColorNameFocus, theme.ColorNameHyperlink:
		return p.Accent
	case theme.ColorNameSeparator, theme.ColorNameInputBorder:
		return p.Grid
	case theme.ColorNamePlaceHolder, theme.ColorNameDisabled:
		return p.Faint
	case theme.ColorNameError:
		return p.Alarm
	case theme.ColorNameWarning:
		return p.Slack
	case theme.ColorNameSuccess:
		return p.PadLoad
	}
	return theme.DefaultTheme().Color(n, v)
}

func (look) Font(s fyne.TextStyle) fyne.Resource     { return theme.DefaultTheme().Font(s) }
func (look) Icon(n fyne.ThemeIconName) fyne.Resource { return theme.DefaultTheme().Icon(n) }

func (look) Size(n fyne.ThemeSizeName) float32 {
	switch n {
	case theme.SizeNamePadding:
		return 3
	case theme.SizeNameInnerPadding:
		return 6
	case theme.SizeNameText:
		return 13
	case theme.SizeNameSelectionRadius, theme.SizeNameInputRadius:
		return 3
	}
	return theme.DefaultTheme().Size(n)
}

// applyLook sets the window's theme and the drawings' palette for the
// system's variant, and again whenever the setting changes.
func (w *Window) applyLook() {
	set := func() {
		pal = paletteFor(w.app.Settings().ThemeVariant())
		w.lastVer = 0
		if w.graph != nil {
			w.graph.setSpec(w.drawnSpec())
		}
	}
	w.app.Settings().SetTheme(look{})
	set()
	w.app.Settings().AddListener(func(fyne.Settings) { fyne.Do(set) })
}

// onAlarm draws text in the colour that reads on the alarm fill.
type onAlarm struct{ look }

func (onAlarm) Color(n fyne.ThemeColorName, v fyne.ThemeVariant) color.Color {
	if n == theme.ColorNameForeground {
		return color.White
	}
	return look{}.Color(n, v)
}

// wrapped is a label that wraps at word breaks instead of widening its
// panel.
func wrapped(text string) *widget.Label {
	l := widget.NewLabel(text)
	l.Wrapping = fyne.TextWrapWord
	return l
}

// plotStyle is the study plots' look in the palette in use, so a plot sits
// in the window like its other panels. Read it on the UI goroutine: the
// palette changes with the system's setting.
func plotStyle() plot.Style {
	return plot.Style{Paper: pal.Paper, Ink: pal.Ink, Grid: pal.Grid, Mean: pal.Traces[0], Worst: pal.Alarm}
}
