package modes

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"
)

// Checked is a linearised mode beside the nearest mode identified from
// kicked runs of the same rig: two methods, one answer when they agree.
type Checked struct {
	Mode
	// Identified is the identified mode within matchShare of it in the s
	// plane, nil when there is none.
	Identified *Mode `json:"identified,omitempty"`
}

// matchShare is how near, as a share of |s|, an identified mode must lie to
// be taken for the same mode: the identification's frequencies carry a few
// per cent of fit error, its damping more.
const matchShare = 0.2

// Agrees reports a linearised mode that the identification found, growing
// or dying alike.
func (c Checked) Agrees() bool {
	return c.Identified != nil && c.Identified.Unstable() == c.Unstable()
}

// CrossCheck pairs each linearised mode with the identified mode nearest
// it.
func CrossCheck(linear, identified []Mode) []Checked {
	out := make([]Checked, len(linear))
	for i, m := range linear {
		out[i].Mode = m
		s := complex(m.Real, m.Imag)
		best := math.Inf(1)
		for k := range identified {
			id := &identified[k]
			if d := cmplx.Abs(complex(id.Real, id.Imag) - s); d <= matchShare*cmplx.Abs(s) && d < best {
				best, out[i].Identified = d, id
			}
		}
	}
	return out
}

// CheckedTable formats cross-checked modes for a terminal as Table does,
// with the identified mode beside each; modes below minWeight are left out.
func CheckedTable(cs []Checked, minWeight float64) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s   %s\n", header(), "from kicks")
	for _, c := range cs {
		if c.Weight < minWeight {
			continue
		}
		seen := "not found"
		if id := c.Identified; id != nil {
			seen = fmt.Sprintf("%.3f Hz, damping %.3f", id.FrequencyHz, id.Damping)
			if !c.Agrees() {
				seen += " (disagrees)"
			}
		}
		fmt.Fprintf(&b, "%s   %s\n", row(c.Mode), seen)
	}
	return b.String()
}
