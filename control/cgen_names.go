package control

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// cString writes s as a C string literal that means s byte for byte:
// printable ASCII stays, except '"', '\' and '?' (which could start a
// trigraph); every other byte is a three-digit octal escape, which no
// following character can extend.
func cString(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < 0x20 || c > 0x7e || c == '"' || c == '\\' || c == '?' {
			fmt.Fprintf(&b, "\\%03o", c)
		} else {
			b.WriteByte(c)
		}
	}
	b.WriteByte('"')
	return b.String()
}

// cDouble writes x as a C double constant that reads back as the same
// double: the shortest round-trip digits, always with a point or an
// exponent; infinities and NaN as math.h's HUGE_VAL and NAN.
func cDouble(x float64) string {
	switch {
	case math.IsNaN(x):
		return "NAN"
	case math.IsInf(x, 1):
		return "HUGE_VAL"
	case math.IsInf(x, -1):
		return "(-HUGE_VAL)"
	}
	s := strconv.FormatFloat(x, 'g', -1, 64)
	if !strings.ContainsAny(s, ".e") {
		s += ".0"
	}
	if x < 0 {
		return "(" + s + ")"
	}
	return s
}

// cNames hands out C identifiers made with CIdentifier under a prefix, each
// once: a name taken already gets the first free suffix "_2", "_3", ...,
// as the header export does.
type cNames map[string]bool

func (t cNames) take(prefix, path string) string {
	id := prefix + CIdentifier(path)
	if t[id] {
		for n := 2; ; n++ {
			if alt := fmt.Sprintf("%s_%d", id, n); !t[alt] {
				id = alt
				break
			}
		}
	}
	t[id] = true
	return id
}
