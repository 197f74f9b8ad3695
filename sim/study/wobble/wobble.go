// Package wobble predicts the limit cycle that backlash in a lead screw's
// loop makes, by the describing function of backlash and harmonic balance
// on the loop's linear part measured from the rig, and runs the rig with
// the backlash to set the prediction beside the simulation.
package wobble

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"sort"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/metric"
	"teeter/sim/study/modes"
)

// BacklashDF is the describing function of backlash of total play width
// (the input must travel width to turn the output round) and unit slope,
// for a sine of amplitude a at its input (Gelb and Vander Velde,
// Multiple-Input Describing Functions and Nonlinear System Design, 1968,
// ch. 2). It is 0 for a <= width/2, where the output never moves, and
// tends to 1 for a much larger than the play. The phase lag is the
// backlash's hallmark.
func BacklashDF(a, width float64) complex128 {
	b := width / 2 // half the play
	if !(a > b) {
		return 0
	}
	r := 1 - 2*b/a
	re := 0.5 + (math.Asin(r)+r*math.Sqrt(1-r*r))/math.Pi
	im := -4 * b / (math.Pi * a) * (1 - b/a)
	return complex(re, im)
}

// BacklashCycle predicts the limit cycle of a loop made of a linear part
// g(jw) and backlash of the given width in series, by harmonic balance:
// 1 + N(a) g(jw) = 0. It scans the frequencies wlo..whi and the amplitudes
// above the play for the pair that best satisfies the balance and
// returns it, with the residual |1 + N g|; ok is false when no pair comes
// within 1e-3.
func BacklashCycle(g func(w float64) complex128, width, wlo, whi float64) (a, w, residual float64, ok bool) {
	best := math.Inf(1)
	res := func(a, w float64) float64 { return cmplx.Abs(1 + BacklashDF(a, width)*g(w)) }
	// Coarse grid on log scales, then a pattern search around the best.
	for i := 0; i <= 200; i++ {
		wi := wlo * math.Pow(whi/wlo, float64(i)/200)
		for k := 1; k <= 200; k++ {
			ak := width / 2 * math.Pow(1000, float64(k)/200)
			if v := res(ak, wi); v < best {
				best, a, w = v, ak, wi
			}
		}
	}
	da, dw := a*0.05, w*0.05
	for it := 0; it < 2000 && (da > a*1e-10 || dw > w*1e-10); it++ {
		moved := false
		for _, s := range [][2]float64{{da, 0}, {-da, 0}, {0, dw}, {0, -dw}} {
			if v := res(a+s[0], w+s[1]); a+s[0] > width/2 && w+s[1] > 0 && v < best {
				best, a, w, moved = v, a+s[0], w+s[1], true
			}
		}
		if !moved {
			da, dw = da/2, dw/2
		}
	}
	return a, w, best, best < 1e-3
}

// The linear part of a loop closed through one screw's backlash is measured
// from the rig itself: with no backlash the screw is rigid, so a slip d of
// the screw (sim's NudgeScrew) enters the loop where the play would be. The
// output then follows y = S d with S = 1/(1 + G), where G is everything the
// output's motion does to the screw (sensors, controller, motor) in the
// sign convention screw = -G y of BacklashCycle. The step response to the
// slip is realised by the eigensystem realisation algorithm (package modes),
// S(jw) read off the model, and G = 1/S - 1.

// Spec asks for the backlash limit cycle of some screws.
type Spec struct {
	Actuators []string // lead screws given the backlash
	Backlash  float64  // total play, m (or rad for rotary screws)
	Duration  float64  // s of simulation (default 40)
	Window    float64  // s at the end of it measured (default half the duration)
	Seed      uint64
	Lin       modes.Options // for the measurement of the linear part (Span default 3 s)
}

// Prediction is the describing function's answer for one screw's
// loop, the other screws held rigid.
type Prediction struct {
	Actuator    string  `json:"actuator"`
	Found       bool    `json:"found"`        // the harmonic balance has a solution
	ScrewAmp    float64 `json:"screw_amp"`    // amplitude at the backlash's input (the screw), m or rad
	OutputAmp   float64 `json:"output_amp"`   // at its output (the driven coordinate)
	TiltAmp     float64 `json:"tilt_amp_deg"` // of the torso tilt
	FrequencyHz float64 `json:"frequency_hz"` // of the cycle
	Residual    float64 `json:"residual"`     // |1 + N G| at the solution
	Rotary      bool    `json:"rotary"`       // amplitudes in rad, else m
	CrossoverHz float64 `json:"crossover_hz"` // where |G| = 1, for orientation
	PhaseDeg    float64 `json:"phase_deg"`    // arg G there
}

// Result puts the prediction beside the simulation.
type Result struct {
	Backlash    float64      `json:"backlash"`
	Predictions []Prediction `json:"predictions"`
	// The simulation with the backlash in every listed screw.
	Fell        bool               `json:"fell"`
	TiltAmp     float64            `json:"sim_tilt_amp_deg"`
	FrequencyHz float64            `json:"sim_frequency_hz"`
	ScrewAmp    map[string]float64 `json:"sim_screw_amp"` // per screw, m or rad
	OutputAmp   map[string]float64 `json:"sim_output_amp"`
}

