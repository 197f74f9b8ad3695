package models

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Dim is the dimension of a quantity as exponents of the SI base units
// metre, kilogram, second and ampere, plus the radian. Angles are
// dimensionless in SI, but teeter keeps the radian as its own base so that
// "0.5 deg" given for a length is caught as the wrong kind.
type Dim [5]int8

const (
	dimM = iota
	dimKg
	dimS
	dimA
	dimRad
)

// Kind is a named kind of quantity, such as length or torque.
type Kind struct {
	Name string
	Dim  Dim
	Unit string // the SI unit it is stored in, for messages and reports
}

// The kinds of quantity a robot or controller file uses.
var (
	Dimensionless    = Kind{"number", Dim{}, ""}
	Length           = Kind{"length", Dim{dimM: 1}, "m"}
	Angle            = Kind{"angle", Dim{dimRad: 1}, "rad"}
	Mass             = Kind{"mass", Dim{dimKg: 1}, "kg"}
	Duration         = Kind{"duration", Dim{dimS: 1}, "s"}
	Frequency        = Kind{"frequency", Dim{dimS: -1}, "Hz"}
	Speed            = Kind{"speed", Dim{dimM: 1, dimS: -1}, "m/s"}
	AngularSpeed     = Kind{"angular speed", Dim{dimRad: 1, dimS: -1}, "rad/s"}
	Acceleration     = Kind{"acceleration", Dim{dimM: 1, dimS: -2}, "m/s^2"}
	Force            = Kind{"force", Dim{dimKg: 1, dimM: 1, dimS: -2}, "N"}
	Torque           = Kind{"torque", Dim{dimKg: 1, dimM: 2, dimS: -2}, "N*m"}
	Impulse          = Kind{"impulse", Dim{dimKg: 1, dimM: 1, dimS: -1}, "N*s"}
	LinearStiffness  = Kind{"stiffness", Dim{dimKg: 1, dimS: -2}, "N/m"}
	AngularStiffness = Kind{"rotational stiffness", Dim{dimKg: 1, dimM: 2, dimS: -2, dimRad: -1}, "N*m/rad"}
	LinearDamping    = Kind{"damping", Dim{dimKg: 1, dimS: -1}, "N*s/m"}
	AngularDamping   = Kind{"rotational damping", Dim{dimKg: 1, dimM: 2, dimS: -1, dimRad: -1}, "N*m*s/rad"}
	Inertia          = Kind{"moment of inertia", Dim{dimKg: 1, dimM: 2}, "kg*m^2"}
	Voltage          = Kind{"voltage", Dim{dimKg: 1, dimM: 2, dimS: -3, dimA: -1}, "V"}
	Current          = Kind{"current", Dim{dimA: 1}, "A"}
	Resistance       = Kind{"resistance", Dim{dimKg: 1, dimM: 2, dimS: -3, dimA: -2}, "ohm"}
	Charge           = Kind{"charge", Dim{dimA: 1, dimS: 1}, "C"}
	Power            = Kind{"power", Dim{dimKg: 1, dimM: 2, dimS: -3}, "W"}
	Energy           = Kind{"energy", Dim{dimKg: 1, dimM: 2, dimS: -2}, "J"}
)

var kindsByDim = map[Dim]Kind{}

func init() {
	for _, k := range []Kind{Dimensionless, Length, Angle, Mass, Duration, Frequency, Speed, AngularSpeed,
		Acceleration, Force, Torque, Impulse, LinearStiffness, AngularStiffness, LinearDamping,
		AngularDamping, Inertia, Voltage, Current, Resistance, Charge, Power, Energy} {
		// Torque and energy share a dimension; torque is the one a robot file means.
		if _, ok := kindsByDim[k.Dim]; !ok {
			kindsByDim[k.Dim] = k
		}
	}
}

// KindOf names the kind of a dimension, or describes it when it has no name.
func KindOf(d Dim) Kind {
	if k, ok := kindsByDim[d]; ok {
		return k
	}
	return Kind{Name: "quantity of unit " + dimString(d), Dim: d, Unit: dimString(d)}
}

