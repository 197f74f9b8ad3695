package metric

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/dsp/fourier"
	"gonum.org/v1/gonum/dsp/window"
	"gonum.org/v1/gonum/integrate"
)

// trapezoid is the trapezoidal integral of y over t; 0 for fewer than two
// samples, which gonum refuses.
func trapezoid(t, y []float64) float64 {
	if len(t) < 2 {
		return 0
	}
	return integrate.Trapezoidal(t, y)
}

// SettlingTime is the time from t[0] after which y stays within band of its
// final value; 0 if it always did.
func SettlingTime(t, y []float64, band float64) float64 {
	if len(y) == 0 {
		return math.NaN()
	}
	final := y[len(y)-1]
	for i := len(y) - 1; i >= 0; i-- {
		if math.Abs(y[i]-final) > band {
			if i == len(y)-1 {
				return t[i] - t[0]
			}
			return t[i+1] - t[0]
		}
	}
	return 0
}

// Overshoot is the largest excursion of y past zero on the side opposite
// its first swing, as a share of that swing's peak; 0 if it never crosses.
func Overshoot(y []float64) float64 {
	first, sign := 0.0, 0.0
	for _, v := range y {
		if sign == 0 && v != 0 {
			sign = math.Copysign(1, v)
		}
		if sign != 0 && v*sign < 0 {
			break
		}
		first = math.Max(first, math.Abs(v))
	}
	if first == 0 {
		return 0
	}
	past := 0.0
	for _, v := range y {
		past = math.Max(past, -v*sign)
	}
	return past / first
}

// ITAE is the integral of (t - t[0]) * |y| dt.
func ITAE(t, y []float64) float64 {
	if len(t) == 0 {
		return 0
	}
	w := make([]float64, len(y))
	for i := range y {
		w[i] = (t[i] - t[0]) * math.Abs(y[i])
	}
	return trapezoid(t, w)
}

// SpectralPeak finds the strongest oscillation in y, sampled every dt
// seconds: its amplitude (in y's units) and frequency (Hz). The mean is
// removed and a Hann window applied; the peak is refined by fitting a
// parabola to the log magnitudes of the three bins around it.
func SpectralPeak(y []float64, dt float64) (amplitude, frequency float64) {
	n := len(y)
	if n < 4 || !(dt > 0) {
		return math.NaN(), math.NaN()
	}
	mean := 0.0
	for _, v := range y {
		mean += v
	}
	mean /= float64(n)
	x := make([]float64, n)
	w := make([]float64, n)
	for i, v := range y {
		x[i], w[i] = v-mean, 1
	}
	window.Hann(x)
	wsum := 0.0
	for _, v := range window.Hann(w) {
		wsum += v
	}
	coef := fourier.NewFFT(n).Coefficients(nil, x)
	k := 1
	for i := 2; i < len(coef); i++ {
		if cmplx.Abs(coef[i]) > cmplx.Abs(coef[k]) {
			k = i
		}
	}
	mag := cmplx.Abs(coef[k])
	if mag == 0 {
		return 0, 0
	}
	shift := 0.0
	if k > 1 && k < len(coef)-1 {
		a, b, c := math.Log(cmplx.Abs(coef[k-1])+1e-300), math.Log(mag), math.Log(cmplx.Abs(coef[k+1])+1e-300)
		if d := a - 2*b + c; d < 0 {
			shift = 0.5 * (a - c) / d
			mag = math.Exp(b - 0.25*(a-c)*shift)
		}
	}
	return 2 * mag / wsum, (float64(k) + shift) / (float64(n) * dt)
}

// LogDecrement estimates the damping ratio of a decaying oscillation from
// its successive positive peaks (Ogata, Modern Control Engineering):
// delta = ln(x1/x(n+1))/n and zeta = delta/sqrt(4 pi^2 + delta^2). The
// oscillation is taken about the mean of the last quarter of y, and a peak is
// the largest value of a lobe that rises above 5 % of the largest excursion,
// so that noise near the crossings makes no false peaks. NaN if there are
// fewer than two peaks.
func LogDecrement(y []float64) float64 {
	if len(y) < 8 {
		return math.NaN()
	}
	tail := y[len(y)*3/4:]
	centre := 0.0
	for _, v := range tail {
		centre += v
	}
	centre /= float64(len(tail))
	h := 0.0
	for _, v := range y {
		h = math.Max(h, math.Abs(v-centre))
	}
	h *= 0.05
	var peaks []float64
	in, top := false, 0.0
	for _, v := range y {
		d := v - centre
		switch {
		case !in && d > h:
			in, top = true, d
		case in && d > top:
			top = d
		case in && d < -h:
			peaks = append(peaks, top)
			in = false
		}
	}
	if len(peaks) < 2 {
		return math.NaN()
	}
	n := float64(len(peaks) - 1)
	delta := math.Log(peaks[0]/peaks[len(peaks)-1]) / n
	return delta / math.Sqrt(4*math.Pi*math.Pi+delta*delta)
}
