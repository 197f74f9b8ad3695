package modes

import (
	"fmt"
	"math"
	"strings"

	"teeter/models"
	"teeter/sim/rig"
)

// modeOutputs are the columns the modes are identified from: the torso
// tilt and every joint position.
func modeOutputs(r *models.Robot) []string {
	out := []string{"torso_tilt"}
	for _, j := range r.Joints {
		out = append(out, j.Name+".position")
	}
	return out
}

// Identify identifies the closed-loop modes of the rig standing, from a shove
// on its fall-watch link and a nudge of each lead screw (see the comment at
// the top of this file), sorted by frequency.
func Identify(r *rig.Rig, opt Options) ([]Mode, error) {
	opt = opt.Filled()
	ideal := Ideal(r)
	mass := 0.0
	for _, l := range ideal.Robot.Links {
		mass += l.Mass
	}
	size := opt.Shove
	if size <= 0 {
		size = 0.02 * mass
	}
	dir := models.Vec2{X: size}
	kicks := append([]Kick{{Name: "shove", Shove: dir, Size: size}}, ScrewKicks(ideal.Robot, opt)...)
	outputs := modeOutputs(ideal.Robot)
	res, err := Measure(ideal, opt, kicks, outputs, maxEraSamples(len(outputs), len(kicks)))
	if err != nil {
		return nil, err
	}
	normalise(res)
	re, err := ERA(res, opt.Order, opt.Tol)
	if err != nil {
		return nil, err
	}
	return re.Modes()
}

// maxEraSamples keeps the Hankel matrix near 1000 x 500 whatever the
// numbers of outputs and kicks.
func maxEraSamples(p, m int) int {
	return max(60, min(300, 2*1000/max(p, 2*m)))
}

// normalise scales each output to unit RMS over all kicks, so that outputs
// in metres do not vanish beside outputs in radians.
func normalise(res *Responses) {
	m := len(res.Kicks)
	for i := range res.Outputs {
		ss, n := 0.0, 0
		for _, row := range res.Y[1:] {
			for j := range m {
				ss += row[i*m+j] * row[i*m+j]
				n++
			}
		}
		rms := math.Sqrt(ss / float64(n))
		if !(rms > 0) {
			continue
		}
		for _, row := range res.Y {
			for j := range m {
				row[i*m+j] /= rms
			}
		}
	}
}

// Table formats modes for a terminal, one a line, flagging unstable
// ones; modes below minWeight are left out.
func Table(modes []Mode, minWeight float64) string {
	var b strings.Builder
	fmt.Fprintln(&b, header())
	for _, m := range modes {
		if m.Weight >= minWeight {
			fmt.Fprintln(&b, row(m))
		}
	}
	return b.String()
}

func header() string {
	return fmt.Sprintf("%10s %9s %10s %10s %7s %9s", "freq Hz", "damping", "Re s 1/s", "Im s rad/s", "weight", "")
}

func row(m Mode) string {
	flag := ""
	if m.Unstable() {
		flag = "UNSTABLE"
	} else if m.Imag == 0 {
		flag = "(real)"
	}
	return fmt.Sprintf("%10.3f %9.3f %10.3f %10.3f %6.1f%% %9s", m.FrequencyHz, m.Damping, m.Real, m.Imag, 100*m.Weight, flag)
}
