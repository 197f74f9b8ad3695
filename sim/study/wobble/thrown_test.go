package wobble

import (
	"math"
	"math/cmplx"
	"strings"
	"testing"
)

// fundamental is the first Fourier coefficient of out(th) over two
// periods, the second kept, over the input amplitude a: the describing
// function by its definition (Gelb and Vander Velde, 1968, ch. 1), for an
// input a sin(th) (in phase is the sin part, the cos part leads).
func fundamental(a float64, out func(th float64) float64) complex128 {
	const n = 200000
	var s, c float64
	for period := 0; period < 2; period++ {
		s, c = 0, 0
		for i := 0; i < n; i++ {
			th := 2 * math.Pi * float64(i) / n
			o := out(th)
			s += o * math.Sin(th)
			c += o * math.Cos(th)
		}
	}
	return complex(2*s/n/a, 2*c/n/a)
}

// thrownPlay steps the play thrown by its load: the gap goes to +half
// when the force rises past +friction, to -half when it falls past
// -friction, and otherwise stays.
func thrownPlay(static, f1, width, friction float64) func(th float64) float64 {
	gap := -width / 2
	return func(th float64) float64 {
		switch f := static + f1*math.Sin(th); {
		case f > friction:
			gap = width / 2
		case f < -friction:
			gap = -width / 2
		}
		return gap
	}
}

func TestThrownPlayAgainstItsFundamental(t *testing.T) {
	const width = 1e-3
	for _, c := range []struct{ static, f1, friction float64 }{
		{0, 2, 0}, {0, 8, 5}, {9.8, 20, 5}, {-9.8, 20, 5}, {6, 12, 5.03}, {0.8, 1, 0.1}, {3, 100, 1},
	} {
		got := ThrownPlayDF(c.f1, width, c.friction, c.static)
		want := fundamental(c.f1, thrownPlay(c.static, c.f1, width, c.friction))
		if cmplx.Abs(got-want) > 1e-3*cmplx.Abs(want) {
			t.Errorf("static %g, swing %g, friction %g: DF %v, numerical fundamental %v", c.static, c.f1, c.friction, got, want)
		}
	}
	if ThrownPlayDF(14.9, width, 5, 9.9) != 0 {
		t.Error("a swing that never beats the standing load and the friction crosses the play")
	}
}

func TestThrownPlayUnbiasedIsTheRelayWithHysteresis(t *testing.T) {
	// A relay of output +-d with hysteresis e, for an input a sin wt:
	// N = (4d/(pi a)) (sqrt(1 - (e/a)^2) - j e/a) (Astrom and Hagglund,
	// PID Controllers: Theory, Design, and Tuning, 1995, sec. 2.9; Gelb
	// and Vander Velde, 1968, ch. 2).
	const width, e = 2e-3, 3.0
	for _, a := range []float64{3.5, 5, 10, 40} {
		d := width / 2
		want := complex(4*d/(math.Pi*a), 0) * complex(math.Sqrt(1-(e/a)*(e/a)), -e/a)
		if got := ThrownPlayDF(a, width, e, 0); cmplx.Abs(got-want) > 1e-12 {
			t.Errorf("a %g: %v, textbook %v", a, got, want)
		}
	}
}

func TestDeadbandAgainstItsFundamental(t *testing.T) {
	const d = 0.05
	for _, a := range []float64{0.051, 0.06, 0.1, 0.3, 1} {
		want := fundamental(a, func(th float64) float64 {
			if u := a * math.Sin(th); math.Abs(u) >= d {
				return u
			}
			return 0
		})
		if got := DeadbandDF(a, d); math.Abs(got-real(want)) > 1e-4 || math.Abs(imag(want)) > 1e-4 {
			t.Errorf("a %g: DF %g, numerical fundamental %v", a, got, want)
		}
	}
	if DeadbandDF(0.049, d) != 0 {
		t.Error("a command inside the deadband turns the motor")
	}
}

