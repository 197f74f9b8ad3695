package sim

import (
	"fmt"
	"math/rand/v2"

	"github.com/jakecoffman/cp/v2"
)

// Saved is a plant's whole state at one step, for Restore on the same
// plant: a study that runs many variations from one moment (the margin's
// shoves, all landing at the same time) saves there once instead of
// running the same lead-in for each.
type Saved struct {
	step, ticks int64
	parts       []restorer // engine bodies and constraints, as values
	acts        []actuator
	pads        []pad
	sensors     []sensor
	pcgs        []rand.PCG
	rings       []float64
	battery     batteryState
	readings    []float64
	commands    []float64
	sigBuf      []float64
	shoves      []Shove
	nextSh      int
	pending     []Shove
	held        []heldShove
	good        []bodyState
	fallen      bool
	fall        FallInfo
	err         error
	rows        int
}

// restorer puts one saved value back where it came from.
type restorer interface{ restore() }

type kept[T any] struct {
	at    *T
	value T
}

func (k kept[T]) restore() { *k.at = k.value }

func keep[T any](at *T) restorer { return kept[T]{at, *at} }

// Save records the plant's state. The engine's bodies and constraints are
// kept whole, with the impulses the solver warm-starts from, so that a
// restored run repeats the original bit for bit. The controller is opaque
// to the plant: Restore resets it and replays the readings it was given,
// which the recorder holds, so Save fails once a bounded recorder has
// dropped rows.
func (p *Plant) Save() (*Saved, error) {
	if p.recEvery > 0 {
		return nil, fmt.Errorf("sim: cannot save a plant that records at its own rate (%g Hz): the controller is replayed from a row per tick", p.physRate/float64(p.recEvery))
	}
	if int64(p.rec.n) != p.ticks {
		return nil, fmt.Errorf("sim: cannot save at %.3f s: the recorder has dropped the rows the controller's replay needs", p.Time())
	}
	s := &Saved{step: p.step, ticks: p.ticks, battery: p.battery, shoves: p.shoves, nextSh: p.nextSh,
		fallen: p.fallen, fall: p.fall, err: p.err, rows: p.rec.n}
	for _, b := range p.bodies {
		s.parts = append(s.parts, keep(b))
	}
	var unknown error
	p.space.EachConstraint(func(c *cp.Constraint) {
		s.parts = append(s.parts, keep(c))
		switch k := c.Class.(type) {
		case *pivot:
			s.parts = append(s.parts, keep(k))
		case *slide:
			s.parts = append(s.parts, keep(k))
		case *cp.SimpleMotor:
			s.parts = append(s.parts, keep(k))
		case *screwLimit:
			s.parts = append(s.parts, keep(k))
		case *softSpring:
			s.parts = append(s.parts, keep(k))
		case *slideFriction:
			s.parts = append(s.parts, keep(k))
		case *padContact:
			s.parts = append(s.parts, keep(k))
		default:
			unknown = fmt.Errorf("sim: cannot save a %T constraint", k)
		}
	})
	if unknown != nil {
		return nil, unknown
	}
	s.acts = append([]actuator(nil), p.acts...)
	s.pads = append([]pad(nil), p.pads...)
	s.sensors = append([]sensor(nil), p.sensors...)
	for i := range p.sensors {
		s.pcgs = append(s.pcgs, *p.sensors[i].pcg)
		s.rings = append(s.rings, p.sensors[i].ring...)
	}
	s.readings = append([]float64(nil), p.readings...)
	s.commands = append([]float64(nil), p.commands...)
	s.sigBuf = append([]float64(nil), p.sigBuf...)
	s.pending = append([]Shove(nil), p.pending...)
	s.held = append([]heldShove(nil), p.held...)
	s.good = append([]bodyState(nil), p.good...)
	return s, nil
}

// Restore puts the plant back to the state s saved from it, shoves to come
// included; Schedule after it to change them. The controller must be the
// one that ran up to the save.
func (p *Plant) Restore(s *Saved) error {
	for _, r := range s.parts {
		r.restore()
	}
	copy(p.acts, s.acts)
	copy(p.pads, s.pads)
	copy(p.sensors, s.sensors)
	ring := s.rings
	for i := range p.sensors {
		*p.sensors[i].pcg = s.pcgs[i]
		ring = ring[copy(p.sensors[i].ring, ring):]
	}
	p.step, p.ticks, p.battery = s.step, s.ticks, s.battery
	p.shoves, p.nextSh = s.shoves, s.nextSh
	p.pending = append(p.pending[:0], s.pending...)
	p.held = append(p.held[:0], s.held...)
	copy(p.good, s.good)
	p.fallen, p.fall, p.err = s.fallen, s.fall, s.err
	p.rec.n = s.rows
	if err := p.replay(s.rows); err != nil {
		return err
	}
	copy(p.readings, s.readings)
	copy(p.commands, s.commands)
	copy(p.sigBuf, s.sigBuf)
	return nil
}

// replay resets the controller and ticks it through the first rows of the
// recording with the readings it saw then, which brings its state to where
// it was after the last of them.
func (p *Plant) replay(rows int) error {
	if p.controller == nil {
		return nil
	}
	p.controller.Reset()
	at := p.rec.readingsAt
	for i := range rows {
		row := p.rec.row(i)
		copy(p.readings, row[at:at+len(p.readings)])
		if err := p.tick(row[0]); err != nil {
			return err
		}
	}
	return nil
}
