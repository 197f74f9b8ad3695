package sim

import "fmt"

// NudgeScrew moves an actuator's screw position by delta (m or rad) at
// once, as if the nut had slipped: the next step drags the output along.
// Nothing else moves, so the kick is a clean step into the loop at the
// screw, which is where the studies break a loop to measure what the rest
// of it does (the linearisation and the describing function).
func (p *Plant) NudgeScrew(actuator string, delta float64) error {
	if !finite(delta) {
		return fmt.Errorf("sim: nudge %g is not finite", delta)
	}
	for i := range p.acts {
		if p.acts[i].name == actuator {
			p.acts[i].screw += delta
			return nil
		}
	}
	return fmt.Errorf("sim: no actuator %q", actuator)
}