func dimString(d Dim) string {
	names := [...]string{"m", "kg", "s", "A", "rad"}
	var num, den []string
	for i, e := range d {
		switch {
		case e == 1:
			num = append(num, names[i])
		case e > 1:
			num = append(num, fmt.Sprintf("%s^%d", names[i], e))
		case e == -1:
			den = append(den, names[i])
		case e < -1:
			den = append(den, fmt.Sprintf("%s^%d", names[i], -e))
		}
	}
	s := strings.Join(num, "*")
	if s == "" {
		s = "1"
	}
	if len(den) > 0 {
		s += "/" + strings.Join(den, "/")
	}
	return s
}

type unitDef struct {
	factor float64 // multiply a value in this unit by factor to get SI
	dim    Dim
}

// units maps unit symbols to SI. Factors are exact definitions or the values
// of NIST Special Publication 811 (2008), appendix B.
var units = map[string]unitDef{
	// length
	"m": {1, Length.Dim}, "mm": {1e-3, Length.Dim}, "cm": {1e-2, Length.Dim}, "km": {1e3, Length.Dim},
	"um": {1e-6, Length.Dim}, "µm": {1e-6, Length.Dim}, "in": {0.0254, Length.Dim}, "ft": {0.3048, Length.Dim},
	// angle
	"rad": {1, Angle.Dim}, "mrad": {1e-3, Angle.Dim}, "deg": {math.Pi / 180, Angle.Dim}, "°": {math.Pi / 180, Angle.Dim},
	"rev": {2 * math.Pi, Angle.Dim}, "arcmin": {math.Pi / 10800, Angle.Dim},
	// mass
	"kg": {1, Mass.Dim}, "g": {1e-3, Mass.Dim}, "mg": {1e-6, Mass.Dim},
	"lb": {0.45359237, Mass.Dim}, "oz": {0.028349523125, Mass.Dim},
	// time
	"s": {1, Duration.Dim}, "ms": {1e-3, Duration.Dim}, "us": {1e-6, Duration.Dim}, "µs": {1e-6, Duration.Dim},
	"min": {60, Duration.Dim}, "h": {3600, Duration.Dim},
	// frequency and rotation rate
	"Hz": {1, Frequency.Dim}, "kHz": {1e3, Frequency.Dim},
	"rpm": {2 * math.Pi / 60, AngularSpeed.Dim},
	// force, energy, power
	"N": {1, Force.Dim}, "mN": {1e-3, Force.Dim}, "kN": {1e3, Force.Dim},
	"kgf": {9.80665, Force.Dim}, "lbf": {4.4482216152605, Force.Dim},
	"J": {1, Energy.Dim}, "W": {1, Power.Dim}, "mW": {1e-3, Power.Dim},
	// electrical
	"V": {1, Voltage.Dim}, "mV": {1e-3, Voltage.Dim},
	"A": {1, Current.Dim}, "mA": {1e-3, Current.Dim},
	"ohm": {1, Resistance.Dim}, "Ω": {1, Resistance.Dim}, "mohm": {1e-3, Resistance.Dim}, "mΩ": {1e-3, Resistance.Dim},
	"C": {1, Charge.Dim}, "Ah": {3600, Charge.Dim}, "mAh": {3.6, Charge.Dim},
	// gravity as a unit of acceleration
	"gn": {9.80665, Acceleration.Dim},
	// dimensionless
	"%": {0.01, Dim{}},
}

