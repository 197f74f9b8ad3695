// Package wobble predicts the limit cycle that backlash in lead screws
// makes, by harmonic balance of describing functions of the play (thrown
// across by the load where the standing load holds the nut on a flank,
// classic backlash where the joint's friction holds it) with the loops'
// linear part measured from the rig by sine injection, says where that
// model does not hold, and runs the rig with the backlash, shoved, to set
// the prediction beside the simulation.
package wobble

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"runtime"
	"slices"
	"sort"
	"strings"

	"golang.org/x/sync/errgroup"

	"gonum.org/v1/gonum/stat"

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
// 1 + N(a) g(jw) = 0 (see Balance).
func BacklashCycle(g func(w float64) complex128, width, wlo, whi float64) (a, w, residual float64, ok bool) {
	return Balance(func(a, w float64) complex128 { return 1 + BacklashDF(a, width)*g(w) }, width/2, wlo, whi)
}

// Balance solves a harmonic balance f(a, w) = 0 over the frequencies
// wlo..whi and the amplitudes from alo to 1000 times it: it scans for every pair
// that satisfies it to within 1e-3, keeps those that are stable cycles
// (stable), and returns the one of largest amplitude with its residual
// |f|; ok is false when there is none, and the best pair found is
// returned.
func Balance(f func(a, w float64) complex128, alo, wlo, whi float64) (a, w, residual float64, ok bool) {
	const n = 200
	res := func(a, w float64) float64 { return cmplx.Abs(f(a, w)) }
	ai := func(k int) float64 { return alo * math.Pow(1000, float64(k)/n) }
	wi := func(i int) float64 { return wlo * math.Pow(whi/wlo, float64(i)/n) }
	grid := make([][]float64, n+1)
	for i := range grid {
		grid[i] = make([]float64, n+1)
		for k := 1; k <= n; k++ {
			grid[i][k] = res(ai(k), wi(i))
		}
		grid[i][0] = math.Inf(1)
	}
	best := math.Inf(1)
	for i := 0; i <= n; i++ {
		for k := 1; k <= n; k++ {
			if !localMinimum(grid, i, k) {
				continue
			}
			ca, cw, v := refine(res, ai(k), wi(i), alo)
			if v < best && !ok {
				a, w, best = ca, cw, v
			}
			if v < 1e-3 && stable(f, ca, cw) && (!ok || ca > a) {
				a, w, best, ok = ca, cw, v, true
			}
		}
	}
	return a, w, best, ok
}

func localMinimum(grid [][]float64, i, k int) bool {
	v := grid[i][k]
	for di := -1; di <= 1; di++ {
		for dk := -1; dk <= 1; dk++ {
			j, m := i+di, k+dk
			if (di != 0 || dk != 0) && j >= 0 && j < len(grid) && m >= 0 && m < len(grid[j]) && grid[j][m] < v {
				return false
			}
		}
	}
	return true
}

// refine is a pattern search for the balance from a grid point, over
// amplitudes above alo.
func refine(res func(a, w float64) float64, a, w, alo float64) (float64, float64, float64) {
	best := res(a, w)
	da, dw := a*0.05, w*0.05
	for it := 0; it < 2000 && (da > a*1e-10 || dw > w*1e-10); it++ {
		moved := false
		for _, s := range [][2]float64{{da, 0}, {-da, 0}, {0, dw}, {0, -dw}} {
			if v := res(a+s[0], w+s[1]); a+s[0] > alo && w+s[1] > 0 && v < best {
				best, a, w, moved = v, a+s[0], w+s[1], true
			}
		}
		if !moved {
			da, dw = da/2, dw/2
		}
	}
	return a, w, best
}

// stable applies Loeb's criterion to a solution of the balance: writing
// f(a, w) = U + jV, the cycle is stable when
// dU/da dV/dw - dU/dw dV/da > 0 (Gelb and Vander Velde, 1968, ch. 2; the
// sign checked on the servo of the tests, whose larger cycle is the one
// the simulation settles on). A determinant det(I + N G) is a product of
// such factors; the others, constant near a root of one, turn and scale
// the (U, V) plane without changing the sign.
func stable(f func(a, w float64) complex128, a, w float64) bool {
	ha, hw := a*1e-5, w*1e-5
	fa := (f(a+ha, w) - f(a-ha, w)) / complex(2*ha, 0)
	fw := (f(a, w+hw) - f(a, w-hw)) / complex(2*hw, 0)
	return real(fa)*imag(fw)-real(fw)*imag(fa) > 0
}

