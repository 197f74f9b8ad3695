package control

import "math"

func parsePID(r *reader) {
	r.number("kp", num{m: mNumber, min: 0, max: inf})
	r.number("ki", num{m: mPerTime, min: 0, max: inf})
	r.number("kd", num{m: mTimeGain, min: 0, max: inf})
	r.number("b", num{m: mNumber, def: 1, min: 0, max: 1})
	_, hasTf := r.v.Get("tf")
	_, hasN := r.v.Get("n")
	if hasTf && hasN {
		r.add(r.pos, "tf", "give the derivative filter as tf or as n, not both")
		r.field("tf")
	}
	if hasN {
		r.number("n", num{m: mNumber, def: 10, min: 1, max: 1000})
		r.b.Options["filter"] = "n"
	} else {
		r.number("tf", num{m: mDuration, min: 0, max: inf})
	}
	if r.limits("limits", mSignal, false) {
		r.text("anti_windup", "conditional", false, "conditional", "back_calculation", "none")
		r.number("tt", num{m: mDuration, min: 0, max: inf})
	}
	r.number("on", num{m: mNumber, def: 1, min: 0, max: 1})
	r.inputs("setpoint", "measurement")
	r.outputs("out", "p", "i", "d")
}

const (
	windupNone = iota
	windupConditional
	windupBackCalculation
)

// pidBlock is the parallel PID of Astrom and Hagglund (Advanced PID Control,
// 2006, ch. 3 and 13):
//
//	u = kp*(b*r - y) + ki*integral(r - y) + D,  Tf*dD/dt + D = -kd*dy/dt
//
// with the derivative on the measurement only, so a setpoint step does not
// kick it. The integral term I is kept as a state (not ki times the integral
// of the error) so that changing ki changes nothing at once, and a change of
// kp or b moves I by the difference of the proportional terms so that u is
// continuous. D uses the backward difference, stable for any Tf >= 0.
type pidBlock struct {
	ports
	kp, ki, kd, b float64
	tf, n         float64
	useN          bool
	limited       bool
	lo, hi        float64
	windup        int
	tt            float64
	on            float64 // the loop runs at 0.5 and above; off, every output is 0

	integral, deriv, lastY float64
	started                bool
	// oldKp and oldB are the gains before a change waiting to be absorbed.
	retune      bool
	oldKp, oldB float64
}

func buildPID(b *BlockSpec, c *buildContext) block {
	p := &pidBlock{ports: c.ports()}
	c.bind(b, "kp", &p.kp)
	c.bind(b, "ki", &p.ki)
	c.bind(b, "kd", &p.kd)
	c.bind(b, "b", &p.b)
	if b.Options["filter"] == "n" {
		p.useN = true
		c.bind(b, "n", &p.n)
	} else {
		c.bind(b, "tf", &p.tf)
	}
	if b.param("min") != nil {
		p.limited = true
		c.bind(b, "min", &p.lo)
		c.bind(b, "max", &p.hi)
		c.bind(b, "tt", &p.tt)
		switch b.Options["anti_windup"] {
		case "back_calculation":
			p.windup = windupBackCalculation
		case "none":
			p.windup = windupNone
		default:
			p.windup = windupConditional
		}
	}
	c.bind(b, "on", &p.on)
	return p
}

// beforeRetune records the gains in force before a parameter change, once
// per tick however many parameters change.
func (p *pidBlock) beforeRetune() {
	if !p.retune {
		p.retune, p.oldKp, p.oldB = true, p.kp, p.b
	}
}

func (p *pidBlock) reset(g *Graph) {
	p.integral, p.deriv, p.lastY, p.started, p.retune = 0, 0, 0, false, false
	for i := 0; i < 4; i++ {
		g.vals[p.out+i] = 0
	}
}

func (p *pidBlock) stateLen() int { return 4 }
func (p *pidBlock) saveState(dst []float64) {
	dst[0], dst[1], dst[2], dst[3] = p.integral, p.deriv, p.lastY, flag(p.started)
}
func (p *pidBlock) loadState(src []float64) {
	p.integral, p.deriv, p.lastY, p.started = src[0], src[1], src[2], isSet(src[3])
}

// filterTime is the derivative filter time constant: tf, or Td/N with
// Td = kd/kp when the filter is given as N.
func (p *pidBlock) filterTime() float64 {
	if !p.useN {
		return p.tf
	}
	if p.kp <= 0 || p.n <= 0 {
		return 0
	}
	return p.kd / (p.kp * p.n)
}

// trackingTime is the back-calculation time constant: tt when given, else
// sqrt(Ti*Td), or Ti/2 without derivative action (Astrom and Hagglund's
// rule of thumb), never below one tick.
func (p *pidBlock) trackingTime(h float64) float64 {
	tt := p.tt
	if tt <= 0 {
		switch {
		case p.ki <= 0:
			tt = h
		case p.kp <= 0:
			tt = 1 / p.ki
		default:
			ti, td := p.kp/p.ki, p.kd/p.kp
			if td > 0 {
				tt = math.Sqrt(ti * td)
			} else {
				tt = ti / 2
			}
		}
	}
	return math.Max(tt, h)
}

func (p *pidBlock) tick(g *Graph) {
	r, y := p.input(g, 0), p.input(g, 1)
	h := g.h
	if !p.started {
		// A change before the first tick has no earlier output to keep
		// smooth: the first output is the new gains' own.
		p.lastY, p.started, p.retune = y, true, false
	}
	if p.retune {
		p.integral += p.oldKp*(p.oldB*r-y) - p.kp*(p.b*r-y)
		p.retune = false
	}
	tf := p.filterTime()
	p.deriv = (tf*p.deriv - p.kd*(y-p.lastY)) / (tf + h)
	prop := p.kp * (p.b*r - y)
	if p.on < 0.5 {
		// Off: every output 0, the derivative following the measurement
		// and, with integral action, the integral tracking so that the
		// output starts from 0 when the loop is switched on (bumpless
		// transfer, Astrom and Hagglund 2006, from memory).
		if p.ki > 0 {
			p.integral = -(prop + p.deriv)
		}
		g.vals[p.out], g.vals[p.out+1], g.vals[p.out+2], g.vals[p.out+3] = 0, 0, 0, 0
		p.lastY = y
		return
	}
	v := prop + p.integral + p.deriv
	u := v
	if p.limited {
		u = clamp(v, p.lo, p.hi)
	}
	e := r - y
	g.vals[p.out], g.vals[p.out+1], g.vals[p.out+2], g.vals[p.out+3] = u, prop, p.integral, p.deriv
	switch {
	case !p.limited || p.windup == windupNone:
		p.integral += p.ki * h * e
	case p.windup == windupConditional:
		// Hold the integral while the output is saturated and the error
		// would drive it further in.
		if !(v > p.hi && e > 0) && !(v < p.lo && e < 0) {
			p.integral += p.ki * h * e
		}
	default:
		p.integral += p.ki*h*e + h/p.trackingTime(h)*(u-v)
	}
	p.lastY = y
}
