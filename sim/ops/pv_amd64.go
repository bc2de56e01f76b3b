//go:build amd64 && !purego

package ops

import "unsafe"

// pvArgs is what the packed PV kernels read, in the layout of their
// offsets (pv_amd64.s): pointers to the first element of each range.
type pvArgs struct {
	q, f, area, u, h, ec, tk unsafe.Pointer
	n                        int
}

// pv3SSE2, pv4SSE2 and pv6SSE2 run pv3, pv4 and pv6 on a.n vertices,
// a.n even (pv_amd64.s).
//
//go:noescape
func pv3SSE2(a *pvArgs)

//go:noescape
func pv4SSE2(a *pvArgs)

//go:noescape
func pv6SSE2(a *pvArgs)

// packedKernels reports whether this build has the packed PV kernels;
// the tests check that they give the Go loops' bits.
const packedKernels = true

// pvPacked sets q[j] = q_{lo+j} for the largest even number of the
// vertices of q, all of deg edges (3, 4 or 6), and returns that number.
func (s *PVStencil) pvPacked(deg int, q, f, u, h []float64, lo int) int {
	n := len(q) &^ 1
	if n == 0 {
		return 0
	}
	k0 := int(s.g.VertexEdgeStart[lo])
	m := deg * n
	ec, tk := s.ec[k0:k0+m], s.tk[k0:k0+m]
	f, area := f[lo:lo+n], s.g.VertexArea[lo:lo+n]
	a := pvArgs{
		q: unsafe.Pointer(&q[0]), f: unsafe.Pointer(&f[0]), area: unsafe.Pointer(&area[0]),
		u: unsafe.Pointer(&u[0]), h: unsafe.Pointer(&h[0]),
		ec: unsafe.Pointer(&ec[0]), tk: unsafe.Pointer(&tk[0]), n: n,
	}
	switch deg {
	case 3:
		pv3SSE2(&a)
	case 4:
		pv4SSE2(&a)
	case 6:
		pv6SSE2(&a)
	default:
		return 0
	}
	return n
}
