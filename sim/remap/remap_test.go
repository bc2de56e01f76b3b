package remap

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gyrebench/sim/mesh"
)

const length = 1e6

func build(t testing.TB, k mesh.Kind, n int) *mesh.Mesh {
	t.Helper()
	m, err := mesh.New(mesh.Spec{Kind: k, N: n, Length: length})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// quadOnHexDomain returns the n × n quad mesh squeezed in y onto the hex
// and tri domain length × length·√3/2: rectangular cells, still an
// orthogonal C-grid. mesh.New builds square quad meshes only, and a square
// domain never equals a hex one, so this fixture is what lets the tests
// remap between quad and hex/tri cells at all.
func quadOnHexDomain(t testing.TB, n int) *mesh.Mesh {
	t.Helper()
	hex := build(t, mesh.Hex, 4)
	q := build(t, mesh.Quad, n)
	s := hex.Surface.Ly / q.Surface.Ly
	scale := func(a []float64) []float64 {
		b := make([]float64, len(a))
		for k, v := range a {
			b[k] = v * s
		}
		return b
	}
	q.Surface.Ly = hex.Surface.Ly
	q.CellY, q.VertexY, q.EdgeY = scale(q.CellY), scale(q.VertexY), scale(q.EdgeY)
	q.CellArea, q.VertexArea = scale(q.CellArea), scale(q.VertexArea)
	q.CellKiteArea, q.VertexKiteArea = scale(q.CellKiteArea), scale(q.VertexKiteArea)
	l, d := append([]float64(nil), q.EdgeLength...), append([]float64(nil), q.DualLength...)
	for e := range l {
		if math.Abs(q.NormalX[e]) > 0.5 {
			l[e] *= s // vertical primal edge
		} else {
			d[e] *= s // vertical dual edge
		}
	}
	q.EdgeLength, q.DualLength = l, d
	return q
}

type family struct {
	name   string
	meshes []*mesh.Mesh
}

// families returns sets of meshes that share a domain: quad (squeezed),
// hex and tri on length × length·√3/2, and square quads on length².
func families(t testing.TB, ns []int) []family {
	var hexDom, square []*mesh.Mesh
	for _, n := range ns {
		hexDom = append(hexDom, quadOnHexDomain(t, n), build(t, mesh.Hex, n), build(t, mesh.Tri, n))
	}
	for _, n := range []int{4, 5, 7, 16} {
		square = append(square, build(t, mesh.Quad, n))
	}
	return []family{{"hex domain", hexDom}, {"square", square}}
}

func name(m *mesh.Mesh) string {
	if m.Kind == mesh.Quad && m.Surface.Ly != m.Surface.Lx {
		return fmt.Sprintf("quad(squeezed) n=%d", m.N)
	}
	return fmt.Sprintf("%s n=%d", m.Kind, m.N)
}

// mass returns Σ A_i h_i with Neumaier summation, so that the test
// measures the remap and not the sum.
func mass(m *mesh.Mesh, h []float64) float64 {
	s, c := 0.0, 0.0
	for i, v := range h {
		x := m.CellArea[i] * v
		t := s + x
		if math.Abs(s) >= math.Abs(x) {
			c += (s - t) + x
		} else {
			c += (x - t) + s
		}
		s = t
	}
	return s + c
}

func TestMassConservedAndMonotone(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	worst := 0.0
	for _, f := range families(t, []int{4, 6, 10, 16}) {
		for _, src := range f.meshes {
			h := make([]float64, src.NumCells)
			for i := range h {
				h[i] = 1000 + 500*rng.Float64()
			}
			for _, dst := range f.meshes {
				r, err := New(src, dst)
				if err != nil {
					t.Fatalf("%s → %s: %v", name(src), name(dst), err)
				}
				out := make([]float64, dst.NumCells)
				r.Cells(out, h)
				m0, m1 := mass(src, h), mass(dst, out)
				rel := math.Abs(m1-m0) / m0
				worst = max(worst, rel)
				if rel > 1e-13 {
					t.Errorf("%s → %s: mass %.17g → %.17g, relative change %.2e", name(src), name(dst), m0, m1, rel)
				}
				for j, v := range out {
					if v < 1000*(1-1e-14) || v > 1500*(1+1e-14) {
						t.Errorf("%s → %s: cell %d gets %g outside the old range [1000, 1500]", name(src), name(dst), j, v)
						break
					}
				}
				// A constant is kept, cell by cell.
				for i := range h {
					h[i] = 7
				}
				r.Cells(out, h[:src.NumCells])
				for j, v := range out {
					if math.Abs(v-7) > 7e-14 {
						t.Errorf("%s → %s: constant 7 becomes %.17g in cell %d", name(src), name(dst), v, j)
						break
					}
				}
				for i := range h {
					h[i] = 1000 + 500*rng.Float64()
				}
			}
		}
	}
	t.Logf("worst relative mass change over all pairs: %.2e", worst)
}

func TestIdentity(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, f := range families(t, []int{4, 10}) {
		for _, a := range f.meshes {
			// A second, separately built copy of the same mesh.
			var b *mesh.Mesh
			if a.Kind == mesh.Quad && a.Surface.Ly != a.Surface.Lx {
				b = quadOnHexDomain(t, a.N)
			} else {
				b = build(t, a.Kind, a.N)
			}
			checkIdentity(t, name(a), a, b, rng)
		}
	}
}

// checkIdentity remaps a random state (depth about 1000) from a to b, two
// separately built copies of one mesh: h must be kept to 1e-13 relative
// and u exactly.
func checkIdentity(t *testing.T, what string, a, b *mesh.Mesh, rng *rand.Rand) {
	t.Helper()
	r, err := New(a, b)
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float64, a.NumCells+a.NumEdges)
	for k := range x {
		x[k] = rng.NormFloat64()
	}
	for i := 0; i < a.NumCells; i++ {
		x[i] += 1000
	}
	y := make([]float64, len(x))
	r.Apply(y, x)
	for i := 0; i < a.NumCells; i++ {
		if math.Abs(y[i]-x[i]) > 1e-13*x[i] {
			t.Errorf("%s: identity changes h[%d] from %.17g to %.17g", what, i, x[i], y[i])
			break
		}
	}
	for e := a.NumCells; e < len(x); e++ {
		if y[e] != x[e] {
			t.Errorf("%s: identity changes u[%d] from %g to %g", what, e-a.NumCells, x[e], y[e])
			break
		}
	}
}

