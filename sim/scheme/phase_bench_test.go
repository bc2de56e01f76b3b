package scheme

import (
	"testing"

	"gyrebench/sim/mesh"
	"gyrebench/sim/par"
)

func BenchmarkPhases(b *testing.B) {
	f := randomFixtureOn(b, mesh.Spec{Kind: mesh.Hex, N: 512, Length: 8e6}, 1)
	s := newTRiSK(TRiSKEnergy, f.g, f.phys, par.New(1), Options{})
	dx := make([]float64, len(f.x))
	s.x, s.dst = f.x, dx
	for _, ph := range []struct {
		name string
		n    int
		fn   func(lo, hi int)
	}{{"flux", s.ne, s.phaseFlux}, {"cells", s.nc, s.phaseCells}, {"vertices", s.nv, s.phaseVertices}, {"edgepv", s.ne, s.phaseEdgePV}, {"sums", s.nc, s.phaseSums}, {"momentum", s.ne, s.phaseMomentum}} {
		b.Run(ph.name, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				ph.fn(0, ph.n)
			}
		})
	}
}
