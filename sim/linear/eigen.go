package linear

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/gonum"
	"gonum.org/v1/gonum/mat"
)

// skewSpectrum is the eigen-decomposition of a real antisymmetric n×n
// matrix B. Its eigenvalues are ±iσ_j and 0. For each pair,
// B(a_j + i b_j) = iσ_j (a_j + i b_j), so B a_j = −σ_j b_j and
// B b_j = σ_j a_j; a_j and b_j are orthonormal. The kernel columns are an
// orthonormal basis of the null space. 2·len(Sigma) + kernel columns = n.
type skewSpectrum struct {
	Sigma  []float64  // σ_j > 0, decreasing
	A, B   *mat.Dense // n × len(Sigma)
	Kernel *mat.Dense // n × k₀; nil when k₀ = 0
}

// skewEigen decomposes the antisymmetric part of the row-major n×n matrix
// b (b is not modified). Singular values at or below zeroTol·σ_max count
// as zero.
//
// Method (real arithmetic throughout, O(n³) with small constants):
//
//  1. Householder reduction to Hessenberg form, H = QᵀBQ (LAPACK dgehrd,
//     dorghr). For antisymmetric B the Hessenberg form is antisymmetric
//     and so tridiagonal, T_{k,k+1} = −T_{k+1,k} = α_k; the entries above
//     the superdiagonal are round-off and are dropped.
//  2. With D = diag(i^k), D⁻¹TD = iS where S is the real symmetric
//     tridiagonal matrix with zero diagonal and off-diagonal α. So
//     S s = λs gives T(Ds) = iλ(Ds).
//  3. Reordering S into even and odd indices gives [[0, M], [Mᵀ, 0]] with
//     Mᵀ upper bidiagonal (diagonal α₀, α₂, …; superdiagonal α₁, α₃, …)
//     (Golub & Kahan 1965, SIAM J. Numer. Anal. B 2, 205–224), so the
//     eigenpairs of S are ±σ_j with (p_j, ±q_j)/√2 from the SVD
//     Mᵀ = QΣPᵀ (LAPACK dbdsqr; both vector sets are applied from the
//     left, row by row, which is several times faster than the column
//     updates of a symmetric QR solver).
//  4. The eigenvector Q D s of B has real part Q_even (±p_j) and
//     imaginary part Q_odd (±q_j), two matrix products.
//
// An odd n is padded with a zero row and column; the padding direction is
// removed from the kernel afterwards.
func skewEigen(b []float64, n int, zeroTol float64) (*skewSpectrum, error) {
	if n == 0 {
		return &skewSpectrum{}, nil
	}
	var impl gonum.Implementation
	nn, a, tau, work, alpha := skewHessenberg(b, n)
	impl.Dorghr(nn, 0, nn-1, a, nn, tau, work, -1)
	if int(work[0]) > len(work) {
		work = make([]float64, int(work[0]))
	}
	impl.Dorghr(nn, 0, nn-1, a, nn, tau, work, len(work))

	m := nn / 2
	d := make([]float64, m)
	e := make([]float64, max(m-1, 1))
	for j := 0; j < m; j++ {
		d[j] = alpha[2*j]
		if j < m-1 {
			e[j] = alpha[2*j+1]
		}
	}
	vt := identity(m) // becomes Pᵀ: row j is p_j
	ct := identity(m) // becomes Qᵀ: row j is q_j
	if !impl.Dbdsqr(blas.Upper, m, m, 0, m, d, e, vt, m, nil, 1, ct, m, make([]float64, max(4*(m-1), 1))) {
		return nil, fmt.Errorf("linear: the bidiagonal SVD did not converge (%d unknowns)", n)
	}

	// Q_even·diag((−1)^l) and Q_odd·diag((−1)^l): the real and imaginary
	// parts of i^k on even and odd k.
	qe := make([]float64, nn*m)
	qo := make([]float64, nn*m)
	for r := 0; r < nn; r++ {
		for l := 0; l < m; l++ {
			sg := 1.0
			if l%2 == 1 {
				sg = -1
			}
			qe[r*m+l] = sg * a[r*nn+2*l]
			qo[r*m+l] = sg * a[r*nn+2*l+1]
		}
	}
	re := make([]float64, nn*m)
	im := make([]float64, nn*m)
	blas64.Gemm(blas.NoTrans, blas.Trans, 1, general(nn, m, qe), general(m, m, vt), 0, general(nn, m, re))
	blas64.Gemm(blas.NoTrans, blas.Trans, 1, general(nn, m, qo), general(m, m, ct), 0, general(nn, m, im))

	tol := zeroTol * d[0]
	np := 0
	for np < m && d[np] > tol {
		np++
	}
	sp := &skewSpectrum{Sigma: append([]float64(nil), d[:np]...)}
	sp.A = mat.NewDense(n, max(np, 1), nil)
	sp.B = mat.NewDense(n, max(np, 1), nil)
	for r := 0; r < n; r++ {
		for j := 0; j < np; j++ {
			sp.A.Set(r, j, re[r*m+j])
			sp.B.Set(r, j, im[r*m+j])
		}
	}
	if np == 0 {
		sp.A, sp.B = nil, nil
	} else {
		sp.A = sp.A.Slice(0, n, 0, np).(*mat.Dense)
		sp.B = sp.B.Slice(0, n, 0, np).(*mat.Dense)
	}
	// Kernel: both parts of every zero pair.
	k0 := 2 * (m - np)
	if k0 == 0 {
		return sp, nil
	}
	ker := make([]float64, nn*k0)
	for r := 0; r < nn; r++ {
		for j := np; j < m; j++ {
			ker[r*k0+2*(j-np)] = re[r*m+j]
			ker[r*k0+2*(j-np)+1] = im[r*m+j]
		}
	}
	if nn > n {
		ker, k0 = dropDirection(ker, nn, k0, nn-1)
	}
	sp.Kernel = mat.NewDense(n, k0, ker[:n*k0])
	return sp, nil
}

