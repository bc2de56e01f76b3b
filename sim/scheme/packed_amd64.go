//go:build amd64 && !purego

package scheme

import (
	"strconv"
	"unsafe"
)

// cellArgs is what the packed cell kernels read, in the layout of their
// offsets (packed_amd64.s): pointers to the first element of each range.
type cellArgs struct {
	h, invA, out, x0, bottom unsafe.Pointer
	slots, q, fk, tt         unsafe.Pointer
	n                        int
	g, a, b, dt              float64
	mode, enst               int // mode: 0 a tendency, 1 the stage h + Δt f, 2 a x0 + b (h + Δt f)
	quarterSign              [2]float64
	half, quarter            float64
	sign                     uint64 // the sign bit, to negate by XOR
}

// hexCellsSSE2, quadCellsSSE2 and triCellsSSE2 run cells6, cells4 and
// cells3 on a.n cells (packed_amd64.s).
//
//go:noescape
func hexCellsSSE2(a *cellArgs)

//go:noescape
func quadCellsSSE2(a *cellArgs)

//go:noescape
func triCellsSSE2(a *cellArgs)

// packedKernels reports whether this build has the packed kernels (the
// cell kernels cells6, cells4 and cells3, the edge pass, the finishing
// pass and the Hodge rows); the tests check that they give the Go loops'
// bits.
const packedKernels = true

// cellsPacked runs the kernel for cells of n edges (6, 4 or 3) on
// [lo, hi) packed and reports true, or reports false where no packed
// kernel applies (apvm's correction of q_e).
func (s *trisk) cellsPacked(n, lo, hi int) bool {
	if s.corr != nil {
		return false
	}
	h, invA, dh, x0, b, slots := s.cellRange(lo, hi)
	if len(h) == 0 {
		return true
	}
	slots = slots[:n*len(h)]
	a := cellArgs{
		h: unsafe.Pointer(&h[0]), invA: unsafe.Pointer(&invA[0]),
		slots: unsafe.Pointer(&slots[0]), q: unsafe.Pointer(&s.q[0]),
		fk: unsafe.Pointer(&s.fk[0]), tt: unsafe.Pointer(&s.tt[0]),
		n: len(h), g: s.phys.G, a: s.stageA, b: s.stageB, dt: s.stageDt,
		quarterSign: quarterSign, half: 0.5, quarter: 0.25, sign: 1 << 63,
	}
	switch {
	case dh != nil:
		a.out = unsafe.Pointer(&dh[0])
	case s.stageA == 0 && s.stageB == 1:
		a.mode = 1
	default:
		a.mode, a.x0 = 2, unsafe.Pointer(&x0[0])
	}
	if b != nil {
		a.bottom = unsafe.Pointer(&b[0])
	}
	if s.enstrophy {
		a.enst = 1
	}
	switch n {
	case 6:
		hexCellsSSE2(&a)
	case 4:
		quadCellsSSE2(&a)
	case 3:
		triCellsSSE2(&a)
	default:
		panic("scheme: no packed kernel for cells of " + strconv.Itoa(n) + " edges")
	}
	return true
}

// finishArgs is what finishSSE2 reads, in the layout of its offsets
// (packed_amd64.s).
type finishArgs struct {
	x, x0, tt, d unsafe.Pointer
	n            int
	a, b, dt     float64
	mode         int // 0 ∂u/∂t to x, 1 x + Δt f, 2 a x0 + b (x + Δt f)
}

// finishSSE2 runs the finishing pass on a.n edges, a.n even
// (packed_amd64.s).
//
//go:noescape
func finishSSE2(a *finishArgs)

