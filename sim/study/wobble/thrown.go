package wobble

import "math"

// ThrownPlayDF is the describing function of play of total width whose
// side is set by the load on it: a robot's weight keeps the screw's nut
// against one flank of the thread, and the gap (the output less the screw)
// sits at +width/2 or -width/2 by the sign of the force, crossing over
// only when the force swings past the joint's friction the other way. It
// maps the force swing F1 (over a standing load static and a friction
// friction, both at the screw) to the gap: a relay with hysteresis and a
// bias (Gelb and Vander Velde, Multiple-Input Describing Functions and
// Nonlinear System Design, 1968: the relay with hysteresis in ch. 2, the
// bias, as a second input held fixed, in ch. 6). Writing the force
// static + f1 sin(th), the gap turns up at th1 = asin((friction -
// |static|)/f1) and down at th2 = pi - asin((-friction - |static|)/f1), and
// its fundamental is (2 width/2 / pi) (cos th1 - cos th2 + j (sin th2 -
// sin th1)) over f1. It is 0 when f1 <= |static| + friction, where the
// force never turns the play round.
func ThrownPlayDF(f1, width, friction, static float64) complex128 {
	bias := math.Abs(static)
	if !(f1 > bias+friction) {
		return 0
	}
	th1 := math.Asin((friction - bias) / f1)
	th2 := math.Pi - math.Asin((-friction-bias)/f1)
	k := width / math.Pi / f1 // 2 (width/2) / pi, per unit force
	return complex(k*(math.Cos(th1)-math.Cos(th2)), k*(math.Sin(th2)-math.Sin(th1)))
}

// DeadbandDF is the describing function of a motor's deadband d for a
// command swinging by a about zero: the motor passes the command when
// |u| >= d and stops below. From the definition (Gelb and Vander Velde,
// 1968, ch. 1), with al = asin(d/a), it is 1 - (2/pi)(al - sin al cos al),
// real (the deadband adds no lag), 0 for a <= d.
func DeadbandDF(a, d float64) float64 {
	if !(a > d) {
		return 0
	}
	r := d / a
	al := math.Asin(r)
	return 1 - 2/math.Pi*(al-r*math.Sqrt(1-r*r))
}
