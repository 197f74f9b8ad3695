package ui

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/widget"
)

// helpText is the help tab: keys, mouse, entries, signals and safety, as
// markdown (lists rather than tables, which the rich text widget lacks).
func helpText() string {
	var b strings.Builder
	b.WriteString(`## Keys

- **Space**: run or pause
- **. (full stop)**: one controller tick
- **R**: reset; the robot stands again, gains kept
- **← →**: shove the watched link left or right by the keyboard shove size (Shoves tab)
- **F**: freeze or unfreeze the plots
- **P**: pin this run as the reference, drawn in grey behind the runs that follow
- **+ − 0**: zoom in, zoom out, fit
- **Ctrl+Z**, **Ctrl+Shift+Z** or **Ctrl+Y**: undo, redo a gain or robot change
- **Ctrl+O**, **Ctrl+S**: open a robot, save it

## Mouse

Press on a part of the robot, drag and release to shove it: the arrow shows the impulse, ` + fmt.Sprintf("%g", shoveScale) + ` N·s per metre dragged (1 N·s per 10 cm), applied at the point pressed. Drag on empty space to pan; scroll to zoom. Over the plots, the pointer reads out each signal at that time.

## Entries

The window shows angles in degrees, lengths in millimetres, rates in deg/s and speeds in mm/s; files and studies keep SI. Type a number with or without a unit: 2 mm, 0.5 deg, 0.01 rad, 30 mm/s. A bare number is in the unit the entry shows. Text that is not a number, is out of range or has the wrong kind of unit is refused, with the reason beside the entry, and is not applied.

Robot entries set the robot as it starts: the ballast start position is where the ballast is at a reset; a ballast loop then drives it to the loop's own setpoint (a constant block in the Gains tab).

## Drawing

- Orange window on an actuator: its backlash; the bar is where the output sits in it, red when it rests on an edge (driving).
- Pads turn green as they compress.
- Quartered disc: centre of mass, with a dashed drop to its ground projection.
- Green triangle: centre of pressure; green band: the support region.
- Small orange squares: IMUs.

## Signals

`)
	for _, m := range signalMeanings {
		unit := ""
		if m.Unit != "" {
			unit = " (" + shownUnits(m.Unit) + ")"
		}
		fmt.Fprintf(&b, "- **%s**%s: %s\n", m.Suffix, unit, m.Meaning)
	}
	b.WriteString("\n## PID parameters\n\n")
	for _, p := range pidParamNames {
		fmt.Fprintf(&b, "- **%s**: %s\n", p.Name, p.Meaning)
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

// pidParamNames say what a PID's parameters are; the Gains tab shows the
// short name beside each.
var pidParamNames = []struct{ Name, Short, Meaning string }{
	{"kp", "", "proportional gain"},
	{"ki", "", "integral gain, per second"},
	{"kd", "", "derivative gain, in seconds; the derivative acts on the measurement only"},
	{"b", "setpoint weight", "setpoint weight of the proportional term, 0 to 1: below 1 a setpoint step moves the output less"},
	{"tf", "derivative filter", "derivative filter time constant (0: no filter)"},
	{"n", "derivative filter N", "derivative filter as a ratio: the filter time is kd/(kp·n)"},
	{"min", "", "output's low limit"},
	{"max", "", "output's high limit"},
	{"tt", "tracking time", "tracking time of back-calculation anti-windup (0: from the gains)"},
	{"on", "loop on", "the loop's switch: off, its output is 0; on again, it starts from 0"},
}

// shortPIDName is the short meaning of a PID parameter, or "".
func shortPIDName(name string) string {
	for _, p := range pidParamNames {
		if p.Name == name {
			return p.Short
		}
	}
	return ""
}

// shownUnits turns a unit text such as "m or rad" into the window's units.
func shownUnits(text string) string {
	parts := strings.Split(text, " or ")
	for i, p := range parts {
		parts[i], _ = friendlyUnit(p)
	}
	return strings.Join(parts, " or ")
}
