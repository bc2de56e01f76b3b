package linear

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"gyrebench/sim/mesh"
)

// rangeProj is the orthogonal projector onto the range of L = D^{−1/2} K,
// where K holds the kite areas (the weights of the scheme's cell-to-vertex
// averaging, ops.Grid.Vorticity) and D the areas of the field's points, so
// that in coordinates D^{1/2} f the area-weighted inner product is the
// Euclidean one. For vertex fields (vorticity; grids with more vertices
// than cells) L is vertices × cells and its range holds the averages of
// cell fields; its complement is the vorticity that averages to zero on
// every cell. For cell fields (depth; more cells than vertices) L is
// cells × vertices and the complement is the depth the averaging to the
// vertices does not see.
type rangeProj struct {
	rows, cols int
	start      []int32 // CSR of L
	col        []int32
	val        []float64
	chol       mat.Cholesky // of LᵀL + εI
	vertex     bool
}

func newRangeProj(m *mesh.Mesh, vertex bool) (*rangeProj, error) {
	p := &rangeProj{vertex: vertex}
	var start, idx []int32
	var kite, area []float64
	if vertex {
		p.rows, p.cols = m.NumVertices, m.NumCells
		start, idx, kite, area = m.VertexEdgeStart, m.VertexCells, m.VertexKiteArea, m.VertexArea
	} else {
		p.rows, p.cols = m.NumCells, m.NumVertices
		start, idx, kite, area = m.CellEdgeStart, m.CellVertices, m.CellKiteArea, m.CellArea
	}
	p.start = make([]int32, p.rows+1)
	for r := 0; r < p.rows; r++ {
		s := 1 / math.Sqrt(area[r])
		for k := start[r]; k < start[r+1]; k++ {
			p.col = append(p.col, idx[k])
			p.val = append(p.val, s*kite[k])
		}
		p.start[r+1] = int32(len(p.col))
	}
	// LᵀL, dense: cols ≤ MaxDenseUnknowns/3.
	g := mat.NewSymDense(p.cols, nil)
	for r := 0; r < p.rows; r++ {
		for a := p.start[r]; a < p.start[r+1]; a++ {
			for b := a; b < p.start[r+1]; b++ {
				i, j := int(p.col[a]), int(p.col[b])
				v := p.val[a] * p.val[b]
				if i == j && a != b {
					v *= 2
				}
				g.SetSym(i, j, g.At(i, j)+v)
			}
		}
	}
	// A cell pattern that averages to zero at every vertex (the corner of
	// the Brillouin zone on a hexagonal grid whose n is a multiple of 3)
	// makes LᵀL singular; Lᵀu has no component along it, so a tiny shift
	// changes nothing else.
	tr := 0.0
	for i := 0; i < p.cols; i++ {
		tr += g.At(i, i)
	}
	eps := 1e-13 * tr / float64(p.cols)
	for range 6 {
		for i := 0; i < p.cols; i++ {
			g.SetSym(i, i, g.At(i, i)+eps)
		}
		if p.chol.Factorize(g) {
			return p, nil
		}
		eps *= 100
	}
	return nil, fmt.Errorf("linear: the averaging projector is singular")
}

// residual sets dst = u − P u for a field u in D^{1/2} coordinates.
func (p *rangeProj) residual(dst, u []float64) {
	lt := mat.NewVecDense(p.cols, nil)
	for r := 0; r < p.rows; r++ {
		for k := p.start[r]; k < p.start[r+1]; k++ {
			lt.SetVec(int(p.col[k]), lt.AtVec(int(p.col[k]))+p.val[k]*u[r])
		}
	}
	var y mat.VecDense
	if err := p.chol.SolveVecTo(&y, lt); err != nil {
		panic(err) // the factorisation succeeded; a solve cannot fail
	}
	for r := 0; r < p.rows; r++ {
		s := 0.0
		for k := p.start[r]; k < p.start[r+1]; k++ {
			s += p.val[k] * y.AtVec(int(p.col[k]))
		}
		dst[r] = u[r] - s
	}
}

// field sets u to the field that rangeProj scores, in D^{1/2} coordinates,
// of the scaled state vector w: √A_v ζ_v (vertex) or √A_i h_i (cell; the
// scaled state holds √(g A_i) h_i, and a constant factor does not change
// a score).
func (p *rangeProj) field(op *Operator, u, w []float64) {
	if !p.vertex {
		copy(u, w[:op.nc])
		return
	}
	vel := make([]float64, op.ne)
	for e := range vel {
		vel[e] = w[op.nc+e] / op.wsqrt[op.nc+e]
	}
	op.grid.Vorticity(u, nil, vel, make([]float64, op.nc), 0, op.Mesh.NumVertices)
	for v := range u {
		u[v] *= math.Sqrt(op.Mesh.VertexArea[v])
	}
}

