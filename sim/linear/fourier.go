package linear

import (
	"fmt"
	"math"
	"math/cmplx"

	"gyrebench/sim/mesh"
)

// fourier projects state vectors of a doubly periodic planar mesh on the
// discrete Fourier modes e^{iκ·x} of the domain, κ = 2π(p/Lx, q/Ly).
//
// The planar meshes are lattices: the translations by a₁ = (dx, 0) and
// a₂ = (0, dy) (quad) or (dx/2, dy) (hex, tri: alternate rows shifted)
// map the mesh onto itself, and cells and edges fall into a few
// sublattices (cells: 1 for quad and hex, 2 for tri; edges: one per edge
// direction). Two wavevectors that differ by a reciprocal lattice vector
// agree on every sublattice up to a constant phase, so the distinct
// wavevectors are the n·rows classes modulo the reciprocal lattice, each
// represented by its member of least |κ| (the first Brillouin zone). A
// Bloch mode of wavevector k is e^{ik·x} times a constant on each
// sublattice, so its projection on every other representative vanishes;
// summing the power |Σ_e c_e f_e e^{−iκ·x_e}|² per sublattice and
// component (h on cells; u n_x and u n_y on edges, which does not depend on
// the orientation of n_e) avoids cancellations between sublattices.
type fourier struct {
	kx, ky  []float64 // representatives, rad m⁻¹
	pIdx    []int     // index of each representative's p in ps
	qIdx    []int     // and of its q in qs
	ps, qs  []int
	groups  []fgroup
	dx, dy  float64
	shift   float64 // a₂ₓ / dx
	n, rows int
	class   map[[2]int]int // class key → representative index
}

// fgroup is one sublattice: state indices, component weights per element
// and the tables of e^{−2πi p x/Lx} per element and e^{−2πi q y/Ly} per
// row of the sublattice, so that a projection is separable.
type fgroup struct {
	idx   []int
	comps [][]float64    // comps[c][k]: weight of component c on element k
	level []int          // row of element k
	ex    [][]complex128 // ex[k][pi]
	ey    [][]complex128 // ey[row][qi]
	nrow  int
}

// newFourier returns nil for meshes that are not planar lattices.
func newFourier(m *mesh.Mesh) (*fourier, error) {
	if m.Surface.Sphere {
		return nil, nil
	}
	n := m.N
	var rows int
	var shift float64 // a₂ₓ / dx
	switch m.Kind {
	case mesh.Quad:
		rows = m.NumCells / n
	case mesh.Hex:
		rows, shift = m.NumCells/n, 0.5
	case mesh.Tri:
		rows, shift = m.NumCells/(2*n), 0.5
	default:
		return nil, nil
	}
	lx, ly := m.Surface.Lx, m.Surface.Ly
	fr := &fourier{dx: lx / float64(n), dy: ly / float64(rows), shift: shift, n: n, rows: rows, class: map[[2]int]int{}}

	// Representatives of κ modulo the reciprocal lattice. κ·a₁/2π = p/n and
	// κ·a₂/2π = (p·rows·2·shift + 2n·q)/(2n·rows).
	best := fr.class
	var cand [][2]int
	for p := -n; p <= n; p++ {
		for q := -rows; q <= rows; q++ {
			kx, ky := 2*math.Pi*float64(p)/lx, 2*math.Pi*float64(q)/ly
			k := fr.key(p, q)
			if j, ok := best[k]; ok {
				c := cand[j]
				ox, oy := 2*math.Pi*float64(c[0])/lx, 2*math.Pi*float64(c[1])/ly
				if kx*kx+ky*ky >= (ox*ox+oy*oy)*(1-1e-12) {
					continue
				}
				cand[j] = [2]int{p, q}
				continue
			}
			best[k] = len(cand)
			cand = append(cand, [2]int{p, q})
		}
	}
	if len(cand) != n*rows {
		return nil, fmt.Errorf("linear: %d wavevector classes on a %d×%d lattice", len(cand), n, rows)
	}
	pAt, qAt := map[int]int{}, map[int]int{}
	for _, c := range cand {
		if _, ok := pAt[c[0]]; !ok {
			pAt[c[0]] = len(fr.ps)
			fr.ps = append(fr.ps, c[0])
		}
		if _, ok := qAt[c[1]]; !ok {
			qAt[c[1]] = len(fr.qs)
			fr.qs = append(fr.qs, c[1])
		}
		fr.kx = append(fr.kx, 2*math.Pi*float64(c[0])/lx)
		fr.ky = append(fr.ky, 2*math.Pi*float64(c[1])/ly)
		fr.pIdx = append(fr.pIdx, pAt[c[0]])
		fr.qIdx = append(fr.qIdx, qAt[c[1]])
	}

	// Sublattices by the position modulo the lattice.
	type skey struct {
		edge bool
		a, b int64
	}
	const res = 1 << 20
	frac := func(x, y float64) (int64, int64) {
		u2 := y / fr.dy
		u1 := (x - u2*shift*fr.dx) / fr.dx
		f := func(u float64) int64 { return int64(math.Round((u-math.Floor(u))*res)) % res }
		return f(u1), f(u2)
	}
	gi := map[skey]int{}
	rowAt := []map[int64]int{}
	add := func(edge bool, idx int, x, y float64, comps []float64) {
		a, b := frac(x, y)
		k := skey{edge, a, b}
		g, ok := gi[k]
		if !ok {
			g = len(fr.groups)
			gi[k] = g
			fr.groups = append(fr.groups, fgroup{comps: make([][]float64, len(comps))})
			rowAt = append(rowAt, map[int64]int{})
		}
		grp := &fr.groups[g]
		grp.idx = append(grp.idx, idx)
		for c, w := range comps {
			grp.comps[c] = append(grp.comps[c], w)
		}
		yk := int64(math.Round(y / fr.dy * 1024))
		r, ok := rowAt[g][yk]
		if !ok {
			r = grp.nrow
			rowAt[g][yk] = r
			grp.nrow++
			row := make([]complex128, len(fr.qs))
			for qi, q := range fr.qs {
				row[qi] = cmplx.Exp(complex(0, -2*math.Pi*float64(q)*y/ly))
			}
			grp.ey = append(grp.ey, row)
		}
		grp.level = append(grp.level, r)
		ex := make([]complex128, len(fr.ps))
		for pi, p := range fr.ps {
			ex[pi] = cmplx.Exp(complex(0, -2*math.Pi*float64(p)*x/lx))
		}
		grp.ex = append(grp.ex, ex)
	}
	for i := 0; i < m.NumCells; i++ {
		add(false, i, m.CellX[i], m.CellY[i], []float64{1})
	}
	for e := 0; e < m.NumEdges; e++ {
		add(true, m.NumCells+e, m.EdgeX[e], m.EdgeY[e], []float64{m.NormalX[e], m.NormalY[e]})
	}
	return fr, nil
}

