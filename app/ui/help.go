package ui

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/widget"
)

// helpText is the help tab: keys, mouse, signals and safety.
func helpText() string {
	var b strings.Builder
	b.WriteString(`## Keys

| key | does |
|---|---|
| Space | run or pause |
| . (full stop) | one controller tick |
| R | reset: the robot stands again, gains kept |
| ← → | shove the watched link left or right by the keyboard shove size (Shoves tab) |
| F | freeze or unfreeze the plots |
| P | pin this run as the reference |
| + − 0 | zoom in, zoom out, fit |
| Ctrl+Z, Ctrl+Shift+Z or Ctrl+Y | undo, redo a gain or robot change |
| Ctrl+O, Ctrl+S | open a robot, save it |

## Mouse

Press on a part of the robot, drag and release to shove it there: the arrow shows the impulse, ` + fmt.Sprintf("%g", shoveScale) + ` N*s per metre dragged (1 N*s per 10 cm), applied at the point you pressed. Drag on empty space to pan; scroll to zoom.

## Entries

Type a number with or without a unit: "2 mm", "0.5 deg", "30 mm/s". A bare number is in SI units. Text that is not a number, is out of range or has the wrong kind of unit is refused with the reason beside the entry and is not applied.

## Signals

| name ends in | unit | meaning |
|---|---|---|
`)
	for _, m := range signalMeanings {
		fmt.Fprintf(&b, "| %s | %s | %s |\n", m.Suffix, m.Unit, m.Meaning)
	}
	b.WriteString(`
## Safety

- Simulated gains are a starting point, not a certificate.
- Real robots with heavy ballast, lead screws and batteries can crush fingers, fall and burn.
- Test tethered, at reduced gains, with a hardware emergency stop within reach that cuts actuator power.
- Follow local codes and the makers' ratings for motors, batteries and chargers.
`)
	return b.String()
}

func helpContent() fyne.CanvasObject {
	r := widget.NewRichTextFromMarkdown(helpText())
	r.Wrapping = fyne.TextWrapWord
	return r
}
