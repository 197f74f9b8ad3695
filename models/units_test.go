package models

import (
	"math"
	"strconv"
	"strings"
	"testing"
)

// Conversion factors from NIST Special Publication 811 (2008), appendix B,
// and the SI brochure's definitions.
func TestUnitFactors(t *testing.T) {
	cases := []struct {
		text string
		want float64
		kind Kind
	}{
		{"1 in", 0.0254, Length},              // NIST SP 811 B.8: inch = 2.54 E-02 m exactly
		{"1 ft", 0.3048, Length},              // NIST SP 811: foot = 3.048 E-01 m exactly
		{"12 mm", 0.012, Length},              // SI prefix milli = 1e-3
		{"1 lbf", 4.4482216152605, Force},     // NIST SP 811: pound-force = 4.448 222 E+00 N (exact value 4.4482216152605)
		{"1 kgf", 9.80665, Force},             // NIST SP 811: kilogram-force = 9.806 65 N exactly
		{"1 lb", 0.45359237, Mass},            // NIST SP 811: pound (avoirdupois) = 0.453 592 37 kg exactly
		{"1 oz", 0.028349523125, Mass},        // NIST SP 811: ounce (avoirdupois) = 2.834 952 E-02 kg
		{"180 deg", math.Pi, Angle},           // NIST SP 811: degree = pi/180 rad
		{"1 mAh", 3.6, Charge},                // 1 mA * 3600 s = 3.6 C (NIST SP 811: ampere hour = 3.6 E+03 C)
		{"2000 mAh", 7200, Charge},            // same
		{"60 rpm", 2 * math.Pi, AngularSpeed}, // one revolution (2 pi rad) per second
		{"1 gn", 9.80665, Acceleration},       // NIST SP 811: standard acceleration of gravity
		{"5 ms", 0.005, Duration},             // SI prefix milli
		{"200 Hz", 200, Frequency},            // hertz = 1/s
		{"1 h", 3600, Duration},               // NIST SP 811: hour = 3600 s
		{"50 mohm", 0.05, Resistance},         // SI prefix milli
		{"5 %", 0.05, Dimensionless},          // percent = 0.01
		{"-3.5e-2", -0.035, Length},           // bare numbers are SI
		{"2 N*m/rad", 2, AngularStiffness},    // composite units
		{"4 N*s/m", 4, LinearDamping},
		{"30 mm/s", 0.03, Speed},
		{"0.069 kg*m^2", 0.069, Inertia},
		{"1 g*cm^2", 1e-7, Inertia}, // 1e-3 kg * (1e-2 m)^2
		{"1 N*m*s/rad", 1, AngularDamping},
		{"1 lbf*in", 4.4482216152605 * 0.0254, Torque}, // NIST SP 811: pound-force inch = 1.129 848 E-01 N*m
		{"9.80665 m/s^2", 9.80665, Acceleration},
		{"1 V", 1, Voltage}, {"1 W", 1, Power},
	}
	for _, c := range cases {
		got, kind, err := ParseQuantity(c.text, c.kind)
		if err != nil {
			t.Errorf("%q: %v", c.text, err)
			continue
		}
		if kind != c.kind {
			t.Errorf("%q: kind %s, want %s", c.text, kind.Name, c.kind.Name)
		}
		if math.Abs(got-c.want) > 1e-12*math.Max(1, math.Abs(c.want)) {
			t.Errorf("%q = %.17g, want %.17g", c.text, got, c.want)
		}
	}
	// NIST SP 811 B.9 gives 1 lbf*in = 1.129848E-01 N*m to 7 digits.
	if v, _, _ := ParseQuantity("1 lbf*in", Torque); math.Abs(v-0.1129848) > 1e-7 {
		t.Errorf("1 lbf*in = %g N*m, want 0.1129848", v)
	}
	if v, err := ToUnit(0.5*math.Pi/180, "deg"); err != nil || math.Abs(v-0.5) > 1e-12 {
		t.Errorf("ToUnit(0.5 deg in rad, deg) = %g, %v", v, err)
	}
	if v, err := ToUnit(0.03, "mm/s"); err != nil || math.Abs(v-30) > 1e-12 {
		t.Errorf("ToUnit(0.03 m/s, mm/s) = %g, %v", v, err)
	}
}