func mod(a, n int) int { return ((a % n) + n) % n }

// key returns the class of κ = 2π(p/Lx, q/Ly) modulo the reciprocal
// lattice: (κ·a₁/2π mod 1, κ·a₂/2π mod 1) as integers.
func (fr *fourier) key(p, q int) [2]int {
	n, rows := fr.n, fr.rows
	return [2]int{mod(p, n), mod(int(math.Round(float64(p*rows)*2*fr.shift))+2*n*q, 2*n*rows)}
}

// neg returns the representative index of −κ_t.
func (fr *fourier) neg(t int) int {
	p, q := fr.ps[fr.pIdx[t]], fr.qs[fr.qIdx[t]]
	return fr.class[fr.key(-p, -q)]
}

// scratch holds the per-call work arrays of dominant.
type fscratch struct {
	g     []complex128 // [row][p]
	power []float64
}

// dominant returns the representative wavevector carrying the most power
// of the complex vector a + ib (b may be nil for a real vector; its
// spectrum is symmetric and the representative with kx > 0, or kx = 0
// and ky ≥ 0, is returned).
func (fr *fourier) dominant(a, b []float64, s *fscratch) (kx, ky float64) {
	t := fr.dominantIndex(a, b, s)
	kx, ky = fr.kx[t], fr.ky[t]
	if b == nil && (kx < 0 || (kx == 0 && ky < 0)) {
		kx, ky = -kx, -ky
	}
	return kx + 0, ky + 0 // no negative zeros
}

// dominantIndex returns the index of the representative wavevector with
// the most power.
func (fr *fourier) dominantIndex(a, b []float64, s *fscratch) int {
	np := len(fr.ps)
	if len(s.power) != len(fr.kx) {
		s.power = make([]float64, len(fr.kx))
	}
	for t := range s.power {
		s.power[t] = 0
	}
	for gi := range fr.groups {
		grp := &fr.groups[gi]
		need := grp.nrow * np
		if cap(s.g) < need {
			s.g = make([]complex128, need)
		}
		g := s.g[:need]
		for _, w := range grp.comps {
			for k := range g {
				g[k] = 0
			}
			for k, idx := range grp.idx {
				if w[k] == 0 {
					continue
				}
				v := complex(w[k]*a[idx], 0)
				if b != nil {
					v = complex(w[k]*a[idx], w[k]*b[idx])
				}
				row := g[grp.level[k]*np : (grp.level[k]+1)*np]
				for pi, e := range grp.ex[k] {
					row[pi] += v * e
				}
			}
			for t := range fr.kx {
				var f complex128
				pi, qi := fr.pIdx[t], fr.qIdx[t]
				for r := 0; r < grp.nrow; r++ {
					f += g[r*np+pi] * grp.ey[r][qi]
				}
				s.power[t] += real(f)*real(f) + imag(f)*imag(f)
			}
		}
	}
	best := 0
	for t, p := range s.power {
		if p > s.power[best]*(1+1e-9) {
			best = t
		}
	}
	return best
}