// score returns the fraction ‖u − Pu‖²/‖u‖² of the mode's field (both
// parts of a pair together), or 0 when the field is absent: below 10⁻¹²
// of the state's norm for depth, or exactly zero for vorticity.
func (p *rangeProj) score(op *Operator, md *mode) float64 {
	u, r := make([]float64, p.rows), make([]float64, p.rows)
	var num, den, state float64
	for _, w := range [][]float64{md.a, md.b} {
		if w == nil {
			continue
		}
		p.field(op, u, w)
		p.residual(r, u)
		num += dot(r, r)
		den += dot(u, u)
		state += dot(w, w)
	}
	if den == 0 || (!p.vertex && den <= 1e-12*state) {
		return 0
	}
	return num / den
}

// rotateZero replaces the zero-frequency vectors (an orthonormal basis of
// a degenerate eigenspace, arbitrary within it) by a basis of the same
// space whose members extremise the score: the generalised eigenvectors
// of (‖(I−P)u‖², ‖u‖²) over the field u of the space. The field-free
// directions (score 0) come first from the SVD of the field matrix; the
// others from the SVD of (I−P) applied to the orthonormalised fields, its
// squared singular values being the scores. On the f-plane the scores are
// 0 and 1 to round-off (each Bloch wavevector carries one smooth and one
// alternating balanced mode), so the split does not depend on the
// threshold.
func rotateZero(op *Operator, pr *rangeProj, zero []*mode) error {
	k := len(zero)
	n := op.Len()
	vk := mat.NewDense(n, k, nil)
	zw := mat.NewDense(pr.rows, k, nil)
	u := make([]float64, pr.rows)
	for j, md := range zero {
		vk.SetCol(j, md.a)
		pr.field(op, u, md.a)
		zw.SetCol(j, u)
	}
	sv, v1, ok := svdV(zw)
	if !ok {
		return fmt.Errorf("linear: SVD of the balanced modes' vorticity did not converge")
	}
	r := 0
	for r < len(sv) && sv[r] > 1e-8*sv[0] {
		r++
	}
	coef := mat.NewDense(k, k, nil) // new vectors = vk · coef
	scores := make([]float64, k)
	if r > 0 {
		// Orthonormal fields U_r = Z V_r Σ_r⁻¹ and their residuals.
		vr := mat.NewDense(k, r, nil)
		for j := 0; j < r; j++ {
			for i := 0; i < k; i++ {
				vr.Set(i, j, v1.At(i, j)/sv[j])
			}
		}
		var ur mat.Dense
		ur.Mul(zw, vr)
		e := mat.NewDense(pr.rows, r, nil)
		col, res := make([]float64, pr.rows), make([]float64, pr.rows)
		for j := 0; j < r; j++ {
			mat.Col(col, j, &ur)
			pr.residual(res, col)
			e.SetCol(j, res)
		}
		s2v, c, ok := svdV(e)
		if !ok {
			return fmt.Errorf("linear: SVD of the balanced modes' residual did not converge")
		}
		var y mat.Dense
		y.Mul(vr, c)
		for j := 0; j < r; j++ {
			coef.SetCol(j, mat.Col(nil, j, &y))
			if j < len(s2v) {
				scores[j] = min(s2v[j]*s2v[j], 1)
			}
		}
	}
	for j := r; j < k; j++ {
		coef.SetCol(j, mat.Col(nil, j, v1))
	}
	var nv mat.Dense
	nv.Mul(vk, coef)
	for j, md := range zero {
		v := mat.Col(nil, j, &nv)
		scale(v, 1/norm(v))
		md.a, md.score = v, scores[j]
	}
	return nil
}

