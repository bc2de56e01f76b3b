//go:build !amd64 || purego

package scheme

// packedKernels reports whether this build has the packed kernels
// (packed_amd64.go).
const packedKernels = false

// cellsPacked reports false: this build has no packed kernels.
func (s *trisk) cellsPacked(n, lo, hi int) bool { return false }

// finishPacked does nothing on this build and reports no edges done.
func finishPacked(mode int, x, x0 []float64, tt []pair, d []float64, a, b, dt float64) int {
	return 0
}

// edgesPacked does nothing on this build and reports no edges done.
func edgesPacked(h, u, l, d []float64, cells []int32, fk []pair) int { return 0 }

// hodgePacked reports false: this build has no packed kernels.
func (c *core) hodgePacked(n, lo, hi int) bool { return false }
