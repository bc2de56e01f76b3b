package structure

import (
	"math"
	"math/rand/v2"

	"gyrebench/sim"
	"gyrebench/sim/mesh"
	"gyrebench/sim/ops"
	"gyrebench/sim/par"
	"gyrebench/sim/scheme"
)

type vec [3]float64

func (a vec) sub(b vec) vec { return vec{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
func (a vec) add(b vec) vec { return vec{a[0] + b[0], a[1] + b[1], a[2] + b[2]} }
func (a vec) dot(b vec) float64 {
	return a[0]*b[0] + a[1]*b[1] + a[2]*b[2]
}
func (a vec) cross(b vec) vec {
	return vec{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}
func (a vec) unit() vec {
	n := math.Sqrt(a.dot(a))
	return vec{a[0] / n, a[1] / n, a[2] / n}
}

func cell(m *mesh.Mesh, i int) vec {
	if m.Surface.Sphere {
		return vec{m.CellX[i], m.CellY[i], m.CellZ[i]}
	}
	return vec{m.CellX[i], m.CellY[i], 0}
}

func vertex(m *mesh.Mesh, v int) vec {
	if m.Surface.Sphere {
		return vec{m.VertexX[v], m.VertexY[v], m.VertexZ[v]}
	}
	return vec{m.VertexX[v], m.VertexY[v], 0}
}

// between returns b − a, the nearest periodic image on the plane.
func between(m *mesh.Mesh, a, b vec) vec {
	d := b.sub(a)
	if !m.Surface.Sphere {
		d[0] -= m.Surface.Lx * math.Round(d[0]/m.Surface.Lx)
		d[1] -= m.Surface.Ly * math.Round(d[1]/m.Surface.Ly)
	}
	return d
}

// consistencyError applies H to the circulations v_e = w·(x_{c1} − x_{c0})
// of a known flow w and compares with its fluxes l_e n_e·w across the
// primal edges, l_e n_e = k × (x_{v0} − x_{v1}) (r̂ for k on the sphere).
// On the plane w is uniform, (1, 0) and (0, 1), and both are exact; on the
// sphere w = ẑ × x, solid rotation, taken at the midpoints of the chords.
func consistencyError(m *mesh.Mesh, g ops.Grid) (worst, l2 float64, name string) {
	ne := m.NumEdges
	v, hv, flux := make([]float64, ne), make([]float64, ne), make([]float64, ne)
	flows := []func(x vec) vec{
		func(vec) vec { return vec{1, 0, 0} },
		func(vec) vec { return vec{0, 1, 0} },
	}
	name = "uniform flow (1, 0) and (0, 1)"
	if m.Surface.Sphere {
		flows = flows[:1]
		flows[0] = func(x vec) vec { return vec{0, 0, 1}.cross(x) }
		name = "solid rotation about the z axis"
	}
	var n2, d2 float64
	for _, w := range flows {
		big := 0.0
		for e := 0; e < ne; e++ {
			c0, c1 := cell(m, int(m.EdgeCells[2*e])), cell(m, int(m.EdgeCells[2*e+1]))
			x0, x1 := vertex(m, int(m.EdgeVertices[2*e])), vertex(m, int(m.EdgeVertices[2*e+1]))
			d := between(m, c0, c1)
			t := between(m, x0, x1)
			up := vec{0, 0, 1}
			md, mp := c0, x0
			if m.Surface.Sphere {
				md, mp = c0.add(c1), x0.add(x1)
				up = mp.unit()
				md = vec{md[0] / 2, md[1] / 2, md[2] / 2}
				mp = vec{mp[0] / 2, mp[1] / 2, mp[2] / 2}
			}
			v[e] = w(md).dot(d)
			flux[e] = up.cross(vec{-t[0], -t[1], -t[2]}).dot(w(mp))
			big = max(big, math.Abs(flux[e]))
		}
		applyHodge(g, hv, v)
		for e := range hv {
			worst = max(worst, math.Abs(hv[e]-flux[e])/big)
			n2 += (hv[e] - flux[e]) * (hv[e] - flux[e])
			d2 += flux[e] * flux[e]
		}
	}
	return worst, math.Sqrt(n2 / d2), name
}

func antisymmetryDefect(m *mesh.Mesh) float64 {
	p := m.TRiSKPairs()
	var worst, big float64
	at := func(e, f int32) float64 {
		for k := p.Start[e]; k < p.Start[e+1]; k++ {
			if p.Edges[k] == f {
				return p.Weight[k]
			}
		}
		return 0
	}
	for e := 0; e < m.NumEdges; e++ {
		for k := p.Start[e]; k < p.Start[e+1]; k++ {
			big = max(big, math.Abs(p.Weight[k]))
			worst = max(worst, math.Abs(p.Weight[k]+at(p.Edges[k], int32(e))))
		}
	}
	return worst / big
}

// applyW sets dst = W x with the TRiSK operator of the schemes
// (ops.TRiSK): the circulation tendency of the fluxes x, per unit PV.
func applyW(g ops.Grid, dst, x []float64) {
	t := ops.NewTRiSK(g)
	sums := make([]float64, t.Slots())
	t.CellSums(sums, x, 0, g.NumCells)
	for e := range dst {
		dst[e] = t.Edge(sums, e)
	}
}

// compatibilityDefect measures D̄2 W = R D2 on random fluxes F (Thuburn
// et al. 2009, eq. 34 in their signs, from memory; with the orientations
// of package mesh and ops.TRiSK it reads D̄2 W = −R D2, as checked by
// TestReportOnRegularGrids, where the other sign misses by 2), with
// (R φ)_v = Σ_i (K_{i,v}/A_i) φ_i, the kite-area map from cells to
// vertices (Σ_v R_{v,i} = 1), and (D2 F)_i = Σ_e n_{e,i} F_e.
func compatibilityDefect(g ops.Grid) float64 {
	rng := rand.New(rand.NewPCG(3, 4))
	f, wf := make([]float64, g.NumEdges), make([]float64, g.NumEdges)
	div := make([]float64, g.NumCells)
	worst := 0.0
	for trial := 0; trial < 3; trial++ {
		for e := range f {
			f[e] = rng.NormFloat64()
		}
		applyW(g, wf, f)
		for i := range div {
			s := 0.0
			for k := g.CellEdgeStart[i]; k < g.CellEdgeStart[i+1]; k++ {
				s += float64(g.CellEdgeSign[k]) * f[g.CellEdges[k]]
			}
			div[i] = s
		}
		var d, big float64
		for v := 0; v < g.NumVertices; v++ {
			var curl, rd float64
			for k := g.VertexEdgeStart[v]; k < g.VertexEdgeStart[v+1]; k++ {
				curl += float64(g.VertexEdgeSign[k]) * wf[g.VertexEdges[k]]
				i := g.VertexCells[k]
				rd += g.VertexKiteArea[k] / g.CellArea[i] * div[i]
			}
			d = max(d, math.Abs(curl+rd))
			big = max(big, math.Abs(curl), math.Abs(rd))
		}
		worst = max(worst, d/big)
	}
	return worst
}

// geostrophicResidual builds the discrete geostrophic state of a random
// vertex stream function ψ on an f-plane (f-sphere) of Coriolis parameter
// f and depth h0: fluxes F = D1 ψ, (D1 ψ)_e = ψ_{v1} − ψ_{v0}, circulations
// v = H⁻¹ F / h0 (so that h0 H v = F), and depth h' = −(f/(g h0)) Rᵀψ
// with (Rᵀψ)_i = Σ_v (K_{i,v}/A_i) ψ_v. With D2 D1 = 0 and the TRiSK
// identity W D1 = −D̄1 Rᵀ (Thuburn et al. 2009; the sign of h' in the
// conventions of package mesh is pinned by TestReportOnRegularGrids)
// its linearised tendency vanishes. It returns the larger of the
// largest velocity tendency over the larger of the Coriolis and
// pressure terms, and the largest depth tendency over the largest
// (1/A_i) Σ_e |h0 F_e|.
func geostrophicResidual(g ops.Grid, cfg sim.Config, pool *par.Pool, f, h0 float64) (float64, error) {
	nc, ne, nv := g.NumCells, g.NumEdges, g.NumVertices
	fv := make([]float64, nv)
	for v := range fv {
		fv[v] = f
	}
	s, err := scheme.New(cfg.Scheme.Name, g, scheme.Physics{G: cfg.Physics.G, FVertex: fv}, pool, scheme.Options{APVMFactor: cfg.Scheme.APVMFactor})
	if err != nil {
		return 0, err
	}
	s.SetDt(cfg.Time.Dt)
	rng := rand.New(rand.NewPCG(5, 6))
	psi := make([]float64, nv)
	for v := range psi {
		psi[v] = rng.NormFloat64()
	}
	flux := make([]float64, ne)
	for e := range flux {
		flux[e] = (psi[g.EdgeVertices[2*e+1]] - psi[g.EdgeVertices[2*e]]) / h0
	}
	v := solveHodge(g, flux)
	u := make([]float64, ne)
	umax := 0.0
	for e := range u {
		u[e] = v[e] / g.DualLength[e]
		umax = max(umax, math.Abs(u[e]))
	}
	dh := make([]float64, nc)
	for i := range dh {
		r := 0.0
		for k := g.CellEdgeStart[i]; k < g.CellEdgeStart[i+1]; k++ {
			r += g.CellKiteArea[k] / g.CellArea[i] * psi[g.CellVertices[k]]
		}
		dh[i] = -f / (cfg.Physics.G * h0) * r
	}
	// The linearised tendency about rest, J = J_h + J_u, by central
	// differences along the depth part (exactly linear while u = 0) and
	// the velocity part (a polynomial of degree 2 at h = h0; degree 3 for
	// apvm, whose extra term vanishes at rest with uniform q).
	x := make([]float64, nc+ne)
	fp, fm := make([]float64, nc+ne), make([]float64, nc+ne)
	jh, ju := make([]float64, nc+ne), make([]float64, nc+ne)
	central := func(dst []float64, part func(x []float64, s float64), step float64) {
		part(x, step)
		s.Tendency(fp, x)
		part(x, -step)
		s.Tendency(fm, x)
		for k := range dst {
			dst[k] = (fp[k] - fm[k]) / (2 * step)
		}
	}
	central(jh, func(x []float64, st float64) {
		for i := range dh {
			x[i] = h0 + st*dh[i]
		}
		clear(x[nc:])
	}, h0/4/maxAbs(dh))
	central(ju, func(x []float64, st float64) {
		for i := 0; i < nc; i++ {
			x[i] = h0
		}
		for e := range u {
			x[nc+e] = st * u[e]
		}
	}, 1e-2*math.Sqrt(cfg.Physics.G*h0)/umax)
	var res, big float64
	for k := nc; k < nc+ne; k++ {
		res = max(res, math.Abs(jh[k]+ju[k]))
		big = max(big, math.Abs(jh[k]), math.Abs(ju[k]))
	}
	var dres, dbig float64
	for i := 0; i < nc; i++ { // the depth tendency, −D2 D1 ψ / A: zero
		dres = max(dres, math.Abs(jh[i]+ju[i]))
		s := 0.0
		for k := g.CellEdgeStart[i]; k < g.CellEdgeStart[i+1]; k++ {
			s += math.Abs(flux[g.CellEdges[k]])
		}
		dbig = max(dbig, h0*s/g.CellArea[i])
	}
	return max(res/big, dres/dbig), nil
}

func maxAbs(a []float64) float64 {
	m := 0.0
	for _, x := range a {
		m = max(m, math.Abs(x))
	}
	return m
}

// solveHodge returns v with H v = b, by conjugate gradients (H is
// symmetric positive definite and well conditioned) to a relative
// residual of 1e-15, or directly for the diagonal star.
func solveHodge(g ops.Grid, b []float64) []float64 {
	ne := len(b)
	x := make([]float64, ne)
	if g.Hodge == nil {
		for e := range x {
			x[e] = b[e] * g.DualLength[e] / g.EdgeLength[e]
		}
		return x
	}
	r := append([]float64(nil), b...)
	p := append([]float64(nil), b...)
	ap := make([]float64, ne)
	rr := dot(r, r)
	stop := 1e-30 * rr
	for it := 0; it < 10*ne && rr > stop; it++ {
		applyHodge(g, ap, p)
		a := rr / dot(p, ap)
		for e := range x {
			x[e] += a * p[e]
			r[e] -= a * ap[e]
		}
		nr := dot(r, r)
		for e := range p {
			p[e] = r[e] + nr/rr*p[e]
		}
		rr = nr
	}
	return x
}

// rates returns |dM/dt|, |dE/dt| and |dZ/dt| of the scheme at a random
// state, each over the sum of the absolute values of its terms, by the
// chain rule through the gradients of M = Σ A_i h_i,
// E = ½ Σ_e h_e v_e (H v)_e + Σ_i A_i g (h_i²/2 + h_i b_i) (v_e = d_e u_e,
// h_e the arithmetic mean) and Z = Σ_v A_v h_v q_v²/2, with
// ∂E/∂v = ½[h_e (H v) + H (h_e v)] the mass flux and
// ∂E/∂h_i = A_i [g(h_i + b_i) + (1/4A_i) Σ_{e∈i} v_e (H v)_e].
func rates(g ops.Grid, cfg sim.Config, pool *par.Pool, seed uint64) (dm, de, dz float64, err error) {
	nc, ne, nv := g.NumCells, g.NumEdges, g.NumVertices
	rng := rand.New(rand.NewPCG(seed, 9))
	h0 := cfg.Physics.Depth
	grav := cfg.Physics.G
	phys := scheme.Physics{G: grav, FVertex: make([]float64, nv), Bottom: make([]float64, nc)}
	f0 := math.Max(math.Abs(cfg.Physics.F0), 1e-4)
	for v := range phys.FVertex {
		phys.FVertex[v] = f0 * (1 + 0.3*rng.NormFloat64())
	}
	x := make([]float64, nc+ne)
	for i := 0; i < nc; i++ {
		x[i] = h0 * (1 + 0.1*(rng.Float64()-0.5))
		phys.Bottom[i] = 0.05 * h0 * rng.Float64()
	}
	c := 0.1 * math.Sqrt(grav*h0)
	for e := 0; e < ne; e++ {
		x[nc+e] = c * rng.NormFloat64()
	}
	s, err := scheme.New(cfg.Scheme.Name, g, phys, pool, scheme.Options{APVMFactor: cfg.Scheme.APVMFactor})
	if err != nil {
		return 0, 0, 0, err
	}
	s.SetDt(cfg.Time.Dt)
	dx := make([]float64, nc+ne)
	s.Tendency(dx, x)
	h, u := x[:nc], x[nc:]
	dh, du := dx[:nc], dx[nc:]
	he, v, hv, hhv, hhv2 := make([]float64, ne), make([]float64, ne), make([]float64, ne), make([]float64, ne), make([]float64, ne)
	for e := 0; e < ne; e++ {
		he[e] = 0.5 * (h[g.EdgeCells[2*e]] + h[g.EdgeCells[2*e+1]])
		v[e] = g.DualLength[e] * u[e]
		hhv[e] = he[e] * v[e]
	}
	applyHodge(g, hv, v)
	applyHodge(g, hhv2, hhv)
	zeta, hvert := make([]float64, nv), make([]float64, nv)
	g.Vorticity(zeta, hvert, u, h, 0, nv)
	q := make([]float64, nv)
	for k := range q {
		q[k] = (zeta[k] + phys.FVertex[k]) / hvert[k]
	}
	dzdh := make([]float64, nc)
	for w := 0; w < nv; w++ {
		for k := g.VertexEdgeStart[w]; k < g.VertexEdgeStart[w+1]; k++ {
			dzdh[g.VertexCells[k]] -= g.VertexKiteArea[k] * q[w] * q[w] / 2
		}
	}
	var sm, se, sz float64
	for i := 0; i < nc; i++ {
		ke := 0.0
		for k := g.CellEdgeStart[i]; k < g.CellEdgeStart[i+1]; k++ {
			e := g.CellEdges[k]
			ke += v[e] * hv[e]
		}
		a := g.CellArea[i]
		dm += a * dh[i]
		sm += math.Abs(a * dh[i])
		t := (0.25*ke + a*grav*(h[i]+phys.Bottom[i])) * dh[i]
		de += t
		se += math.Abs(t)
		dz += dzdh[i] * dh[i]
		sz += math.Abs(dzdh[i] * dh[i])
	}
	for e := 0; e < ne; e++ {
		t := 0.5 * (he[e]*hv[e] + hhv2[e]) * g.DualLength[e] * du[e]
		de += t
		se += math.Abs(t)
		t = g.DualLength[e] * (q[g.EdgeVertices[2*e+1]] - q[g.EdgeVertices[2*e]]) * du[e]
		dz += t
		sz += math.Abs(t)
	}
	return math.Abs(dm) / sm, math.Abs(de) / se, math.Abs(dz) / sz, nil
}

// coriolisConsistency applies W to the fluxes F of the known flow w
// (as in consistencyError) and compares with the circulations of k × w
// along the dual edges, which the TRiSK reconstruction approximates
// (Thuburn et al. 2009, §3; W is consistent only to low order on
// irregular grids, which this measures). Returns the relative max and l2
// errors.
func coriolisConsistency(m *mesh.Mesh, g ops.Grid) (worst, l2 float64) {
	ne := m.NumEdges
	f, wf, want := make([]float64, ne), make([]float64, ne), make([]float64, ne)
	w := func(vec) vec { return vec{1, 0.5, 0} }
	if m.Surface.Sphere {
		w = func(x vec) vec { return vec{0, 0, 1}.cross(x) }
	}
	for e := 0; e < ne; e++ {
		c0, c1 := cell(m, int(m.EdgeCells[2*e])), cell(m, int(m.EdgeCells[2*e+1]))
		x0, x1 := vertex(m, int(m.EdgeVertices[2*e])), vertex(m, int(m.EdgeVertices[2*e+1]))
		d, t := between(m, c0, c1), between(m, x0, x1)
		up, upd, md, mp := vec{0, 0, 1}, vec{0, 0, 1}, c0, x0
		if m.Surface.Sphere {
			md, mp = c0.add(c1), x0.add(x1)
			up, upd = mp.unit(), md.unit()
			md = vec{md[0] / 2, md[1] / 2, md[2] / 2}
			mp = vec{mp[0] / 2, mp[1] / 2, mp[2] / 2}
		}
		f[e] = up.cross(vec{-t[0], -t[1], -t[2]}).dot(w(mp))
		want[e] = -upd.cross(w(md)).dot(d)
	}
	applyW(g, wf, f)
	var n2, d2, big float64
	for e := range wf {
		r := wf[e] - want[e]
		n2 += r * r
		d2 += want[e] * want[e]
		worst = max(worst, math.Abs(r))
		big = max(big, math.Abs(want[e]))
	}
	return worst / big, math.Sqrt(n2 / d2)
}
