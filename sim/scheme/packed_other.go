//go:build !amd64 || purego

package scheme

// hexKernelPacked reports whether cells6 has a packed kernel on this
// build (packed_amd64.go).
const hexKernelPacked = false

// cells6Packed reports false: this build has no packed kernel.
func (s *trisk) cells6Packed(lo, hi int) bool { return false }

// finishPacked does nothing on this build and reports no edges done.
func finishPacked(mode int, x, x0 []float64, tt []pair, d []float64, a, b, dt float64) int {
	return 0
}
