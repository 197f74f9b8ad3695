// Package loads finds which part of a robot is loaded hardest: over a
// campaign of shoves (each direction, sizes up to the recovery margin, and
// one that fells it) it takes the peak load on every actuator and the peak
// reaction through every joint, and sets each against what the part is
// built for (an actuator's stall force, a rated load where the robot file
// gives one).
package loads

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/margin"
)

// Spec sets up a campaign. Zero values take defaults.
type Spec struct {
	Dirs  []string // shove directions (default the margin's)
	Sizes int      // shoves per direction up to the margin (default 4)
	// Seeds is how many noise seeds the margin is found with (default 2);
	// the shoves go up to the largest every seed survived.
	Seeds int
	Seed  uint64
	// Fall is the shove that fells the robot, as a multiple of the
	// smallest shove that felled a seed (default 1.5).
	Fall   float64
	Settle float64 // s run after each shove (default 3)
	// Hold spreads each shove over this long, s (default 0.1, a hand's
	// push, common practice): a shove at once lands in one physics step,
	// and the loads of that step scale with the rate, not with the robot.
	Hold float64
}

// Part is one actuator or joint and the worst it carried.
type Part struct {
	Name  string  `json:"name"`
	Joint bool    `json:"joint"` // a joint's reaction, else an actuator's load
	Unit  string  `json:"unit"`  // N or N*m
	Peak  float64 `json:"peak"`  // the largest load (size), in Unit
	Shove string  `json:"shove"` // the shove it came in
	Stall float64 `json:"stall"` // an actuator's stall force; 0 for a joint
	Rated float64 `json:"rated"` // from the robot file; 0 is not given
	Share float64 `json:"share"` // Peak over the lowest of Stall and Rated given; 0 without either
}

// Result is the campaign's parts, worst first: by Share, then the parts
// with nothing to set them against by Peak.
type Result struct {
	Parts  []Part   `json:"parts"`
	Shoves []string `json:"shoves"`
}

// Run runs the campaign.
func Run(ctx context.Context, r *rig.Rig, spec Spec) (*Result, error) {
	if spec.Sizes <= 0 {
		spec.Sizes = 4
	}
	if spec.Seeds <= 0 {
		spec.Seeds = 2
	}
	if !(spec.Fall > 1) {
		spec.Fall = 1.5
	}
	if !(spec.Settle > 0) {
		spec.Settle = 3
	}
	if !(spec.Hold > 0) {
		spec.Hold = 0.1
	}
	ms := margin.Spec{Dirs: spec.Dirs, Seeds: spec.Seeds, Seed: spec.Seed, Hold: spec.Hold}.Filled(r.Robot)
	edges, err := margin.Find(ctx, r, ms)
	if err != nil {
		return nil, err
	}
	c := newCampaign(r.Robot)
	for _, e := range edges {
		unit, err := sim.ParseShove("impulse=1,dir=" + e.Dir)
		if err != nil {
			return nil, err
		}
		var sizes []float64
		for k := 1; k <= spec.Sizes; k++ {
			sizes = append(sizes, e.Trusted*float64(k)/float64(spec.Sizes))
		}
		if !math.IsInf(e.Felled, 1) {
			sizes = append(sizes, spec.Fall*e.Felled)
		}
		for _, j := range sizes {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			name := fmt.Sprintf("%.2f N*s %s", j, e.Dir)
			u := unit
			u.At, u.Hold = ms.At, spec.Hold
			u.Impulse = models.Vec2{X: unit.Impulse.X * j, Y: unit.Impulse.Y * j}
			if err := c.run(r, name, u, sim.Options{Seed: spec.Seed}, ms.At+spec.Settle); err != nil {
				return nil, err
			}
		}
	}
	return c.result(), nil
}

// campaign gathers the peaks over the runs.
type campaign struct {
	parts  []Part
	shoves []string
	acts   []float64
	joints []models.Vec2
}

func newCampaign(r *models.Robot) *campaign {
	c := &campaign{acts: make([]float64, len(r.Actuators)), joints: make([]models.Vec2, len(r.Joints))}
	for _, a := range r.Actuators {
		unit := "N"
		if a.Joint != "" && slices.ContainsFunc(r.Joints, func(j models.Joint) bool { return j.Name == a.Joint && j.Kind == models.Revolute }) {
			unit = "N*m"
		}
		c.parts = append(c.parts, Part{Name: a.Name, Unit: unit, Stall: a.StallForce, Rated: a.RatedLoad})
	}
	for _, j := range r.Joints {
		c.parts = append(c.parts, Part{Name: j.Name, Joint: true, Unit: "N", Rated: j.RatedLoad})
	}
	return c
}

// run runs one shove to the end time or the fall, taking the peaks at
// every physics step from the shove on (an impact lasts a few steps; the
// robot settling onto its feet at the start is no part of the shove).
func (c *campaign) run(r *rig.Rig, name string, u sim.Shove, opt sim.Options, end float64) error {
	opt.Shoves = []sim.Shove{u}
	p, _, err := r.Build(opt)
	if err != nil {
		return err
	}
	c.shoves = append(c.shoves, name)
	defer func() {
		if _, fell := p.Fall(); fell {
			c.shoves[len(c.shoves)-1] += " (fell)"
		}
	}()
	for p.Time() < end {
		err := p.Step()
		if err != nil && !errors.Is(err, sim.ErrFallen) {
			return fmt.Errorf("loads: shove %s: %w", name, err)
		}
		if p.Time() >= u.At {
			p.ActuatorLoads(c.acts)
			p.JointReactions(c.joints)
			for i, v := range c.acts {
				c.peak(i, math.Abs(v), name)
			}
			for i, v := range c.joints {
				c.peak(len(c.acts)+i, math.Hypot(v.X, v.Y), name)
			}
		}
		if err != nil {
			break // fallen: the peaks up to the touch
		}
	}
	return nil
}

func (c *campaign) peak(i int, v float64, shove string) {
	if v > c.parts[i].Peak {
		c.parts[i].Peak, c.parts[i].Shove = v, shove
	}
}

func (c *campaign) result() *Result {
	parts := slices.Clone(c.parts)
	for i := range parts {
		limit := math.Inf(1)
		for _, v := range []float64{parts[i].Stall, parts[i].Rated} {
			if v > 0 {
				limit = math.Min(limit, v)
			}
		}
		if !math.IsInf(limit, 1) {
			parts[i].Share = parts[i].Peak / limit
		}
	}
	slices.SortStableFunc(parts, func(a, b Part) int {
		an, bn := a.Share == 0, b.Share == 0
		switch {
		case an != bn:
			if an {
				return 1
			}
			return -1
		case !an:
			return cmp.Compare(b.Share, a.Share)
		}
		return cmp.Compare(b.Peak, a.Peak)
	})
	return &Result{Parts: parts, Shoves: c.shoves}
}
