package modes

import (
	"fmt"
	"math"
	"slices"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// Measure runs the rig once per kick and once unkicked, and returns the
// difference of the named output columns from the kick on, scaled by each
// kick's size and decimated to at most maxSamples rows. The kicks land
// after opt.Settle, on a controller tick.
func Measure(r *rig.Rig, opt Options, kicks []Kick, outputs []string, maxSamples int) (*Responses, error) {
	p0, _, err := r.Build(sim.Options{Seed: opt.Seed})
	if err != nil {
		return nil, err
	}
	for _, name := range outputs {
		if p0.Recorder().Index(name) < 0 {
			return nil, fmt.Errorf("modes: no recorded column %q", name)
		}
	}
	rate := r.ControlRate()
	m := measurement{rig: r, opt: opt, outputs: outputs, rate: rate, settle: math.Ceil(opt.Settle*rate-1e-9) / rate}
	base, err := m.run(nil)
	if err != nil {
		return nil, err
	}
	n := int(math.Floor(opt.Span * rate))
	dec := max(1, (n+maxSamples-1)/maxSamples)
	samples := n / dec
	p, nk := len(outputs), len(kicks)
	res := &Responses{Outputs: outputs, Kicks: kicks, T: float64(dec) / rate, Y: make([][]float64, samples+1)}
	for k := range res.Y {
		res.Y[k] = make([]float64, p*nk)
	}
	for j := range kicks {
		cols, err := m.run(&kicks[j])
		if err != nil {
			return nil, err
		}
		for i := range outputs {
			for k := 1; k <= samples; k++ {
				// Row 0 is the tick at the kick; row k*dec is k samples on.
				res.Y[k][i*nk+j] = (cols[i][k*dec] - base[i][k*dec]) / kicks[j].Size
			}
		}
	}
	return res, nil
}

// measurement is the setting of the runs of Measure.
type measurement struct {
	rig     *rig.Rig
	opt     Options
	outputs []string
	rate    float64 // of the controller, Hz
	settle  float64 // s before the kick
}

// run runs the rig with kick k (nil: none) and returns the output columns
// from the tick at the kick on.
func (m *measurement) run(k *Kick) ([][]float64, error) {
	o := sim.Options{Seed: m.opt.Seed}
	if k != nil && k.Actuator == "" {
		o.Shoves = []sim.Shove{{At: m.settle, Impulse: k.Shove}}
	}
	p, _, err := m.rig.Build(o)
	if err != nil {
		return nil, err
	}
	if err := p.RunFor(m.settle); err != nil {
		return nil, fmt.Errorf("modes: while settling: %w", err)
	}
	if k != nil && k.Actuator != "" {
		if err := p.NudgeScrew(k.Actuator, k.Size); err != nil {
			return nil, err
		}
	}
	if err := p.RunFor(m.opt.Span + 2/m.rate); err != nil {
		return nil, fmt.Errorf("modes: after kick %s: %w", kickName(k), err)
	}
	rec := p.Recorder()
	t := rec.Column("time")
	i0 := slices.IndexFunc(t, func(v float64) bool { return v > m.settle-0.5/m.rate })
	cols := make([][]float64, len(m.outputs))
	for i, name := range m.outputs {
		cols[i] = rec.Column(name)[i0:]
	}
	return cols, nil
}

func kickName(k *Kick) string {
	if k == nil {
		return "none"
	}
	return k.Name
}

// ScrewKicks nudges each lead screw in turn, by opt.Nudge or 0.1 mm
// (0.1 deg for a rotary screw).
func ScrewKicks(r *models.Robot, opt Options) []Kick {
	var ks []Kick
	for _, a := range r.Actuators {
		if a.Kind != models.LeadScrew || a.Ballast {
			continue
		}
		size := opt.Nudge
		if size <= 0 {
			size = 1e-4 // 0.1 mm
			if Rotary(r, &a) {
				size = 0.1 * math.Pi / 180
			}
		}
		ks = append(ks, Kick{Name: "nudge " + a.Name, Actuator: a.Name, Size: size})
	}
	return ks
}

// Rotary reports an actuator that turns a revolute joint.
func Rotary(r *models.Robot, a *models.Actuator) bool {
	if a.Joint == "" {
		return false
	}
	for _, j := range r.Joints {
		if j.Name == a.Joint {
			return j.Kind == models.Revolute
		}
	}
	return false
}
