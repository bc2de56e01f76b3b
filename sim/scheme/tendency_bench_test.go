package scheme

import (
	"fmt"
	"testing"
	"time"

	"gyrebench/sim/mesh"
	"gyrebench/sim/par"
)

// BenchmarkPhases times each pass of one trisk-energy tendency, one worker,
// on 16 384 hexagons (in cache) and 262 144 (not), icosahedral level 6,
// 16 384 squares, 32 768 triangles and the cubed sphere of 24 576 cells. On a shared machine the
// mean is noisy; min-ns/cell, the fastest of the b.N calls per cell, is the figure to
// compare.
func BenchmarkPhases(b *testing.B) {
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Hex, N: 128, Length: 2e6},
		{Kind: mesh.Hex, N: 512, Length: 8e6},
		{Kind: mesh.Icosahedral, N: 6, Radius: 6.37122e6},
		{Kind: mesh.Quad, N: 128, Length: 2e6},
		{Kind: mesh.Tri, N: 128, Length: 2e6},
		{Kind: mesh.Cubed, N: 64, Radius: 6.37122e6},
	} {
		f := randomFixtureOn(b, spec, 1)
		s := newTRiSK(TRiSKEnergy, f.g, f.phys, par.New(1), Options{})
		dx := make([]float64, len(f.x))
		s.x, s.dst, s.dh = f.x, dx, dx[:f.m.NumCells]
		benchPasses(b, fmt.Sprintf("%s-%d", spec.Kind, spec.N), f.m.NumCells,
			pass{"vertices", s.nv, s.phaseVertices}, pass{"edges", s.ne, s.phaseEdges},
			pass{"cells", s.nc, s.phaseCells}, pass{"momentum", s.ne, s.phaseMomentum})
	}
}

// BenchmarkHodge times one trisk-energy tendency, one worker, on a
// jittered grid with the diagonal and with the general Hodge star (the
// same topology and metric otherwise), and on the cubed sphere;
// min-ns/cell is the fastest call per cell.
func BenchmarkHodge(b *testing.B) {
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Hex, N: 128, Length: 2e6, Jitter: 0.2, Seed: 1},
		{Kind: mesh.Quad, N: 128, Length: 2e6, Jitter: 0.2, Seed: 1},
		{Kind: mesh.Cubed, N: 64, Radius: 6.37122e6},
	} {
		for _, general := range []bool{false, true} {
			f := randomFixtureOn(b, spec, 1)
			if general {
				if err := mesh.EnsureHodge(f.m); err != nil {
					b.Fatal(err)
				}
			}
			s, err := New(TRiSKEnergy, f.g, f.phys, par.New(1), Options{})
			if err != nil {
				b.Fatal(err)
			}
			dx := make([]float64, len(f.x))
			name := map[bool]string{false: "diagonal", true: "general"}[general]
			b.Run(fmt.Sprintf("%s-%d/%s", spec.Kind, spec.N, name), func(b *testing.B) {
				reportMinPerCell(b, f.m.NumCells, func() { s.Tendency(dx, f.x) })
			})
		}
	}
}

// pass is one pass of a scheme over n cells, edges or vertices.
type pass struct {
	name string
	n    int
	fn   func(lo, hi int)
}

// benchPasses runs one sub-benchmark prefix/name per pass, each reporting
// the fastest whole pass per cell of the mesh.
func benchPasses(b *testing.B, prefix string, cells int, passes ...pass) {
	for _, ph := range passes {
		b.Run(prefix+"/"+ph.name, func(b *testing.B) {
			reportMinPerCell(b, cells, func() { ph.fn(0, ph.n) })
		})
	}
}

// reportMinPerCell calls fn b.N times and reports the fastest call per
// cell as min-ns/cell: on a shared machine the mean is noisy.
func reportMinPerCell(b *testing.B, cells int, fn func()) {
	best := time.Duration(1 << 62)
	for i := 0; i < b.N; i++ {
		t0 := time.Now()
		fn()
		best = min(best, time.Since(t0))
	}
	b.ReportMetric(float64(best.Nanoseconds())/float64(cells), "min-ns/cell")
}

// BenchmarkPhasesAPVM times apvm's own passes (q on cells with the TRiSK
// cell sums of l u, then the correction q_e − q̂_e on edges) and its cell
// pass, one worker, on 16 384 hexagons, 16 384 squares and 32 768
// triangles; min-ns/cell is the fastest call per cell.
func BenchmarkPhasesAPVM(b *testing.B) {
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Hex, N: 128, Length: 2e6},
		{Kind: mesh.Quad, N: 128, Length: 2e6},
		{Kind: mesh.Tri, N: 128, Length: 2e6},
	} {
		f := randomFixtureOn(b, spec, 1)
		s := newTRiSK(APVM, f.g, f.phys, par.New(1), Options{APVMFactor: 0.5})
		s.SetDt(60)
		dx := make([]float64, len(f.x))
		s.x, s.dst, s.dh = f.x, dx, dx[:f.m.NumCells]
		s.phaseVertices(0, s.nv)
		s.phaseEdges(0, s.ne)
		benchPasses(b, fmt.Sprintf("%s-%d", spec.Kind, spec.N), f.m.NumCells,
			pass{"cellpv", s.nc, s.phaseQ}, pass{"anticipate", s.ne, s.phaseA}, pass{"cells", s.nc, s.phaseCells})
	}
}

// BenchmarkPhasesSquare times the passes of the square-grid schemes
// (al81, sadourny-energy) that differ from trisk's, one worker, on
// 16 384 squares; min-ns/cell is the fastest call per cell.
func BenchmarkPhasesSquare(b *testing.B) {
	f := randomFixtureOn(b, mesh.Spec{Kind: mesh.Quad, N: 128, Length: 2e6}, 1)
	for _, name := range []string{AL81, SadournyEnergy} {
		s := newSquare(name, f.g, f.phys, par.New(1))
		dx := make([]float64, len(f.x))
		s.x, s.dst, s.dh = f.x, dx, dx[:f.m.NumCells]
		s.phaseVertices(0, s.nv)
		s.phaseEdges(0, s.ne)
		benchPasses(b, name, f.m.NumCells, pass{"cells", s.nc, s.phaseCells}, pass{"momentum", s.ne, s.phaseMomentum})
	}
}
