package control

import (
	"bytes"
	"fmt"
	"sort"
	"strconv"
	"strings"
)

// Names the header defines itself; parameters never take them.
const (
	headerGuard = "TEETER_CONTROLLER_H"
	headerRate  = "TEETER_CONTROL_RATE_HZ"
)

// CIdentifier turns a parameter path into a C identifier: ASCII letters
// upper-cased, every other character but digits and '_' replaced by '_',
// and "P_" put in front when the result does not start with a letter (so it
// can neither start with a digit nor take a name C reserves).
func CIdentifier(path string) string {
	var b strings.Builder
	for _, c := range path {
		switch {
		case c >= 'a' && c <= 'z':
			b.WriteRune(c - 'a' + 'A')
		case (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_':
			b.WriteRune(c)
		default:
			b.WriteByte('_')
		}
	}
	id := b.String()
	if id == "" || id[0] < 'A' || id[0] > 'Z' {
		id = "P_" + id
	}
	return id
}

// commentSafe keeps text that cannot end a C comment, continue a line or
// start a new one: printable ASCII without '*', '\' and '?' (trigraphs);
// anything else becomes '_'.
func commentSafe(s string) string {
	var b strings.Builder
	for _, c := range s {
		if c < 0x20 || c > 0x7e || c == '*' || c == '\\' || c == '?' {
			b.WriteByte('_')
		} else {
			b.WriteRune(c)
		}
	}
	return b.String()
}

// cFloat writes a float constant with the shortest digits that give the same
// float, always with a point or an exponent so that the 'f' suffix is valid.
func cFloat(x float64) string {
	s := strconv.FormatFloat(x, 'g', -1, 32)
	if !strings.ContainsAny(s, ".e") {
		s += ".0"
	}
	return s + "f"
}

// CHeader writes parameters as "static const float" constants for firmware,
// sorted by path, each with its path and unit in a comment, under a note of
// the controller rate they assume. Identifiers follow CIdentifier; when two
// paths give the same identifier the later path (in sorted order) gets the
// first free suffix "_2", "_3", ... The output depends only on its
// arguments, byte for byte.
func CHeader(params []ParamInfo, rate float64, source string) []byte {
	ps := append([]ParamInfo(nil), params...)
	sort.SliceStable(ps, func(i, j int) bool { return ps[i].Path < ps[j].Path })
	var b bytes.Buffer
	b.WriteString("/* Controller parameters for firmware, written by teeter; do not edit.\n")
	if source != "" {
		fmt.Fprintf(&b, " * Source: %s\n", commentSafe(source))
	}
	fmt.Fprintf(&b, " * The controller runs at %s Hz (period %s s). Gains are in SI units\n", formatFloat(rate), formatFloat(1/rate))
	b.WriteString(" * of continuous time (ki per second, kd in seconds); discretise with\n")
	b.WriteString(" * that period.\n */\n")
	fmt.Fprintf(&b, "#ifndef %s\n#define %s\n\n", headerGuard, headerGuard)
	fmt.Fprintf(&b, "#define %s %s\n\n", headerRate, cFloat(rate))
	taken := map[string]bool{headerGuard: true, headerRate: true}
	for _, p := range ps {
		id := CIdentifier(p.Path)
		if taken[id] {
			for n := 2; ; n++ {
				if alt := fmt.Sprintf("%s_%d", id, n); !taken[alt] {
					id = alt
					break
				}
			}
		}
		taken[id] = true
		comment := commentSafe(p.Path)
		if p.Unit != "" {
			comment += ", " + commentSafe(p.Unit)
		}
		if !isFinite(p.Value) {
			fmt.Fprintf(&b, "/* %s left out: not a finite number */\n", comment)
			continue
		}
		fmt.Fprintf(&b, "static const float %s = %s; /* %s */\n", id, cFloat(p.Value), comment)
	}
	fmt.Fprintf(&b, "\n#endif /* %s */\n", headerGuard)
	return b.Bytes()
}

// CHeader writes the graph's current parameters as a C header; source names
// the controller file in the header's first comment.
func (g *Graph) CHeader(source string) []byte { return CHeader(g.Params(), g.rate, source) }

// WriteCHeader saves the graph's C header to a file.
func (g *Graph) WriteCHeader(file, source string) error {
	return writeBytes(file, g.CHeader(source))
}
