package sim

import (
	"math"
	"strconv"
	"testing"
)

// FuzzParseShove feeds arbitrary text to the command-line shove reader
// (DEVELOPERS.md: nothing panics on any input). A shove it accepts must be
// one the plant takes (finite, not before 0 s, hold not negative), and must
// read back from the same keys written out again: times and points exactly
// (shortest round-trip formatting, strconv documentation), the impulse to
// rounding of the sine and cosine.
func FuzzParseShove(f *testing.F) {
	for _, s := range []string{
		// The forms in the README and the tests.
		"at=2s,impulse=3N*s,dir=left", "at=1s,impulse=30N*s,dir=left",
		"at=2s, impulse=3 N*s, dir=left, link=torso, point=0:10cm, hold=50ms",
		"impulse=2,dir=90", "impulse=3 N*s,dir=sideways", "impulse=3 m,dir=left",
		"impulse=3,dir=left,at=-1s", "impulse=3,dir=left,colour=red", "impulse=3,dir=left,point=1", "impulse",
		"impulse=1,dir=forward,hold=0", "impulse=1,dir=back", "impulse=1,dir=up", "impulse=1,dir=down",
		"impulse=1,dir=30deg", "impulse=1,dir=-0.5 rad", "impulse=1,dir=1e999", "impulse=.nan,dir=left",
		"impulse=1,dir=left,point=:", "impulse=1,dir=left,point=1e300 km:1", "impulse=1,dir=left,link=",
		"impulse=1,dir=left,,,at=0", "=,=,=", "impulse=1,dir=°",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, spec string) {
		s, err := ParseShove(spec)
		if err != nil {
			return
		}
		if !finite(s.At, s.Hold, s.Impulse.X, s.Impulse.Y) || s.At < 0 || s.Hold < 0 {
			t.Fatalf("%q gave a shove the plant refuses: %+v", spec, s)
		}
		if s.Point != nil && !finite(s.Point.X, s.Point.Y) {
			t.Fatalf("%q gave a point that is not finite: %+v", spec, *s.Point)
		}
		g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
		magnitude := math.Hypot(s.Impulse.X, s.Impulse.Y)
		if math.IsInf(magnitude, 0) {
			return // finite parts whose length overflows
		}
		text := "at=" + g(s.At) + "s,hold=" + g(s.Hold) + "s,impulse=" + g(magnitude) +
			"N*s,dir=" + g(math.Atan2(s.Impulse.Y, s.Impulse.X)) + "rad"
		if s.Link != "" {
			text += ",link=" + s.Link
		}
		if s.Point != nil {
			text += ",point=" + g(s.Point.X) + ":" + g(s.Point.Y)
		}
		back, err := ParseShove(text)
		if err != nil {
			t.Fatalf("%q read as %+v, written back as %q, which is refused: %v", spec, s, text, err)
		}
		samePoint := (back.Point == nil) == (s.Point == nil) && (s.Point == nil || *back.Point == *s.Point)
		if back.At != s.At || back.Hold != s.Hold || back.Link != s.Link || !samePoint {
			t.Fatalf("%q read as %+v, came back from %q as %+v", spec, s, text, back)
		}
		tol := 1e-12 * magnitude
		if math.Abs(back.Impulse.X-s.Impulse.X) > tol || math.Abs(back.Impulse.Y-s.Impulse.Y) > tol {
			t.Fatalf("%q impulse %v came back from %q as %v", spec, s.Impulse, text, back.Impulse)
		}
	})
}
