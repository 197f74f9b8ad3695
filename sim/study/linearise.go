package study

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"teeter/models"
	"teeter/sim"
)

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
// To be linear about the stand the kicked rig is idealised: sensor noise
// and quantization, actuator deadbands and backlash are set to zero.

// LineariseOptions set up an identification. Zero values take defaults.
type LineariseOptions struct {
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

func (o *LineariseOptions) defaults() {
	if o.Settle <= 0 {
		o.Settle = 2
	}
	if o.Span <= 0 {
		o.Span = 4
	}
	if o.Tol <= 0 {
		o.Tol = 1e-4
	}
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

// kick is one input of an identification: a shove or a screw nudge.
type kick struct {
	name     string
	shove    models.Vec2 // impulse on the fall-watch link, N*s
	actuator string      // nudge this screw
	size     float64     // the shove's impulse or the nudge, to scale by
}

// responses are the sampled impulse responses of an idealised rig: y[k]
// holds, for row k after the kick (k = 1..), the outputs for each kick,
// y[k][i*m+j] for output i and kick j.
type responses struct {
	outputs []string
	kicks   []kick
	T       float64
	y       [][]float64
}

// Ideal is the rig with everything that makes the loop nonlinear about the
// stand taken out: no sensor noise, no quantization, no deadband, no
// backlash.
func (r *Rig) Ideal() *Rig {
	robot := r.Robot.Clone()
	robot.NoiseScale = 0
	for i := range robot.Sensors {
		robot.Sensors[i].Bits = 0
	}
	for i := range robot.Actuators {
		robot.Actuators[i].Deadband = 0
		robot.Actuators[i].Backlash = 0
	}
	return &Rig{Robot: robot, Spec: r.Spec, Gains: r.Gains}
}

// measure runs the rig once per kick and once unkicked, and returns the
// difference of the named output columns from the kick on, scaled by each
// kick's size and decimated to at most maxSamples rows.
func (r *Rig) measure(opt LineariseOptions, kicks []kick, outputs []string, maxSamples int) (*responses, error) {
	p0, _, err := r.Build(sim.Options{Seed: opt.Seed})
	if err != nil {
		return nil, err
	}
	rate := sim.DefaultControlRate
	if g, _ := r.Controller(); g != nil {
		rate = g.Rate()
	}
	// The kick lands on a controller tick.
	settle := math.Ceil(opt.Settle*rate-1e-9) / rate
	for _, name := range outputs {
		if p0.Recorder().Index(name) < 0 {
			return nil, fmt.Errorf("linearise: no recorded column %q", name)
		}
	}
	run := func(k *kick) ([][]float64, error) {
		var o sim.Options
		o.Seed = opt.Seed
		if k != nil && k.actuator == "" {
			o.Shoves = []sim.Shove{{At: settle, Impulse: k.shove}}
		}
		p, _, err := r.Build(o)
		if err != nil {
			return nil, err
		}
		if err := p.RunFor(settle); err != nil {
			return nil, fmt.Errorf("linearise: while settling: %w", err)
		}
		if k != nil && k.actuator != "" {
			if err := p.NudgeScrew(k.actuator, k.size); err != nil {
				return nil, err
			}
		}
		if err := p.RunFor(opt.Span + 2/rate); err != nil {
			return nil, fmt.Errorf("linearise: after kick %s: %w", kickName(k), err)
		}
		rec := p.Recorder()
		t := rec.Column("time")
		i0 := slices.IndexFunc(t, func(v float64) bool { return v > settle-0.5/rate })
		cols := make([][]float64, len(outputs))
		for i, name := range outputs {
			cols[i] = rec.Column(name)[i0:]
		}
		return cols, nil
	}
	base, err := run(nil)
	if err != nil {
		return nil, err
	}
	n := int(math.Floor(opt.Span * rate))
	dec := max(1, (n+maxSamples-1)/maxSamples)
	samples := n / dec
	p, m := len(outputs), len(kicks)
	res := &responses{outputs: outputs, kicks: kicks, T: float64(dec) / rate, y: make([][]float64, samples+1)}
	for k := range res.y {
		res.y[k] = make([]float64, p*m)
	}
	for j := range kicks {
		cols, err := run(&kicks[j])
		if err != nil {
			return nil, err
		}
		for i := range outputs {
			for k := 1; k <= samples; k++ {
				// Row 0 is the tick at the kick; row k*dec is k samples on.
				res.y[k][i*m+j] = (cols[i][k*dec] - base[i][k*dec]) / kicks[j].size
			}
		}
	}
	return res, nil
}

func kickName(k *kick) string {
	if k == nil {
		return "none"
	}
	return k.name
}

// realisation is a discrete model x(k+1) = A x(k) + B u(k), y = C x, with
// sample interval T.
type realisation struct {
	a, b, c *mat.Dense
	T       float64
	sv      []float64 // the Hankel matrix's singular values
}

// era realises y (Markov parameters y[1..], each p x m, y[k][i*m+j]) by
// the eigensystem realisation algorithm: the block Hankel matrix
// H0 = [y(i+j+1)] = U S V^T, truncated to order n, gives
// A = S^-1/2 U^T H1 V S^-1/2 with H1 = [y(i+j+2)], B the first m columns
// of S^1/2 V^T and C the first p rows of U S^1/2.
func era(y [][]float64, p, m int, order int, tol float64) (*realisation, error) {
	n := len(y) - 1 // usable parameters y[1..n]
	if n < 4 {
		return nil, errors.New("era: too few samples")
	}
	rows := (n - 1) / 2
	cols := n - 1 - rows
	h0 := mat.NewDense(rows*p, cols*m, nil)
	h1 := mat.NewDense(rows*p, cols*m, nil)
	for bi := 0; bi < rows; bi++ {
		for bj := 0; bj < cols; bj++ {
			for i := 0; i < p; i++ {
				for j := 0; j < m; j++ {
					h0.Set(bi*p+i, bj*m+j, y[bi+bj+1][i*m+j])
					h1.Set(bi*p+i, bj*m+j, y[bi+bj+2][i*m+j])
				}
			}
		}
	}
	var svd mat.SVD
	if !svd.Factorize(h0, mat.SVDThin) {
		return nil, errors.New("era: SVD failed")
	}
	sv := svd.Values(nil)
	if len(sv) == 0 || !(sv[0] > 0) {
		return nil, errors.New("era: no response to the kicks")
	}
	if order <= 0 {
		for order < len(sv) && order < 40 && sv[order] > tol*sv[0] {
			order++
		}
	}
	order = min(order, len(sv))
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	un := u.Slice(0, rows*p, 0, order)
	vn := v.Slice(0, cols*m, 0, order)
	isq := make([]float64, order)
	sq := make([]float64, order)
	for i := range order {
		sq[i] = math.Sqrt(sv[i])
		isq[i] = 1 / sq[i]
	}
	var t1, a mat.Dense
	t1.Mul(un.T(), h1)
	a.Mul(&t1, vn)
	for i := range order {
		for j := range order {
			a.Set(i, j, a.At(i, j)*isq[i]*isq[j])
		}
	}
	b := mat.NewDense(order, m, nil)
	for i := range order {
		for j := range m {
			b.Set(i, j, sq[i]*vn.At(j, i))
		}
	}
	c := mat.NewDense(p, order, nil)
	for i := range p {
		for j := range order {
			c.Set(i, j, un.At(i, j)*sq[j])
		}
	}
	return &realisation{a: &a, b: b, c: c, sv: sv}, nil
}

// modes are the realisation's modes, continuous time, sorted by
// frequency, with their weights.
func (re *realisation) modes() ([]Mode, error) {
	var eig mat.Eigen
	if !eig.Factorize(re.a, mat.EigenBoth) {
		return nil, errors.New("linearise: eigen decomposition failed")
	}
	z := eig.Values(nil)
	var vr, vl mat.CDense
	eig.VectorsTo(&vr)
	eig.LeftVectorsTo(&vl)
	n, _ := re.a.Dims()
	p, _ := re.c.Dims()
	_, m := re.b.Dims()
	// Residue of mode i: (C v_i)(w_i^H B)/(w_i^H v_i); its size, over the
	// decay 1/(1-|z|^2) of the mode's sum of squares, is how much of the
	// responses it carries.
	weights := make([]float64, n)
	total := 0.0
	for i := range n {
		var wv complex128
		for k := range n {
			wv += cmplx.Conj(vl.At(k, i)) * vr.At(k, i)
		}
		cn, bn := 0.0, 0.0
		for r := range p {
			var s complex128
			for k := range n {
				s += complex(re.c.At(r, k), 0) * vr.At(k, i)
			}
			cn += real(s)*real(s) + imag(s)*imag(s)
		}
		for j := range m {
			var s complex128
			for k := range n {
				s += cmplx.Conj(vl.At(k, i)) * complex(re.b.At(k, j), 0)
			}
			bn += real(s)*real(s) + imag(s)*imag(s)
		}
		mag := cmplx.Abs(z[i])
		decay := 1 / math.Max(1-mag*mag, 1e-3)
		weights[i] = math.Sqrt(cn*bn*decay) / math.Max(cmplx.Abs(wv), 1e-300)
		total += weights[i]
	}
	var out []Mode
	for i, zi := range z {
		if imag(zi) < 0 {
			continue
		}
		s := cmplx.Log(zi) / complex(re.T, 0)
		wn := cmplx.Abs(s)
		md := Mode{FrequencyHz: wn / (2 * math.Pi), Real: real(s), Imag: imag(s), Weight: weights[i] / total}
		if imag(zi) > 0 {
			md.Weight *= 2 // the pair
		}
		if wn > 0 {
			md.Damping = -real(s) / wn
		}
		out = append(out, md)
	}
	slices.SortFunc(out, func(a, b Mode) int { return cmp.Compare(a.FrequencyHz, b.FrequencyHz) })
	return out, nil
}

// modeOutputs are the columns the modes are identified from: the torso
// tilt and every joint position.
func modeOutputs(r *models.Robot) []string {
	out := []string{"torso_tilt"}
	for _, j := range r.Joints {
		out = append(out, j.Name+".position")
	}
	return out
}

// screwKicks nudges each lead screw in turn.
func screwKicks(r *models.Robot, opt LineariseOptions) []kick {
	var ks []kick
	for _, a := range r.Actuators {
		if a.Kind != models.LeadScrew || a.Ballast {
			continue
		}
		size := opt.Nudge
		if size <= 0 {
			size = 1e-4 // 0.1 mm
			if rotary(r, &a) {
				size = 0.1 * math.Pi / 180
			}
		}
		ks = append(ks, kick{name: "nudge " + a.Name, actuator: a.Name, size: size})
	}
	return ks
}

// rotary reports an actuator that turns a revolute joint.
func rotary(r *models.Robot, a *models.Actuator) bool {
	if a.Joint == "" {
		return false
	}
	for _, j := range r.Joints {
		if j.Name == a.Joint {
			return j.Kind == models.Revolute
		}
	}
	return false
}

// Modes identifies the closed-loop modes of the rig standing, from a shove
// on its fall-watch link and a nudge of each lead screw (see the comment at
// the top of this file), sorted by frequency.
func (r *Rig) Modes(opt LineariseOptions) ([]Mode, error) {
	opt.defaults()
	ideal := r.Ideal()
	mass := 0.0
	for _, l := range ideal.Robot.Links {
		mass += l.Mass
	}
	size := opt.Shove
	if size <= 0 {
		size = 0.02 * mass
	}
	dir := models.Vec2{X: size}
	kicks := append([]kick{{name: "shove", shove: dir, size: size}}, screwKicks(ideal.Robot, opt)...)
	outputs := modeOutputs(ideal.Robot)
	res, err := ideal.measure(opt, kicks, outputs, maxEraSamples(len(outputs), len(kicks)))
	if err != nil {
		return nil, err
	}
	normalise(res)
	re, err := era(res.y, len(outputs), len(kicks), opt.Order, opt.Tol)
	if err != nil {
		return nil, err
	}
	re.T = res.T
	return re.modes()
}

// maxEraSamples keeps the Hankel matrix near 1000 x 500 whatever the
// numbers of outputs and kicks.
func maxEraSamples(p, m int) int {
	return max(60, min(300, 2*1000/max(p, 2*m)))
}

// normalise scales each output to unit RMS over all kicks, so that outputs
// in metres do not vanish beside outputs in radians.
func normalise(res *responses) {
	m := len(res.kicks)
	for i := range res.outputs {
		ss, n := 0.0, 0
		for _, row := range res.y[1:] {
			for j := range m {
				ss += row[i*m+j] * row[i*m+j]
				n++
			}
		}
		rms := math.Sqrt(ss / float64(n))
		if !(rms > 0) {
			continue
		}
		for _, row := range res.y {
			for j := range m {
				row[i*m+j] /= rms
			}
		}
	}
}

// ModeTable formats modes for a terminal, one a line, flagging unstable
// ones; modes below minWeight are left out.
func ModeTable(modes []Mode, minWeight float64) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%10s %9s %10s %10s %7s\n", "freq Hz", "damping", "Re s 1/s", "Im s rad/s", "weight")
	for _, m := range modes {
		if m.Weight < minWeight {
			continue
		}
		flag := ""
		if m.Unstable() {
			flag = "  UNSTABLE"
		} else if m.Imag == 0 {
			flag = "  (real)"
		}
		fmt.Fprintf(&b, "%10.3f %9.3f %10.3f %10.3f %6.1f%%%s\n", m.FrequencyHz, m.Damping, m.Real, m.Imag, 100*m.Weight, flag)
	}
	return b.String()
}
