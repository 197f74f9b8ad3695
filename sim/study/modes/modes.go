// Package modes identifies the closed-loop modes of a standing robot
// (frequency, damping, weight) by the eigensystem realisation algorithm from
// the responses of the whole loop to small kicks.
//
// The closed-loop modes come from system identification, not from
// differentiating the plant: the plant's state is spread over cp's bodies,
// the screws, the sensors' latency rings and the controller's integrators
// and filters, and only some of it is in reach. Instead the rig stands
// still, is kicked once per input (a small shove on the torso, a small slip
// of each screw), and the kicked run less an unkicked twin is the impulse
// response of the whole loop, everything included. The eigensystem
// realisation algorithm (Juang and Pappa, J. Guidance 8(5), 1985; the
// Ho-Kalman construction) turns the responses into a discrete model
// x(k+1) = A x(k), and the eigenvalues z of A give the modes s = ln(z)/T.
//
// To be linear about the stand the kicked rig is idealised (see Ideal).
package modes

import (
	"teeter/models"
	"teeter/sim/rig"
)

// Options set up an identification. Zero values take defaults.
type Options struct {
	Settle float64 // s the rig stands before the kick (default 2)
	Span   float64 // s of response used (default 4)
	// Shove is the impulse of the shove on the fall-watch link, N*s
	// (default 0.02 N*s per kg of robot, small enough to stay linear).
	Shove float64
	// Nudge is the screw slip, m for linear screws, rad for rotary ones
	// (defaults 0.1 mm and 0.1 deg).
	Nudge float64
	// Order is the model order; 0 chooses it from the singular values
	// (those above Tol times the largest, at most 40).
	Order int
	Tol   float64 // default 1e-4
	Seed  uint64
}

// Filled is the options with their defaults in place of zero values.
func (o Options) Filled() Options {
	if o.Settle <= 0 {
		o.Settle = 2
	}
	if o.Span <= 0 {
		o.Span = 4
	}
	if o.Tol <= 0 {
		o.Tol = 1e-4
	}
	return o
}

// Mode is one closed-loop mode: a pair of complex conjugate poles (reported
// once, with Imag >= 0) or a real pole.
type Mode struct {
	FrequencyHz float64 `json:"frequency_hz"` // undamped natural frequency |s|/(2 pi)
	Damping     float64 `json:"damping"`      // -Re(s)/|s|; below 0 is unstable
	Real        float64 `json:"real"`         // Re(s), 1/s
	Imag        float64 `json:"imag"`         // Im(s), rad/s
	// Weight is the mode's share of the identified impulse responses (its
	// residues' size, summed over the kicks), 0..1: a mode of tiny weight is
	// barely excited or barely seen, and may be an artefact of the fit.
	Weight float64 `json:"weight"`
}

// Unstable reports a mode that grows.
func (m Mode) Unstable() bool { return m.Real > 0 }

// Kick is one input of an identification: a shove or a screw nudge.
type Kick struct {
	Name     string
	Shove    models.Vec2 // impulse on the fall-watch link, N*s
	Actuator string      // nudge this screw
	Size     float64     // the shove's impulse or the nudge, to scale by
}

// Responses are the sampled impulse responses of an idealised rig: Y[k]
// holds, for row k after the kick (k = 1..), the outputs for each kick,
// Y[k][i*m+j] for output i and kick j, T apart.
type Responses struct {
	Outputs []string
	Kicks   []Kick
	T       float64
	Y       [][]float64
}

// IdealNote says in a few words what Ideal takes out.
const IdealNote = "no noise, quantization, deadband, backlash or joint friction"

// Ideal is the rig with everything that makes the loop nonlinear about the
// stand taken out: no sensor noise, no quantization, no deadband, no
// backlash, no joint friction (Coulomb friction has no slope at rest; a
// joint its screw holds without play does not slide anyway).
func Ideal(r *rig.Rig) *rig.Rig {
	robot := r.Robot.Clone()
	robot.NoiseScale = 0
	for i := range robot.Sensors {
		robot.Sensors[i].Bits = 0
	}
	for i := range robot.Joints {
		robot.Joints[i].Friction = 0
	}
	for i := range robot.Actuators {
		robot.Actuators[i].Deadband = 0
		robot.Actuators[i].Backlash = 0
	}
	return &rig.Rig{Robot: robot, Spec: r.Spec, Gains: r.Gains}
}