// The linear part of the loops through the screws is what the rest of the
// robot does with the gaps in the play (each joint's output less its
// screw): the robot's dynamics, the sensors, the controller and the motors
// turn a gap into loads on the screws and motion of the screws. With no
// play a screw is tied to its joint, so it is measured by injection: the
// idealised rig (package modes: no noise, no play anywhere) stands, a sine
// is added between one screw and its joint (the screw slips, the joint
// follows), and once the response is steady the Fourier coefficients over
// whole periods give each screw's load and motion per unit of that gap.
// The plays close the loops (see play), and the harmonic balance of the
// two is the prediction (Slotine and Li, Applied Nonlinear Control, 1991,
// ch. 5; Gelb and Vander Velde, 1968, ch. 2).

// Spec asks for the backlash limit cycle of some screws.
type Spec struct {
	Actuators []string // lead screws, each given the backlash in turn (default Screws)
	Backlash  float64  // total play, m (or rad for rotary screws)
	Duration  float64  // s of simulation (default 40)
	Window    float64  // s at the end of it measured (default half the duration)
	Seed      uint64
	// Kicks are the shoves at 1 s, N*s, one simulated run each (default
	// DefaultKicks). Play can leave a robot calm after one shove and
	// wobbling after another, the two separated by an unstable cycle
	// (Gelb and Vander Velde, 1968, ch. 2); on the sagittal demo with
	// 0.5 mm at the ankle, calm and wobbling even alternate with the
	// shove's size. One shove alone could report calm for a robot that
	// wobbles once bumped.
	Kicks []float64
}

// DefaultKicks are five shoves from 0.02 to 0.16 N*s per kg of the
// robot, in equal ratios.
func DefaultKicks(robot *models.Robot) []float64 {
	mass := 0.0
	for _, l := range robot.Links {
		mass += l.Mass
	}
	out := make([]float64, 5)
	for i := range out {
		out[i] = 0.02 * mass * math.Pow(8, float64(i)/float64(len(out)-1))
	}
	return out
}

// Screws are the robot's lead screws that can carry the play: all but the
// ballast's, which moves a mass, not a joint.
func Screws(robot *models.Robot) []string {
	var out []string
	for _, a := range robot.Actuators {
		if a.Kind == models.LeadScrew && !a.Ballast {
			out = append(out, a.Name)
		}
	}
	return out
}

// NoBalance is why a prediction was not made.
const NoBalance = "no limit cycle: the harmonic balance has no solution"

// Loose is why no prediction is made for several screws when one of them
// carries less standing load than its joint's friction: such a joint is
// free inside its play, and with another screw's play the robot can move
// inside both without either screw or either load deciding the sides,
// which neither play model covers (the simulation of the built-in frontal
// robot wobbles with the play in its hips and ankles together, each pair
// alone calm).
const Loose = "not valid here: %s stands with %.2f %s of load, under its joint's %.2f %[3]s of friction, so its joint is loose inside the play; with the play in other screws too the model does not hold; read the simulation"

// Unstable is why no cycle is predicted though the balance has a
// solution: it is an unstable cycle, the edge between staying calm and
// being driven off by a large enough shove, to a wobble the balance did
// not find.
const Unstable = "not valid here: the balance has only an unstable cycle (%.3f deg at %.2f Hz); a shove past it may start a wobble the model does not follow; read the simulation"

// Stalls is why a prediction is not valid: the cycle would swing a
// screw's load past its motor's stall force, where the motor stops, while
// the linear part has it follow its command whatever the load.
const Stalls = "not valid here: the cycle's load on %s swings %.0f %s, past its motor's stall force of %.0f %[3]s, where it stops; read the simulation"

// Saturates is why a prediction is not valid: the cycle would need a
// motor command beyond full PWM.
const Saturates = "not valid here: the cycle's command swings %.0f %% of full PWM, past what the motor can take; read the simulation"

// Prediction is the describing function's answer for one screw's loop,
// the other screws without play, or for all the screws' plays together.
// It is found (Found) or why not is said (Why: NoBalance, Unstable or
// Loose), and a cycle found is marked (NotValid) where the loop it was
// balanced on leaves out what the cycle would meet: a load past the
// motor's stall force (Stalls), a command past full PWM (Saturates).
type Prediction struct {
	Actuator    string  `json:"actuator"`
	Found       bool    `json:"found"`
	Why         string  `json:"why,omitempty"` // when not found
	ScrewAmp    float64 `json:"screw_amp"`     // amplitude at the backlash's input (the screw), m or rad
	OutputAmp   float64 `json:"output_amp"`    // at its output (the joint)
	TiltAmp     float64 `json:"tilt_amp_deg"`  // of the torso tilt
	FrequencyHz float64 `json:"frequency_hz"`  // of the cycle
	Residual    float64 `json:"residual"`      // of the harmonic balance at the solution (0 holds it exactly)
	Rotary      bool    `json:"rotary"`        // amplitudes in rad, else m
	// StaticLoad is the screw's load standing, and LoadAmp the load's
	// swing the cycle would need, N or N*m: a swing smaller than the
	// static load never turns the load round to cross the play.
	StaticLoad float64 `json:"static_load"`
	LoadAmp    float64 `json:"load_amp"`
	// CommandAmp is the largest swing of a screw's motor command in the
	// cycle, a fraction of full PWM.
	CommandAmp float64 `json:"command_amp"`
	// NotValid says why the answer found does not hold here, when it
	// does not.
	NotValid string `json:"not_valid,omitempty"`
}

