package cases

import (
	"fmt"
	"math"
	"math/bits"
	"math/cmplx"

	"gonum.org/v1/gonum/dsp/fourier"

	"gyrebench/sim/mesh"
)

// maxBalanceGrid is the largest side of the periodic grid the balance
// solver uses (1024² complex values, 16 MiB per array).
const maxBalanceGrid = 1024

// balanceGridSize returns the power of two ≥ need (at least 64), or an
// error when the flow is too fine for the solver.
func balanceGridSize(need float64) (int, error) {
	if !(need <= maxBalanceGrid) {
		return 0, fmt.Errorf("needs a %g-point balance grid, more than %d", math.Ceil(need), maxBalanceGrid)
	}
	n := max(64, int(need))
	return 1 << bits.Len(uint(n-1)), nil
}

// balancedDepth sets h_i = H + η(x_i, y_i), where η solves the nonlinear
// balance equation for the nondivergent flow u = −∂ψ/∂y, v = ∂ψ/∂x on the
// doubly periodic plane,
//
//	g ∇²η = f ζ + 2 (ψ_xx ψ_yy − ψ_xy²) − β u,  f = f0 + β (y − Ly/2),
//
// the divergence of the momentum equation with ∂(∇·u)/∂t = 0
// (Charney 1955, Tellus 7, 22–26; McWilliams 2006, Fundamentals of
// Geophysical Fluid Dynamics, §3.3: from memory). Where f ζ dominates it
// reduces to geostrophic balance, η = f ψ / g; the Jacobian term is the
// cyclostrophic part, which matters once the Rossby number nears one.
//
// ψ is sampled on an nx × ny grid and differentiated spectrally; η is
// then summed as a Fourier series at each cell centre, so it is exact for
// a band-limited ψ that the grid resolves twice over (the products double
// the wavenumbers) and spectrally accurate otherwise.
func balancedDepth(m *mesh.Mesh, p Physics, h []float64, nx, ny int, psi func(x, y float64) float64) {
	lx, ly := m.Surface.Lx, m.Surface.Ly
	ft := newFourier2(nx, ny)
	n := nx * ny
	s := make([]complex128, n)
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			s[j*nx+i] = complex(psi(float64(i)*lx/float64(nx), float64(j)*ly/float64(ny)), 0)
		}
	}
	hat := ft.forward(s)
	kx := func(i int) float64 { return 2 * math.Pi * float64(wavenumber(i, nx)) / lx }
	ky := func(j int) float64 { return 2 * math.Pi * float64(wavenumber(j, ny)) / ly }
	deriv := func(mult func(a, b float64) complex128) []float64 {
		d := make([]complex128, n)
		for j := 0; j < ny; j++ {
			for i := 0; i < nx; i++ {
				d[j*nx+i] = hat[j*nx+i] * mult(kx(i), ky(j))
			}
		}
		out := ft.inverse(d)
		r := make([]float64, n)
		for k := range out {
			r[k] = real(out[k]) / float64(n)
		}
		return r
	}
	pxx := deriv(func(a, _ float64) complex128 { return complex(-a*a, 0) })
	pyy := deriv(func(_, b float64) complex128 { return complex(-b*b, 0) })
	pxy := deriv(func(a, b float64) complex128 { return complex(-a*b, 0) })
	py := deriv(func(_, b float64) complex128 { return complex(0, b) })
	rhs := make([]complex128, n)
	for j := 0; j < ny; j++ {
		f := p.F0 + p.Beta*(float64(j)*ly/float64(ny)-ly/2)
		for i := 0; i < nx; i++ {
			k := j*nx + i
			rhs[k] = complex(f*(pxx[k]+pyy[k])+2*(pxx[k]*pyy[k]-pxy[k]*pxy[k])+p.Beta*py[k], 0)
		}
	}
	eta := ft.forward(rhs)
	type mode struct {
		i, j int
		c    complex128
	}
	var modes []mode
	var top float64
	for k := range eta {
		top = math.Max(top, cmplx.Abs(eta[k]))
	}
	maxI, maxJ := 0, 0
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			a, b := kx(i), ky(j)
			k2 := a*a + b*b
			c := eta[j*nx+i]
			// Drop the mean (the mass is H's) and what is round-off.
			if k2 == 0 || cmplx.Abs(c) <= 1e-15*top {
				continue
			}
			wi, wj := wavenumber(i, nx), wavenumber(j, ny)
			modes = append(modes, mode{wi, wj, c / complex(-p.G*k2*float64(n), 0)})
			maxI, maxJ = max(maxI, abs(wi)), max(maxJ, abs(wj))
		}
	}
	ex := make([]complex128, 2*maxI+1)
	ey := make([]complex128, 2*maxJ+1)
	for c := range h {
		x, y := m.CellX[c], m.CellY[c]
		for i := -maxI; i <= maxI; i++ {
			ex[i+maxI] = cmplx.Rect(1, 2*math.Pi*float64(i)*x/lx)
		}
		for j := -maxJ; j <= maxJ; j++ {
			ey[j+maxJ] = cmplx.Rect(1, 2*math.Pi*float64(j)*y/ly)
		}
		var sum complex128
		for _, md := range modes {
			sum += md.c * ex[md.i+maxI] * ey[md.j+maxJ]
		}
		h[c] = p.Depth + real(sum)
	}
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

// wavenumber returns the signed wavenumber of FFT index i of n.
func wavenumber(i, n int) int {
	if i > n/2 {
		return i - n
	}
	return i
}

// fourier2 is a two-dimensional complex FFT on an nx × ny row-major grid,
// with the convention of gonum's CmplxFFT: forward X_k = Σ x_j e^{−2πi jk/n},
// inverse unnormalised.
type fourier2 struct {
	nx, ny int
	fx, fy *fourier.CmplxFFT
}

func newFourier2(nx, ny int) *fourier2 {
	return &fourier2{nx: nx, ny: ny, fx: fourier.NewCmplxFFT(nx), fy: fourier.NewCmplxFFT(ny)}
}

func (t *fourier2) forward(s []complex128) []complex128 { return t.apply(s, true) }
func (t *fourier2) inverse(s []complex128) []complex128 { return t.apply(s, false) }

func (t *fourier2) apply(s []complex128, fwd bool) []complex128 {
	out := make([]complex128, len(s))
	row := make([]complex128, t.nx)
	for j := 0; j < t.ny; j++ {
		if fwd {
			t.fx.Coefficients(row, s[j*t.nx:(j+1)*t.nx])
		} else {
			t.fx.Sequence(row, s[j*t.nx:(j+1)*t.nx])
		}
		copy(out[j*t.nx:], row)
	}
	col, res := make([]complex128, t.ny), make([]complex128, t.ny)
	for i := 0; i < t.nx; i++ {
		for j := range col {
			col[j] = out[j*t.nx+i]
		}
		if fwd {
			t.fy.Coefficients(res, col)
		} else {
			t.fy.Sequence(res, col)
		}
		for j := range res {
			out[j*t.nx+i] = res[j]
		}
	}
	return out
}
