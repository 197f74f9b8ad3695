package study

import (
	"math"

	"teeter/sim"
)

// Measures of a recorded run used by the demo checks: what a builder reads
// off the trace of a built-in robot standing, shoved or stepping.

// Window is the part of a recorded column with time in [From, To).
func Window(rec *sim.Recorder, column string, from, to float64) []float64 {
	t, v := rec.Column("time"), rec.Column(column)
	var out []float64
	for i := range t {
		if i < len(v) && t[i] >= from && t[i] < to {
			out = append(out, v[i])
		}
	}
	return out
}

// PeakToPeak is the largest value less the smallest, 0 for no values.
func PeakToPeak(v []float64) float64 {
	if len(v) == 0 {
		return 0
	}
	lo, hi := v[0], v[0]
	for _, x := range v {
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	return hi - lo
}

// MeanAbsChange is the mean of |v[i] - v[i-1]|: how much a command jumps
// from one controller tick to the next.
func MeanAbsChange(v []float64) float64 {
	if len(v) < 2 {
		return 0
	}
	s := 0.0
	for i := 1; i < len(v); i++ {
		s += math.Abs(v[i] - v[i-1])
	}
	return s / float64(len(v)-1)
}

// MaxAbs is the largest |v[i]|.
func MaxAbs(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}
