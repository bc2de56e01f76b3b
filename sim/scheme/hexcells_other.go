//go:build !amd64 || purego

package scheme

// hexKernelPacked reports whether cells6 has a packed kernel on this
// build (hexcells_amd64.go).
const hexKernelPacked = false

// cells6Packed reports false: this build has no packed kernel.
func (s *trisk) cells6Packed(lo, hi int) bool { return false }
