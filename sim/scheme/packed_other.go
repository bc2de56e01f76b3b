//go:build !amd64 || purego

package scheme

// cellKernelsPacked reports whether cells6, cells4 and cells3 have
// packed kernels on this build (packed_amd64.go).
const cellKernelsPacked = false

// cellsPacked reports false: this build has no packed kernels.
func (s *trisk) cellsPacked(n, lo, hi int) bool { return false }

// finishPacked does nothing on this build and reports no edges done.
func finishPacked(mode int, x, x0 []float64, tt []pair, d []float64, a, b, dt float64) int {
	return 0
}
