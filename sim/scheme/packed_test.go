package scheme

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gyrebench/sim/mesh"
	"gyrebench/sim/par"
)

// The packed cell kernels (packed_amd64.s, where the build has them) are
// cells6Go, cells4Go and cells3Go on SSE2 pairs: for both schemes it serves, in a tendency and
// in both kinds of stage, with a bottom and without, over whole runs and
// over ranges that start and end inside one, it must give the same bits
// for the depths (or ∂h/∂t) and for every share.
func TestPackedCellKernelsMatchGo(t *testing.T) {
	type mode struct {
		name     string
		tendency bool
		a, b, dt float64
	}
	modes := []mode{
		{"tendency", true, 0, 0, 0},
		{"stage h+Δt f", false, 0, 1, 600},
		{"stage a x0 + b(h+Δt f)", false, 0.75, 0.25, 150},
	}
	ran := map[int32]int{}
	for _, spec := range []mesh.Spec{
		{Kind: mesh.Hex, N: 16, Length: 2e6}, {Kind: mesh.Icosahedral, N: 3, Radius: 6.37122e6},
		{Kind: mesh.Quad, N: 16, Length: 2e6}, {Kind: mesh.Cubed, N: 6, Radius: 6.37122e6},
		{Kind: mesh.Tri, N: 16, Length: 2e6},
	} {
		f := randomFixtureOn(t, spec, 11)
		for _, name := range []string{TRiSKEnergy, TRiSKEnstrophy} {
			for _, flat := range []bool{false, true} {
				phys := f.phys
				if flat {
					phys.Bottom = nil
				}
				s := newTRiSK(name, f.g, phys, par.New(1), Options{})
				x := slices.Clone(f.x)
				s.x = x
				s.pool.For(s.nv, s.phaseVertices)
				s.edgePasses()
				x0 := slices.Clone(f.x)
				for i := range x0[:s.nc] {
					x0[i] *= 1.01
				}
				for _, r := range s.runs {
					kernel := map[int32]func(lo, hi int){6: s.cells6Go, 4: s.cells4Go, 3: s.cells3Go}[r.N]
					if kernel == nil {
						continue
					}
					lo, hi := int(r.Lo), int(r.Hi)
					for _, span := range [][2]int{{lo, hi}, {lo + 3, lo + 3 + (hi-lo)/2}} {
						for _, m := range modes {
							goX, goTT, goDH := runCells(s, x, x0, m.tendency, m.a, m.b, m.dt, span, int(r.N), kernel, nil)
							var packed bool
							asmX, asmTT, asmDH := runCells(s, x, x0, m.tendency, m.a, m.b, m.dt, span, int(r.N), nil, &packed)
							if packed != packedKernels {
								t.Fatalf("%s %s: the packed kernel ran: %v, want %v", spec.Kind, name, packed, packedKernels)
							}
							where := fmt.Sprint(spec.Kind) + " " + name + " " + m.name
							if flat {
								where += " flat"
							}
							sameBits(t, where+": h", goX[:s.nc], asmX[:s.nc])
							sameBits(t, where+": ∂h/∂t", goDH, asmDH)
							for e := range goTT {
								if math.Float64bits(goTT[e][0]) != math.Float64bits(asmTT[e][0]) || math.Float64bits(goTT[e][1]) != math.Float64bits(asmTT[e][1]) {
									t.Fatalf("%s: edge %d: shares %v in Go, %v packed", where, e, goTT[e], asmTT[e])
								}
							}
							ran[r.N]++
						}
					}
				}
			}
		}
	}
	for _, n := range []int32{6, 4, 3} {
		if ran[n] == 0 {
			t.Errorf("no runs of cells of %d edges", n)
		}
	}
}

// runCells runs one kernel for cells of n edges on a copy of x for the
// cells of span, as a tendency or as a stage, from shares and depth
// tendencies set to NaN, and returns the state, the shares and ∂h/∂t.
// With kernel nil it runs cellsPacked and reports in packed whether that
// did the work.
func runCells(s *trisk, x, x0 []float64, tendency bool, a, b, dt float64, span [2]int, n int, kernel func(lo, hi int), packed *bool) (xs []float64, tt []pair, dh []float64) {
	xs = slices.Clone(x)
	dh = make([]float64, s.nc)
	for i := range dh {
		dh[i] = math.NaN()
	}
	for e := range s.tt {
		s.tt[e] = pair{math.NaN(), math.NaN()}
	}
	s.x, s.x0, s.dh = xs, x0, nil
	s.stageA, s.stageB, s.stageDt = a, b, dt
	if tendency {
		s.dh = dh
	}
	if kernel != nil {
		kernel(span[0], span[1])
	} else if *packed = s.cellsPacked(n, span[0], span[1]); !*packed {
		t := map[int]func(lo, hi int){6: s.cells6Go, 4: s.cells4Go, 3: s.cells3Go}[n]
		t(span[0], span[1])
	}
	return xs, slices.Clone(s.tt), dh
}

