package cases

import (
	"math"
	"testing"

	"gyrebench/sim/mesh"
)

// balancedDepth against two exact solutions of the nonlinear balance
// equation g∇²η = f∇²ψ + 2(ψ_xx ψ_yy − ψ_xy²):
//   - ψ = A sin(2πx/Lx) + B cos(4πy/Ly): ψ_xy = 0 and ψ_xx ψ_yy is the
//     product of one x mode and one y mode, so
//     η = fψ/g + (2/g) A B k²l² sin(kx) cos(ly) / (−(k² + l²));
//     a sign, phase or normalisation error of the transform shows;
//   - a grid too coarse for the flow is refused, not aliased.
func TestBalancedDepthExact(t *testing.T) {
	m, err := mesh.New(mesh.Spec{Kind: mesh.Hex, N: 12, Length: 1e6})
	if err != nil {
		t.Fatal(err)
	}
	p := Physics{G: 9.8, F0: 1e-4, Depth: 1000}
	lx, ly := m.Surface.Lx, m.Surface.Ly
	k, l := 2*math.Pi/lx, 4*math.Pi/ly
	const A, B = 2e5, 1.5e5 // m² s⁻¹: Rossby number k²A/f ≈ 0.08
	h := make([]float64, m.NumCells)
	balancedDepth(m, p, h, 64, 64, func(x, y float64) float64 { return A*math.Sin(k*x) + B*math.Cos(l*y) })
	var worst, scale float64
	for i := range h {
		x, y := m.CellX[i], m.CellY[i]
		geo := p.F0 / p.G * (A*math.Sin(k*x) + B*math.Cos(l*y))
		cyc := -2 / p.G * A * B * k * k * l * l * math.Sin(k*x) * math.Cos(l*y) / (k*k + l*l)
		worst = math.Max(worst, math.Abs(h[i]-p.Depth-geo-cyc))
		scale = math.Max(scale, math.Abs(geo))
	}
	if worst > 1e-12*scale {
		t.Errorf("balanced depth off by %.3g m (depth anomaly scale %.3g m)", worst, scale)
	}
	if _, err := balanceGridSize(2 * maxBalanceGrid); err == nil {
		t.Errorf("balanceGridSize(%d) accepted a grid over the limit", 2*maxBalanceGrid)
	}
}