// remapErrors remaps from src to dst the state whose depth in cell i is
// depth(m, i) and whose normal velocity setFlow writes, and returns the
// largest errors against the same fields sampled on dst: of the normal
// velocity and of the depth.
func remapErrors(t *testing.T, src, dst *mesh.Mesh, depth func(m *mesh.Mesh, i int) float64, setFlow func(m *mesh.Mesh, u []float64)) (du, dh float64) {
	t.Helper()
	r, err := New(src, dst)
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float64, src.NumCells+src.NumEdges)
	for i := 0; i < src.NumCells; i++ {
		x[i] = depth(src, i)
	}
	setFlow(src, x[src.NumCells:])
	y := make([]float64, dst.NumCells+dst.NumEdges)
	r.Apply(y, x)
	want := make([]float64, dst.NumEdges)
	setFlow(dst, want)
	for e, w := range want {
		du = max(du, math.Abs(y[dst.NumCells+e]-w))
	}
	for j := 0; j < dst.NumCells; j++ {
		dh = max(dh, math.Abs(y[j]-depth(dst, j)))
	}
	return du, dh
}

func setFlow(m *mesh.Mesh, u []float64, v func(x, y float64) (float64, float64)) {
	for e := range u {
		vx, vy := v(m.EdgeX[e], m.EdgeY[e])
		u[e] = vx*m.NormalX[e] + vy*m.NormalY[e]
	}
}

func TestUniformFlowExact(t *testing.T) {
	const ux, uy = 3.7, -1.9
	speed := math.Hypot(ux, uy)
	uniform := func(x, y float64) (float64, float64) { return ux, uy }
	worst := 0.0
	for _, f := range families(t, []int{4, 6, 10, 16}) {
		for _, src := range f.meshes {
			u := make([]float64, src.NumEdges)
			setFlow(src, u, uniform)
			for _, dst := range f.meshes {
				r, err := New(src, dst)
				if err != nil {
					t.Fatal(err)
				}
				got, want := make([]float64, dst.NumEdges), make([]float64, dst.NumEdges)
				r.Velocity(got, u)
				setFlow(dst, want, uniform)
				for e := range got {
					d := math.Abs(got[e]-want[e]) / speed
					worst = max(worst, d)
					if d > 1e-12 {
						t.Errorf("%s → %s: edge %d: u = %.17g, want %.17g", name(src), name(dst), e, got[e], want[e])
						break
					}
				}
			}
		}
	}
	t.Logf("worst relative error of a uniform flow over all pairs: %.2e", worst)
}

