package rig

import (
	"fmt"
	"slices"

	"teeter/control"
	"teeter/models"
)

// Params are parameter paths, each found to be a robot parameter
// (models.SetParam) or a controller gain (block.param), from which to make
// variants of a rig.
type Params struct {
	base  *Rig
	paths []string
	gain  []bool
}

// Params sorts the paths into robot parameters and gains, or says which
// path is neither.
func (r *Rig) Params(paths []string) (*Params, error) {
	g, err := r.Controller()
	if err != nil {
		return nil, err
	}
	ps := &Params{base: r, paths: paths, gain: make([]bool, len(paths))}
	for i, p := range paths {
		_, robotErr := models.GetParam(r.Robot, p)
		if robotErr == nil {
			continue
		}
		if g == nil {
			return nil, fmt.Errorf("parameter %s: %v (and the robot has no controller with gains)", p, robotErr)
		}
		if _, gainErr := g.Get(p); gainErr != nil {
			return nil, fmt.Errorf("parameter %s is neither a robot parameter (%v) nor a gain (%v)", p, robotErr, gainErr)
		}
		ps.gain[i] = true
	}
	return ps, nil
}

// Variant returns the rig with the parameters set to values (in the order
// of the paths): robot parameters on a clone of the robot, gains on top of
// the rig's gains. The rig is not changed.
func (ps *Params) Variant(values []float64) (*Rig, error) {
	v := &Rig{Robot: ps.base.Robot.Clone(), Spec: ps.base.Spec, Program: ps.base.Program}
	var gainPaths []string
	var gainValues []float64
	for i, p := range ps.paths {
		if ps.gain[i] {
			gainPaths, gainValues = append(gainPaths, p), append(gainValues, values[i])
			continue
		}
		if err := models.SetParam(v.Robot, p, values[i]); err != nil {
			return nil, fmt.Errorf("%s = %g: %v", p, values[i], err)
		}
	}
	v.Gains = ps.base.withGains(gainPaths, gainValues)
	return v, nil
}

// Variant is r.Params(paths) and its Variant(values) in one.
func (r *Rig) Variant(paths []string, values []float64) (*Rig, error) {
	ps, err := r.Params(paths)
	if err != nil {
		return nil, err
	}
	return ps.Variant(values)
}

// WithGains returns the rig with the gains at paths set to values, on top
// of its own gains; the robot is shared. The paths are checked when the
// rig is built.
func (r *Rig) WithGains(paths []string, values []float64) *Rig {
	return &Rig{Robot: r.Robot, Spec: r.Spec, Gains: r.withGains(paths, values), Program: r.Program}
}

// withGains is the rig's gain set with some gains replaced or added; nil
// when it holds none.
func (r *Rig) withGains(paths []string, values []float64) *control.GainSet {
	var gs control.GainSet
	if r.Gains != nil {
		gs.Rate = r.Gains.Rate
		gs.Gains = slices.Clone(r.Gains.Gains)
	}
	for i, p := range paths {
		gs.Gains = slices.DeleteFunc(gs.Gains, func(g control.Gain) bool { return g.Path == p })
		gs.Gains = append(gs.Gains, control.Gain{Path: p, Value: values[i]})
	}
	if len(gs.Gains) == 0 {
		return nil
	}
	return &gs
}
