package study

import (
	"math"
	"math/cmplx"
)

// BacklashDF is the describing function of backlash of total play width
// (the input must travel width to turn the output round) and unit slope,
// for a sine of amplitude a at its input (Gelb and Vander Velde,
// Multiple-Input Describing Functions and Nonlinear System Design, 1968,
// ch. 2). It is 0 for a <= width/2, where the output never moves, and
// tends to 1 for a much larger than the play. The phase lag is the
// backlash's hallmark.
func BacklashDF(a, width float64) complex128 {
	b := width / 2 // half the play
	if !(a > b) {
		return 0
	}
	r := 1 - 2*b/a
	re := 0.5 + (math.Asin(r)+r*math.Sqrt(1-r*r))/math.Pi
	im := -4 * b / (math.Pi * a) * (1 - b/a)
	return complex(re, im)
}

// BacklashCycle predicts the limit cycle of a loop made of a linear part
// g(jw) and backlash of the given width in series, by harmonic balance:
// 1 + N(a) g(jw) = 0. It scans the frequencies wlo..whi and the amplitudes
// above the play for the pair that best satisfies the balance and
// returns it, with the residual |1 + N g|; ok is false when no pair comes
// within 1e-3.
func BacklashCycle(g func(w float64) complex128, width, wlo, whi float64) (a, w, residual float64, ok bool) {
	best := math.Inf(1)
	res := func(a, w float64) float64 { return cmplx.Abs(1 + BacklashDF(a, width)*g(w)) }
	// Coarse grid on log scales, then a pattern search around the best.
	for i := 0; i <= 200; i++ {
		wi := wlo * math.Pow(whi/wlo, float64(i)/200)
		for k := 1; k <= 200; k++ {
			ak := width / 2 * math.Pow(1000, float64(k)/200)
			if v := res(ak, wi); v < best {
				best, a, w = v, ak, wi
			}
		}
	}
	da, dw := a*0.05, w*0.05
	for it := 0; it < 2000 && (da > a*1e-10 || dw > w*1e-10); it++ {
		moved := false
		for _, s := range [][2]float64{{da, 0}, {-da, 0}, {0, dw}, {0, -dw}} {
			if v := res(a+s[0], w+s[1]); a+s[0] > width/2 && w+s[1] > 0 && v < best {
				best, a, w, moved = v, a+s[0], w+s[1], true
			}
		}
		if !moved {
			da, dw = da/2, dw/2
		}
	}
	return a, w, best, best < 1e-3
}
