package control

import (
	"math"
	"testing"
)

// amplitude fits a*sin(w t) + b*cos(w t) to samples over whole periods and
// returns sqrt(a^2 + b^2) (the Fourier coefficient of the fundamental).
func amplitude(ys, ts []float64, w float64) float64 {
	var a, b float64
	for i, y := range ys {
		a += y * math.Sin(w*ts[i])
		b += y * math.Cos(w*ts[i])
	}
	n := float64(len(ys))
	return math.Hypot(2*a/n, 2*b/n)
}

func TestTiltFilterCrossover(t *testing.T) {
	// A complementary filter passes the accelerometer angle through
	// 1/(tau*s + 1) and the integrated gyro rate through tau*s/(tau*s + 1);
	// at w = 1/tau each has gain 1/sqrt(2) (Colton, "The balance filter",
	// MIT, 2007; any complementary-filter text).
	const rate, tau = 2000.0, 0.2
	w := 1 / tau
	period := 2 * math.Pi / w
	for _, path := range []string{"accelerometer", "gyro"} {
		g := build(t, `
rate: 2000 Hz
blocks:
  - {name: gyro, kind: sensor, channel: imu.rate}
  - {name: accel, kind: sensor, channel: imu.accel_tilt}
  - {name: est, kind: tilt_filter, tau: 0.2 s, input: {rate: gyro, angle: accel}}
`, []string{"imu.rate", "imu.accel_tilt"}, nil)
		var ys, ts []float64
		settle := 10 * tau
		end := settle + 5*period
		for k := 0; float64(k)/rate < end; k++ {
			now := float64(k) / rate
			// The true angle is sin(w t); each path sees only its own part.
			in := []float64{0, 0}
			if path == "gyro" {
				in[0] = w * math.Cos(w*now)
			} else {
				in[1] = math.Sin(w * now)
			}
			g.Tick(now, in, nil)
			if now >= settle && now < settle+5*period {
				ys = append(ys, signal(t, g, "est.out"))
				ts = append(ts, now)
			}
		}
		if got := amplitude(ys, ts, w); math.Abs(got-1/math.Sqrt2) > 0.01 {
			t.Errorf("%s path gain at 1/tau: %.4f, want %.4f", path, got, 1/math.Sqrt2)
		}
	}
}

func TestLowpassStepResponse(t *testing.T) {
	// A first-order lag's step response is 1 - exp(-t/tau); discretised
	// exactly for a held input it matches at every sample (Franklin, Powell
	// and Workman, Digital Control of Dynamic Systems, sec. 4.3, zero-order
	// hold equivalent).
	g := build(t, `
rate: 100 Hz
blocks:
  - {name: u, kind: step, time: 0.1 s}
  - {name: f, kind: lowpass, tau: 0.25 s, input: u}
`, nil, nil)
	for k := 0; k <= 100; k++ {
		now := float64(k) / 100
		g.Tick(now, nil, nil)
		want := 0.0
		if k >= 10 {
			// The block applies the input of this tick at once,
			// y[k] = a*y[k-1] + (1-a)*u[k], so its output at tick k is the
			// continuous response one tick after the input was taken.
			want = 1 - math.Exp(-(now-0.1+0.01)/0.25)
		}
		if got := signal(t, g, "f.out"); math.Abs(got-want) > 1e-9 {
			t.Fatalf("t = %.2f: %g, want %g", now, got, want)
		}
	}
}

