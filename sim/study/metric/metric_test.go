package metric

import (
	"math"
	"slices"
	"testing"

	"teeter/sim"
	"teeter/sim/rig"
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

// recording is a synthetic run: each column sampled at 200 Hz over
// duration seconds from the functions of time given, with the last shove
// at disturbAt.
func recording(duration, disturbAt float64, columns map[string]func(t float64) float64) *rig.Outcome {
	const dt = 0.005
	names := []string{"time"}
	for name := range columns {
		names = append(names, name)
	}
	slices.Sort(names[1:])
	cols := make([][]float64, len(names))
	for i := 0; float64(i)*dt <= duration+1e-9; i++ {
		t := float64(i) * dt
		cols[0] = append(cols[0], t)
		for c, name := range names[1:] {
			cols[c+1] = append(cols[c+1], columns[name](t))
		}
	}
	return &rig.Outcome{Rec: sim.NewRecorder(names, make([]string, len(names)), cols), DisturbAt: disturbAt, Duration: duration}
}

func eval(t *testing.T, name string, o *rig.Outcome) float64 {
	t.Helper()
	m, err := Lookup(name)
	if err != nil {
		t.Fatal(err)
	}
	return m.Eval(o)
}

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol*math.Abs(want) {
		t.Errorf("%s = %g, want %g within %g %%", name, got, want, 100*tol)
	}
}

func TestMetricValuesOnAnExponentialRecovery(t *testing.T) {
	// After a shove at 1 s the tilt decays as A exp(-s (t - 1)): ITAE =
	// integral of t A exp(-s t) = A/s^2; it is inside the 0.5 deg band
	// from ln(A/band)/s on; it never swings past upright, so no overshoot
	// and no damping ratio (the integrals are the exponential's; worked by
	// hand). Two commands, 0.5 and sin(2 pi t), give an effort of
	// 0.25 T + T/2 over whole seconds T; two screws moving steadily at 2 and
	// -1 mm/s travel 3 mm/s times T.
	const amp, s, T = 0.05, 3.0, 9.0
	tilt := func(t float64) float64 {
		if t < 1 {
			return amp
		}
		return amp * math.Exp(-s*(t-1))
	}
	o := recording(T, 1, map[string]func(float64) float64{
		"torso_tilt":    tilt,
		"left.command":  func(float64) float64 { return 0.5 },
		"right.command": func(t float64) float64 { return math.Sin(2 * math.Pi * t) },
		"left.screw":    func(t float64) float64 { return 0.002 * t },
		"right.screw":   func(t float64) float64 { return -0.001 * t },
	})
	o.Slip = 0.004
	near(t, "itae", eval(t, "itae", o), amp/(s*s), 0.01)
	near(t, "settling_time", eval(t, "settling_time", o), math.Log(amp/SettleBand)/s, 0.02)
	if v := eval(t, "overshoot", o); v != 0 {
		t.Errorf("overshoot = %g %%, want 0", v)
	}
	if v := eval(t, "damping", o); !math.IsNaN(v) {
		t.Errorf("damping = %g, want NaN for a curve that does not swing", v)
	}
	near(t, "effort", eval(t, "effort", o), 0.25*T+T/2, 0.01)
	near(t, "travel", eval(t, "travel", o), 0.003*T, 1e-9)
	near(t, "foot_slip", eval(t, "foot_slip", o), 0.004, 0)
}

func TestMetricValuesOnADampedSwing(t *testing.T) {
	// x = A exp(-zeta wn t) sin(wd t) after the shove: each swing past
	// upright is exp(-zeta pi/sqrt(1 - zeta^2)) of the one before, which
	// is the overshoot, and the logarithmic decrement gives zeta back
	// (Ogata, Modern Control Engineering, 5th ed., sec. 5-3).
	const amp, zeta, wn = 0.05, 0.1, 2 * math.Pi * 1.5
	wd := wn * math.Sqrt(1-zeta*zeta)
	o := recording(10, 2, map[string]func(float64) float64{
		"torso_tilt": func(t float64) float64 {
			if t < 2 {
				return 0
			}
			return amp * math.Exp(-zeta*wn*(t-2)) * math.Sin(wd*(t-2))
		},
	})
	near(t, "overshoot", eval(t, "overshoot", o), 100*math.Exp(-zeta*math.Pi/math.Sqrt(1-zeta*zeta)), 0.02)
	near(t, "damping", eval(t, "damping", o), zeta, 0.03)
}

func TestMetricValuesOnASteadyOscillation(t *testing.T) {
	// A steady 1.5 deg, 2.2 Hz sine: the oscillation metrics give its
	// amplitude and frequency back (the definition of a sinusoid's
	// amplitude and frequency).
	const amp, f = 1.5 * math.Pi / 180, 2.2
	o := recording(10, 1, map[string]func(float64) float64{
		"torso_tilt": func(t float64) float64 { return amp * math.Sin(2*math.Pi*f*t+0.3) },
	})
	near(t, "osc_amplitude", eval(t, "osc_amplitude", o), 1.5, 0.05)
	near(t, "osc_frequency", eval(t, "osc_frequency", o), f, 0.02)
}

func TestMetricValuesFromTheSummary(t *testing.T) {
	// fell, fall_time, peak_tilt and final_tilt read the run's summary:
	// a fall at 2.5 s of a 6 s run, or none (the metrics' own definitions).
	o := recording(6, 0, map[string]func(float64) float64{"torso_tilt": math.Sin})
	o.Summary = rig.Summary{Fell: true, FallTime: 2.5, PeakTilt: 31, FinalTilt: 29}
	for name, want := range map[string]float64{"fell": 1, "fall_time": 2.5, "peak_tilt": 31, "final_tilt": 29} {
		near(t, name, eval(t, name, o), want, 0)
	}
	if v := eval(t, "settling_time", o); !math.IsNaN(v) {
		t.Errorf("settling_time after a fall = %g, want NaN", v)
	}
	o.Summary = rig.Summary{}
	near(t, "fell", eval(t, "fell", o), 0, 0)
	near(t, "fall_time", eval(t, "fall_time", o), 6, 0)
}