func TestVectorBalanceOnTwoLoopsInOne(t *testing.T) {
	// Two screws' plays, each fed half of the servo's loop -G/(1+G),
	// G = 5/(s(s+1)), from both gaps: the two turn together, so the
	// balance is the one play of the servo, worked by hand (see
	// TestBacklashCycleOnKnownLoop; Slotine and Li, 1991, sec. 5.4): the
	// screws swing 0.1010 at 1.591 rad/s. Started 20 % off in amplitude,
	// unequal, and 12 % off in frequency.
	const width = 0.1
	const wantA, wantW = servoA, servoW
	r := func(w float64) cmat {
		g := servo(w)
		half := -g / (1 + g) / 2
		m := newCmat(2, 2)
		for i := range m.v {
			m.v[i] = half
		}
		return m
	}
	plays := []element{newPlay(width, 1, 0), newPlay(width, 1, 0)}
	if plays[0].(play).thrown {
		t.Fatal("an unloaded screw taken for one whose load throws the play")
	}
	// The servo's gap at the hand solution: e = (Nb - 1) x.
	gap := (BacklashDF(wantA, width) - 1) * wantA
	e0 := newCmat(2, 1)
	e0.v[0], e0.v[1] = gap*1.2, gap*1.1
	e, w, resid, ok := vectorBalance(plays, r, e0, wantW*0.88)
	if !ok {
		t.Fatalf("no balance (residual %g)", resid)
	}
	u := r(w).mul(e)
	for i := range 2 {
		if a := cmplx.Abs(u.v[i]); math.Abs(a-wantA)/wantA > 0.03 || math.Abs(w-wantW)/wantW > 0.03 {
			t.Errorf("screw %d swings %.4g at %.4g rad/s; by hand %.4g at %.4g", i, a, w, wantA, wantW)
		}
	}
}

// loopResponse is the Response of one screw whose joint friction holds it
// (classic play) in the loop g: the screw x = -g y from the output y, so
// per unit of gap y - x the screw moves -g/(1+g). The tilt reads the
// screw.
func loopResponse(g func(w float64) complex128) *Response {
	r := &Response{Actuators: []string{"screw"}, Rotary: []bool{false},
		StaticLoad: []float64{0}, Friction: []float64{1}, Deadband: []float64{0}, Stall: []float64{math.Inf(1)}}
	one := func(v complex128) cmat { m := newCmat(1, 1); m.v[0] = v; return m }
	for i := range 120 {
		hz := 0.02 * math.Pow(250, float64(i)/119)
		x := -g(2*math.Pi*hz) / (1 + g(2*math.Pi*hz))
		r.Hz = append(r.Hz, hz)
		r.X, r.Y, r.Tilt = append(r.X, one(x)), append(r.Y, one(1+x)), append(r.Tilt, one(x))
		r.Load, r.Command, r.Offset = append(r.Load, one(0)), append(r.Command, one(0)), append(r.Offset, newCmat(0, 1))
	}
	return r
}

func TestPredictionOnKnownLoops(t *testing.T) {
	// The hand-worked servo (TestBacklashCycleOnKnownLoop; Slotine and
	// Li, 1991, sec. 5.4) through the whole prediction: the screw swings
	// 0.1010 at 1.591 rad/s.
	p := loopResponse(servo).Alone(0, 0.1)
	if w := 2 * math.Pi * p.FrequencyHz; !p.Found || math.Abs(p.ScrewAmp-servoA)/servoA > 0.03 || math.Abs(w-servoW)/servoW > 0.03 {
		t.Errorf("servo: found %v (%s), screw %.4g at %.4g rad/s; by hand %.4g at %.4g", p.Found, p.Why, p.ScrewAmp, w, servoA, servoW)
	}
	// 10/(s+1)^3 closes unstable (Routh: above a gain of 8) and is stable
	// open: small swings, the play open, die out, large ones, the play
	// closed, grow. The one balance between is an unstable cycle (Gelb
	// and Vander Velde, 1968, ch. 2), which must be named, not predicted.
	cubic := func(w float64) complex128 { s := complex(1, w); return 10 / (s * s * s) }
	p = loopResponse(cubic).Alone(0, 0.1)
	if p.Found || !strings.HasPrefix(p.Why, "not valid here: the balance has only an unstable cycle") {
		t.Errorf("10/(s+1)^3: found %v, %.3g at %.3g Hz (%s): want the unstable cycle named", p.Found, p.ScrewAmp, p.FrequencyHz, p.Why)
	}
}