// dropDirection removes the unit vector e_p from the span of the k
// orthonormal columns of the rows×k row-major matrix v, which must contain
// it: a Householder reflection of the coefficient space maps the
// coefficients of e_p onto the first column, which is then dropped. The
// other columns stay orthonormal and lose their component along e_p.
func dropDirection(v []float64, rows, k, p int) ([]float64, int) {
	c := append([]float64(nil), v[p*k:(p+1)*k]...) // coefficients of e_p
	nrm := 0.0
	for _, x := range c {
		nrm += x * x
	}
	nrm = math.Sqrt(nrm)
	// Reflector H = I − 2wwᵀ/wᵀw with w = c − ‖c‖e₁ maps c to ‖c‖e₁.
	if c[0] > 0 {
		nrm = -nrm
	}
	w := c
	w[0] -= nrm
	ww := 0.0
	for _, x := range w {
		ww += x * x
	}
	out := make([]float64, rows*(k-1))
	row := make([]float64, k)
	for r := 0; r < rows; r++ {
		copy(row, v[r*k:(r+1)*k])
		if ww > 0 {
			s := 0.0
			for j, x := range row {
				s += x * w[j]
			}
			s *= 2 / ww
			for j := range row {
				row[j] -= s * w[j]
			}
		}
		copy(out[r*(k-1):], row[1:])
	}
	return out, k - 1
}

// generalSpectrum is the eigen-decomposition of a real matrix with no
// structure assumed. Each complex pair λ, λ̄ (Im λ > 0) has eigenvector
// a + ib for λ; each real eigenvalue has a real eigenvector.
type generalSpectrum struct {
	Pairs []complex128 // Im > 0
	A, B  *mat.Dense   // n × len(Pairs)
	Real  []float64
	RealV *mat.Dense // n × len(Real)
}