// LinearPart measures the linear part G of the loop through one screw (see
// above) and returns it as a function of w, with the frequency response
// of the torso tilt to the screw's output, for converting amplitudes.
func LinearPart(r *rig.Rig, actuator string, opt modes.Options) (g, tiltPerOutput func(w float64) complex128, err error) {
	if opt.Span <= 0 {
		opt.Span = 3
	}
	opt = opt.Filled()
	ideal := modes.Ideal(r)
	ks := modes.ScrewKicks(ideal.Robot, opt)
	k := slices.IndexFunc(ks, func(k modes.Kick) bool { return k.Actuator == actuator })
	if k < 0 {
		return nil, nil, fmt.Errorf("wobble: %q is not a lead screw of %s", actuator, r.Robot.Name)
	}
	outputs := []string{actuator + ".output", "torso_tilt"}
	res, err := modes.Measure(ideal, opt, ks[k:k+1], outputs, 400)
	if err != nil {
		return nil, nil, err
	}
	re, err := modes.ERA(res, opt.Order, opt.Tol)
	if err != nil {
		return nil, nil, err
	}
	step := func(w float64) (y, tilt complex128) {
		h := re.Response(w)
		// The slip is a step: S = H (1 - 1/z), and half a sample forward
		// because the sampled differences lag the motion by that on average.
		z := cmplx.Exp(complex(0, w*re.T))
		f := (1 - 1/z) * cmplx.Sqrt(z)
		return h[0] * f, h[1] * f
	}
	memo := map[float64]complex128{} // the harmonic balance asks for each w many times
	g = func(w float64) complex128 {
		if v, ok := memo[w]; ok {
			return v
		}
		s, _ := step(w)
		memo[w] = 1/s - 1
		return memo[w]
	}
	tiltPerOutput = func(w float64) complex128 {
		s, t := step(w)
		return t / s
	}
	return g, tiltPerOutput, nil
}

// Run predicts the backlash limit cycle of each listed screw's loop by
// the describing function and runs the rig with the backlash in all of
// them to measure the real one.
func Run(r *rig.Rig, spec Spec) (*Result, error) {
	if len(spec.Actuators) == 0 {
		return nil, errors.New("wobble: no actuators given")
	}
	if !(spec.Backlash > 0) {
		return nil, errors.New("wobble: the backlash must be positive")
	}
	if spec.Duration <= 0 {
		spec.Duration = 40
	}
	if spec.Window <= 0 || spec.Window > spec.Duration {
		spec.Window = spec.Duration / 2
	}
	res := &Result{Backlash: spec.Backlash, ScrewAmp: map[string]float64{}, OutputAmp: map[string]float64{}}
	for _, name := range spec.Actuators {
		g, tilt, err := LinearPart(r, name, spec.Lin)
		if err != nil {
			return nil, err
		}
		pr := Prediction{Actuator: name}
		if i := slices.IndexFunc(r.Robot.Actuators, func(a models.Actuator) bool { return a.Name == name }); i >= 0 {
			pr.Rotary = modes.Rotary(r.Robot, &r.Robot.Actuators[i])
		}
		pr.CrossoverHz, pr.PhaseDeg = crossover(g, 2*math.Pi*0.05, 2*math.Pi*50)
		a, w, resid, ok := BacklashCycle(g, spec.Backlash, 2*math.Pi*0.05, 2*math.Pi*20)
		pr.Residual = resid
		if ok {
			pr.Found = true
			pr.ScrewAmp = a
			pr.OutputAmp = a * cmplx.Abs(BacklashDF(a, spec.Backlash))
			pr.TiltAmp = pr.OutputAmp * cmplx.Abs(tilt(w)) * 180 / math.Pi
			pr.FrequencyHz = w / (2 * math.Pi)
		}
		res.Predictions = append(res.Predictions, pr)
	}
	sr := &rig.Rig{Robot: r.Robot.Clone(), Spec: r.Spec, Gains: r.Gains}
	for _, name := range spec.Actuators {
		if err := models.SetParam(sr.Robot, "actuators."+name+".backlash", spec.Backlash); err != nil {
			return nil, err
		}
	}
	o, err := sr.Run(spec.Duration, sim.Options{Seed: spec.Seed})
	if err != nil {
		return nil, err
	}
	res.Fell = o.Summary.Fell
	// A slow hunt needs a longer look than the osc_ metrics' window.
	t := o.Rec.Column("time")
	i := sort.SearchFloat64s(t, t[len(t)-1]-spec.Window)
	if len(t)-i >= 16 {
		dt := (t[len(t)-1] - t[i]) / float64(len(t)-1-i)
		a, f := metric.SpectralPeak(o.Rec.Column("torso_tilt")[i:], dt)
		res.TiltAmp, res.FrequencyHz = a*180/math.Pi, f
		for _, name := range spec.Actuators {
			res.ScrewAmp[name], _ = metric.SpectralPeak(o.Rec.Column(name + ".screw")[i:], dt)
			res.OutputAmp[name], _ = metric.SpectralPeak(o.Rec.Column(name + ".output")[i:], dt)
		}
	}
	return res, nil
}

// crossover finds where |g| falls through 1 on a log scan of wlo..whi,
// in Hz, with the phase of g there in degrees; NaN if it does not.
func crossover(g func(w float64) complex128, wlo, whi float64) (hz, phase float64) {
	prev := cmplx.Abs(g(wlo))
	for i := 1; i <= 400; i++ {
		w := wlo * math.Pow(whi/wlo, float64(i)/400)
		v := cmplx.Abs(g(w))
		if prev >= 1 && v < 1 {
			return w / (2 * math.Pi), cmplx.Phase(g(w)) * 180 / math.Pi
		}
		prev = v
	}
	return math.NaN(), math.NaN()
}
