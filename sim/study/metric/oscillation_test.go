package metric

import (
	"math"
	"testing"
)

func TestSlowOscillationGetsAWindowOfSeveralPeriods(t *testing.T) {
	// A steady 0.355 Hz, 0.9 deg sine after a shove at 1 s, in a 40 s run:
	// a Hann-windowed DFT's peak, refined by a parabola through the log
	// magnitudes of its three bins, gives a sinusoid's frequency and, with
	// the window's gain 2/sum(w), its amplitude (Harris, Proc. IEEE 66(1),
	// 1978; Gasior and Gonzalez, CERN AB-Note-2004-021, 2004) once the
	// window holds several periods. A 4 s window holds 1.4 of them.
	const amp, f = 0.9 * math.Pi / 180, 0.355
	o := recording(40, 1, map[string]func(float64) float64{
		"torso_tilt": func(t float64) float64 { return 0.01 + amp*math.Sin(2*math.Pi*f*t+1.1) },
	})
	near(t, "osc_frequency", eval(t, "osc_frequency", o), f, 0.01)
	near(t, "osc_amplitude", eval(t, "osc_amplitude", o), 0.9, 0.02)
}

func TestSlowLimitCycle(t *testing.T) {
	// The van der Pol oscillator x'' - mu (1 - x^2) x' + x = 0 with a small
	// mu settles on a limit cycle of amplitude 2 and angular frequency
	// 1 - mu^2/16 (Strogatz, Nonlinear Dynamics and Chaos, sec. 7.6, by
	// averaging; the frequency by Lindstedt's method). Here its time is
	// scaled to 0.355 Hz and its amplitude to 2 * 0.4 deg, integrated by
	// the classical fourth-order Runge-Kutta method from well inside the
	// cycle; the third harmonic it carries (order mu) changes the
	// fundamental's amplitude by under 1 %.
	const mu, f0, scale, dt, duration = 0.2, 0.355, 0.4 * math.Pi / 180, 0.005, 60.0
	w0 := 2 * math.Pi * f0
	deriv := func(x, v float64) (float64, float64) { return v, mu*w0*(1-x*x)*v - w0*w0*x }
	n := int(duration/dt) + 2
	xs := make([]float64, n)
	x, v := 0.3, 0.0
	for i := range xs {
		xs[i] = x
		k1x, k1v := deriv(x, v)
		k2x, k2v := deriv(x+dt/2*k1x, v+dt/2*k1v)
		k3x, k3v := deriv(x+dt/2*k2x, v+dt/2*k2v)
		k4x, k4v := deriv(x+dt*k3x, v+dt*k3v)
		x += dt / 6 * (k1x + 2*k2x + 2*k3x + k4x)
		v += dt / 6 * (k1v + 2*k2v + 2*k3v + k4v)
	}
	o := recording(duration, 0, map[string]func(float64) float64{
		"torso_tilt": func(t float64) float64 { return scale * xs[int(math.Round(t/dt))] },
	})
	near(t, "osc_frequency", eval(t, "osc_frequency", o), f0*(1-mu*mu/16), 0.01)
	near(t, "osc_amplitude", eval(t, "osc_amplitude", o), 2*0.4, 0.03)
}