// TestLinearFlowExact checks that the fit reproduces a linear (non
// periodic) flow away from the periodic seam, which is what makes it
// second order.
func TestLinearFlowExact(t *testing.T) {
	ms := families(t, []int{10, 16})[0].meshes
	lin := func(x, y float64) (float64, float64) {
		x, y = x/length, y/length
		return 1 + 2*x - 3*y, -0.5 + 0.7*x + 1.3*y
	}
	for _, src := range ms {
		u := make([]float64, src.NumEdges)
		setFlow(src, u, lin)
		for _, dst := range ms {
			r, err := New(src, dst)
			if err != nil {
				t.Fatal(err)
			}
			got := make([]float64, dst.NumEdges)
			r.Velocity(got, u)
			lx, ly := dst.Surface.Lx, dst.Surface.Ly
			for e := range got {
				x, y := dst.EdgeX[e], dst.EdgeY[e]
				if x < 0.3*lx || x > 0.7*lx || y < 0.3*ly || y > 0.7*ly {
					continue
				}
				vx, vy := lin(x, y)
				want := vx*dst.NormalX[e] + vy*dst.NormalY[e]
				if math.Abs(got[e]-want) > 1e-12 {
					t.Errorf("%s → %s: edge %d: u = %.17g, want %.17g", name(src), name(dst), e, got[e], want)
					break
				}
			}
		}
	}
}

// TestSmoothFieldsConverge remaps a smooth periodic flow and depth between
// every pair of families at growing resolutions and measures the order.
func TestSmoothFieldsConverge(t *testing.T) {
	kx, ky := 2*math.Pi/length, 0.0
	flow := func(x, y float64) (float64, float64) {
		return math.Sin(kx*x) * math.Cos(ky*y), 0.5*math.Cos(kx*x+ky*y) + 0.3*math.Sin(ky*y)
	}
	depth := func(x, y float64) float64 { return 1000 + 100*math.Sin(kx*x)*math.Sin(ky*y) + 50*math.Cos(kx*x) }
	kinds := []string{"quad", "hex", "tri"}
	mk := func(k string, n int) *mesh.Mesh {
		if k == "quad" {
			return quadOnHexDomain(t, n)
		}
		return build(t, mesh.Kind(k), n)
	}
	for _, ks := range kinds {
		for _, kd := range kinds {
			var eu, eh []float64
			for _, lev := range []int{1, 2, 4, 8} {
				src, dst := mk(ks, 8*lev), mk(kd, 6*lev)
				ky = 2 * math.Pi / src.Surface.Ly
				du, dh := remapErrors(t, src, dst,
					func(m *mesh.Mesh, i int) float64 { return depth(m.CellX[i], m.CellY[i]) },
					func(m *mesh.Mesh, u []float64) { setFlow(m, u, flow) })
				eu, eh = append(eu, du), append(eh, dh)
			}
			n := len(eu)
			ou := math.Log2(eu[n-2] / eu[n-1])
			oh := math.Log2(eh[n-2] / eh[n-1])
			t.Logf("%s → %s: velocity max error %.2e … %.2e, order %.2f; depth max error %.2e … %.2e, order %.2f",
				ks, kd, eu[0], eu[n-1], ou, eh[0], eh[n-1], oh)
			if !(ou >= 1) {
				t.Errorf("%s → %s: velocity converges at order %.2f, want ≥ 1 (errors %.3g)", ks, kd, ou, eu)
			}
			if !(oh >= 0.9) {
				t.Errorf("%s → %s: depth converges at order %.2f, want about 1 (≥ 0.9; errors %.3g)", ks, kd, oh, eh)
			}
		}
	}
}

