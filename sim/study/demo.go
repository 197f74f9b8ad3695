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

// SettledAt is the first time from which |column| stays within band to the
// end of the recording, looking only at rows at or after from; ok is false
// if it never settles there.
func SettledAt(rec *sim.Recorder, column string, from, band float64) (at float64, ok bool) {
	t, v := rec.Column("time"), rec.Column(column)
	at, ok = math.NaN(), false
	for i := range t {
		if t[i] < from || i >= len(v) {
			continue
		}
		if math.Abs(v[i]) > band {
			ok = false
		} else if !ok {
			at, ok = t[i], true
		}
	}
	return at, ok
}

// DampingRatio estimates the damping ratio of a decaying oscillation from
// its successive peaks about its final level (the logarithmic decrement): with
// peaks x0 and xn n cycles apart, delta = ln(x0/xn)/n and
// zeta = delta/sqrt(4*pi^2 + delta^2). Peaks below floor (noise) end the
// count. ok is false with fewer than two peaks.
func DampingRatio(v []float64, floor float64) (zeta float64, ok bool) {
	if len(v) < 3 {
		return 0, false
	}
	// The oscillation's centre: where it ends up (the last quarter).
	tail := v[len(v)*3/4:]
	mean := 0.0
	for _, x := range tail {
		mean += x
	}
	mean /= float64(len(tail))
	var peaks []float64
	for i := 1; i+1 < len(v); i++ {
		a, b, c := v[i-1]-mean, v[i]-mean, v[i+1]-mean
		if b > 0 && b >= a && b > c {
			if b < floor {
				break
			}
			peaks = append(peaks, b)
		}
	}
	if len(peaks) < 2 {
		return 0, false
	}
	n := float64(len(peaks) - 1)
	delta := math.Log(peaks[0]/peaks[len(peaks)-1]) / n
	return delta / math.Sqrt(4*math.Pi*math.Pi+delta*delta), true
}
