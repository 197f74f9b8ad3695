package sim

import "fmt"

func (p *Plant) actuatorNamed(name string) (*actuator, error) {
	for i := range p.acts {
		if p.acts[i].name == name {
			return &p.acts[i], nil
		}
	}
	return nil, fmt.Errorf("sim: no actuator %q", name)
}

// OffsetCommand adds offset (a fraction of full PWM) to the controller's
// command for an actuator from the next controller tick on, until changed;
// a Saved state holds it. The recorded command includes it. It breaks the
// loop at the motor's input, as NudgeScrew does at the screw, for the
// studies that measure what the rest of the loop does with a command.
func (p *Plant) OffsetCommand(actuator string, offset float64) error {
	if !finite(offset) {
		return fmt.Errorf("sim: command offset %g is not finite", offset)
	}
	a, err := p.actuatorNamed(actuator)
	if err == nil {
		a.offset = offset
	}
	return err
}

// NudgeScrew moves an actuator's screw position by delta (m or rad) at
// once, as if the nut had slipped: the next step drags the output along.
// Nothing else moves, so the kick is a clean step into the loop at the
// screw, which is where the studies break a loop to measure what the rest
// of it does (the linearisation and the describing function).
func (p *Plant) NudgeScrew(actuator string, delta float64) error {
	if !finite(delta) {
		return fmt.Errorf("sim: nudge %g is not finite", delta)
	}
	a, err := p.actuatorNamed(actuator)
	if err == nil {
		a.screw += delta
	}
	return err
}
