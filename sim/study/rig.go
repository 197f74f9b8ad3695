package study

import (
	"errors"
	"fmt"
	"strings"
	"time"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
)

// Rig is a robot with the controller that keeps it up and the gains to use:
// everything needed to build plants for it, as many times as a study wants.
type Rig struct {
	Robot *models.Robot
	// Spec is the controller graph; nil drives the robot with sim.HoldPose.
	Spec *control.Spec
	// Gains, when set, override the graph's parameters after it is built.
	Gains *control.GainSet
}

// LoadRig loads a robot (a file or builtin:NAME) and finds its controller:
// controllerFile if given (a file or builtin:NAME), else the robot file's controller section, else
// the built-in controller of a built-in robot. gainsFile, if given, is a gain
// set applied on top.
func LoadRig(model, controllerFile, gainsFile string) (*Rig, error) {
	robot, err := models.Load(model)
	if err != nil {
		return nil, err
	}
	rig := &Rig{Robot: robot}
	switch {
	case strings.HasPrefix(controllerFile, "builtin:"):
		rig.Spec, err = control.Builtin(strings.TrimPrefix(controllerFile, "builtin:"))
	case controllerFile != "":
		rig.Spec, err = control.ParseFile(controllerFile)
	case robot.Controller != nil:
		rig.Spec, err = control.Parse(robot.Controller)
	case strings.HasPrefix(model, "builtin:"):
		rig.Spec, err = control.Builtin(strings.TrimPrefix(model, "builtin:"))
	}
	if err != nil {
		return nil, err
	}
	if gainsFile != "" {
		if rig.Spec == nil {
			return nil, fmt.Errorf("%s: gains given, but robot %s has no controller", gainsFile, model)
		}
		gs, err := control.ReadGains(gainsFile)
		if err != nil {
			return nil, err
		}
		rig.Gains = &gs
	}
	// Build once to report a controller that does not fit the robot now,
	// rather than in the middle of a study.
	if _, _, err := rig.Build(sim.Options{}); err != nil {
		return nil, err
	}
	return rig, nil
}

// Controller builds the rig's controller graph, bound to the robot's sensor
// channels and actuators, with the rig's gains applied. It returns nil for a
// rig with no controller graph.
func (r *Rig) Controller() (*control.Graph, error) {
	if r.Spec == nil {
		return nil, nil
	}
	g, err := control.Build(r.Spec, models.Channels(r.Robot), models.ActuatorNames(r.Robot))
	if err != nil {
		return nil, err
	}
	if r.Gains != nil {
		if err := g.Apply(*r.Gains); err != nil {
			return nil, err
		}
	}
	return g, nil
}

// Build makes a fresh plant and controller. The controller rate comes from
// the graph unless opt sets one.
func (r *Rig) Build(opt sim.Options) (*sim.Plant, *control.Graph, error) {
	g, err := r.Controller()
	if err != nil {
		return nil, nil, err
	}
	var c sim.Controller
	if g != nil {
		c = g
		if opt.ControlRate == 0 {
			opt.ControlRate = g.Rate()
		}
	} else {
		c = sim.NewHoldPose()
	}
	p, err := sim.New(r.Robot, c, opt)
	if err != nil {
		return nil, nil, err
	}
	return p, g, nil
}

// Summary is what one run comes to.
type Summary struct {
	Fell           bool    `json:"fell"`
	FallTime       float64 `json:"fall_time_s"`
	FallReason     string  `json:"fall_reason"`
	PeakTilt       float64 `json:"peak_tilt_deg"`
	FinalTilt      float64 `json:"final_tilt_deg"`
	SimSeconds     float64 `json:"sim_seconds"`
	WallSeconds    float64 `json:"wall_seconds"`
	RealtimeFactor float64 `json:"realtime_factor"`
}

// Run builds a plant and runs it for duration seconds of simulated time, or
// until the robot falls. A fall is a result, not an error; a blow-up or a
// bad model is an error. The plant is returned for its recording.
func (r *Rig) Run(duration float64, opt sim.Options) (*sim.Plant, Summary, error) {
	p, _, err := r.Build(opt)
	if err != nil {
		return nil, Summary{}, err
	}
	start := time.Now()
	err = p.RunFor(duration)
	wall := time.Since(start).Seconds()
	if err != nil && !errors.Is(err, sim.ErrFallen) {
		return p, Summary{}, err
	}
	s := summarise(p)
	s.WallSeconds = wall
	if wall > 0 {
		s.RealtimeFactor = s.SimSeconds / wall
	}
	return p, s, nil
}
