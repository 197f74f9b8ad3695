package sim

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// Shove is a push on one link.
type Shove struct {
	At   float64 // s
	Link string  // "" means the robot's fall-watch (torso) link
	// Point is where the push lands, in the link frame; nil means the
	// link's centre of mass.
	Point   *models.Vec2
	Impulse models.Vec2 // world, N*s
	// Hold spreads the impulse over this many seconds as a constant force
	// Impulse/Hold; 0 applies it at once.
	Hold float64
}

type heldShove struct {
	body  *cp.Body
	point cp.Vector // body-local
	force cp.Vector
	steps int
}

// ParseShove reads a shove from the command line as comma-separated
// key=value pairs:
//
//	at=2s,impulse=3N*s,dir=left,link=torso,point=0:0.1,hold=50ms
//
// impulse (N*s) and dir are required. dir is left or right (along -x or
// +x, for a frontal robot), back or forward (the same axis, for a sagittal
// one), up, down, or an angle in degrees counter-clockwise from +x, such as
// 30 or 30deg. at (default 0 s) and hold (default 0: instantaneous) are
// durations; link defaults to the fall-watch link and point (x:y in the link
// frame, lengths, default its centre of mass) to the centre of mass. Units
// may be left out for SI values.
func ParseShove(spec string) (Shove, error) {
	var s Shove
	var magnitude, angle float64
	haveImpulse, haveDir := false, false
	fail := func(format string, args ...any) (Shove, error) {
		return Shove{}, fmt.Errorf("shove %q: %s", spec, fmt.Sprintf(format, args...))
	}
	for _, part := range strings.Split(spec, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		key, val, ok := strings.Cut(part, "=")
		if !ok {
			return fail("%q is not key=value", part)
		}
		key, val = strings.TrimSpace(key), strings.TrimSpace(val)
		var err error
		switch key {
		case "at":
			s.At, _, err = models.ParseQuantity(val, models.Duration)
			if err == nil && s.At < 0 {
				return fail("at %s is negative", val)
			}
		case "hold":
			s.Hold, _, err = models.ParseQuantity(val, models.Duration)
			if err == nil && s.Hold < 0 {
				return fail("hold %s is negative", val)
			}
		case "impulse":
			magnitude, _, err = models.ParseQuantity(val, models.Impulse)
			haveImpulse = true
		case "link":
			if val == "" {
				return fail("link is empty")
			}
			s.Link = val
		case "point":
			xs, ys, ok := strings.Cut(val, ":")
			if !ok {
				return fail("point %q is not x:y", val)
			}
			var pt models.Vec2
			if pt.X, _, err = models.ParseQuantity(xs, models.Length); err == nil {
				pt.Y, _, err = models.ParseQuantity(ys, models.Length)
			}
			s.Point = &pt
		case "dir":
			haveDir = true
			if angle, ok = shoveAngle(val); !ok {
				return fail("dir %q is not left, right, forward, back, up, down or an angle in degrees", val)
			}
		default:
			return fail("unknown key %q (want at, impulse, dir, link, point, hold)", key)
		}
		if err != nil {
			return fail("%s: %v", key, err)
		}
	}
	if !haveImpulse || !haveDir {
		return fail("impulse and dir are required, as in at=2s,impulse=3N*s,dir=left")
	}
	s.Impulse = models.Vec2{X: magnitude * math.Cos(angle), Y: magnitude * math.Sin(angle)}
	return s, nil
}

// shoveAngle is the angle of a shove's dir, counter-clockwise from +x.
func shoveAngle(dir string) (float64, bool) {
	switch strings.ToLower(dir) {
	case "right", "forward":
		return 0, true
	case "left", "back":
		return math.Pi, true
	case "up":
		return math.Pi / 2, true
	case "down":
		return -math.Pi / 2, true
	}
	text := dir
	if !strings.ContainsAny(text, "abcdefghijklmnopqrstuvwxyz°") {
		text += " deg" // a bare number is degrees here
	}
	angle, _, err := models.ParseQuantity(text, models.Angle)
	return angle, err == nil
}

func (p *Plant) checkShove(s *Shove) error {
	if s.Link == "" {
		s.Link = p.torso.name
	}
	if p.link(s.Link) == nil {
		return fmt.Errorf("sim: shove at %g s: link %q is not a link", s.At, s.Link)
	}
	if !finite(s.At, s.Impulse.X, s.Impulse.Y, s.Hold) || s.Hold < 0 {
		return fmt.Errorf("sim: shove at %g s on %s: time, impulse and hold must be finite, hold not negative", s.At, s.Link)
	}
	if s.Point != nil && !finite(s.Point.X, s.Point.Y) {
		return fmt.Errorf("sim: shove at %g s on %s: point must be finite", s.At, s.Link)
	}
	return nil
}

// Schedule replaces the shoves given at set times that have not come yet
// with shoves, dropping those whose time has passed. Each comes at the
// physics step nearest its At. Call it between steps from the goroutine
// that owns the plant.
func (p *Plant) Schedule(shoves []Shove) error {
	list := slices.Clone(shoves)
	slices.SortStableFunc(list, func(a, b Shove) int { return cmp.Compare(a.At, b.At) })
	for i := range list {
		if err := p.checkShove(&list[i]); err != nil {
			return err
		}
	}
	p.shoves, p.nextSh = list, 0
	if p.step > 0 {
		last := p.Time() - p.dt
		for p.nextSh < len(list) && p.due(&list[p.nextSh], last) {
			p.nextSh++
		}
	}
	return nil
}

// due says whether a scheduled shove comes at the step starting at now.
func (p *Plant) due(s *Shove, now float64) bool { return s.At <= now+p.dt/2 }

// Shove pushes the robot at the next step, whatever s.At says. Call it
// between steps from the goroutine that owns the plant.
func (p *Plant) Shove(s Shove) error {
	if err := p.checkShove(&s); err != nil {
		return err
	}
	p.pending = append(p.pending, s)
	return nil
}

// applyShoves starts the shoves due and applies the held ones.
func (p *Plant) applyShoves(now float64) {
	for p.nextSh < len(p.shoves) && p.due(&p.shoves[p.nextSh], now) {
		p.start(&p.shoves[p.nextSh])
		p.nextSh++
	}
	for i := range p.pending {
		p.start(&p.pending[i])
	}
	p.pending = p.pending[:0]
	kept := p.held[:0]
	for _, h := range p.held {
		h.body.ApplyForceAtWorldPoint(h.force, h.body.LocalToWorld(h.point))
		if h.steps--; h.steps > 0 {
			kept = append(kept, h)
		}
	}
	p.held = kept
}

func (p *Plant) start(s *Shove) {
	l := p.link(s.Link)
	point := cp.Vector{}
	if s.Point != nil {
		point = l.local(*s.Point)
	}
	j := cp.Vector{X: s.Impulse.X, Y: s.Impulse.Y}
	if s.Hold == 0 {
		l.body.ApplyImpulseAtWorldPoint(j, l.body.LocalToWorld(point))
		return
	}
	// Whole steps, with the force set so the total impulse is exact.
	n := max(1, int(math.Round(s.Hold*p.physRate)))
	p.held = append(p.held, heldShove{body: l.body, point: point, force: j.Mult(1 / (float64(n) * p.dt)), steps: n})
}
