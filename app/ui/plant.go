package ui

import (
	"errors"
	"math"
	"sync/atomic"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/live"
	"teeter/sim/rig"
	"teeter/sim/sil"
)

// physicsRate is the plant's step rate in the window.
const physicsRate = 1000

// simPlant drives a sim.Plant one controller tick at a time for the runner.
type simPlant struct {
	p       *sim.Plant
	perTick int
	rec     *sim.Recorder
	prog    *sil.Controller // the controller program driving p, or nil
}

// withProgram builds with the controller program prog holds, when it holds
// one, else with build.
func withProgram(prog *atomic.Pointer[rig.Program], build live.Build[sim.Snapshot]) live.Build[sim.Snapshot] {
	return func(r *models.Robot) (live.Plant[sim.Snapshot], live.Tuner, error) {
		if p := prog.Load(); p != nil {
			return buildProgramPlant(r, p)
		}
		return build(r)
	}
}

// buildProgramPlant makes a plant driven by a controller program, at the
// rig's rate for a program. The program is started here rather than by
// rig.Build, which keeps it to itself: the runner closes the plant, and
// with it the program, when it builds the next.
func buildProgramPlant(r *models.Robot, program *rig.Program) (live.Plant[sim.Snapshot], live.Tuner, error) {
	rg := rig.Rig{Robot: r, Program: program}
	rate := math.Min(rg.ControlRate(), physicsRate)
	prog, err := sil.Start(program.Path, models.Channels(r), models.ChannelUnits(r), models.ActuatorNames(r), rate, program.Options)
	if err != nil {
		return nil, nil, err
	}
	p, err := sim.New(r, prog, plantOptions(rate))
	if err != nil {
		prog.Close()
		return nil, nil, err
	}
	sp := wrapPlant(p, rate)
	sp.prog = prog
	return sp, programTuner{prog}, nil
}

// programTuner sends the window's gain changes and sequence requests to a
// controller program. The protocol has no way to read a value back.
type programTuner struct{ *sil.Controller }

func (programTuner) Get(path string) (float64, error) {
	return 0, errors.New("a controller program's parameters cannot be read back")
}

// Close ends the controller program, if one drives the plant.
func (s *simPlant) Close() error {
	if s.prog == nil {
		return nil
	}
	return s.prog.Close()
}

// plantOptions are the window's plant options with the controller at rate.
func plantOptions(rate float64) sim.Options {
	return sim.Options{PhysicsRate: physicsRate, ControlRate: rate, RecordCapacity: 2}
}

// wrapPlant gives the runner p, whose controller ticks at rate.
func wrapPlant(p *sim.Plant, rate float64) *simPlant {
	return &simPlant{p: p, perTick: max(1, int(math.Round(physicsRate/rate))), rec: p.Recorder()}
}

// buildPlant makes the plant and controller graph for a robot through
// sim/rig, the real Build of the window's runner. The controller runs at
// its own rate, at most the physics rate.
func buildPlant(r *models.Robot) (live.Plant[sim.Snapshot], live.Tuner, error) {
	spec, err := rig.Spec(r)
	if err != nil {
		return nil, nil, err
	}
	rg := rig.Rig{Robot: r, Spec: spec}
	rate := math.Min(rg.ControlRate(), physicsRate)
	p, graph, err := rg.Build(plantOptions(rate))
	if err != nil {
		return nil, nil, err
	}
	sp := wrapPlant(p, rate)
	if graph == nil {
		// Not graph itself: a nil *control.Graph is a non-nil Tuner.
		return sp, nil, nil
	}
	return sp, graph, nil
}

// Step runs the physics steps of one controller tick. A fall is not an
// error here: the runner reads it from Fall.
func (s *simPlant) Step() error {
	for range s.perTick {
		if err := s.p.Step(); err != nil {
			if errors.Is(err, sim.ErrFallen) {
				return nil
			}
			return err
		}
	}
	return nil
}

func (s *simPlant) Time() float64                   { return s.p.Time() }
func (s *simPlant) Shove(sh sim.Shove) error        { return s.p.Shove(sh) }
func (s *simPlant) Schedule(list []sim.Shove) error { return s.p.Schedule(list) }
func (s *simPlant) Snapshot(dst *sim.Snapshot)      { s.p.Snapshot(dst) }
func (s *simPlant) SignalNames() []string           { return append([]string(nil), s.rec.Columns()...) }

