package wobble

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// element is a nonlinear part of the loop as the harmonic balance sees
// it: what it puts into the loop is minus gapPer times its input, for an
// input swinging by a, and below threshold it passes nothing on.
type element interface {
	gapPer(a float64) complex128
	threshold() float64
}

// deadband is a motor's deadband (a fraction of full PWM) as an element:
// what it puts in is the command reaching the motor less the
// controller's, (DeadbandDF - 1) times the controller's.
type deadband float64

func (d deadband) gapPer(a float64) complex128 { return complex(1-DeadbandDF(a, float64(d)), 0) }
func (d deadband) threshold() float64          { return float64(d) }

// play is one screw's play as the harmonic balance sees it. A screw whose
// standing load beats its joint's friction has its nut held on one flank
// and the play thrown across by the load (ThrownPlayDF, input the load);
// one whose friction beats its load holds its joint where the screw
// leaves it, the play crossed only when the screw comes round (BacklashDF,
// input the screw).
type play struct {
	thrown                  bool
	width, friction, static float64
}

func newPlay(width, friction, static float64) play {
	return play{thrown: math.Abs(static) > friction, width: width, friction: friction, static: static}
}

// threshold is the swing of the play's input below which the play never
// crosses: the load past its standing value and the friction, or the
// screw past half the play.
func (p play) threshold() float64 {
	if p.thrown {
		return math.Max(math.Abs(p.static)+p.friction, 1e-9)
	}
	return p.width / 2
}

// gapPer is minus the gap (output less screw) per unit of the play's input
// swinging by a: the thrown play's describing function, or, for the
// classic play, 1 - BacklashDF (the output is the screw times the
// describing function, and the gap what is left).
func (p play) gapPer(a float64) complex128 {
	if p.thrown {
		return ThrownPlayDF(a, p.width, p.friction, p.static)
	}
	return 1 - BacklashDF(a, p.width)
}

// vectorBalance solves the harmonic balance of several nonlinear parts in
// one linear loop, each with its own amplitude and phase (Gelb and Vander
// Velde, 1968, ch. 2, one sinusoid through every nonlinearity):
// e + D(|u|) u = 0 with u = R(w) e, where e is what the parts put in (a
// play's gap, a deadband's offset), u each part's input (row i of R maps e
// to it) and D each part's gapPer. It is Newton's method on the real and
// imaginary parts from e0 at w0, the largest entry's phase held at zero
// and w free; ok is false when it
// does not converge or converges to a state where no part passes
// anything on.
func vectorBalance(els []element, r func(w float64) cmat, e0 cmat, w0 float64) (e cmat, w, residual float64, ok bool) {
	n := len(els)
	p := 0
	for i, v := range e0.v {
		if cmplx.Abs(v) > cmplx.Abs(e0.v[p]) {
			p = i
		}
	}
	scale := cmplx.Abs(e0.v[p])
	if scale == 0 {
		return e0, w0, math.Inf(1), false
	}
	turn := cmplx.Conj(e0.v[p]) / complex(scale, 0)
	// x: the largest gap (real), the others' real and imaginary parts,
	// then w; all gaps over scale.
	x := make([]float64, 0, 2*n)
	x = append(x, 1)
	for i, v := range e0.v {
		if i != p {
			v *= turn / complex(scale, 0)
			x = append(x, real(v), imag(v))
		}
	}
	x = append(x, w0)
	unpack := func(x []float64) (cmat, float64) {
		e := newCmat(n, 1)
		k := 1
		for i := range n {
			if i == p {
				e.v[i] = complex(x[0]*scale, 0)
				continue
			}
			e.v[i] = complex(x[k]*scale, x[k+1]*scale)
			k += 2
		}
		return e, x[len(x)-1]
	}
	resid := func(x []float64) []float64 {
		e, w := unpack(x)
		out := make([]float64, 0, 2*n)
		if !(w > 0) {
			for range 2 * n {
				out = append(out, math.Inf(1))
			}
			return out
		}
		u := r(w).mul(e)
		for i := range n {
			v := (e.v[i] + els[i].gapPer(cmplx.Abs(u.v[i]))*u.v[i]) / complex(scale, 0)
			out = append(out, real(v), imag(v))
		}
		return out
	}
	norm := func(v []float64) float64 { return floats.Norm(v, 2) }
	fx := resid(x)
	for it := 0; it < 100 && norm(fx) > 1e-9; it++ {
		jac := mat.NewDense(2*n, 2*n, nil)
		for j := range x {
			h := 1e-7 * math.Max(math.Abs(x[j]), 1)
			xp := append([]float64(nil), x...)
			xp[j] += h
			fp := resid(xp)
			for i := range fp {
				jac.Set(i, j, (fp[i]-fx[i])/h)
			}
		}
		var dx mat.VecDense
		if err := dx.SolveVec(jac, mat.NewVecDense(2*n, floats.ScaleTo(make([]float64, 2*n), -1, fx))); err != nil {
			break
		}
		moved := false
		for t := 1.0; t > 1e-6; t /= 2 {
			xt := append([]float64(nil), x...)
			floats.AddScaled(xt, t, dx.RawVector().Data)
			if ft := resid(xt); norm(ft) < norm(fx) {
				x, fx, moved = xt, ft, true
				break
			}
		}
		if !moved {
			break
		}
	}
	e, w = unpack(x)
	residual = norm(fx)
	if residual > 1e-6 || !(w > 0) {
		return e, w, residual, false
	}
	u := r(w).mul(e)
	for i := range n {
		if _, isPlay := els[i].(play); isPlay && cmplx.Abs(u.v[i]) > els[i].threshold() {
			return e, w, residual, true
		}
	}
	return e, w, residual, false
}
