// Package rig is the only place that joins a robot, its controller graph and
// a gain set. It finds a robot's controller, decides the control rate,
// builds plants, runs and measures them, and makes the parameter variants
// that sweeps and tuning try. The command line, the window and every study
// go through it; neither sim nor control imports it.
package rig

import (
	"fmt"
	"slices"
	"strings"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/sil"
)

// Rig is a robot with the controller that keeps it up and the gains to use:
// everything needed to build plants for it, as many times as a study wants.
type Rig struct {
	Robot *models.Robot
	// Spec is the controller graph; nil drives the robot with sim.HoldPose.
	Spec *control.Spec
	// Gains, when set, override the graph's parameters after it is built.
	Gains *control.GainSet
	// Program, when set, drives the robot in place of the graph. It ticks
	// at ControlRate, and the gains are sent to it as parameter changes
	// before its first tick.
	Program *Program
	// PhysicsRate, when set, is the physics step rate of every plant built,
	// Hz, over the robot file's physics_rate (default 1 kHz).
	PhysicsRate float64
	// RecordRate, when set, is the rate of the recording's rows, Hz: the
	// physics rate or a whole fraction of it; else a row per control tick.
	RecordRate float64
}

// NoController is what Load takes for "no controller": every screw is held
// where it starts.
const NoController = "none"

// Notice says what a user should know before running the rig, or "": that
// nothing drives a robot without a controller.
func (r *Rig) Notice() string {
	if r.Spec == nil && r.Program == nil {
		return fmt.Sprintf("robot %s runs without a controller: every screw is held where it starts, so nothing balances it", r.Robot.Name)
	}
	return ""
}

// Program is a controller program run in the loop over the line protocol
// (sim/sil).
type Program struct {
	Path string
	sil.Options
}

// Load loads a robot (a file or builtin:NAME) and finds its controller:
// controllerFile if given (a file, builtin:NAME or NoController), else the
// robot's own (see ControllerSection). gainsFile, if given, is a gain set
// applied on top.
func Load(model, controllerFile, gainsFile string) (*Rig, error) {
	robot, err := models.Load(model)
	if err != nil {
		return nil, err
	}
	r := &Rig{Robot: robot}
	switch {
	case controllerFile == NoController:
	case strings.HasPrefix(controllerFile, "builtin:"):
		r.Spec, err = control.Builtin(strings.TrimPrefix(controllerFile, "builtin:"))
	case controllerFile != "":
		r.Spec, err = control.ParseFile(controllerFile)
	default:
		r.Spec, err = Spec(robot)
	}
	if err != nil {
		return nil, err
	}
	if gainsFile != "" {
		if r.Spec == nil {
			return nil, fmt.Errorf("%s: gains given, but robot %s has no controller", gainsFile, model)
		}
		gs, err := control.ReadGains(gainsFile)
		if err != nil {
			return nil, err
		}
		r.Gains = &gs
	}
	// Build once to report a controller that does not fit the robot now,
	// rather than in the middle of a study.
	if _, _, err := r.Build(sim.Options{}); err != nil {
		return nil, err
	}
	return r, nil
}

// builtinController is the name of a built-in robot's built-in controller,
// or "" for a robot with none.
func builtinController(r *models.Robot) string {
	name, ok := strings.CutPrefix(r.Source, "builtin:")
	if !ok || !slices.Contains(control.BuiltinNames(), name) {
		return ""
	}
	return name
}

// Spec is a robot's own controller: its controller section, else the
// built-in controller of a built-in robot, else none (nil).
func Spec(r *models.Robot) (*control.Spec, error) {
	if r.Controller != nil {
		return control.Parse(r.Controller)
	}
	if name := builtinController(r); name != "" {
		return control.Builtin(name)
	}
	return nil, nil
}

// ControllerSection is the robot's own controller (as Spec finds it) as a
// value tree to edit: a copy of its controller section, else the built-in
// controller's.
func ControllerSection(r *models.Robot) (*models.Value, error) {
	if r.Controller != nil {
		v := r.Controller.Clone()
		return &v, nil
	}
	name := builtinController(r)
	if name == "" {
		return nil, fmt.Errorf("robot %s has no controller section to edit", r.Name)
	}
	data, err := control.BuiltinSource(name)
	if err != nil {
		return nil, err
	}
	root, err := models.ParseValue("builtin:"+name+".controller", data)
	if err != nil {
		return nil, err
	}
	if f, ok := root.Get("controller"); ok {
		v := f.Value
		return &v, nil
	}
	return &root, nil
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

// ControlRate is the rate the rig's controller ticks at: the graph's own
// rate, or sim.DefaultControlRate for sim.HoldPose.
func (r *Rig) ControlRate() float64 {
	if r.Spec == nil {
		return sim.DefaultControlRate
	}
	return r.Spec.Rate
}

// Build makes a fresh plant and controller. The controller ticks at
// ControlRate, the physics at PhysicsRate and the recording at RecordRate
// unless opt sets them. A controller program started for the
// plant is killed once the plant is dropped; the graph is nil then.
func (r *Rig) Build(opt sim.Options) (*sim.Plant, *control.Graph, error) {
	p, g, _, err := r.build(opt)
	return p, g, err
}

// build is Build that also returns the controller program it started, for
// a caller that closes it when done.
func (r *Rig) build(opt sim.Options) (*sim.Plant, *control.Graph, *sil.Controller, error) {
	if opt.ControlRate == 0 {
		opt.ControlRate = r.ControlRate()
	}
	if opt.PhysicsRate == 0 {
		opt.PhysicsRate = r.PhysicsRate
	}
	if opt.RecordRate == 0 {
		opt.RecordRate = r.RecordRate
	}
	if r.Program != nil {
		prog, err := r.startProgram(opt.ControlRate)
		if err != nil {
			return nil, nil, nil, err
		}
		p, err := sim.New(r.Robot, prog, opt)
		if err != nil {
			prog.Close()
			return nil, nil, nil, err
		}
		return p, nil, prog, nil
	}
	g, err := r.Controller()
	if err != nil {
		return nil, nil, nil, err
	}
	var c sim.Controller = sim.NewHoldPose()
	if g != nil {
		c = g
	}
	p, err := sim.New(r.Robot, c, opt)
	if err != nil {
		return nil, nil, nil, err
	}
	return p, g, nil, nil
}

func (r *Rig) startProgram(rate float64) (*sil.Controller, error) {
	rb := r.Robot
	prog, err := sil.Start(r.Program.Path, models.Channels(rb), models.ChannelUnits(rb), models.ActuatorNames(rb), rate, r.Program.Options)
	if err != nil {
		return nil, err
	}
	if r.Gains != nil {
		for _, g := range r.Gains.Gains {
			if err := prog.Set(g.Path, g.Value); err != nil {
				prog.Close()
				return nil, err
			}
		}
	}
	return prog, nil
}
