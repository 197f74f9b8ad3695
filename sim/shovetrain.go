package sim

import (
	"math"
	"math/rand/v2"

	"teeter/models"
)

// MaxRandomShoves bounds the length of a random shove train, so that a tiny
// mean interval cannot ask for a train that does not fit in memory.
const MaxRandomShoves = 1 << 20

// RandomShoves makes a train of instantaneous shoves on the fall-watch link
// at times in [from, to) s that arrive as a Poisson process of mean interval
// meanInterval s (exponential gaps), each with an impulse drawn uniformly
// from [minImpulse, maxImpulse] N*s along one of dirs, picked with equal
// chance. A nil dirs pushes either way along x: sideways for a frontal
// robot, fore and aft for a sagittal one. Directions need not be unit
// length; they are normalised.
//
// The same arguments give the same train. Arguments that describe no train
// (not finite, to <= from, meanInterval <= 0, a negative or inverted
// impulse range, a zero direction) give none; a train is cut at
// MaxRandomShoves shoves.
func RandomShoves(seed uint64, from, to, meanInterval, minImpulse, maxImpulse float64, dirs []models.Vec2) []Shove {
	if !finite(to) {
		return nil
	}
	return randomShoves(seed, from, to, MaxRandomShoves, meanInterval, minImpulse, maxImpulse, dirs)
}

// FirstRandomShoves is the first n shoves (at most MaxRandomShoves) of the
// train RandomShoves makes from from on, as if it had no end.
func FirstRandomShoves(n int, seed uint64, from, meanInterval, minImpulse, maxImpulse float64, dirs []models.Vec2) []Shove {
	return randomShoves(seed, from, math.Inf(1), min(n, MaxRandomShoves), meanInterval, minImpulse, maxImpulse, dirs)
}

// randomShoves makes the train of RandomShoves, in [from, to) and at most
// n long.
func randomShoves(seed uint64, from, to float64, n int, meanInterval, minImpulse, maxImpulse float64, dirs []models.Vec2) []Shove {
	if !finite(from, meanInterval, minImpulse, maxImpulse) || math.IsNaN(to) || to <= from || meanInterval <= 0 ||
		minImpulse < 0 || maxImpulse < minImpulse || n <= 0 {
		return nil
	}
	if dirs == nil {
		dirs = []models.Vec2{{X: -1}, {X: 1}}
	}
	unit := make([]models.Vec2, len(dirs))
	for i, d := range dirs {
		n := math.Hypot(d.X, d.Y)
		if !finite(n) || n == 0 {
			return nil
		}
		unit[i] = models.Vec2{X: d.X / n, Y: d.Y / n}
	}
	if len(unit) == 0 {
		return nil
	}
	// A fixed second word keeps the stream a function of seed alone.
	rng := rand.New(rand.NewPCG(seed, 0x7465657465722d73))
	var train []Shove
	for t := from + rng.ExpFloat64()*meanInterval; t < to && len(train) < n; t += rng.ExpFloat64() * meanInterval {
		size := minImpulse + rng.Float64()*(maxImpulse-minImpulse)
		d := unit[rng.IntN(len(unit))]
		train = append(train, Shove{At: t, Impulse: models.Vec2{X: size * d.X, Y: size * d.Y}})
	}
	return train
}
