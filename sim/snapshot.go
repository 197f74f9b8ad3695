package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// Snapshot is the plant's state for drawing. Plant.Snapshot fills it
// without allocating once its slices have grown.
type Snapshot struct {
	Time       float64
	Links      []LinkState
	Actuators  []ActuatorState
	Pads       []PadState
	Ballast    BallastState // valid when HasBallast
	HasBallast bool
	IMUs       []IMUState
	COM        models.Vec2 // whole robot
	COMGround  models.Vec2 // the centre of mass dropped vertically onto the ground
	COP        float64     // x of the centre of pressure, valid when InContact
	InContact  bool
	// SupportMin and SupportMax bound the pads in contact along x.
	SupportMin, SupportMax float64
	Battery                float64 // terminal voltage, V (0 without a battery)
	Fallen                 bool
	Fall                   FallInfo
}

// LinkState places a link: its frame's origin and angle, its shape in that
// frame and its centre of mass in the world.
type LinkState struct {
	Name     string
	Position models.Vec2
	Angle    float64
	Shape    models.Shape
	COM      models.Vec2
}

// ActuatorState shows an actuator. Linear actuators between two points
// have world endpoints From and To; the others name their joint ("" for
// the ballast drive).
type ActuatorState struct {
	Name               string
	BetweenPoints      bool
	From, To           models.Vec2
	Joint              string
	Screw, Output, Gap float64
	Command, Force     float64
	AtEdge             bool // the output rests on a backlash edge
}

// PadState shows a pad: its centre and angle, size, compression, normal
// force and whether it touches the ground.
type PadState struct {
	Name               string
	Position           models.Vec2
	Angle              float64
	Width, Thickness   float64
	Compression, Force float64
	Contact            bool
}

// BallastState shows the ballast square.
type BallastState struct {
	Name     string
	Position models.Vec2
	Angle    float64
	Size     float64
	Slide    float64 // position along the slide, m
}

// IMUState places an IMU (at its link's centre of mass).
type IMUState struct {
	Name     string
	Position models.Vec2
	Angle    float64
}

func vec(v cp.Vector) models.Vec2 { return models.Vec2{X: v.X, Y: v.Y} }

// Snapshot fills dst with the current state.
func (p *Plant) Snapshot(dst *Snapshot) {
	dst.Time = p.Time()
	dst.Links = dst.Links[:0]
	for i := range p.links {
		l := &p.links[i]
		dst.Links = append(dst.Links, LinkState{Name: l.name, Position: vec(l.world(models.Vec2{})),
			Angle: l.body.Angle(), Shape: l.shape, COM: vec(l.body.Position())})
	}
	dst.Actuators = dst.Actuators[:0]
	for i := range p.acts {
		a := &p.acts[i]
		s := ActuatorState{Name: a.name, Screw: a.screw, Output: a.output(), Gap: a.gap(), Command: a.command, Force: a.force}
		if a.drive == driveLength {
			s.BetweenPoints = true
			s.From, s.To = vec(a.a.LocalToWorld(a.anchorA)), vec(a.b.LocalToWorld(a.anchorB))
		} else if a.jnt != nil {
			s.Joint = a.jnt.name
		}
		// At an edge when the gap has reached half the backlash (a small
		// tolerance for the solver's slack) or the mount is compressed.
		s.AtEdge = a.m.Kind == models.LeadScrew && math.Abs(s.Gap) >= a.backlash/2-1e-6
		dst.Actuators = append(dst.Actuators, s)
	}
	dst.Pads = dst.Pads[:0]
	dst.InContact = false
	dst.SupportMin, dst.SupportMax = math.Inf(1), math.Inf(-1)
	for i := range p.pads {
		pd := &p.pads[i]
		c := pd.force > 0
		s := PadState{Name: pd.name, Position: vec(pd.centre()), Angle: pd.foot.body.Angle(), Width: pd.width,
			Thickness: pd.thickness, Compression: pd.compression, Force: pd.force, Contact: c}
		if c {
			dst.InContact = true
			dst.SupportMin = math.Min(dst.SupportMin, s.Position.X-pd.width/2)
			dst.SupportMax = math.Max(dst.SupportMax, s.Position.X+pd.width/2)
		}
		dst.Pads = append(dst.Pads, s)
	}
	if !dst.InContact {
		dst.SupportMin, dst.SupportMax = 0, 0
	}
	dst.HasBallast = p.ballast != nil
	if b := p.ballast; b != nil {
		dst.Ballast = BallastState{Name: b.name, Position: vec(b.body.Position()), Angle: b.body.Angle(), Size: b.size, Slide: b.position()}
	}
	dst.IMUs = dst.IMUs[:0]
	for i := range p.sensors {
		s := &p.sensors[i]
		if s.link != nil {
			dst.IMUs = append(dst.IMUs, IMUState{Name: s.m.Name, Position: vec(s.link.body.Position()), Angle: s.link.body.Angle()})
		}
	}
	com := p.centreOfMass()
	dst.COM = vec(com)
	dst.COMGround = models.Vec2{X: com.X, Y: p.ground.height(com.X)}
	dst.COP, dst.InContact = p.centreOfPressure()
	dst.Battery = p.battery.voltage
	dst.Fall, dst.Fallen = p.fall, p.fallen
}

// CopyFrom makes s a copy of src, reusing s's slices.
func (s *Snapshot) CopyFrom(src *Snapshot) {
	links, acts, pads, imus := s.Links, s.Actuators, s.Pads, s.IMUs
	*s = *src
	s.Links = append(links[:0], src.Links...)
	s.Actuators = append(acts[:0], src.Actuators...)
	s.Pads = append(pads[:0], src.Pads...)
	s.IMUs = append(imus[:0], src.IMUs...)
}
