package modes

import (
	"cmp"
	"errors"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// Realisation is a discrete model x(k+1) = A x(k) + B u(k), y = C x, with
// sample interval T.
type Realisation struct {
	a, b, c *mat.Dense
	T       float64
}

// ERA realises the responses (Markov parameters Y[1..], each p x m,
// Y[k][i*m+j]) by the eigensystem realisation algorithm: the block Hankel
// matrix H0 = [Y(i+j+1)] = U S V^T, truncated to order n, gives
// A = S^-1/2 U^T H1 V S^-1/2 with H1 = [Y(i+j+2)], B the first m columns
// of S^1/2 V^T and C the first p rows of U S^1/2. Order 0 keeps the
// singular values above tol times the largest, at most 40.
func ERA(res *Responses, order int, tol float64) (*Realisation, error) {
	y, p, m := res.Y, len(res.Outputs), len(res.Kicks)
	n := len(y) - 1 // usable parameters y[1..n]
	if n < 4 {
		return nil, errors.New("era: too few samples")
	}
	rows := (n - 1) / 2
	cols := n - 1 - rows
	h0, h1 := hankel(y, p, m, rows, cols, 1), hankel(y, p, m, rows, cols, 2)
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
	return &Realisation{a: &a, b: b, c: c, T: res.T}, nil
}

// hankel is the block Hankel matrix [y(i+j+offset)] of rows x cols blocks,
// each p x m.
func hankel(y [][]float64, p, m, rows, cols, offset int) *mat.Dense {
	h := mat.NewDense(rows*p, cols*m, nil)
	for bi := 0; bi < rows; bi++ {
		for bj := 0; bj < cols; bj++ {
			for i := 0; i < p; i++ {
				for j := 0; j < m; j++ {
					h.Set(bi*p+i, bj*m+j, y[bi+bj+offset][i*m+j])
				}
			}
		}
	}
	return h
}

// Modes are the realisation's modes, continuous time, sorted by
// frequency, with their weights.
func (re *Realisation) Modes() ([]Mode, error) {
	var eig mat.Eigen
	if !eig.Factorize(re.a, mat.EigenBoth) {
		return nil, errors.New("modes: eigen decomposition failed")
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

// Response is the realisation's frequency response C (zI - A)^-1 B at
// z = exp(jwT), one value per output for a single input, solved in real
// block form.
func (re *Realisation) Response(w float64) []complex128 {
	n, _ := re.a.Dims()
	p, _ := re.c.Dims()
	zr, zi := math.Cos(w*re.T), math.Sin(w*re.T)
	m := mat.NewDense(2*n, 2*n, nil)
	rhs := mat.NewDense(2*n, 1, nil)
	for i := range n {
		for j := range n {
			v := -re.a.At(i, j)
			m.Set(i, j, v)
			m.Set(n+i, n+j, v)
		}
		m.Set(i, i, m.At(i, i)+zr)
		m.Set(n+i, n+i, m.At(n+i, n+i)+zr)
		m.Set(i, n+i, -zi)
		m.Set(n+i, i, zi)
		rhs.Set(i, 0, re.b.At(i, 0))
	}
	var x mat.Dense
	out := make([]complex128, p)
	if err := x.Solve(m, rhs); err != nil {
		for i := range out {
			out[i] = cmplx.NaN()
		}
		return out
	}
	for r := range p {
		var s complex128
		for i := range n {
			s += complex(re.c.At(r, i)*x.At(i, 0), re.c.At(r, i)*x.At(n+i, 0))
		}
		out[r] = s
	}
	return out
}