// Simulated is the rig run with the backlash in one screw, kicked.
type Simulated struct {
	Kick        float64 `json:"kick_Ns"`
	Fell        bool    `json:"fell"`
	Dominant    bool    `json:"dominant"` // one frequency carries most of the tilt's swing
	TiltAmp     float64 `json:"tilt_amp_deg"`
	FrequencyHz float64 `json:"frequency_hz"`
	ScrewAmp    float64 `json:"screw_amp"` // m or rad
	OutputAmp   float64 `json:"output_amp"`
}

// Loop is one screw's prediction beside its simulation after each shove.
type Loop struct {
	Prediction
	Sims []Simulated `json:"sims"` // one per Spec.Kicks
}

// Wobbles is the run with the largest wobble, or nil when none wobbles.
func (l *Loop) Wobbles() *Simulated {
	var worst *Simulated
	for i := range l.Sims {
		if s := &l.Sims[i]; s.Wobbling() && (worst == nil || s.TiltAmp > worst.TiltAmp) {
			worst = s
		}
	}
	return worst
}

// Wobbling reports a run that stays up with its tilt swinging more than
// Calm in its strongest line, a steady cycle (Dominant) or not.
func (s *Simulated) Wobbling() bool { return !s.Fell && s.TiltAmp > Calm }

// Count is how many of the runs satisfy ok.
func (l *Loop) Count(ok func(*Simulated) bool) int {
	n := 0
	for i := range l.Sims {
		if ok(&l.Sims[i]) {
			n++
		}
	}
	return n
}

// Calm is the tilt swing, deg, below which a robot does not wobble
// (common practice: under a twentieth of a degree is sensor noise on a
// hobby IMU).
const Calm = 0.05

// Result is every listed screw's loop, and, for more than one screw, the
// rig run with the backlash in all of them at once.
type Result struct {
	Backlash float64 `json:"backlash"`
	Loops    []Loop  `json:"loops"`
	All      *Loop   `json:"all,omitempty"`
}

// Response is the linear part of the loops through some lead screws,
// measured at some frequencies by injecting a sine, one injection at a
// time: injection j < n slips screw j against its joint, injection n + q
// adds to the command of motor Driven[q] (the screws whose motors have a
// deadband, which the linear part leaves out, so that the balance can put
// it back). Per frequency, column j of each matrix holds the Fourier
// coefficients while injection j runs: X every screw (less a slip), Y
// every output, Load every screw's load, Command every motor's command
// from the controller (less an added sine), Offset the added sines, Tilt
// the torso tilt.
type Response struct {
	Actuators           []string
	Rotary              []bool
	Hz                  []float64
	Driven              []int
	X, Y, Load, Command []cmat // n x (n + len(Driven)) per frequency
	Offset              []cmat // len(Driven) x (n + len(Driven))
	Tilt                []cmat // 1 x (n + len(Driven))
	StaticLoad          []float64
	// Friction is each screw's joint friction as a force (or torque) at
	// the screw, and Deadband its motor's, a fraction of full PWM: the
	// linear part is measured without either (see modes.Ideal). Stall is
	// each motor's stall force (or torque).
	Friction, Deadband, Stall []float64
}

// responseHz are the frequencies measured, a log scale over the range a
// standing robot's loops live in.
func responseHz() []float64 {
	const lo, hi, n = 0.3, 15.0, 20
	out := make([]float64, n)
	for i := range out {
		out[i] = lo * math.Pow(hi/lo, float64(i)/(n-1))
	}
	return out
}

