package ui

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"teeter/models"
)

// kindOfUnit finds the kind of quantity an SI unit text names ("" is a
// plain number).
func kindOfUnit(unit string) (models.Kind, bool) {
	if unit == "" {
		return models.Dimensionless, true
	}
	if _, k, err := models.ParseQuantity("1 " + unit); err == nil {
		return k, true
	}
	// A reciprocal such as 1/s: the inverse of its denominator's kind.
	if den, ok := strings.CutPrefix(unit, "1/"); ok {
		if _, k, err := models.ParseQuantity("1 " + den); err == nil {
			var d models.Dim
			for i, e := range k.Dim {
				d[i] = -e
			}
			return models.KindOf(d), true
		}
	}
	return models.Kind{}, false
}

// friendlyUnit is the unit the window shows for an SI unit, and the factor
// from SI to it: degrees for angles, millimetres for lengths, a middle dot
// for a product (N·s). Everything inside stays SI; only entries, labels and
// readouts use these.
func friendlyUnit(si string) (string, float64) {
	switch si {
	case "rad":
		return "deg", 180 / math.Pi
	case "rad/s":
		return "deg/s", 180 / math.Pi
	case "m":
		return "mm", 1000
	case "m/s":
		return "mm/s", 1000
	}
	return strings.ReplaceAll(si, "*", "·"), 1
}

// parseValue reads an entry's text as a quantity of the given SI unit
// within [lo, hi], or says why not. Any unit of the right kind is taken; a
// bare number is in the unit the entry shows (degrees for an angle).
func parseValue(text, unit string, lo, hi float64) (float64, error) {
	shown, factor := friendlyUnit(unit)
	t := strings.TrimSpace(text)
	// The unit as the entry shows it may not be one the unit parser knows
	// (1/s); a number followed by exactly that unit is a number in it.
	if shown != "" && strings.HasSuffix(t, " "+shown) {
		t = strings.TrimSpace(strings.TrimSuffix(t, shown))
	}
	var v float64
	if x, err := strconv.ParseFloat(t, 64); err == nil {
		v = x / factor
	} else if k, ok := kindOfUnit(unit); ok {
		v, _, err = models.ParseQuantity(t, k)
		if err != nil {
			return 0, err
		}
	} else {
		return 0, fmt.Errorf("%q is not a number", text)
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is not a finite number", text)
	}
	if v < lo || v > hi {
		return 0, fmt.Errorf("%s is out of range %s to %s", formatValue(v, unit), formatValue(lo, unit), formatValue(hi, unit))
	}
	return v, nil
}

// formatValue shows an SI value in the window's unit for it.
func formatValue(v float64, unit string) string {
	shown, factor := friendlyUnit(unit)
	if math.IsInf(v, 0) {
		return "no limit"
	}
	x := v * factor
	s := strconv.FormatFloat(x, 'g', 5, 64)
	if a := math.Abs(x); a >= 1e4 && a < 1e9 && x == math.Trunc(x) {
		s = strconv.FormatFloat(x, 'f', 0, 64) // 100000 N/m, not 1e+05
	}
	if shown == "" {
		return s
	}
	return s + " " + shown
}

// numberField is an entry for one quantity: it applies a value only when
// the text is a number of the right kind and in range, and shows the reason
// beside itself otherwise.
type numberField struct {
	Entry  *widget.Entry
	Reason *widget.Label
	unit   string
	lo, hi float64
	apply  func(v float64)
}

func newNumberField(unit string, lo, hi float64, apply func(float64)) *numberField {
	f := &numberField{Entry: widget.NewEntry(), Reason: widget.NewLabel(""), unit: unit, lo: lo, hi: hi, apply: apply}
	f.Reason.Importance = widget.DangerImportance
	f.Reason.Wrapping = fyne.TextWrapWord
	f.Reason.Hide()
	f.Entry.OnSubmitted = func(text string) { f.submit(text) }
	return f
}

// submit parses text and applies it; it reports whether it did.
func (f *numberField) submit(text string) bool {
	v, err := parseValue(text, f.unit, f.lo, f.hi)
	if err != nil {
		f.Reason.SetText(err.Error())
		f.Reason.Show()
		return false
	}
	f.Reason.Hide()
	f.apply(v)
	return true
}

// show puts a value into the entry without applying it.
func (f *numberField) show(v float64) {
	f.Entry.SetText(formatValue(v, f.unit))
	f.Reason.Hide()
}

func (f *numberField) object() fyne.CanvasObject {
	return container.NewVBox(f.Entry, f.Reason)
}
