package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// Gravity is standard gravity (NIST SP 330), m/s^2.
const Gravity = 9.80665

// link is one rigid body. Its cp body's origin is the link's centre of
// mass (cp takes the centre of gravity from the body's origin), so link-frame
// points are offset by com.
type link struct {
	name    string
	body    *cp.Body
	com     models.Vec2 // centre of mass in the link frame
	mass    float64     // pads included; a fixed link's body has infinite mass
	inertia float64     // about the centre of mass, pads included
	shape   models.Shape
}

// local converts a link-frame point to the body's local frame.
func (l *link) local(p models.Vec2) cp.Vector { return cp.Vector{X: p.X - l.com.X, Y: p.Y - l.com.Y} }

// world converts a link-frame point to world coordinates.
func (l *link) world(p models.Vec2) cp.Vector { return l.body.LocalToWorld(l.local(p)) }

type joint struct {
	name          string
	kind          models.JointKind
	parent, child *link
	pAnchor       cp.Vector // body-local anchors
	cAnchor       cp.Vector
	axis          cp.Vector   // prismatic: slide direction in the parent frame
	lower, upper  float64     // prismatic: the slide's ends
	limit         *screwLimit // the joint's limits, if it has them
}

// position is the joint coordinate: the child's angle relative to the
// parent (revolute) or the child anchor's displacement along the axis.
func (j *joint) position() float64 {
	if j.kind == models.Revolute {
		return j.child.body.Angle() - j.parent.body.Angle()
	}
	pb := j.parent.body
	d := j.child.body.LocalToWorld(j.cAnchor).Sub(pb.LocalToWorld(j.pAnchor))
	return d.Dot(pb.Rotation().Rotate(j.axis))
}

// pad is a compliant pad under a foot, touching the ground at the two
// ends of its width (see padContact).
type pad struct {
	name             string
	foot             *link
	rest             cp.Vector // pad centre fully extended, in the foot's body frame
	width, thickness float64
	travel           float64
	contact          *padContact
	// Results of the last step: the compression at the pad's centre (the
	// mean of its edges', past the travel when the stop is pressed), the
	// normal force and the end stop's share of it.
	compression, force, stop float64
}

// centre is the pad's centre, world: pushed into the foot by its
// compression, at most the travel.
func (p *pad) centre() cp.Vector {
	fb := p.foot.body
	return fb.LocalToWorld(p.rest).Add(fb.Rotation().Perp().Mult(math.Min(p.compression, p.travel)))
}

type ballast struct {
	name   string
	link   *link
	body   *cp.Body
	origin cp.Vector // body-local
	axis   cp.Vector // link frame
	size   float64
	lower  float64 // the slide's ends
	upper  float64
	limit  *screwLimit // holds or drives it along the slide
}

// position is the ballast's displacement along its slide.
func (b *ballast) position() float64 {
	lb := b.link.body
	return b.body.Position().Sub(lb.LocalToWorld(b.origin)).Dot(lb.Rotation().Rotate(b.axis))
}

// initialPoses places every link with the joints at their initial
// positions (models.InitialPoses, which rests the lowest pad on y = 0), then
// moves the robot up or down so that the lowest pad corner just touches this
// ground, which may be tilted or stepped. A robot without pads or with a
// fixed root stays where its root was written.
func initialPoses(r *models.Robot, g *ground) (map[string]models.Pose, error) {
	poses, err := r.InitialPoses()
	if err != nil {
		return nil, err
	}
	lowest := math.Inf(1)
	for _, f := range r.Feet {
		fp := poses[f.Link]
		for _, p := range f.Pads {
			for _, sx := range [2]float64{-1, 1} {
				c := fp.Apply(models.Vec2{X: p.Position.X + sx*p.Width/2, Y: p.Position.Y - p.Thickness/2})
				lowest = math.Min(lowest, c.Y-g.height(c.X))
			}
		}
	}
	if root := r.Link(r.Root); !math.IsInf(lowest, 1) && !root.Fixed {
		for name, p := range poses {
			p.Position.Y -= lowest
			poses[name] = p
		}
	}
	return poses, nil
}

// shapeCorners lists points whose circles (of the returned radius) cover the
// shape, in the link frame, for the ground-touch test.
func shapeCorners(s models.Shape) ([]models.Vec2, float64) {
	c := s.Center
	switch s.Kind {
	case models.Box:
		w, h := s.Width/2, s.Height/2
		return []models.Vec2{{X: c.X - w, Y: c.Y - h}, {X: c.X + w, Y: c.Y - h}, {X: c.X + w, Y: c.Y + h}, {X: c.X - w, Y: c.Y + h}}, 0
	case models.Capsule:
		return []models.Vec2{{X: c.X, Y: c.Y - s.Length/2}, {X: c.X, Y: c.Y + s.Length/2}}, s.Radius
	}
	return []models.Vec2{c}, s.Radius
}

func finite(v ...float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}
