package wobble

import (
	"math"
	"math/cmplx"
)

// cmat is a small dense complex matrix, row-major: the frequency responses
// of a few screws' loops at one frequency (gonum's dense matrices are
// real).
type cmat struct {
	rows, cols int
	v          []complex128
}

func newCmat(rows, cols int) cmat {
	return cmat{rows: rows, cols: cols, v: make([]complex128, rows*cols)}
}

func (m cmat) at(i, j int) complex128     { return m.v[i*m.cols+j] }
func (m cmat) set(i, j int, x complex128) { m.v[i*m.cols+j] = x }

func (m cmat) mul(b cmat) cmat {
	out := newCmat(m.rows, b.cols)
	for i := range m.rows {
		for j := range b.cols {
			var s complex128
			for k := range m.cols {
				s += m.at(i, k) * b.at(k, j)
			}
			out.set(i, j, s)
		}
	}
	return out
}

func (m cmat) scale(x complex128) cmat {
	out := newCmat(m.rows, m.cols)
	for i, v := range m.v {
		out.v[i] = v * x
	}
	return out
}

func (m cmat) plusIdentity() cmat {
	out := m.scale(1)
	for i := range min(m.rows, m.cols) {
		out.v[i*m.cols+i]++
	}
	return out
}

// norm is the Frobenius norm.
func (m cmat) norm() float64 {
	s := 0.0
	for _, v := range m.v {
		s += real(v)*real(v) + imag(v)*imag(v)
	}
	return math.Sqrt(s)
}

// eliminate reduces a copy of the square matrix m, with the columns of b
// alongside, to upper-triangular form by Gaussian elimination with partial
// pivoting, and returns the determinant.
func (m cmat) eliminate(b cmat) (cmat, cmat, complex128) {
	a, b := m.scale(1), b.scale(1)
	n := m.rows
	det := complex(1, 0)
	for c := range n {
		p := c
		for r := c + 1; r < n; r++ {
			if cmplx.Abs(a.at(r, c)) > cmplx.Abs(a.at(p, c)) {
				p = r
			}
		}
		if p != c {
			for k := range n {
				x := a.at(c, k)
				a.set(c, k, a.at(p, k))
				a.set(p, k, x)
			}
			for k := range b.cols {
				x := b.at(c, k)
				b.set(c, k, b.at(p, k))
				b.set(p, k, x)
			}
			det = -det
		}
		d := a.at(c, c)
		det *= d
		if d == 0 {
			continue
		}
		for r := c + 1; r < n; r++ {
			f := a.at(r, c) / d
			for k := c; k < n; k++ {
				a.set(r, k, a.at(r, k)-f*a.at(c, k))
			}
			for k := range b.cols {
				b.set(r, k, b.at(r, k)-f*b.at(c, k))
			}
		}
	}
	return a, b, det
}

func (m cmat) det() complex128 {
	_, _, d := m.eliminate(newCmat(m.rows, 0))
	return d
}

// solve solves m x = b by back substitution after elimination; ok is
// false for a singular m.
func (m cmat) solve(b cmat) (cmat, bool) {
	a, y, _ := m.eliminate(b)
	n := m.rows
	x := newCmat(n, b.cols)
	for k := range b.cols {
		for r := n - 1; r >= 0; r-- {
			s := y.at(r, k)
			for c := r + 1; c < n; c++ {
				s -= a.at(r, c) * x.at(c, k)
			}
			if a.at(r, r) == 0 {
				return cmat{}, false
			}
			x.set(r, k, s/a.at(r, r))
		}
	}
	return x, true
}

func (m cmat) inverse() (cmat, bool) {
	return m.solve(newCmat(m.rows, m.rows).plusIdentity())
}

// nullVector is the direction m (nearly singular) maps closest to zero,
// by one step of inverse iteration from a vector of ones.
func (m cmat) nullVector() (cmat, bool) {
	ones := newCmat(m.rows, 1)
	for i := range ones.v {
		ones.v[i] = 1
	}
	// Shifted a little off the singular point so the solve stays finite.
	return m.minusIdentity(-1e-9).solve(ones)
}

// minusIdentity is m - s I.
func (m cmat) minusIdentity(s float64) cmat {
	out := m.scale(1)
	for i := range min(m.rows, m.cols) {
		out.v[i*m.cols+i] -= complex(s, 0)
	}
	return out
}