// SignalUnits gives the recorder's unit of each column.
func (s *simPlant) SignalUnits() []string {
	units := make([]string, len(s.rec.Columns()))
	for i := range units {
		units[i] = s.rec.Unit(i)
	}
	return units
}
func (s *simPlant) Fall() (bool, string, float64) { f, ok := s.p.Fall(); return ok, f.Reason, f.Time }

// Signals copies the latest recorder row.
func (s *simPlant) Signals(dst []float64) {
	n := s.rec.Len()
	if n == 0 {
		clear(dst)
		return
	}
	for i := range dst {
		dst[i] = s.rec.At(n-1, i)
	}
}

// sceneFromSnapshot fills sc from a plant snapshot, reusing its slices.
func sceneFromSnapshot(sc *scene, r *models.Robot, s *sim.Snapshot) {
	sc.GroundTilt, sc.StepX, sc.StepHeight, sc.Plane = r.Ground.Tilt, r.Ground.StepX, r.Ground.StepHeight, r.Plane
	sc.Links = sc.Links[:0]
	for _, l := range s.Links {
		sc.Links = append(sc.Links, sceneLink{Name: l.Name, Pose: models.Pose{Position: l.Position, Angle: l.Angle}, Shape: l.Shape, Root: l.Name == r.Root})
	}
	pose := func(name string) models.Pose {
		for _, l := range s.Links {
			if l.Name == name {
				return models.Pose{Position: l.Position, Angle: l.Angle}
			}
		}
		return models.Pose{}
	}
	sc.Joints = sc.Joints[:0]
	for _, j := range r.Joints {
		sc.Joints = append(sc.Joints, pose(j.Parent).Apply(j.ParentAnchor))
	}
	sc.Actuators = sc.Actuators[:0]
	for i, a := range s.Actuators {
		var m *models.Actuator
		if i < len(r.Actuators) {
			m = &r.Actuators[i]
		}
		sa := sceneActuator{AtEdge: a.AtEdge}
		if m != nil && m.Backlash > 0 {
			sa.HasGap = true
			sa.Gap = math.Max(-1, math.Min(1, a.Gap/(m.Backlash/2)))
		}
		switch {
		case a.BetweenPoints:
			sa.From, sa.To = a.From, a.To
		case a.Joint != "":
			j := r.Joint(a.Joint)
			if j == nil {
				continue
			}
			p := pose(j.Parent).Apply(j.ParentAnchor)
			if j.Kind == models.Prismatic {
				// A short sleeve along the slide, centred between the anchors.
				c := pose(j.Child).Apply(j.ChildAnchor)
				mid := models.Vec2{X: (p.X + c.X) / 2, Y: (p.Y + c.Y) / 2}
				ax := pose(j.Parent).Rotate(j.Axis)
				const half = 0.04 // m
				sa.From = models.Vec2{X: mid.X - ax.X*half, Y: mid.Y - ax.Y*half}
				sa.To = models.Vec2{X: mid.X + ax.X*half, Y: mid.Y + ax.Y*half}
			} else {
				sa.From, sa.To, sa.Rotary = p, p, true
			}
		default:
			continue // the ballast drive shows as the ballast itself
		}
		sc.Actuators = append(sc.Actuators, sa)
	}
	sc.Pads = sc.Pads[:0]
	for _, p := range s.Pads {
		travel := 0.0
		if _, mp := r.Pad(p.Name); mp != nil {
			travel = mp.Travel
		}
		frac := 0.0
		if travel > 0 {
			frac = p.Compression / travel
		}
		sc.Pads = append(sc.Pads, scenePad{Center: p.Position, Angle: p.Angle, Width: p.Width, High: p.Thickness, Compression: frac})
	}
	sc.Ballast = nil
	if s.HasBallast && r.Ballast != nil {
		b, mb := s.Ballast, r.Ballast
		lp := pose(mb.Link)
		at := func(x float64) models.Vec2 {
			return lp.Apply(models.Vec2{X: mb.Origin.X + mb.Axis.X*x, Y: mb.Origin.Y + mb.Axis.Y*x})
		}
		sc.Ballast = &sceneBallast{Center: b.Position, Angle: b.Angle, Size: b.Size, RailA: at(mb.Min), RailB: at(mb.Max)}
	}
	sc.IMUs = sc.IMUs[:0]
	for _, m := range s.IMUs {
		sc.IMUs = append(sc.IMUs, sceneIMU{At: m.Position, Angle: m.Angle})
	}
	sc.COM, sc.HasCOM = s.COM, true
	sc.COP, sc.HasCOP = s.COP, s.InContact
	sc.Support, sc.HasSup = [2]float64{s.SupportMin, s.SupportMax}, s.InContact
}
