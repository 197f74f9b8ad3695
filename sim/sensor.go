package sim

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// sensor samples at its own rate, at the first physics step at or after
// each sample time, adds a bias and seeded Gaussian noise, and delivers the
// sample taken Latency samples earlier.
type sensor struct {
	m         *models.Sensor
	link      *link
	jnt       *joint
	act       *actuator
	pad       *pad
	rng       *rand.Rand
	pcg       *rand.PCG // rng's source, for Save
	noise     float64   // scaled by the robot's NoiseScale
	rateNoise float64
	stepsPer  float64 // physics steps per sample
	taken     int64
	nch       int
	ring      []float64 // (Latency+1) samples of nch values
	out       []float64 // this sensor's part of the readings
	// IMU: the link's centre-of-mass velocity last step and the
	// acceleration finite-differenced from it.
	prevV, accel cp.Vector
}

func (p *Plant) buildSensors(seed uint64) error {
	r := p.robot
	p.sensors = make([]sensor, len(r.Sensors))
	for i := range r.Sensors {
		ms := &r.Sensors[i]
		s := &p.sensors[i]
		pcg := rand.NewPCG(seed, uint64(i))
		*s = sensor{m: ms, rng: rand.New(pcg), pcg: pcg,
			noise: ms.Noise * r.NoiseScale, rateNoise: ms.RateNoise * r.NoiseScale}
		if !(ms.Rate > 0) || !finite(ms.Rate) {
			return fmt.Errorf("sensor %q: rate %g Hz must be positive", ms.Name, ms.Rate)
		}
		if ms.Latency < 0 {
			return fmt.Errorf("sensor %q: latency %d may not be negative", ms.Name, ms.Latency)
		}
		s.stepsPer = p.physRate / ms.Rate
		switch ms.Kind {
		case models.IMU:
			if s.link = p.link(ms.Link); s.link == nil {
				return fmt.Errorf("sensor %q: link %q is not a link", ms.Name, ms.Link)
			}
			s.nch = 3
		case models.JointPosition:
			s.nch = 1
			switch {
			case ms.Joint != "":
				if s.jnt = p.joint(ms.Joint); s.jnt == nil {
					return fmt.Errorf("sensor %q: joint %q is not a joint", ms.Name, ms.Joint)
				}
			case ms.Actuator != "":
				if s.act = find(p.acts, ms.Actuator, func(a *actuator) string { return a.name }); s.act == nil {
					return fmt.Errorf("sensor %q: actuator %q is not an actuator", ms.Name, ms.Actuator)
				}
			default:
				return fmt.Errorf("sensor %q: reads neither a joint nor an actuator", ms.Name)
			}
		case models.FootLoad:
			s.nch = 1
			if s.pad = find(p.pads, ms.Pad, func(d *pad) string { return d.name }); s.pad == nil {
				return fmt.Errorf("sensor %q: pad %q is not a pad", ms.Name, ms.Pad)
			}
		default:
			return fmt.Errorf("sensor %q: unknown kind %q", ms.Name, ms.Kind)
		}
		s.ring = make([]float64, (ms.Latency+1)*s.nch)
	}
	return nil
}

// sample takes the samples due at this step and delivers them.
func (p *Plant) sample() {
	at := 0
	for i := range p.sensors {
		s := &p.sensors[i]
		s.out = p.readings[at : at+s.nch]
		at += s.nch
		if float64(p.step) < float64(s.taken)*s.stepsPer-1e-6 {
			continue
		}
		lat := int64(s.m.Latency)
		slot := int(s.taken%(lat+1)) * s.nch
		s.measure(s.ring[slot : slot+s.nch])
		older := s.taken - min(s.taken, lat)
		slot = int(older%(lat+1)) * s.nch
		copy(s.out, s.ring[slot:slot+s.nch])
		s.taken++
	}
}

func (s *sensor) measure(dst []float64) {
	m := s.m
	switch m.Kind {
	case models.IMU:
		b := s.link.body
		dst[0] = tilt(b) + m.Bias + s.noise*s.rng.NormFloat64()
		dst[1] = b.AngularVelocity() + m.RateBias + s.rateNoise*s.rng.NormFloat64()
		// The accelerometer feels the specific force a - g; its direction
		// in the link frame gives the tilt from vertical.
		f := s.accel.Add(cp.Vector{Y: Gravity}).Unrotate(b.Rotation())
		dst[2] = math.Atan2(f.X, f.Y) + m.Bias + s.noise*s.rng.NormFloat64()
	case models.JointPosition:
		var v float64
		if s.jnt != nil {
			v = s.jnt.position()
		} else {
			v = s.act.output()
		}
		v += m.Bias + s.noise*s.rng.NormFloat64()
		if m.Max > m.Min {
			v = math.Min(math.Max(v, m.Min), m.Max)
			if m.Bits > 0 && m.Bits < 63 {
				q := (m.Max - m.Min) / float64(uint64(1)<<m.Bits-1)
				v = m.Min + math.Round((v-m.Min)/q)*q
			}
		}
		dst[0] = v
	case models.FootLoad:
		dst[0] = s.pad.force + m.Bias + s.noise*s.rng.NormFloat64()
	}
}

// afterStep differentiates an IMU link's velocity.
func (s *sensor) afterStep(dt float64) {
	if s.link == nil {
		return
	}
	v := s.link.body.Velocity()
	s.accel = v.Sub(s.prevV).Mult(1 / dt)
	s.prevV = v
}