// finishPacked runs the even part of the momentum pass (mode 0, into du)
// or of a stage's finish for the edges of tt and d, and returns how many
// edges it did; the caller's Go loop does the rest.
func finishPacked(mode int, x, x0 []float64, tt []pair, d []float64, a, b, dt float64) int {
	n := len(x) &^ 1
	if n == 0 {
		return 0
	}
	tt, d = tt[:n], d[:n]
	fa := finishArgs{x: unsafe.Pointer(&x[0]), tt: unsafe.Pointer(&tt[0]), d: unsafe.Pointer(&d[0]), n: n, a: a, b: b, dt: dt, mode: mode}
	if mode == 2 {
		x0 = x0[:n]
		fa.x0 = unsafe.Pointer(&x0[0])
	}
	finishSSE2(&fa)
	return n
}

// edgeArgs is what edgesSSE2 reads, in the layout of its offsets
// (packed_amd64.s).
type edgeArgs struct {
	h, u, l, d, cells, fk unsafe.Pointer
	n                     int
	half                  float64
}

// edgesSSE2 runs doEdges on a.n edges, a.n even (packed_amd64.s).
//
//go:noescape
func edgesSSE2(a *edgeArgs)

// edgesPacked sets fk for the largest even number of the edges of u (a
// range of edges whose cells, lengths and fluxes are cells, l, d and fk)
// and returns that number; doEdges's Go loop does the rest.
func edgesPacked(h, u, l, d []float64, cells []int32, fk []pair) int {
	n := len(u) &^ 1
	if n == 0 {
		return 0
	}
	l, d, cells, fk = l[:n], d[:n], cells[:2*n], fk[:n]
	a := edgeArgs{
		h: unsafe.Pointer(&h[0]), u: unsafe.Pointer(&u[0]), l: unsafe.Pointer(&l[0]), d: unsafe.Pointer(&d[0]),
		cells: unsafe.Pointer(&cells[0]), fk: unsafe.Pointer(&fk[0]), n: n, half: 0.5,
	}
	edgesSSE2(&a)
	return n
}

// hodgeArgs is what the packed Hodge-row kernels read, in the layout of
// their offsets (packed_amd64.s).
type hodgeArgs struct {
	col, val, vh, vhe, h, cells, fk, lu unsafe.Pointer
	n                                   int
	half                                float64
}

// hodge5SSE2, hodge7SSE2 and hodge11SSE2 run hodgeRows5, hodgeRows7 and
// hodgeRows11 with hodgeFlux on a.n edges (packed_amd64.s).
//
//go:noescape
func hodge5SSE2(a *hodgeArgs)

//go:noescape
func hodge7SSE2(a *hodgeArgs)

//go:noescape
func hodge11SSE2(a *hodgeArgs)

// hodgePacked runs the rows of the general Hodge star for the edges
// [lo, hi), all of n entries, packed, and reports true, or reports false
// where no packed kernel has rows of n entries.
func (c *core) hodgePacked(n, lo, hi int) bool {
	if n != 5 && n != 7 && n != 11 {
		return false
	}
	if lo >= hi {
		return true
	}
	k := int(c.hodge.Start[lo])
	m := n * (hi - lo)
	col, val := c.hodge.Col[k:k+m], c.hodge.Val[k:k+m]
	cells, fk, vhe := c.g.EdgeCells[2*lo:2*hi], c.fk[lo:hi], c.vh[lo:hi]
	a := hodgeArgs{
		col: unsafe.Pointer(&col[0]), val: unsafe.Pointer(&val[0]), vh: unsafe.Pointer(&c.vh[0]),
		vhe: unsafe.Pointer(&vhe[0]), h: unsafe.Pointer(&c.x[0]), cells: unsafe.Pointer(&cells[0]),
		fk: unsafe.Pointer(&fk[0]), n: hi - lo, half: 0.5,
	}
	if c.lu != nil {
		lu := c.lu[lo:hi]
		a.lu = unsafe.Pointer(&lu[0])
	}
	switch n {
	case 5:
		hodge5SSE2(&a)
	case 7:
		hodge7SSE2(&a)
	default:
		hodge11SSE2(&a)
	}
	return true
}