// generalEigen decomposes the row-major n×n matrix b with LAPACK dgeev
// (gonum mat.Eigen): Hessenberg QR, about 25n³ flops with vectors, which
// is why the antisymmetric route is preferred when it applies.
func generalEigen(b []float64, n int) (*generalSpectrum, error) {
	var eg mat.Eigen
	if !eg.Factorize(mat.NewDense(n, n, append([]float64(nil), b...)), mat.EigenRight) {
		return nil, fmt.Errorf("linear: the eigenvalue iteration did not converge (%d unknowns)", n)
	}
	vals := eg.Values(nil)
	var vecs mat.CDense
	eg.VectorsTo(&vecs)
	gs := &generalSpectrum{}
	var pairCols, realCols []int
	for j, l := range vals {
		switch {
		case imag(l) > 0:
			gs.Pairs = append(gs.Pairs, l)
			pairCols = append(pairCols, j)
		case imag(l) == 0:
			gs.Real = append(gs.Real, real(l))
			realCols = append(realCols, j)
		}
	}
	if len(pairCols) > 0 {
		gs.A = mat.NewDense(n, len(pairCols), nil)
		gs.B = mat.NewDense(n, len(pairCols), nil)
		for c, j := range pairCols {
			nrm := 0.0
			for r := 0; r < n; r++ {
				v := vecs.At(r, j)
				nrm += real(v)*real(v) + imag(v)*imag(v)
			}
			s := math.Sqrt(2 / nrm) // a, b of unit norm on average, like skewEigen
			for r := 0; r < n; r++ {
				v := vecs.At(r, j)
				gs.A.Set(r, c, s*real(v))
				gs.B.Set(r, c, s*imag(v))
			}
		}
	}
	if len(realCols) > 0 {
		gs.RealV = mat.NewDense(n, len(realCols), nil)
		for c, j := range realCols {
			nrm := 0.0
			for r := 0; r < n; r++ {
				nrm += real(vecs.At(r, j)) * real(vecs.At(r, j))
			}
			s := 1 / math.Sqrt(nrm)
			for r := 0; r < n; r++ {
				gs.RealV.Set(r, c, s*real(vecs.At(r, j)))
			}
		}
	}
	return gs, nil
}

// skewValues returns the σ_j ≥ 0 of the antisymmetric part of b, the
// eigenvalues being ±iσ_j, without vectors (steps 1–3 of skewEigen with a
// tridiagonal eigenvalue solver instead of the SVD).
func skewValues(b []float64, n int) []float64 {
	_, _, _, _, off := skewHessenberg(b, n)
	return tridiagMagnitudes(off)
}

// skewHessenberg is step 1 of skewEigen: the antisymmetric part of the
// n × n matrix b, padded to even order nn, reduced to Hessenberg form a
// by dgehrd (reflectors in a and tau, work the workspace it used), and
// the superdiagonal α_k of its tridiagonal form, averaged with the
// negated subdiagonal.
func skewHessenberg(b []float64, n int) (nn int, a, tau, work, alpha []float64) {
	nn = n + n%2
	a = make([]float64, nn*nn)
	for r := 0; r < n; r++ {
		for c := 0; c < n; c++ {
			a[r*nn+c] = 0.5 * (b[r*n+c] - b[c*n+r])
		}
	}
	var impl gonum.Implementation
	tau = make([]float64, max(nn-1, 1))
	work = []float64{0}
	impl.Dgehrd(nn, 0, nn-1, a, nn, tau, work, -1)
	work = make([]float64, int(work[0]))
	impl.Dgehrd(nn, 0, nn-1, a, nn, tau, work, len(work))
	alpha = make([]float64, nn-1)
	for k := range alpha {
		alpha[k] = 0.5 * (a[k*nn+k+1] - a[(k+1)*nn+k])
	}
	return nn, a, tau, work, alpha
}

// tridiagMagnitudes returns |λ| for the eigenvalues λ of the symmetric
// tridiagonal matrix with zero diagonal and off-diagonal off, which come
// in ± pairs: one value per pair, decreasing, plus the zero of odd order.
func tridiagMagnitudes(off []float64) []float64 {
	n := len(off) + 1
	d := make([]float64, n)
	e := append([]float64(nil), off...)
	var impl gonum.Implementation
	impl.Dsterf(n, d, e)
	s := make([]float64, 0, (n+1)/2)
	// Dsterf sorts increasingly; the upper half holds the λ ≥ 0.
	for k := n - 1; k >= n/2; k-- {
		s = append(s, math.Abs(d[k]))
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(s)))
	return s
}

func identity(m int) []float64 {
	x := make([]float64, m*m)
	for i := 0; i < m; i++ {
		x[i*m+i] = 1
	}
	return x
}

func general(r, c int, data []float64) blas64.General {
	return blas64.General{Rows: r, Cols: c, Stride: c, Data: data}
}
