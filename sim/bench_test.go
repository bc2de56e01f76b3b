package sim

import (
	"fmt"
	"testing"
)

// BenchmarkStep measures one whole time step (three tendencies for rk3)
// and reports cell-steps per second.
func BenchmarkStep(b *testing.B) {
	for _, n := range []int{128, 512} {
		for _, w := range []int{1, 2} {
			b.Run(fmt.Sprintf("hex-n%d-rk3-trisk-energy-w%d", n, w), func(b *testing.B) {
				cfg := DefaultConfig()
				cfg.Grid = GridConfig{Kind: "hex", N: n, Length: 1e6 * float64(n) / 64}
				cfg.Time.Dt = 30
				m, err := NewModel(cfg, w)
				if err != nil {
					b.Fatal(err)
				}
				defer m.Close()
				b.ReportAllocs()
				b.ResetTimer()
				for i := 0; i < b.N; i++ {
					if err := m.Step(); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(m.Mesh().NumCells)*float64(b.N)/b.Elapsed().Seconds(), "cell-steps/s")
			})
		}
	}
}
