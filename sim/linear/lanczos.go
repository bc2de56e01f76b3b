package linear

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// applyScaled sets dst = B x = S J S⁻¹ x, matrix-free.
func (op *Operator) applyScaled(dst, x, tmp []float64) {
	for k := range tmp {
		tmp[k] = x[k] / op.wsqrt[k]
	}
	op.Apply(dst, tmp)
	for k := range dst {
		dst[k] *= op.wsqrt[k]
	}
}

// probeSkew reports whether B is antisymmetric, from yᵀBx + xᵀBy for a
// few random pairs, relative to ‖Bx‖‖y‖ + ‖By‖‖x‖ (tolerance SkewTol).
func (op *Operator) probeSkew(rng *rand.Rand) (bool, float64) {
	n := op.Len()
	x, y := make([]float64, n), make([]float64, n)
	bx, by, tmp := make([]float64, n), make([]float64, n), make([]float64, n)
	worst := 0.0
	for range 3 {
		for k := range x {
			x[k], y[k] = rng.NormFloat64(), rng.NormFloat64()
		}
		op.applyScaled(bx, x, tmp)
		op.applyScaled(by, y, tmp)
		s := dot(y, bx) + dot(x, by)
		scale := norm(bx)*norm(y) + norm(by)*norm(x)
		worst = max(worst, math.Abs(s)/scale)
	}
	return worst <= SkewTol, worst
}

// lanczosMax estimates ‖B‖₂ = max|λ| of an antisymmetric B by the
// Lanczos process for antisymmetric matrices: B Q_k = Q_k T_k + β_k q_{k+1}
// e_kᵀ with T_k antisymmetric tridiagonal (off-diagonal β), whose
// eigenvalues ±iθ are Ritz values of B (here from the zero-diagonal
// symmetric tridiagonal matrix with the same off-diagonal, as in
// skewEigen). Lanczos suits the extreme eigenvalues: they converge first,
// from inside, at a rate set by their distance from the rest of the
// spectrum (Kaniel–Paige theory; Golub & Van Loan, Matrix Computations,
// §10.1, from memory). There is no reorthogonalisation: lost orthogonality
// only repeats converged Ritz values, never enlarges them (Paige 1976, from
// memory), and each step costs one product with B and O(n).
//
// It stops when the largest Ritz value has changed by less than 10⁻¹⁰ of
// itself over 10 steps, or after maxIter steps.
func (op *Operator) lanczosMax(ctx context.Context, rng *rand.Rand, maxIter int) (float64, int, error) {
	n := op.Len()
	q, qPrev, w, tmp := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for k := range q {
		q[k] = rng.NormFloat64()
	}
	scale(q, 1/norm(q))
	var beta []float64
	theta, last := 0.0, -1.0
	bPrev := 0.0
	for it := 1; it <= min(maxIter, n); it++ {
		if err := ctx.Err(); err != nil {
			return 0, it, err
		}
		op.applyScaled(w, q, tmp)
		for k := range w {
			w[k] += bPrev * qPrev[k]
		}
		// Local orthogonality against q (αₖ = qᵀBq is 0 for antisymmetric B).
		c := dot(q, w)
		for k := range w {
			w[k] -= c * q[k]
		}
		b := norm(w)
		if it%10 == 0 || b == 0 || it == min(maxIter, n) {
			th := tridiagMagnitudes(beta)
			theta = th[0]
			if b == 0 || (last >= 0 && math.Abs(theta-last) <= 1e-10*theta) {
				return theta, it, nil
			}
			last = theta
		}
		beta = append(beta, b)
		copy(qPrev, q)
		for k := range q {
			q[k] = w[k] / b
		}
		bPrev = b
	}
	if len(beta) > 0 {
		theta = tridiagMagnitudes(beta)[0]
	}
	return theta, min(maxIter, n), nil
}

// arnoldiMax estimates max|λ| of a general B by the Arnoldi process with
// full (twice-repeated Gram–Schmidt) orthogonalisation and k steps: the
// Ritz values are the eigenvalues of the k×k Hessenberg matrix.
func (op *Operator) arnoldiMax(ctx context.Context, rng *rand.Rand, k int) (float64, error) {
	n := op.Len()
	k = min(k, n)
	v := make([][]float64, 0, k+1)
	h := mat.NewDense(k+1, k, nil)
	q := make([]float64, n)
	for i := range q {
		q[i] = rng.NormFloat64()
	}
	scale(q, 1/norm(q))
	v = append(v, q)
	tmp := make([]float64, n)
	m := k
	for j := 0; j < k; j++ {
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		w := make([]float64, n)
		op.applyScaled(w, v[j], tmp)
		for range 2 {
			for i := 0; i <= j; i++ {
				c := dot(v[i], w)
				h.Set(i, j, h.At(i, j)+c)
				for t := range w {
					w[t] -= c * v[i][t]
				}
			}
		}
		b := norm(w)
		h.Set(j+1, j, b)
		if b == 0 {
			m = j + 1
			break
		}
		scale(w, 1/b)
		v = append(v, w)
	}
	var eg mat.Eigen
	if !eg.Factorize(h.Slice(0, m, 0, m), mat.EigenNone) {
		return 0, fmt.Errorf("linear: Ritz values did not converge")
	}
	best := 0.0
	for _, l := range eg.Values(nil) {
		best = max(best, cmplx.Abs(l))
	}
	return best, nil
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

func norm(a []float64) float64 { return math.Sqrt(dot(a, a)) }

func scale(a []float64, s float64) {
	for i := range a {
		a[i] *= s
	}
}