// rotatePairs is rotateZero for a cluster of pairs with one eigenvalue iσ
// (to within clusterTol): a complex eigenspace with basis w_j = a_j + ib_j.
// The score is a Hermitian form on it; in the real embedding
// c = x + iy ↦ [x; y] every value is doubled, with the partner i·c, so the
// extremal directions are taken in order of score and kept when their
// field is not in the complex span of those kept before (complex
// Gram–Schmidt on the fields). Field-free directions follow. The new
// vectors are eigenvectors for the cluster's mean eigenvalue. A cluster
// of one is scored as it is.
func rotatePairs(op *Operator, pr *rangeProj, cl []*mode) {
	m := len(cl)
	if m == 1 {
		cl[0].score = pr.score(op, cl[0])
		return
	}
	nf := pr.rows
	r1 := mat.NewDense(2*nf, 2*m, nil)
	fa, fb := make([]float64, nf), make([]float64, nf)
	for j, md := range cl {
		pr.field(op, fa, md.a)
		pr.field(op, fb, md.b)
		for i := 0; i < nf; i++ {
			r1.Set(i, j, fa[i])
			r1.Set(nf+i, j, fb[i])
			r1.Set(i, m+j, -fb[i])
			r1.Set(nf+i, m+j, fa[i])
		}
	}
	fallback := func() {
		for _, md := range cl {
			md.score = pr.score(op, md)
		}
	}
	sv, v1, ok := svdV(r1)
	if !ok {
		fallback()
		return
	}
	r := 0
	for r < len(sv) && sv[r] > 1e-8*sv[0] {
		r++
	}
	type dir struct {
		c     []complex128
		score float64
	}
	var kept []dir
	var keptField [][]complex128
	toC := func(x []float64) []complex128 {
		c := make([]complex128, m)
		for j := range c {
			c[j] = complex(x[j], x[m+j])
		}
		return c
	}
	// gs reduces f against the kept vectors and reports whether it is new.
	gs := func(f []complex128, basis [][]complex128) bool {
		nrm := 0.0
		for _, z := range f {
			nrm += real(z)*real(z) + imag(z)*imag(z)
		}
		res := append([]complex128(nil), f...)
		for _, b := range basis {
			var p, bb complex128
			for i := range b {
				p += conj(b[i]) * res[i]
				bb += conj(b[i]) * b[i]
			}
			p /= bb
			for i := range res {
				res[i] -= p * b[i]
			}
		}
		left := 0.0
		for _, z := range res {
			left += real(z)*real(z) + imag(z)*imag(z)
		}
		return left > 0.5*nrm
	}
	if r > 0 {
		vr := mat.NewDense(2*m, r, nil)
		for j := 0; j < r; j++ {
			for i := 0; i < 2*m; i++ {
				vr.Set(i, j, v1.At(i, j)/sv[j])
			}
		}
		var y mat.Dense
		y.Mul(r1, vr)
		e := mat.NewDense(2*nf, r, nil)
		col, res := make([]float64, nf), make([]float64, nf)
		for j := 0; j < r; j++ {
			for half := 0; half < 2; half++ {
				for i := 0; i < nf; i++ {
					col[i] = y.At(half*nf+i, j)
				}
				pr.residual(res, col)
				for i := 0; i < nf; i++ {
					e.Set(half*nf+i, j, res[i])
				}
			}
		}
		s2v, c, ok := svdV(e)
		if !ok {
			fallback()
			return
		}
		var x, yc mat.Dense
		x.Mul(vr, c)
		yc.Mul(&y, c)
		for t := 0; t < r && len(kept) < m; t++ {
			f := make([]complex128, nf)
			for i := range f {
				f[i] = complex(yc.At(i, t), yc.At(nf+i, t))
			}
			if !gs(f, keptField) {
				continue
			}
			sc := 0.0
			if t < len(s2v) {
				sc = min(s2v[t]*s2v[t], 1)
			}
			keptField = append(keptField, f)
			kept = append(kept, dir{toC(mat.Col(nil, t, &x)), sc})
		}
	}
	var nullKept [][]complex128
	for t := r; t < 2*m && len(kept) < m; t++ {
		c := toC(mat.Col(nil, t, v1))
		if !gs(c, nullKept) {
			continue
		}
		nullKept = append(nullKept, c)
		kept = append(kept, dir{c, 0})
	}
	if len(kept) != m {
		fallback()
		return
	}
	var mean complex128
	for _, md := range cl {
		mean += md.lam
	}
	mean /= complex(float64(m), 0)
	n := op.Len()
	na := make([][]float64, m)
	nb := make([][]float64, m)
	for t, d := range kept {
		a, b := make([]float64, n), make([]float64, n)
		for j, md := range cl {
			cr, ci := real(d.c[j]), imag(d.c[j])
			for i := 0; i < n; i++ {
				a[i] += cr*md.a[i] - ci*md.b[i]
				b[i] += cr*md.b[i] + ci*md.a[i]
			}
		}
		s := math.Sqrt(2 / (dot(a, a) + dot(b, b)))
		scale(a, s)
		scale(b, s)
		na[t], nb[t] = a, b
	}
	for t, md := range cl {
		md.a, md.b, md.lam, md.score = na[t], nb[t], mean, kept[t].score
	}
}

func conj(z complex128) complex128 { return complex(real(z), -imag(z)) }

// clusters splits modes sorted by |λ| into runs whose eigenvalues agree to
// within tol.
func clusters(ms []*mode, tol float64) [][]*mode {
	var out [][]*mode
	for i := 0; i < len(ms); {
		j := i + 1
		for j < len(ms) && cmplxAbs(ms[j].lam-ms[i].lam) <= tol {
			j++
		}
		out = append(out, ms[i:j])
		i = j
	}
	return out
}

// svdV returns the singular values of a, decreasing, and the matrix V of
// its right singular vectors; ok is false when the SVD did not converge.
func svdV(a mat.Matrix) (values []float64, v *mat.Dense, ok bool) {
	var s mat.SVD
	if !s.Factorize(a, mat.SVDFullV) {
		return nil, nil, false
	}
	v = new(mat.Dense)
	s.VTo(v)
	return s.Values(nil), v, true
}