// ParseQuantity reads a number with an optional unit, such as "12 mm",
// "0.5 deg", "4 N*s", "30 mm/s", "2 N*m/rad" or "-3.5e-2". A bare number is
// taken as SI. It is our own small parser, not a units library, because it
// must know the radian as a dimension of its own (so an angle is refused
// where a length is wanted) and the trade's spellings (N*s, mm/s, %). The unit must be of one of the wanted kinds (any kind when none
// is given); the kind found is returned.
func ParseQuantity(text string, want ...Kind) (float64, Kind, error) {
	s := strings.TrimSpace(text)
	if s == "" {
		return 0, Kind{}, fmt.Errorf("empty value")
	}
	word := strings.ToLower(strings.TrimLeft(s, "+-."))
	if strings.HasPrefix(word, "nan") || strings.HasPrefix(word, "inf") {
		return 0, Kind{}, fmt.Errorf("%q is not a finite number", text)
	}
	numEnd := numberPrefix(s)
	if numEnd == 0 {
		return 0, Kind{}, fmt.Errorf("%q is not a number", text)
	}
	num, err := strconv.ParseFloat(s[:numEnd], 64)
	if err != nil {
		if math.IsInf(num, 0) {
			return 0, Kind{}, fmt.Errorf("%q is too large", text)
		}
		return 0, Kind{}, fmt.Errorf("%q is not a number", text)
	}
	if math.IsNaN(num) || math.IsInf(num, 0) {
		return 0, Kind{}, fmt.Errorf("%q is not a finite number", text)
	}
	unitText := strings.TrimSpace(s[numEnd:])
	factor, dim := 1.0, Dim{}
	bare := unitText == ""
	if !bare {
		factor, dim, err = parseUnit(unitText)
		if err != nil {
			return 0, Kind{}, err
		}
	}
	v := num * factor
	if math.IsInf(v, 0) {
		return 0, Kind{}, fmt.Errorf("%q is too large", text)
	}
	if len(want) == 0 {
		return v, KindOf(dim), nil
	}
	if bare {
		// A bare number is SI in whichever kind is wanted first.
		return v, want[0], nil
	}
	for _, k := range want {
		if k.Dim == dim {
			return v, k, nil
		}
	}
	names := make([]string, len(want))
	for i, k := range want {
		names[i] = k.Name
	}
	return 0, Kind{}, fmt.Errorf("%q is %s, but %s is wanted", text, withArticle(KindOf(dim).Name), withArticle(strings.Join(names, " or ")))
}

func withArticle(noun string) string {
	if noun != "" && strings.ContainsRune("aeiou", rune(noun[0])) {
		return "an " + noun
	}
	return "a " + noun
}

// numberPrefix returns the length of the leading decimal number in s.
func numberPrefix(s string) int {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return 0
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && s[k] >= '0' && s[k] <= '9' {
			k++
		}
		if k > j {
			i = k
		}
	}
	return i
}

// parseUnit reads a product of unit symbols joined by '*' (or '·') and '/',
// each with an optional integer power written "^2".
func parseUnit(text string) (float64, Dim, error) {
	factor := 1.0
	var dim Dim
	s := strings.ReplaceAll(text, "·", "*")
	sign := 1
	start := 0
	for i := 0; i <= len(s); i++ {
		if i < len(s) && s[i] != '*' && s[i] != '/' {
			continue
		}
		term := strings.TrimSpace(s[start:i])
		if term == "" {
			return 0, Dim{}, fmt.Errorf("unit %q is malformed", text)
		}
		name, power := term, 1
		if k := strings.IndexByte(term, '^'); k >= 0 {
			p, err := strconv.Atoi(term[k+1:])
			if err != nil || p == 0 || p > 4 || p < -4 {
				return 0, Dim{}, fmt.Errorf("unit %q has a bad power", text)
			}
			name, power = strings.TrimSpace(term[:k]), p
		}
		u, ok := units[name]
		if !ok {
			if name == strings.TrimSpace(text) {
				return 0, Dim{}, fmt.Errorf("unknown unit %q", name)
			}
			return 0, Dim{}, fmt.Errorf("unknown unit %q in %q", name, text)
		}
		p := power * sign
		factor *= math.Pow(u.factor, float64(p))
		for d := range dim {
			// Bounded well inside int8, so no product of terms wraps
			// round to another dimension.
			e := int(dim[d]) + int(u.dim[d])*p
			if e > maxPower || e < -maxPower {
				return 0, Dim{}, fmt.Errorf("unit %q has too high a power", text)
			}
			dim[d] = int8(e)
		}
		if i < len(s) && s[i] == '/' {
			sign = -1
		}
		start = i + 1
	}
	if factor == 0 || math.IsInf(factor, 0) {
		// 0 times an infinite factor would be NaN.
		return 0, Dim{}, fmt.Errorf("unit %q is out of range", text)
	}
	return factor, dim, nil
}

// maxPower bounds each base unit's power in a unit.
const maxPower = 16

// ToUnit converts an SI value of the unit's kind into the named unit, for
// display at the edges (reports, the window). The unit must be known.
func ToUnit(si float64, unit string) (float64, error) {
	factor, _, err := parseUnit(unit)
	if err != nil {
		return 0, err
	}
	return si / factor, nil
}
