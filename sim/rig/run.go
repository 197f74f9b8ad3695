package rig

import (
	"errors"
	"math"

	"teeter/sim"
)

// Summary is what one run comes to.
type Summary struct {
	Fell       bool    `json:"fell"`
	FallTime   float64 `json:"fall_time_s"`
	FallReason string  `json:"fall_reason"`
	PeakTilt   float64 `json:"peak_tilt_deg"`
	FinalTilt  float64 `json:"final_tilt_deg"`
	SimSeconds float64 `json:"sim_seconds"`
}

// Outcome is one finished run, ready to be measured.
type Outcome struct {
	Summary Summary
	Rec     *sim.Recorder
	// DisturbAt is when the last shove landed (0 without shoves): settling
	// time, overshoot, ITAE and damping count from there.
	DisturbAt float64
	// Duration is the simulated time asked for.
	Duration float64
	// Slip is the pads' x travel while loaded, m, summed over pads.
	Slip float64
}

// slipLoad is the pad force above which a pad counts as loaded.
const slipLoad = 1.0 // N

// slipEvery is how many physics steps pass between the samples of pad
// positions for the slip.
const slipEvery = 5

// Run builds a plant, runs it for duration seconds of simulated time or
// until the robot falls, and returns what there is to measure. A fall is an
// outcome; a blow-up, a failing controller or a bad model is an error. A
// failing controller also returns the outcome up to its failure, so that
// the recording of what led to it is kept.
func (r *Rig) Run(duration float64, opt sim.Options) (*Outcome, error) {
	p, _, prog, err := r.build(opt)
	if err != nil {
		return nil, err
	}
	if prog != nil {
		defer prog.Close() // a program that ends badly after the run does not spoil it
	}
	o := &Outcome{Duration: duration}
	for _, s := range opt.Shoves {
		o.DisturbAt = math.Max(o.DisturbAt, s.At)
	}
	n := int(math.Round(duration * p.PhysicsRate()))
	var snap sim.Snapshot
	var lastX []float64
	for i := 0; i < n; i++ {
		if i%slipEvery == 0 {
			p.Snapshot(&snap)
			o.Slip += slip(snap.Pads, lastX)
			lastX = padX(snap.Pads, lastX)
		}
		if err = p.Step(); err != nil {
			break
		}
	}
	if err != nil && !errors.Is(err, sim.ErrFallen) && !errors.Is(err, sim.ErrController) {
		return nil, err
	}
	o.Rec = p.Recorder()
	o.Summary = summarise(p)
	if errors.Is(err, sim.ErrController) {
		return o, err
	}
	return o, nil
}

// slip is how far the loaded pads moved along x since lastX (nil: the
// first sample, no travel yet).
func slip(pads []sim.PadState, lastX []float64) float64 {
	if lastX == nil {
		return 0
	}
	s := 0.0
	for k, pd := range pads {
		if pd.Force > slipLoad {
			s += math.Abs(pd.Position.X - lastX[k])
		}
	}
	return s
}

// padX stores the pads' x positions in dst, allocating it the first time.
func padX(pads []sim.PadState, dst []float64) []float64 {
	if dst == nil {
		dst = make([]float64, len(pads))
	}
	for k, pd := range pads {
		dst[k] = pd.Position.X
	}
	return dst
}

// summarise fills a Summary from a finished plant.
func summarise(p *sim.Plant) Summary {
	s := Summary{SimSeconds: p.Time()}
	if fall, fell := p.Fall(); fell {
		s.Fell, s.FallTime, s.FallReason = true, fall.Time, fall.Reason
	}
	tilt := p.Recorder().Column("torso_tilt")
	for _, v := range tilt {
		s.PeakTilt = math.Max(s.PeakTilt, math.Abs(v))
	}
	s.PeakTilt *= 180 / math.Pi
	if n := len(tilt); n > 0 {
		s.FinalTilt = tilt[n-1] * 180 / math.Pi
	}
	return s
}
