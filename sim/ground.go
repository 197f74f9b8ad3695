package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"
)

// ground is the floor surface: a plane through the origin tilted by Tilt,
// raised by stepH for x >= stepX.
type ground struct {
	tan, sin, cos float64
	stepX, stepH  float64
}

func newGround(tilt, stepX, stepH float64) ground {
	return ground{tan: math.Tan(tilt), sin: math.Sin(tilt), cos: math.Cos(tilt), stepX: stepX, stepH: stepH}
}

// height is the surface height at x.
func (g *ground) height(x float64) float64 {
	h := x * g.tan
	if g.stepH != 0 && x >= g.stepX {
		h += g.stepH
	}
	return h
}

// depth returns how far p is inside the ground (negative: above it) and the
// outward surface normal at the nearest face. Near a step, a point inside
// the higher block is pushed out through whichever of its top and riser
// faces is nearer.
func (g *ground) depth(p cp.Vector) (float64, cp.Vector) {
	n := cp.Vector{X: -g.sin, Y: g.cos}
	offset := 0.0
	if g.stepH != 0 && p.X >= g.stepX {
		offset = g.stepH
	}
	// Distance below the plane y = x*tan + offset, measured along its normal.
	d := (p.X*g.tan + offset - p.Y) * g.cos
	if g.stepH == 0 || d <= 0 {
		return d, n
	}
	// Inside the higher block: the riser may be nearer.
	if g.stepH > 0 && p.X >= g.stepX {
		if r := p.X - g.stepX; r < d && p.Y < g.stepX*g.tan+g.stepH {
			return r, cp.Vector{X: -1}
		}
	}
	if g.stepH < 0 && p.X < g.stepX {
		if r := g.stepX - p.X; r < d && p.Y < g.stepX*g.tan {
			return r, cp.Vector{X: 1}
		}
	}
	return d, n
}
