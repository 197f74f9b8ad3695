package metric

import (
	"math"
	"testing"
)

func TestSpectralPeakOfKnownSine(t *testing.T) {
	// A sine of known amplitude and frequency: the spectral peak must give
	// them back (the definition of a sinusoid's amplitude and frequency; Hann
	// window amplitude correction 2/sum(w), Harris 1978).
	const dt = 0.005
	for _, c := range []struct{ amp, freq float64 }{{0.02, 1.3}, {1.5, 3.77}, {0.1, 1.1}} { // at least four cycles in the window
		y := make([]float64, 800) // 4 s
		for i := range y {
			y[i] = 0.3 + c.amp*math.Sin(2*math.Pi*c.freq*float64(i)*dt+0.4)
		}
		a, f := SpectralPeak(y, dt)
		if math.Abs(f-c.freq)/c.freq > 0.02 {
			t.Errorf("sine %g Hz: peak at %g Hz", c.freq, f)
		}
		if math.Abs(a-c.amp)/c.amp > 0.05 {
			t.Errorf("sine %g Hz amplitude %g: measured %g", c.freq, c.amp, a)
		}
	}
}

func TestLogDecrementOfKnownDampedOscillation(t *testing.T) {
	// x = exp(-zeta wn t) cos(wd t): the logarithmic decrement gives zeta
	// back (Ogata, Modern Control Engineering, 5th ed., sec. 5-3).
	const dt = 0.001
	for _, zeta := range []float64{0.02, 0.1, 0.25} {
		wn := 2 * math.Pi * 2.0
		wd := wn * math.Sqrt(1-zeta*zeta)
		ts := make([]float64, 6000)
		y := make([]float64, len(ts))
		for i := range y {
			ts[i] = float64(i) * dt
			y[i] = math.Exp(-zeta*wn*ts[i]) * math.Cos(wd*ts[i])
		}
		got := LogDecrement(y)
		if math.Abs(got-zeta)/zeta > 0.03 {
			t.Errorf("zeta %g: log decrement gives %g", zeta, got)
		}
	}
}

func TestStepResponseMetrics(t *testing.T) {
	// The deviation of a second-order step response from its final value,
	// x = exp(-zeta wn t)(cos wd t + zeta/sqrt(1-zeta^2) sin wd t), starts at
	// 1; its first swing past zero is the maximum overshoot
	// exp(-zeta pi/sqrt(1-zeta^2)), and it stays within 2 % after about
	// -ln(0.02)/(zeta wn) (Ogata, Modern Control Engineering, sec. 5-3).
	const dt = 0.0005
	zeta, wn := 0.2, 2*math.Pi
	wd := wn * math.Sqrt(1-zeta*zeta)
	ts := make([]float64, 40000)
	y := make([]float64, len(ts))
	for i := range y {
		ts[i] = float64(i) * dt
		y[i] = math.Exp(-zeta*wn*ts[i]) * (math.Cos(wd*ts[i]) + zeta/math.Sqrt(1-zeta*zeta)*math.Sin(wd*ts[i]))
	}
	want := math.Exp(-zeta * math.Pi / math.Sqrt(1-zeta*zeta))
	if got := Overshoot(y); math.Abs(got-want) > 0.01 {
		t.Errorf("overshoot %g, want %g", got, want)
	}
	// The envelope exp(-zeta wn t)/sqrt(1-zeta^2) reaches the band at env;
	// the oscillation's last exit can only be earlier, by less than a damped
	// period.
	env := -math.Log(0.02*math.Sqrt(1-zeta*zeta)) / (zeta * wn)
	got := SettlingTime(ts, y, 0.02)
	if got > env || got < env-2*math.Pi/wd {
		t.Errorf("settling time %g, want within a period below %g", got, env)
	}
	// ITAE of a constant 1 over [0, T] is T^2/2 (the integral of t dt).
	c := make([]float64, 101)
	for i := range c {
		c[i] = 1
	}
	if got := ITAE(ts[:101], c); math.Abs(got-0.05*0.05/2) > 1e-12 {
		t.Errorf("ITAE of 1 over 0.05 s: %g, want %g", got, 0.05*0.05/2)
	}
}

func TestMetricRegistry(t *testing.T) {
	seen := map[string]bool{}
	for _, m := range All() {
		if m.Name == "" || m.Meaning == "" || m.Eval == nil || seen[m.Name] {
			t.Errorf("metric %+v is incomplete or repeated", m)
		}
		seen[m.Name] = true
		if _, err := Lookup(m.Name); err != nil {
			t.Error(err)
		}
	}
	if _, err := Lookup("no_such"); err == nil {
		t.Error("an unknown metric was found")
	}
}