func TestShapingBlocks(t *testing.T) {
	g := build(t, `
rate: 10 Hz
blocks:
  - {name: x, kind: sensor, channel: x}
  - {name: lim, kind: limit, limits: [-0.5, 2], input: x}
  - {name: band, kind: deadband, band: 0.2, input: x}
  - {name: slew, kind: rate_limit, rate: 1, input: x}
  - {name: sp, kind: split, outputs: {hip: 1.0, ankle: -0.4}, input: x}
  - {name: sel, kind: select, count: 3, input: [1, 2, x]}
  - {name: pick, kind: select, count: 2, input: {in1: 5, in2: 7, index: x}}
  - {name: s, kind: sum, signs: "+-+", input: [x, 1, 10]}
`, []string{"x"}, nil)
	// Expected values by the definitions in SCHEMA.md ("common practice" for
	// these elementary blocks).
	steps := []struct {
		x                                   float64
		lim, band, slew, hip, ankle, sel, s float64
		pick                                float64
	}{
		{0.1, 0.1, 0, 0.1, 0.1, -0.04, 1, 9.1, 5}, // rate_limit starts at its input
		{-1, -0.5, -0.8, 0, -1, 0.4, 1, 8, 5},     // 1 per s at 10 Hz: 0.1 per tick
		{3, 2, 2.8, 0.1, 3, -1.2, 1, 12, 7},       // select index 3 rounds to in2 of 2
		{1.6, 1.6, 1.4, 0.2, 1.6, -0.64, 1, 10.6, 7},
	}
	for i, st := range steps {
		g.Tick(float64(i)/10, []float64{st.x}, nil)
		for name, want := range map[string]float64{"lim.out": st.lim, "band.out": st.band, "slew.out": st.slew,
			"sp.hip": st.hip, "sp.ankle": st.ankle, "sel.out": st.sel, "s.out": st.s, "pick.out": st.pick} {
			if got := signal(t, g, name); math.Abs(got-want) > 1e-12 {
				t.Errorf("step %d (x = %g): %s = %g, want %g", i, st.x, name, got, want)
			}
		}
	}
	// select's index parameter is tunable.
	if err := g.Set("sel.index", 2); err != nil {
		t.Fatal(err)
	}
	g.Tick(0.4, []float64{0}, nil)
	if got := signal(t, g, "sel.out"); got != 2 {
		t.Errorf("select with index 2 gives %g", got)
	}
}

func TestGenerators(t *testing.T) {
	g := build(t, `
rate: 100 Hz
blocks:
  - {name: clock, kind: time}
  - {name: st, kind: step, time: 0.5 s, before: 1, after: 3}
  - {name: rp, kind: ramp, start: 0.2 s, slope: 2, offset: 1}
  - {name: sn, kind: sine, amplitude: 2, frequency: 0.5 Hz, phase: 90 deg, offset: 1}
  - {name: sq, kind: square, amplitude: 1, frequency: 1 Hz, duty: 0.25}
  - {name: k, kind: constant, value: 10 deg}
`, nil, nil)
	// Expected values from the definitions: step, ramp max(0, t - start),
	// A*sin(2*pi*f*t + phase) + offset, square high for duty of a period.
	for _, now := range []float64{0, 0.1, 0.3, 0.6, 1.1, 1.3} {
		g.Tick(now, nil, nil)
		step := 1.0
		if now >= 0.5 {
			step = 3
		}
		sq := -1.0
		if _, f := math.Modf(now); f < 0.25 {
			sq = 1
		}
		want := map[string]float64{
			"clock.out": now,
			"st.out":    step,
			"rp.out":    1 + 2*math.Max(0, now-0.2),
			"sn.out":    1 + 2*math.Sin(2*math.Pi*0.5*now+math.Pi/2),
			"sq.out":    sq,
			"k.out":     10 * math.Pi / 180, // 1 deg = pi/180 rad (NIST SP 811)
		}
		for name, w := range want {
			if got := signal(t, g, name); math.Abs(got-w) > 1e-12 {
				t.Errorf("t = %g: %s = %g, want %g", now, name, got, w)
			}
		}
	}
}

func TestActuatorClampsAndOrders(t *testing.T) {
	// Commands go to the plant's actuator order, clamped to [-1, 1] (the
	// contract in DEVELOPERS.md); an actuator no block drives gets 0.
	g := build(t, `
rate: 10 Hz
blocks:
  - {name: a, kind: actuator, actuator: second, input: 3}
  - {name: b, kind: actuator, actuator: first, input: -0.25}
`, nil, []string{"first", "unused", "second"})
	cmd := []float64{9, 9, 9}
	g.Tick(0, nil, cmd)
	if cmd[0] != -0.25 || cmd[1] != 0 || cmd[2] != 1 {
		t.Fatalf("commands %v, want [-0.25 0 1]", cmd)
	}
	// Short slices must not panic.
	g.Tick(0.1, nil, cmd[:1])
}
