package par

import (
	"fmt"
	"testing"
)

// BenchmarkBandwidth measures the machine's memory bandwidth with the loops
// of STREAM (McCalpin 1995, IEEE TCCA Newsletter; the kernels, from memory)
// on the pool: copy (16 bytes moved per element) and triad (24 bytes per
// element), over arrays of 64 MiB each, far larger than any cache, for one
// and two workers. The MB/s figure counts the bytes the loop names; the
// processor also reads each destination line before writing it, so the
// traffic on the memory bus is 1.5× (copy) and 1.33× (triad) of it. It is
// the yardstick for the bytes a time step moves (see the bench command).
func BenchmarkBandwidth(b *testing.B) {
	const n = 8 << 20
	x, y, z := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range x {
		x[i], y[i], z[i] = 1, 2, 3
	}
	for _, w := range []int{1, 2} {
		p := New(w)
		cp := func(lo, hi int) { copy(x[lo:hi], y[lo:hi]) }
		triad := func(lo, hi int) {
			xs, ys, zs := x[lo:hi], y[lo:hi], z[lo:hi]
			ys, zs = ys[:len(xs)], zs[:len(xs)]
			for i := range xs {
				xs[i] = ys[i] + 3*zs[i]
			}
		}
		b.Run(fmt.Sprintf("copy-w%d", w), func(b *testing.B) {
			b.SetBytes(16 * n)
			for i := 0; i < b.N; i++ {
				p.For(n, cp)
			}
		})
		b.Run(fmt.Sprintf("triad-w%d", w), func(b *testing.B) {
			b.SetBytes(24 * n)
			for i := 0; i < b.N; i++ {
				p.For(n, triad)
			}
		})
		p.Close()
	}
}
