package sim

import (
	"fmt"
	"testing"
)

// BenchmarkStep measures one whole time step (three tendencies for rk3,
// trisk-energy) on a mesh of every family, and reports cell-steps per
// second.
func BenchmarkStep(b *testing.B) {
	for _, g := range []GridConfig{
		{Kind: "hex", N: 128, Length: 2e6},
		{Kind: "hex", N: 512, Length: 8e6},
		{Kind: "quad", N: 128, Length: 2e6},
		{Kind: "tri", N: 128, Length: 2e6},
		{Kind: "icosahedral", N: 6},
		{Kind: "cubed", N: 64},
	} {
		for _, w := range []int{1, 2} {
			b.Run(fmt.Sprintf("%s-n%d-rk3-trisk-energy-w%d", g.Kind, g.N, w), func(b *testing.B) {
				cfg := DefaultConfig()
				cfg.Grid = g
				if g.Kind == "icosahedral" || g.Kind == "cubed" {
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
