//go:build !amd64 || purego

package ops

// packedKernels reports whether this build has the packed PV kernels
// (pv_amd64.go).
const packedKernels = false

// pvPacked does nothing on this build and reports no vertices done.
func (s *PVStencil) pvPacked(deg int, q, f, u, h []float64, lo int) int { return 0 }