// Measure measures the linear part of the loops through the lead screws.
func Measure(r *rig.Rig, actuators []string, seed uint64) (*Response, error) {
	ideal := modes.Ideal(r)
	n := len(actuators)
	res := &Response{Actuators: actuators, Hz: responseHz(), StaticLoad: make([]float64, n)}
	for _, name := range actuators {
		i := slices.IndexFunc(ideal.Robot.Actuators, func(a models.Actuator) bool { return a.Name == name })
		if i < 0 || !slices.Contains(Screws(ideal.Robot), name) {
			return nil, fmt.Errorf("wobble: %q is not a lead screw of %s (the screws: %s)", name, ideal.Robot.Name, strings.Join(Screws(ideal.Robot), ", "))
		}
		res.Rotary = append(res.Rotary, modes.Rotary(ideal.Robot, &ideal.Robot.Actuators[i]))
		res.Deadband = append(res.Deadband, r.Robot.Actuators[i].Deadband)
		res.Stall = append(res.Stall, r.Robot.Actuators[i].StallForce)
	}
	p, _, err := ideal.Build(sim.Options{Seed: seed})
	if err != nil {
		return nil, err
	}
	if err := p.RunFor(settle); err != nil {
		return nil, fmt.Errorf("wobble: while settling: %w", err)
	}
	saved, err := p.Save()
	if err != nil {
		return nil, err
	}
	rec := p.Recorder()
	cols, err := findColumns(rec, r.Robot, actuators)
	if err != nil {
		return nil, err
	}
	for i := range actuators {
		res.StaticLoad[i] = rec.At(rec.Len()-1, cols.load[i])
	}
	res.Friction = slices.Clone(cols.friction)
	for i, d := range res.Deadband {
		if d > 0 {
			res.Driven = append(res.Driven, i)
		}
	}
	m := n + len(res.Driven)
	for k, hz := range res.Hz {
		x, y, load, command := newCmat(n, m), newCmat(n, m), newCmat(n, m), newCmat(n, m)
		offset, tilt := newCmat(len(res.Driven), m), newCmat(1, m)
		for j := range m {
			if err := p.Restore(saved); err != nil {
				return nil, err
			}
			var s swing
			var err error
			slipped, driven := j, -1
			if j < n {
				name := actuators[j]
				s, err = inject(p, slip(res.Rotary[j]), hz, cols.time, func(d, was float64) error { return p.NudgeScrew(name, d-was) })
			} else {
				slipped, driven = -1, res.Driven[j-n]
				name := actuators[driven]
				s, err = inject(p, cols.commandAmp[driven](hz), hz, cols.time, func(d, _ float64) error { return p.OffsetCommand(name, d) })
			}
			if err != nil {
				return nil, err
			}
			for i := range n {
				x.set(i, j, s.coef(cols.screw[i], indicator(i == slipped)))
				y.set(i, j, s.coef(cols.out[i], 0))
				load.set(i, j, s.coef(cols.load[i], 0))
				command.set(i, j, s.coef(cols.command[i], indicator(i == driven)))
			}
			for q, i := range res.Driven {
				if i == driven {
					offset.set(q, j, s.coef(cols.command[i], 0)-s.coef(cols.command[i], 1))
				}
			}
			tilt.set(0, j, s.coef(cols.tilt, 0))
			if j < n && y.at(j, j) == 0 {
				return nil, fmt.Errorf("wobble: no response at %.3g Hz", hz)
			}
			if k == 0 && j < n && cols.joint[j] >= 0 {
				// The screw's lever on its joint, from the slow swing:
				// the joint's friction torque over it is a force at the
				// screw.
				res.Friction[j] = cols.friction[j] * cmplx.Abs(s.coef(cols.joint[j], 0)/y.at(j, j))
			}
		}
		res.X, res.Y, res.Load, res.Command = append(res.X, x), append(res.Y, y), append(res.Load, load), append(res.Command, command)
		res.Offset, res.Tilt = append(res.Offset, offset), append(res.Tilt, tilt)
	}
	return res, nil
}

// slip is the amplitude a screw is slipped by against its joint, m or rad:
// well above the solver's 20 um of slop at a rigid screw, well below what
// upsets a standing robot.
func slip(rotary bool) float64 {
	if rotary {
		return 0.2 * math.Pi / 180
	}
	return 1e-4
}