func TestUnitErrors(t *testing.T) {
	cases := []struct {
		text string
		want []Kind
		msg  string
	}{
		{"0.5 deg", []Kind{Length}, `"0.5 deg" is an angle, but a length is wanted`},
		{"3 N", []Kind{Torque}, `"3 N" is a force, but a torque is wanted`},
		{"3 N", []Kind{Length, Angle}, `"3 N" is a force, but a length or angle is wanted`},
		{"12 furlongs", nil, `unknown unit "furlongs"`},
		{"12 mm/fortnight", nil, `unknown unit "fortnight" in "mm/fortnight"`},
		{"NaN", nil, `"NaN" is not a finite number`},
		{"-Inf mm", nil, `"-Inf mm" is not a finite number`},
		{".inf", nil, `".inf" is not a finite number`},
		{"1e400", nil, `"1e400" is too large`},
		{"1e300 km^3", nil, `"1e300 km^3" is too large`},
		{"twelve", nil, `"twelve" is not a number`},
		{"", nil, `empty value`},
		{"3 m^9", nil, `unit "m^9" has a bad power`},
		{"3 m//s", nil, `unit "m//s" is malformed`},
	}
	for _, c := range cases {
		_, _, err := ParseQuantity(c.text, c.want...)
		if err == nil || err.Error() != c.msg {
			t.Errorf("%q: error %v, want %s", c.text, err, c.msg)
		}
	}
	// The wrong-kind message must name the kinds, never a Go type.
	_, _, err := ParseQuantity("1 V", Current)
	if err == nil || !strings.Contains(err.Error(), "voltage") {
		t.Errorf("1 V as a current: %v", err)
	}
}

// Any text either converts to a finite number of a known kind or gives an
// error; it never panics (issue: bad input never crashes teeter).
func FuzzParseQuantity(f *testing.F) {
	for _, s := range []string{"12 mm", "0.5 deg", "2.5 kg", "30 mm/s", "200 Hz", "5 ms", "4 N*s",
		"2 N*m/rad", "1e999 m", "NaN", "-0", "3 kg*m^2/s^2", "1 m^9", "1 /s", "7 mAh", "", "deg",
		// Every unit symbol, once, and forms around the edges of the grammar.
		"1 um", "1 µm", "1 in", "1 ft", "1 mrad", "1 °", "1 rev", "1 arcmin", "1 g", "1 mg", "1 lb", "1 oz",
		"1 us", "1 µs", "1 min", "1 h", "1 kHz", "1 rpm", "1 mN", "1 kN", "1 kgf", "1 lbf", "1 J", "1 W", "1 mW",
		"1 mV", "1 V", "1 A", "1 mA", "1 ohm", "1 Ω", "1 mohm", "1 mΩ", "1 C", "1 Ah", "1 gn", "5 %",
		"10°", "+.5e-3 m", "1 m^-2", "1 m^99999999999999999999", "1 m/s/s", "1 kg*m/s^2*A/V", "1e-400 m",
		"0x10 m", "1_000 m", "1 m s", "1 m*", "1 /", "-.inf", "1 deg/s^2", "1 N*m*s/rad", "1 rad^-1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, text string) {
		v, k, err := ParseQuantity(text)
		if err != nil {
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("%q gave %v without an error", text, v)
		}
		if k.Name == "" {
			t.Fatalf("%q gave no kind", text)
		}
		// The value written in the kind's SI unit with the shortest
		// round-trip digits (strconv documentation) reads back exactly.
		// Unnamed kinds are labelled for messages ("1/m^2", "s^5*A^3"),
		// not in a form the reader need take.
		if _, named := kindsByDim[k.Dim]; !named {
			return
		}
		again := strconv.FormatFloat(v, 'g', -1, 64) + " " + k.Unit
		back, bk, err := ParseQuantity(again)
		if err != nil || back != v || bk.Dim != k.Dim {
			t.Fatalf("%q gave %v %s, which reads back as %v %s (%v)", text, v, k.Unit, back, bk.Unit, err)
		}
	})
}

// A product of units has the sum of their powers (SI brochure, 9th edition,
// section 2.3.4: derived units are products of powers of the base units).
// Sums beyond what a Dim holds, and factors beyond a float64, are refused
// rather than wrapped round or turned into NaN (regressions found by
// FuzzParseQuantity).
func TestUnitPowerSums(t *testing.T) {
	v, k, err := ParseQuantity("2 m^4*m^4*m^4*m^4")
	if err != nil || v != 2 || k.Dim != (Dim{dimM: 16}) {
		t.Errorf("m^4 four times: %v %+v %v, want 2 of m^16", v, k, err)
	}
	for _, text := range []string{
		"1 " + strings.TrimSuffix(strings.Repeat("m^4*", 32), "*"),   // m^128 would wrap to m^-128
		"0 " + strings.TrimSuffix(strings.Repeat("km^4*", 30), "*"),  // factor 1e360 overflows; 0*Inf is NaN
		"1 " + strings.TrimSuffix(strings.Repeat("um^-4*", 30), "*"), // same, from below
	} {
		if v, k, err := ParseQuantity(text); err == nil {
			t.Errorf("%.30q... accepted as %v %s", text, v, k.Unit)
		}
	}
}