func sameBits(t *testing.T, what string, want, got []float64) {
	t.Helper()
	for i := range want {
		if math.Float64bits(want[i]) != math.Float64bits(got[i]) {
			t.Fatalf("%s: element %d: %v in Go, %v packed", what, i, want[i], got[i])
		}
	}
}

// finishPacked divides two edges at a time where the build has it; on
// random shares and lengths, odd and even, each mode must give the bits
// of the Go loops of doMomentum and doFinish on the edges it reports
// done, and leave the others alone.
func TestPackedFinishMatchesGo(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 9))
	for _, n := range []int{1, 2, 7, 64, 513} {
		tt := make([]pair, n)
		d, x, x0 := make([]float64, n), make([]float64, n), make([]float64, n)
		for e := range tt {
			tt[e] = pair{1e4 * rng.NormFloat64(), 1e4 * rng.NormFloat64()}
			d[e], x[e], x0[e] = 1e4*(1+rng.Float64()), 10*rng.NormFloat64(), 10*rng.NormFloat64()
		}
		a, b, dt := 0.75, 0.25, 300.0
		for mode, want := range [3]func(e int) float64{
			func(e int) float64 { return (tt[e][0] - tt[e][1]) / d[e] },
			func(e int) float64 { return x[e] + dt*((tt[e][0]-tt[e][1])/d[e]) },
			func(e int) float64 { return a*x0[e] + b*(x[e]+dt*((tt[e][0]-tt[e][1])/d[e])) },
		} {
			got := slices.Clone(x)
			done := finishPacked(mode, got, x0, tt, d, a, b, dt)
			if wantDone := 0; packedKernels {
				wantDone = n &^ 1
				if done != wantDone {
					t.Fatalf("n %d mode %d: %d edges done, want %d", n, mode, done, wantDone)
				}
			} else if done != wantDone {
				t.Fatalf("n %d mode %d: %d edges done on a build without the packed pass", n, mode, done)
			}
			for e := range got {
				w := x[e]
				if e < done {
					w = want(e)
				}
				if math.Float64bits(got[e]) != math.Float64bits(w) {
					t.Fatalf("n %d mode %d: edge %d: %v, want %v", n, mode, e, got[e], w)
				}
			}
		}
	}
}

// edgesPacked does the edge pass two edges at a time where the build has
// it; on random depths, velocities and lengths it must give, on the
// edges it reports done, the bits of doEdges's Go loop, and leave the
// others alone.
func TestPackedEdgesMatchGo(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 2))
	h := make([]float64, 50)
	for i := range h {
		h[i] = 1000 * (1 + 0.1*rng.NormFloat64())
	}
	for _, n := range []int{1, 2, 7, 64, 513} {
		u, l, d := make([]float64, n), make([]float64, n), make([]float64, n)
		cells := make([]int32, 2*n)
		for e := range u {
			u[e], l[e], d[e] = 10*rng.NormFloat64(), 1e4*(1+rng.Float64()), 1e4*(1+rng.Float64())
			cells[2*e], cells[2*e+1] = int32(rng.IntN(len(h))), int32(rng.IntN(len(h)))
		}
		fk := make([]pair, n)
		for e := range fk {
			fk[e] = pair{math.NaN(), math.NaN()}
		}
		done := edgesPacked(h, u, l, d, cells, fk)
		wantDone := 0
		if packedKernels {
			wantDone = n &^ 1
		}
		if done != wantDone {
			t.Fatalf("n %d: %d edges done, want %d", n, done, wantDone)
		}
		for e := range fk {
			want := pair{math.NaN(), math.NaN()}
			if e < done {
				m := 0.5 * (h[cells[2*e]] + h[cells[2*e+1]])
				want = pair{l[e] * m * u[e], l[e] * d[e] * u[e] * u[e]}
			}
			for j := range want {
				if math.Float64bits(fk[e][j]) != math.Float64bits(want[j]) {
					t.Fatalf("n %d: edge %d: %v, want %v", n, e, fk[e], want)
				}
			}
		}
	}
}
