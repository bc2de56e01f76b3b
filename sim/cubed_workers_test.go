package sim

import (
	"math"
	"testing"
)

// The cubed sphere's states are bit-identical for 1, 2 and 4 workers,
// with the general (consistent) Hodge star and with the diagonal one,
// through the staged rk3 step and plain rk4: the loops are split in
// fixed contiguous chunks and every sum is taken in one order.
func TestBitIdenticalWorkersCubed(t *testing.T) {
	for _, hodge := range []string{"consistent", "diagonal"} {
		for _, integ := range []string{"rk3", "rk4"} {
			cfg := sphereConfig("williamson-6", 3, 600)
			cfg.Grid = GridConfig{Kind: "cubed", N: 24}
			cfg.Scheme.Hodge = hodge
			cfg.Time.Integrator = integ
			var ref []float64
			for _, w := range []int{1, 2, 4} {
				m := steppedModel(t, cfg, w, 10)
				if ref == nil {
					ref = append([]float64(nil), m.State()...)
					m.Close()
					continue
				}
				for k, v := range m.State() {
					if math.Float64bits(v) != math.Float64bits(ref[k]) {
						t.Fatalf("cubed n = 24, %s H, %s: workers = %d differs from 1 worker at %d", hodge, integ, w, k)
					}
				}
				m.Close()
			}
		}
	}
}
