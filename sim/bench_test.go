package sim

import (
	"fmt"
	"testing"
)

// BenchmarkStep measures one whole time step (three tendencies for rk3,
// trisk-energy) on a mesh of every family, and reports cell-steps per
// second.
func BenchmarkStep(b *testing.B) {
	for _, c := range []struct {
		kind string
		n    int
	}{{"hex", 128}, {"hex", 512}, {"quad", 128}, {"tri", 128}, {"icosahedral", 6}, {"cubed", 64}} {
		for _, w := range []int{1, 2} {
			b.Run(fmt.Sprintf("%s-n%d-rk3-trisk-energy-w%d", c.kind, c.n, w), func(b *testing.B) {
				cfg := DefaultConfig()
				cfg.Grid = GridConfig{Kind: c.kind, N: c.n, Length: 1e6 * float64(c.n) / 64}
				if c.kind == "icosahedral" || c.kind == "cubed" {
					cfg.Grid.Length = 0
					cfg.Initial.Case = "williamson-2"
				}
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
