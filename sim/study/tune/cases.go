package tune

import (
	"math/rand/v2"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// tuneCase is one run of the cost: a robot variant and a shove.
type tuneCase struct {
	robot *models.Robot
	shove sim.Shove
	seed  uint64
}

// cases are every robot variant under every shove and its mirror image.
func cases(r *rig.Rig, spec Spec) ([]tuneCase, error) {
	robots, err := robustVariants(r.Robot, spec.Robust, spec.Seed)
	if err != nil {
		return nil, err
	}
	var out []tuneCase
	for ri, rb := range robots {
		for si, s := range spec.Shoves {
			seed := spec.Seed + uint64(ri*1000+si*2)
			out = append(out, tuneCase{rb, s, seed}, tuneCase{rb, mirrored(s), seed + 1})
		}
	}
	return out, nil
}

// robustVariants draws the robot variants of a robust tuning.
func robustVariants(base *models.Robot, n int, seed uint64) ([]*models.Robot, error) {
	out := []*models.Robot{base}
	rng := rand.New(rand.NewPCG(seed, 0x7ee7e5))
	scale := func(r *models.Robot, path string, lo, hi float64) error {
		v, err := models.GetParam(r, path)
		if err != nil {
			return nil // the robot has no such part
		}
		return models.SetParam(r, path, v*(lo+(hi-lo)*rng.Float64()))
	}
	for range n {
		r := base.Clone()
		for _, a := range r.Actuators {
			if err := scale(r, "actuators."+a.Name+".backlash", 0.5, 2); err != nil {
				return nil, err
			}
		}
		if r.Ballast != nil {
			if err := scale(r, "ballast.mass", 0.8, 1.2); err != nil {
				return nil, err
			}
		}
		if r.Battery != nil {
			if err := scale(r, "battery.voltage", 0.88, 1); err != nil {
				return nil, err
			}
		}
		out = append(out, r)
	}
	return out, nil
}

func mirrored(s sim.Shove) sim.Shove {
	s.Impulse.X = -s.Impulse.X
	return s
}
