package modes

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// Linear is the closed loop linearised about the standing state: one
// controller tick of the whole loop, x(k+1) = A x(k), over the plant's state
// vector (sim's Plant.State: bodies, screws, sensors' latency, the
// controller's integrators and filters).
type Linear struct {
	A *mat.Dense
	T float64 // s, one controller tick
	// Kicks are B's columns (see kicksAndOutputs).
	Kicks []Kick
	b     *mat.Dense
	c     *mat.Dense // the outputs, in state terms
}

// fastest is the decay per tick below which an eigenvalue is not a mode of
// motion but a state the loop forgets at once, its time constant shorter
// than a tick: a sample shifted through a latency ring, an output
// recomputed every tick, a solver's impulse, a joint error the plant
// removes by moving the bodies back onto their joints.
var fastest = math.Exp(-1)

// neutral is the size of s, 1/s, below which an eigenvalue is a position
// nothing restores rather than a mode: where the robot stands on the
// ground (its damping ratio is rounding).
const neutral = 1e-3

// Linearise linearises the idealised rig (see Ideal) about its state after
// opt.Settle by central finite differences: each state entry in turn is
// moved by a small step either way from the saved stand, the loop run one
// controller tick, and the difference of the two states reached is a
// column of A. The screws are tied two-sided first (sim's
// Plant.TieScrews): at zero play that is what they are, and it keeps the
// tick smooth where a screw's load turns round. The controller must expose
// its state (a controller graph does; a controller program does not).
func Linearise(r *rig.Rig, opt Options) (*Linear, error) {
	if r.Program != nil {
		return nil, errors.New("modes: a controller program's state is out of reach; identify the modes from kicks instead")
	}
	opt = opt.Filled()
	ideal := Ideal(r)
	p, _, err := ideal.Build(sim.Options{Seed: opt.Seed})
	if err != nil {
		return nil, err
	}
	if err := p.RunFor(opt.Settle); err != nil {
		return nil, fmt.Errorf("modes: while settling: %w", err)
	}
	// On to just before a controller tick (a tick writes a recorder row),
	// where the state of the sampled-data loop is taken.
	steps := int(math.Round(p.PhysicsRate() / ideal.ControlRate()))
	for rows := p.Recorder().Len(); p.Recorder().Len() == rows; {
		if err := p.Step(); err != nil {
			return nil, fmt.Errorf("modes: while settling: %w", err)
		}
	}
	if err := p.RunFor(float64(steps-1) / p.PhysicsRate()); err != nil {
		return nil, fmt.Errorf("modes: while settling: %w", err)
	}
	p.TieScrews()
	saved, err := p.Save()
	if err != nil {
		return nil, err
	}
	n := p.StateLen()
	x0 := make([]float64, n)
	p.State(x0)
	x, up, down := make([]float64, n), make([]float64, n), make([]float64, n)
	tick := func(out []float64) error {
		if err := p.Restore(saved); err != nil {
			return err
		}
		p.SetState(x)
		for range steps {
			if err := p.Step(); err != nil {
				return fmt.Errorf("modes: linearising: %w", err)
			}
		}
		p.State(out)
		return nil
	}
	a := mat.NewDense(n, n, nil)
	for j := range n {
		// Small against the entry's size, large against rounding.
		h := 1e-6 * math.Max(1, math.Abs(x0[j]))
		copy(x, x0)
		x[j] = x0[j] + h
		if err := tick(up); err != nil {
			return nil, err
		}
		x[j] = x0[j] - h
		if err := tick(down); err != nil {
			return nil, err
		}
		for i := range n {
			a.Set(i, j, (up[i]-down[i])/(2*h))
		}
	}
	lin := &Linear{A: a, T: float64(steps) / p.PhysicsRate()}
	lin.kicksAndOutputs(p, ideal.Robot, n)
	lin.normaliseOutputs()
	return lin, nil
}

// kicksAndOutputs fills B and C so that the modes carry weights like those
// of Identify: the kicks are a sideways shove on the torso and a spin of
// each link (a jump of its speed), the outputs the torso's tilt and each
// revolute joint's angle. A screw's nudge is not a kick here: below the
// plant's 20 um of slop the output does not follow a screw moved alone.
func (lin *Linear) kicksAndOutputs(p *sim.Plant, r *models.Robot, n int) {
	bodies := p.BodyStates()
	body := func(link string) int {
		for i, b := range bodies {
			if b == link {
				return i * 6
			}
		}
		return -1
	}
	torso := r.Fall.TorsoLink
	if torso == "" {
		torso = r.Root
	}
	lin.Kicks = []Kick{{Name: "shove", Size: 1}}
	for _, l := range r.Links {
		lin.Kicks = append(lin.Kicks, Kick{Name: "spin " + l.Name, Size: 1})
	}
	lin.b = mat.NewDense(n, len(lin.Kicks), nil)
	lin.b.Set(body(torso)+3, 0, 1)
	for j, l := range r.Links {
		lin.b.Set(body(l.Name)+5, j+1, 1)
	}
	c := [][]float64{make([]float64, n)}
	c[0][body(torso)+2] = 1
	for _, j := range r.Joints {
		if j.Kind == models.Revolute {
			row := make([]float64, n)
			row[body(j.Child)+2], row[body(j.Parent)+2] = 1, -1
			c = append(c, row)
		}
	}
	lin.c = mat.NewDense(len(c), n, nil)
	for i, row := range c {
		lin.c.SetRow(i, row)
	}
}

// normaliseOutputs scales each output to unit RMS over the kicks'
// responses C A^k B, as Identify scales its measured responses, so that
// outputs in metres do not vanish beside outputs in radians.
func (lin *Linear) normaliseOutputs() {
	p, _ := lin.c.Dims()
	_, m := lin.b.Dims()
	var x, next mat.Dense
	x.CloneFrom(lin.b)
	ss := make([]float64, p)
	for range int(4 / lin.T) {
		next.Mul(lin.A, &x)
		x.CloneFrom(&next)
		var y mat.Dense
		y.Mul(lin.c, &x)
		for i := range p {
			for j := range m {
				ss[i] += y.At(i, j) * y.At(i, j)
			}
		}
	}
	for i := range p {
		if ss[i] > 0 {
			row := lin.c.RawRowView(i)
			for k := range row {
				row[k] /= math.Sqrt(ss[i])
			}
		}
	}
}

// Modes are the linearised loop's modes, sorted by frequency, with the
// weights Identify gives them; the states the loop forgets within a tick
// and the neutral positions are left out.
func (lin *Linear) Modes() ([]Mode, error) {
	all, err := (&Realisation{a: lin.A, b: lin.b, c: lin.c, T: lin.T}).Modes()
	if err != nil {
		return nil, err
	}
	var out []Mode
	total := 0.0
	for _, m := range all {
		if m.Real > math.Log(fastest)/lin.T && 2*math.Pi*m.FrequencyHz > neutral {
			out = append(out, m)
			total += m.Weight
		}
	}
	for i := range out {
		out[i].Weight /= total
	}
	return out, nil
}