func TestErrors(t *testing.T) {
	quad, hex, tri := build(t, mesh.Quad, 8), build(t, mesh.Hex, 8), build(t, mesh.Tri, 8)
	for _, p := range [][2]*mesh.Mesh{{quad, hex}, {tri, quad}} {
		_, err := New(p[0], p[1])
		if err == nil {
			t.Fatalf("%s → %s: no error for different domains", name(p[0]), name(p[1]))
		}
		msg := err.Error()
		for _, m := range p {
			want := fmt.Sprintf("%.10g × %.10g m", m.Surface.Lx, m.Surface.Ly)
			if !strings.Contains(msg, want) {
				t.Errorf("error %q does not name the domain %s", msg, want)
			}
		}
	}
	other, err := mesh.New(mesh.Spec{Kind: mesh.Hex, N: 8, Length: 2 * length})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := New(hex, other); err == nil {
		t.Error("hex of two lengths: no error")
	}
	// Plane ↔ sphere is refused (TestSphereErrors checks the message).
	sphere, err := mesh.New(mesh.Spec{Kind: mesh.Icosahedral, N: 2, Radius: 6.4e6})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := New(hex, sphere); err == nil || !strings.Contains(err.Error(), "same surface") {
		t.Errorf("plane → sphere: got %v", err)
	}
	if _, err := New(nil, hex); err == nil {
		t.Error("nil mesh: no error")
	}
	// Hex and tri of every n share a domain.
	for _, n := range []int{4, 6, 32, 128} {
		if _, err := New(hex, build(t, mesh.Tri, n)); err != nil {
			t.Errorf("hex n=8 → tri n=%d: %v", n, err)
		}
	}
}

// TestSearchIsLinear checks that the bucket search clips a bounded number
// of cell pairs per cell, whatever the resolution.
func TestSearchIsLinear(t *testing.T) {
	for _, n := range []int{8, 32, 64} {
		for _, p := range [][2]*mesh.Mesh{
			{build(t, mesh.Hex, n), quadOnHexDomain(t, n)},
			{build(t, mesh.Tri, n), build(t, mesh.Hex, n)},
			{build(t, mesh.Hex, n), build(t, mesh.Tri, 2*n)},
		} {
			r, err := New(p[0], p[1])
			if err != nil {
				t.Fatal(err)
			}
			per := float64(r.clipped) / float64(p[0].NumCells+p[1].NumCells)
			if per > 8 {
				t.Errorf("%s → %s: %.1f clipped pairs per cell", name(p[0]), name(p[1]), per)
			}
		}
	}
}

func TestBottomLakeAtRest(t *testing.T) {
	src, dst := build(t, mesh.Tri, 12), quadOnHexDomain(t, 9)
	r, err := New(src, dst)
	if err != nil {
		t.Fatal(err)
	}
	b, h := make([]float64, src.NumCells), make([]float64, src.NumCells)
	for i := range b {
		b[i] = 300 * math.Exp(-math.Pow((src.CellX[i]-length/2)/1e5, 2))
		h[i] = 1000 - b[i]
	}
	b2, h2 := make([]float64, dst.NumCells), make([]float64, dst.NumCells)
	r.Cells(b2, b)
	r.Cells(h2, h)
	for j := range b2 {
		if math.Abs(b2[j]+h2[j]-1000) > 1e-10 {
			t.Fatalf("cell %d: free surface %.17g, want 1000", j, b2[j]+h2[j])
		}
	}
}

func BenchmarkNew(b *testing.B) {
	for _, c := range []struct {
		name     string
		src, dst func() *mesh.Mesh
	}{
		{"hex128-quad128", func() *mesh.Mesh { return build(b, mesh.Hex, 128) }, func() *mesh.Mesh { return quadOnHexDomain(b, 128) }},
		{"hex128-tri128", func() *mesh.Mesh { return build(b, mesh.Hex, 128) }, func() *mesh.Mesh { return build(b, mesh.Tri, 128) }},
		{"quad128-quad256", func() *mesh.Mesh { return build(b, mesh.Quad, 128) }, func() *mesh.Mesh { return build(b, mesh.Quad, 256) }},
	} {
		src, dst := c.src(), c.dst()
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := New(src, dst); err != nil {
					b.Fatal(err)
				}
			}
		})
		r, _ := New(src, dst)
		x := make([]float64, src.NumCells+src.NumEdges)
		y := make([]float64, dst.NumCells+dst.NumEdges)
		b.Run(c.name+"/Apply", func(b *testing.B) {
			for b.Loop() {
				r.Apply(y, x)
			}
		})
	}
}
