package models

import (
	"fmt"
	"math"
)

// Pose places a link frame in the world: its origin and its angle,
// counter-clockwise from the world axes.
type Pose struct {
	Position Vec2
	Angle    float64
}

// Apply maps a point from the link frame to the world.
func (p Pose) Apply(v Vec2) Vec2 {
	s, c := math.Sincos(p.Angle)
	return Vec2{p.Position.X + c*v.X - s*v.Y, p.Position.Y + s*v.X + c*v.Y}
}

// Rotate turns a direction from the link frame into the world.
func (p Pose) Rotate(v Vec2) Vec2 {
	s, c := math.Sincos(p.Angle)
	return Vec2{c*v.X - s*v.Y, s*v.X + c*v.Y}
}

// InitialPoses gives each link's world pose with every joint at its initial
// position. The root link has its written x and angle; it is lifted or
// lowered so that the lowest corner of any pad (fully extended) touches
// y = 0, unless it is fixed to the world. The ground's tilt and step are not
// taken into account.
func (r *Robot) InitialPoses() (map[string]Pose, error) {
	root := r.Link(r.Root)
	if root == nil {
		return nil, fmt.Errorf("root link %q does not exist", r.Root)
	}
	poses := map[string]Pose{root.Name: {Position: root.Position, Angle: root.Angle}}
	// Place children of placed links until nothing changes; a valid tree
	// needs at most one pass per joint.
	for range len(r.Joints) + 1 {
		progress := false
		for _, j := range r.Joints {
			pp, ok := poses[j.Parent]
			if _, done := poses[j.Child]; !ok || done || j.Child == "" {
				continue
			}
			anchor := j.ParentAnchor
			angle := pp.Angle
			switch j.Kind {
			case Prismatic:
				anchor.X += j.Axis.X * j.Initial
				anchor.Y += j.Axis.Y * j.Initial
			default:
				angle += j.Initial
			}
			world := pp.Apply(anchor)
			child := Pose{Angle: angle}
			off := child.Rotate(j.ChildAnchor)
			child.Position = Vec2{world.X - off.X, world.Y - off.Y}
			poses[j.Child] = child
			progress = true
		}
		if !progress {
			break
		}
	}
	for _, l := range r.Links {
		if _, ok := poses[l.Name]; !ok {
			return nil, fmt.Errorf("link %q is not joined to the root %q", l.Name, r.Root)
		}
	}
	lowest := math.Inf(1)
	for _, f := range r.Feet {
		fp, ok := poses[f.Link]
		if !ok {
			return nil, fmt.Errorf("foot %q is on unknown link %q", f.Name, f.Link)
		}
		for _, p := range f.Pads {
			for _, c := range boxCorners(p.Position, p.Width, p.Thickness) {
				lowest = math.Min(lowest, fp.Apply(c).Y)
			}
		}
	}
	if math.IsInf(lowest, 1) || root.Fixed {
		return poses, nil
	}
	for name, p := range poses {
		p.Position.Y -= lowest
		poses[name] = p
	}
	return poses, nil
}

func boxCorners(center Vec2, width, height float64) [4]Vec2 {
	w, h := width/2, height/2
	return [4]Vec2{
		{center.X - w, center.Y - h}, {center.X + w, center.Y - h},
		{center.X + w, center.Y + h}, {center.X - w, center.Y + h},
	}
}

// Link returns the link with the given name, or nil.
func (r *Robot) Link(name string) *Link {
	for i := range r.Links {
		if r.Links[i].Name == name {
			return &r.Links[i]
		}
	}
	return nil
}

// Joint returns the joint with the given name, or nil.
func (r *Robot) Joint(name string) *Joint {
	for i := range r.Joints {
		if r.Joints[i].Name == name {
			return &r.Joints[i]
		}
	}
	return nil
}

// Actuator returns the actuator with the given name, or nil.
func (r *Robot) Actuator(name string) *Actuator {
	for i := range r.Actuators {
		if r.Actuators[i].Name == name {
			return &r.Actuators[i]
		}
	}
	return nil
}

// Pad returns the pad with the given name and its foot, or nils.
func (r *Robot) Pad(name string) (*Foot, *Pad) {
	for i := range r.Feet {
		for k := range r.Feet[i].Pads {
			if r.Feet[i].Pads[k].Name == name {
				return &r.Feet[i], &r.Feet[i].Pads[k]
			}
		}
	}
	return nil, nil
}

// CenterOfMass is the link's centre of mass in its own frame.
func (l *Link) CenterOfMass() Vec2 {
	if l.COM != nil {
		return *l.COM
	}
	return l.Shape.Center
}

// MomentOfInertia is the link's inertia about its centre of mass: the
// written value, or that of a uniform body filling the shape. The formulas
// are the standard ones for a plate rotating in its own plane.
func (l *Link) MomentOfInertia() float64 {
	if l.Inertia > 0 {
		return l.Inertia
	}
	m, s := l.Mass, l.Shape
	switch s.Kind {
	case Box:
		return m * (s.Width*s.Width + s.Height*s.Height) / 12
	case Circle:
		return m * s.Radius * s.Radius / 2
	case Capsule:
		// Mass spread by area over a rectangle (2r by L) and two half discs.
		r, L := s.Radius, s.Length
		aRect, aDisc := 2*r*L, math.Pi*r*r
		total := aRect + aDisc
		if total == 0 {
			return 0
		}
		mRect, mDisc := m*aRect/total, m*aDisc/total
		iRect := mRect * (4*r*r + L*L) / 12
		// Two half discs make a disc; each half's centroid lies 4r/(3 pi)
		// from the flat side, which sits L/2 from the middle.
		d := 4 * r / (3 * math.Pi)
		iDisc := mDisc*r*r/2 - mDisc*d*d + mDisc*(L/2+d)*(L/2+d)
		return iRect + iDisc
	}
	return 0
}

// TotalMass is the mass of all links, pads and the ballast.
func (r *Robot) TotalMass() float64 {
	m := 0.0
	for _, l := range r.Links {
		m += l.Mass
	}
	for _, f := range r.Feet {
		for _, p := range f.Pads {
			m += p.Mass
		}
	}
	if r.Ballast != nil {
		m += r.Ballast.Mass
	}
	return m
}

// ShapeTop is the highest world y of the link's shape in pose p.
func (l *Link) ShapeTop(p Pose) float64 {
	s := l.Shape
	switch s.Kind {
	case Box:
		top := math.Inf(-1)
		for _, c := range boxCorners(s.Center, s.Width, s.Height) {
			top = math.Max(top, p.Apply(c).Y)
		}
		return top
	case Capsule:
		a := p.Apply(Vec2{s.Center.X, s.Center.Y + s.Length/2})
		b := p.Apply(Vec2{s.Center.X, s.Center.Y - s.Length/2})
		return math.Max(a.Y, b.Y) + s.Radius
	default:
		return p.Apply(s.Center).Y + s.Radius
	}
}
