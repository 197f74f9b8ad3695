package sim

import "math"

// HoldPose is a stand-in controller that drives every actuator back to the
// position it had when the plant was built, with a proportional command on
// the true screw position error (for a torque motor, the output's). It
// reads the plant's actuators directly, so it only works on the plant it is
// given to (New or SetController).
type HoldPose struct {
	// TimeConstant is the closed loop's time constant, s (default 0.05):
	// the command is error / (no-load speed * TimeConstant).
	TimeConstant float64
	p            *Plant
	targets      []float64
}

func (h *HoldPose) attach(p *Plant) {
	h.p = p
	h.targets = make([]float64, len(p.acts))
	for i := range p.acts {
		h.targets[i] = p.acts[i].screw
	}
}

// Reset does nothing: the targets are fixed when attached.
func (h *HoldPose) Reset() {}

// Tick commands each actuator towards its target.
func (h *HoldPose) Tick(now float64, readings, commands []float64) {
	if h.p == nil {
		return
	}
	tc := h.TimeConstant
	if !(tc > 0) {
		tc = 0.05
	}
	for i := range commands {
		a := &h.p.acts[i]
		v0 := a.m.NoLoadSpeed
		if !(v0 > 0) {
			v0 = 0.01 // a torque motor may give none: 10 mm/s or 10 mrad/s as the scale
		}
		commands[i] = math.Max(-1, math.Min(1, (h.targets[i]-a.screw)/(v0*tc)))
	}
}

// NewHoldPose returns a hold-pose controller; it takes its targets from the
// plant it is given to.
func NewHoldPose() *HoldPose { return &HoldPose{} }