func indicator(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// settle is how long the robot stands, s, before anything is injected.
const settle = 2.0

// responseColumns are the recorded columns Measure reads.
type responseColumns struct {
	time, tilt                int
	screw, out, load, command []int // per actuator
	// joint is the column of the joint a from/to screw turns (-1 for none
	// or a screw on its joint's own coordinate, whose friction is already
	// at the screw), and friction that joint's friction.
	joint    []int
	friction []float64
	// commandAmp is the command swing, at a frequency in Hz, that moves
	// the screw about as far as a slip does (the motor's speed over w),
	// within 1 to 30 % of full PWM.
	commandAmp []func(hz float64) float64
}

func findColumns(rec *sim.Recorder, robot *models.Robot, actuators []string) (responseColumns, error) {
	var err error
	col := func(name string) int {
		c := rec.Index(name)
		if c < 0 {
			err = fmt.Errorf("wobble: no recorded column %q", name)
		}
		return c
	}
	n := len(actuators)
	cols := responseColumns{time: col("time"), tilt: col("torso_tilt"),
		screw: make([]int, n), out: make([]int, n), load: make([]int, n), command: make([]int, n),
		joint: make([]int, n), friction: make([]float64, n), commandAmp: make([]func(float64) float64, n)}
	for i, name := range actuators {
		cols.screw[i], cols.out[i], cols.load[i], cols.command[i] = col(name+".screw"), col(name+".output"), col(name+".force"), col(name+".command")
		cols.joint[i] = -1
		a := &robot.Actuators[slices.IndexFunc(robot.Actuators, func(a models.Actuator) bool { return a.Name == name })]
		travel := slip(modes.Rotary(robot, a))
		cols.commandAmp[i] = func(hz float64) float64 {
			return math.Min(math.Max(travel*2*math.Pi*hz/a.NoLoadSpeed, 0.01), 0.3)
		}
		for _, j := range robot.Joints {
			switch {
			case j.Name == a.Joint:
				cols.friction[i] = j.Friction
			case a.From != nil && a.To != nil && (j.Parent == a.From.Link && j.Child == a.To.Link || j.Parent == a.To.Link && j.Child == a.From.Link):
				cols.joint[i], cols.friction[i] = col(j.Name+".position"), j.Friction
			}
		}
	}
	return cols, err
}

// swing is the recording of one injection: the rows over whole periods
// after the transient.
type swing struct {
	rec     *sim.Recorder
	rows    []int
	timeCol int
	amp, w  float64
}

// inject drives a sine amp sin(2 pi hz (t - settle)) into the plant from
// its state after settling, through drive (given the sine's value now and
// at the step before).
func inject(p *sim.Plant, amp, hz float64, timeCol int, drive func(d, was float64) error) (swing, error) {
	rec := p.Recorder()
	w := 2 * math.Pi * hz
	period := 1 / hz
	start := settle + math.Max(1, period)   // the transient dies out
	periods := math.Ceil(math.Max(3, 2*hz)) // at least 2 s
	end := start + periods*period
	was := 0.0
	first := rec.Len()
	for p.Time() < end {
		d := amp * math.Sin(w*(p.Time()-settle))
		if err := drive(d, was); err != nil {
			return swing{}, err
		}
		was = d
		if err := p.Step(); err != nil {
			return swing{}, fmt.Errorf("wobble: injecting %.3g Hz: %w", hz, err)
		}
	}
	s := swing{rec: rec, timeCol: timeCol, amp: amp, w: w}
	for k := first; k < rec.Len(); k++ {
		if t := rec.At(k, timeCol); t >= start && t < end {
			s.rows = append(s.rows, k)
		}
	}
	if len(s.rows) == 0 {
		return swing{}, fmt.Errorf("wobble: no samples at %.3g Hz", hz)
	}
	return s, nil
}

// coef is column c's Fourier coefficient at the injected frequency over
// the swing's whole periods, of the column less less times the injection
// and less its mean: the standing values are large beside the swing, and
// the samples cover whole periods only to within a sample.
func (s swing) coef(c int, less float64) complex128 {
	v := func(k int) float64 {
		return s.rec.At(k, c) - less*s.amp*math.Sin(s.w*(s.rec.At(k, s.timeCol)-settle))
	}
	mean := 0.0
	for _, k := range s.rows {
		mean += v(k)
	}
	mean /= float64(len(s.rows))
	var sum complex128
	for _, k := range s.rows {
		sum += complex(v(k)-mean, 0) * cmplx.Exp(complex(0, -s.w*(s.rec.At(k, s.timeCol)-settle)))
	}
	return sum
}

// loop is the linear part at one frequency per unit of what the
// nonlinear parts put into it: the gaps of some screws' plays (each
// joint's output less its screw), then the offsets their motors'
// deadbands make (the command reaching the motor less the controller's).
// Its rows are those screws' loads, screws, outputs and commands, and the
// torso tilt.
type loop struct{ force, screw, out, command, tilt cmat }

// sub is the loop through the listed screws' plays and their motors'
// deadbands, at frequency k, with the other screws tied without play; dz
// lists, per deadband in it, its screw's place in screws.
func (r *Response) sub(k int, screws []int) (l loop, dz []int, ok bool) {
	n := len(r.Actuators)
	cols := slices.Clone(screws)
	var offs []int // rows of Offset
	for q, i := range r.Driven {
		if at := slices.Index(screws, i); at >= 0 {
			cols, offs, dz = append(cols, n+q), append(offs, q), append(dz, at)
		}
	}
	pick := func(m cmat, rows []int) cmat {
		out := newCmat(len(rows), len(cols))
		for a, i := range rows {
			for b, j := range cols {
				out.set(a, b, m.at(i, j))
			}
		}
		return out
	}
	z := newCmat(len(cols), len(cols))
	for a, i := range screws {
		for b, j := range cols {
			z.set(a, b, r.Y[k].at(i, j)-r.X[k].at(i, j))
		}
	}
	for a, q := range offs {
		for b, j := range cols {
			z.set(len(screws)+a, b, r.Offset[k].at(q, j))
		}
	}
	per, ok := z.inverse()
	if !ok {
		return loop{}, nil, false
	}
	return loop{force: pick(r.Load[k], screws).mul(per), screw: pick(r.X[k], screws).mul(per),
		out: pick(r.Y[k], screws).mul(per), command: pick(r.Command[k], screws).mul(per),
		tilt: pick(r.Tilt[k], []int{0}).mul(per)}, dz, true
}

// Alone predicts the cycle of screw j's loop with the given play, the other
// screws without play.
func (r *Response) Alone(j int, width float64) Prediction {
	pr := r.predict([]int{j}, width)
	pr.Actuator, pr.Rotary = r.Actuators[j], r.Rotary[j]
	return pr
}

// Together predicts the cycle with the given play in every measured screw,
// each with its own amplitude and phase; the amplitudes given are the
// largest screw's.
func (r *Response) Together(width float64) Prediction {
	all := make([]int, len(r.Actuators))
	for i := range all {
		all[i] = i
	}
	pr := r.predict(all, width)
	pr.Actuator, pr.Rotary = "all", slices.Contains(r.Rotary, true) && !slices.Contains(r.Rotary, false)
	return pr
}

// predict solves the harmonic balance of the listed screws' plays (see
// play) and their motors' deadbands on the loops interpolated between the
// measured frequencies. The plays alone, every input swinging by the same
// multiple of its threshold, find the cycle and its stability (Balance;
// exact for one screw without a deadband); from there each play and
// deadband takes its own amplitude and phase (vectorBalance).
func (r *Response) predict(screws []int, width float64) Prediction {
	n := len(screws)
	var pr Prediction
	var els []element
	for _, i := range screws {
		pr.StaticLoad = math.Max(pr.StaticLoad, math.Abs(r.StaticLoad[i]))
		pl := newPlay(width, r.Friction[i], r.StaticLoad[i])
		if n > 1 && !pl.thrown {
			pr.Why = fmt.Sprintf(Loose, r.Actuators[i], math.Abs(r.StaticLoad[i]), loadUnit(r.Rotary[i]), r.Friction[i])
			return pr
		}
		els = append(els, pl)
	}
	loops := make([]loop, len(r.Hz))
	var dz []int
	for k := range r.Hz {
		var ok bool
		if loops[k], dz, ok = r.sub(k, screws); !ok {
			pr.Why = NoBalance
			return pr
		}
	}
	for _, at := range dz {
		els = append(els, deadband(r.Deadband[screws[at]]))
	}
	at := func(w float64, pick func(loop) cmat) cmat { return r.interpolate(loops, w, pick) }
	// inputs maps what goes in (gaps, offsets) to each part's input: a
	// play's load or screw, a deadband's command.
	inputs := func(w float64) cmat {
		force, screw, command := at(w, func(l loop) cmat { return l.force }), at(w, func(l loop) cmat { return l.screw }), at(w, func(l loop) cmat { return l.command })
		m := len(els)
		out := newCmat(m, m)
		for i := range m {
			from, row := command, 0
			switch {
			case i >= n:
				row = dz[i-n]
			case els[i].(play).thrown:
				from, row = force, i
			default:
				from, row = screw, i
			}
			copy(out.v[i*m:(i+1)*m], from.v[row*m:(row+1)*m])
		}
		return out
	}
	wlo, whi := 2*math.Pi*r.Hz[0], 2*math.Pi*r.Hz[len(r.Hz)-1]
	// start balances the first m parts (the plays, or all), every input
	// swinging by the same multiple of its threshold, the rest passing
	// what they are given, and returns what goes in, over all the parts;
	// ok is false when there is no stable balance, unstableOnly when there
	// is an unstable one (then returned).
	start := func(m int) (z cmat, w, resid float64, ok, unstableOnly bool) {
		block := func(w float64) cmat {
			all := inputs(w)
			out := newCmat(m, m)
			for i := range m {
				copy(out.v[i*m:(i+1)*m], all.v[i*all.cols:i*all.cols+m])
			}
			return out
		}
		d := func(ratio float64) cmat {
			out := newCmat(m, m)
			for i := range m {
				out.set(i, i, els[i].gapPer(ratio*els[i].threshold()))
			}
			return out
		}
		f := func(ratio, w float64) complex128 { return d(ratio).mul(block(w)).plusIdentity().det() }
		var ratio float64
		ratio, w, resid, ok = Balance(f, 1+1e-9, wlo, whi)
		// Balance returns its best pair when none is a stable cycle: a
		// root all the same is an unstable one.
		unstableOnly = !ok && resid < 1e-3
		if !ok && !unstableOnly {
			return cmat{}, w, resid, false, false
		}
		in, found := d(ratio).mul(block(w)).plusIdentity().nullVector()
		if !found {
			return cmat{}, w, resid, false, false
		}
		// Scaled so that the part furthest past its threshold is ratio past.
		u := block(w).mul(in)
		most := 0.0
		for i := range m {
			most = math.Max(most, cmplx.Abs(u.v[i])/els[i].threshold())
		}
		z = newCmat(len(els), 1)
		copy(z.v, in.scale(complex(ratio/most, 0)).v)
		// Each part left out takes what the cycle gives it.
		u = inputs(w).mul(z)
		for i := m; i < len(els); i++ {
			z.v[i] = -els[i].gapPer(cmplx.Abs(u.v[i])) * u.v[i]
		}
		return z, w, resid, ok, unstableOnly
	}
	tiltOf := func(z cmat, w float64) float64 {
		return cmplx.Abs(at(w, func(l loop) cmat { return l.tilt }).mul(z).at(0, 0)) * 180 / math.Pi
	}
	var z cmat
	var w float64
	found := false
	unstable := "" // a balance found that is an unstable cycle
	pr.Residual = math.Inf(1)
	for _, m := range []int{n, len(els)} {
		z0, w0, resid, ok, unstableOnly := start(m)
		switch {
		case unstableOnly && len(els) == 1:
			unstable = fmt.Sprintf(Unstable, tiltOf(z0, w0), w0/(2*math.Pi))
		case ok && len(els) > 1:
			z0, w0, resid, ok = vectorBalance(els, inputs, z0, w0)
			if ok && !stableAlong(els, inputs, z0, w0) {
				unstable, ok = fmt.Sprintf(Unstable, tiltOf(z0, w0), w0/(2*math.Pi)), false
			}
		}
		if !found {
			pr.Residual = math.Min(pr.Residual, resid)
		}
		if ok && (!found || maxAbsC(z0.v[:n]) > maxAbsC(z.v[:n])) {
			z, w, pr.Residual, found = z0, w0, resid, true
		}
		if m == len(els) {
			break
		}
	}
	if !found {
		pr.Why = NoBalance
		if unstable != "" {
			pr.Why = unstable
		}
		return pr
	}
	pr.Found = true
	pr.FrequencyHz = w / (2 * math.Pi)
	loads := at(w, func(l loop) cmat { return l.force }).mul(z)
	pr.LoadAmp = maxAbsC(loads.v)
	pr.TiltAmp = tiltOf(z, w)
	pr.ScrewAmp = maxAbsC(at(w, func(l loop) cmat { return l.screw }).mul(z).v)
	pr.OutputAmp = maxAbsC(at(w, func(l loop) cmat { return l.out }).mul(z).v)
	pr.CommandAmp = maxAbsC(at(w, func(l loop) cmat { return l.command }).mul(z).v)
	for a, i := range screws {
		if f := cmplx.Abs(loads.v[a]); f > r.Stall[i] {
			pr.NotValid = fmt.Sprintf(Stalls, r.Actuators[i], f, loadUnit(r.Rotary[i]), r.Stall[i])
		}
	}
	if pr.CommandAmp > 1 {
		pr.NotValid = fmt.Sprintf(Saturates, 100*pr.CommandAmp)
	}
	return pr
}

// stableAlong applies Loeb's criterion (see stable) to a solution of the
// vector balance along the ray through it: every part's input amplitude
// scaled by one factor, the balance det(I + D R(w)).
func stableAlong(els []element, inputs func(w float64) cmat, z cmat, w float64) bool {
	amps := inputs(w).mul(z)
	f := func(s, w float64) complex128 {
		d := newCmat(len(els), len(els))
		for i, el := range els {
			d.set(i, i, el.gapPer(s*cmplx.Abs(amps.v[i])))
		}
		return d.mul(inputs(w)).plusIdentity().det()
	}
	return stable(f, 1, w)
}

// interpolate is a loop's matrix at w (rad/s), each entry's magnitude and
// phase linear in log frequency between the measured ones, held at the
// ends.
func (r *Response) interpolate(loops []loop, w float64, pick func(loop) cmat) cmat {
	hz := w / (2 * math.Pi)
	k := sort.SearchFloat64s(r.Hz, hz)
	switch {
	case k == 0:
		return pick(loops[0])
	case k == len(r.Hz):
		return pick(loops[len(loops)-1])
	}
	f := math.Log(hz/r.Hz[k-1]) / math.Log(r.Hz[k]/r.Hz[k-1])
	lo, hi := pick(loops[k-1]), pick(loops[k])
	out := newCmat(lo.rows, lo.cols)
	for i := range lo.v {
		m := math.Exp((1-f)*math.Log(cmplx.Abs(lo.v[i])) + f*math.Log(cmplx.Abs(hi.v[i])))
		ph0 := cmplx.Phase(lo.v[i])
		ph1 := ph0 + math.Remainder(cmplx.Phase(hi.v[i])-ph0, 2*math.Pi)
		out.v[i] = cmplx.Rect(m, (1-f)*ph0+f*ph1)
	}
	return out
}

// loadUnit is the unit of a screw's load.
func loadUnit(rotary bool) string {
	if rotary {
		return "N*m"
	}
	return "N"
}

func maxAbsC(xs []complex128) float64 {
	m := 0.0
	for _, x := range xs {
		m = math.Max(m, cmplx.Abs(x))
	}
	return m
}

// Run predicts the backlash limit cycle of each listed screw's loop by
// the describing function and runs the rig with the backlash in that screw
// alone after each shove, to measure the real one.
func Run(r *rig.Rig, spec Spec) (*Result, error) {
	if len(spec.Actuators) == 0 {
		spec.Actuators = Screws(r.Robot)
	}
	if len(spec.Actuators) == 0 {
		return nil, fmt.Errorf("wobble: %s has no lead screw but the ballast's", r.Robot.Name)
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
	if len(spec.Kicks) == 0 {
		spec.Kicks = DefaultKicks(r.Robot)
	}
	spec.Kicks = slices.Sorted(slices.Values(spec.Kicks)) // smallest first, as the results list them
	for _, k := range spec.Kicks {
		if !(k > 0) {
			return nil, fmt.Errorf("wobble: a shove of %g N*s: each must be positive", k)
		}
	}
	resp, err := Measure(r, spec.Actuators, spec.Seed)
	if err != nil {
		return nil, err
	}
	res := &Result{Backlash: spec.Backlash}
	for j, name := range spec.Actuators {
		l := Loop{Prediction: resp.Alone(j, spec.Backlash)}
		if err := simulateAll(r, []string{name}, spec, &l); err != nil {
			return nil, err
		}
		res.Loops = append(res.Loops, l)
	}
	if len(spec.Actuators) > 1 {
		res.All = &Loop{Prediction: resp.Together(spec.Backlash)}
		if err := simulateAll(r, spec.Actuators, spec, res.All); err != nil {
			return nil, err
		}
	}
	return res, nil
}

// simulateAll runs the case after each shove, the runs spread over the
// cores.
func simulateAll(r *rig.Rig, actuators []string, spec Spec, l *Loop) error {
	l.Sims = make([]Simulated, len(spec.Kicks))
	var g errgroup.Group
	g.SetLimit(runtime.GOMAXPROCS(0))
	for i, kick := range spec.Kicks {
		g.Go(func() error {
			s, err := simulate(r, actuators, spec, kick)
			if err == nil {
				l.Sims[i] = *s
			}
			return err
		})
	}
	return g.Wait()
}

// simulate runs the rig with the backlash in every listed screw, the other
// screws without play, shoved at 1 s by kick N*s, and measures the cycle
// over the window at the end; the screw and output amplitudes are the
// first listed screw's.
func simulate(r *rig.Rig, actuators []string, spec Spec, kick float64) (*Simulated, error) {
	actuator := actuators[0]
	robot := r.Robot.Clone()
	screws := Screws(robot)
	for i := range robot.Actuators {
		if a := &robot.Actuators[i]; slices.Contains(screws, a.Name) {
			a.Backlash = 0
			if slices.Contains(actuators, a.Name) {
				a.Backlash = spec.Backlash
			}
		}
	}
	sr := &rig.Rig{Robot: robot, Spec: r.Spec, Gains: r.Gains}
	o, err := sr.Run(spec.Duration, sim.Options{Seed: spec.Seed, Shoves: []sim.Shove{{At: 1, Impulse: models.Vec2{X: kick}}}})
	if err != nil {
		return nil, err
	}
	s := &Simulated{Kick: kick, Fell: o.Summary.Fell}
	t := o.Rec.Column("time")
	i := sort.SearchFloat64s(t, t[len(t)-1]-spec.Window)
	if s.Fell || len(t)-i < 16 {
		return s, nil
	}
	dt := (t[len(t)-1] - t[i]) / float64(len(t)-1-i)
	tilt := o.Rec.Column("torso_tilt")[i:]
	a, f := metric.SpectralPeak(tilt, dt)
	s.TiltAmp, s.FrequencyHz = a*180/math.Pi, f
	// A sine of amplitude a has an RMS of a/sqrt(2); most of the swing's
	// RMS in that one line makes it the dominant harmonic (common practice).
	s.Dominant = a/math.Sqrt2 > 0.7*stat.PopStdDev(tilt, nil)
	s.ScrewAmp, _ = metric.SpectralPeak(o.Rec.Column(actuator + ".screw")[i:], dt)
	s.OutputAmp, _ = metric.SpectralPeak(o.Rec.Column(actuator + ".output")[i:], dt)
	return s, nil
}
