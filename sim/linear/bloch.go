package linear

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"

	"gyrebench/sim/mesh"
)

// translations holds the two lattice translations of a planar mesh as
// signed permutations of the state vector: (T_j x)[perm[j][k]] =
// sign[j][k]·x[k]. A translation keeps edge directions, so the sign is
// −1 where the image edge's normal is the opposite of the translated one.
// With uniform f they commute with the linearised operator.
type translations struct {
	perm [2][]int32
	sign [2][]float64
}

func newTranslations(m *mesh.Mesh, fr *fourier) (*translations, error) {
	lx, ly := m.Surface.Lx, m.Surface.Ly
	const res = 1 << 20
	type key struct{ a, b int64 }
	bin := func(x, y float64) key {
		return key{int64(math.Round(x/lx*res)) % res, int64(math.Round(y/ly*res)) % res}
	}
	type elem struct {
		idx    int
		nx, ny float64
	}
	cells, edges := map[key]int{}, map[key]int{}
	for i := 0; i < m.NumCells; i++ {
		cells[bin(m.CellX[i], m.CellY[i])] = i
	}
	for e := 0; e < m.NumEdges; e++ {
		edges[bin(m.EdgeX[e], m.EdgeY[e])] = e
	}
	find := func(tab map[key]int, x, y float64) (int, bool) {
		x, y = math.Mod(x+lx, lx), math.Mod(y+ly, ly)
		k := bin(x, y)
		for _, d := range [][2]int64{{0, 0}, {1, 0}, {-1, 0}, {0, 1}, {0, -1}, {1, 1}, {-1, -1}, {1, -1}, {-1, 1}} {
			if i, ok := tab[key{(k.a + d[0] + res) % res, (k.b + d[1] + res) % res}]; ok {
				return i, true
			}
		}
		return 0, false
	}
	tr := &translations{}
	n := m.NumCells + m.NumEdges
	for j, a := range [2][2]float64{{fr.dx, 0}, {fr.shift * fr.dx, fr.dy}} {
		tr.perm[j] = make([]int32, n)
		tr.sign[j] = make([]float64, n)
		for i := 0; i < m.NumCells; i++ {
			t, ok := find(cells, m.CellX[i]+a[0], m.CellY[i]+a[1])
			if !ok {
				return nil, fmt.Errorf("linear: cell %d has no image under the lattice translation", i)
			}
			tr.perm[j][i], tr.sign[j][i] = int32(t), 1
		}
		for e := 0; e < m.NumEdges; e++ {
			t, ok := find(edges, m.EdgeX[e]+a[0], m.EdgeY[e]+a[1])
			if !ok {
				return nil, fmt.Errorf("linear: edge %d has no image under the lattice translation", e)
			}
			s := m.NormalX[e]*m.NormalX[t] + m.NormalY[e]*m.NormalY[t]
			tr.perm[j][m.NumCells+e], tr.sign[j][m.NumCells+e] = int32(m.NumCells+t), math.Copysign(1, s)
		}
	}
	return tr, nil
}

func (tr *translations) apply(j int, dst, x []float64) {
	for k, v := range x {
		dst[tr.perm[j][k]] = tr.sign[j][k] * v
	}
}

// blochRotate replaces the basis w_k = a_k + ib_k of a degenerate
// eigenspace (a cluster of pairs) by Bloch modes, joint eigenvectors of the
// translations, and returns them grouped by wavevector. The translations
// map the eigenspace onto itself; the Hermitian operator
//
//	H = Σ_j α_j (T_j + T_jᵀ)/2 + β_j (T_j − T_jᵀ)/(2i)
//
// has the eigenvalue Σ_j α_j cos θ_j + β_j sin θ_j on a Bloch mode with
// T_j w = e^{iθ_j} w, distinct for distinct wavevectors for generic
// coefficients. It is diagonalised on the eigenspace through its real
// embedding (every eigenvalue doubled, the partner of c being ic, which
// complex Gram–Schmidt discards).
func blochRotate(op *Operator, tr *translations, cl []*mode) [][]*mode {
	m := len(cl)
	if m == 1 {
		return [][]*mode{cl}
	}
	n := op.Len()
	coef := [2][2]float64{{1, 0.7071067811865476}, {0.9424777960769379, 0.5436563656918091}}
	h := make([]complex128, m*m)
	ta, tb := make([]float64, n), make([]float64, n)
	for j := 0; j < 2; j++ {
		// M[p][q] = w_p* T w_q / 2.
		mm := make([]complex128, m*m)
		for q, mq := range cl {
			tr.apply(j, ta, mq.a)
			tr.apply(j, tb, mq.b)
			for p, mp := range cl {
				re := dot(mp.a, ta) + dot(mp.b, tb)
				im := dot(mp.a, tb) - dot(mp.b, ta)
				mm[p*m+q] = complex(re, im) / 2
			}
		}
		for p := 0; p < m; p++ {
			for q := 0; q < m; q++ {
				x, xs := mm[p*m+q], conj(mm[q*m+p])
				h[p*m+q] += complex(coef[j][0], 0)*(x+xs)/2 + complex(coef[j][1], 0)*(x-xs)/complex(0, 2)
			}
		}
	}
	emb := mat.NewSymDense(2*m, nil)
	for p := 0; p < m; p++ {
		for q := p; q < m; q++ {
			v := h[p*m+q]
			emb.SetSym(p, q, real(v))
			emb.SetSym(m+p, m+q, real(v))
			emb.SetSym(m+p, q, imag(v))
			emb.SetSym(m+q, p, -imag(v))
		}
	}
	var es mat.EigenSym
	if !es.Factorize(emb, true) {
		return [][]*mode{cl}
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	var kept [][]complex128
	var keptVal []float64
	for t := 0; t < 2*m && len(kept) < m; t++ {
		c := make([]complex128, m)
		for p := range c {
			c[p] = complex(vecs.At(p, t), vecs.At(m+p, t))
		}
		res := append([]complex128(nil), c...)
		for _, b := range kept {
			var pr complex128
			for i := range b {
				pr += conj(b[i]) * res[i]
			}
			for i := range res {
				res[i] -= pr * b[i]
			}
		}
		nrm := 0.0
		for _, z := range res {
			nrm += real(z)*real(z) + imag(z)*imag(z)
		}
		if nrm <= 0.5 {
			continue
		}
		s := complex(1/math.Sqrt(nrm), 0)
		for i := range res {
			res[i] *= s
		}
		kept = append(kept, res)
		keptVal = append(keptVal, vals[t])
	}
	if len(kept) != m {
		return [][]*mode{cl}
	}
	na, nb := make([][]float64, m), make([][]float64, m)
	for t, c := range kept {
		a, b := make([]float64, n), make([]float64, n)
		for j, md := range cl {
			cr, ci := real(c[j]), imag(c[j])
			for i := 0; i < n; i++ {
				a[i] += cr*md.a[i] - ci*md.b[i]
				b[i] += cr*md.b[i] + ci*md.a[i]
			}
		}
		na[t], nb[t] = a, b
	}
	for t, md := range cl {
		md.a, md.b = na[t], nb[t]
	}
	// Group equal H values: one wavevector each (kept is in increasing
	// order of H).
	var out [][]*mode
	for i := 0; i < m; {
		j := i + 1
		for j < m && keptVal[j]-keptVal[i] <= 1e-9 {
			j++
		}
		out = append(out, cl[i:j])
		i = j
	}
	return out
}

// rankByWavevector classifies the inertia–gravity pairs of a lattice
// plane with uniform f, where each Bloch wavevector carries four of them
// (two physical, two spurious): at every wavevector the half with the
// larger score (the depth the vertices do not see) is spurious. Degenerate
// clusters are first rotated into Bloch modes (blochRotate) and, within a
// wavevector, to the score's extremal directions (rotatePairs). A pair
// w, w̄ enters at the wavevector of w and at that of w̄ (its negative);
// it is decided at the first, and the operator's reality makes the two
// rankings agree.
func (res *Result) rankByWavevector(op *Operator, pr *rangeProj, fr *fourier, tr *translations, other []*mode) {
	var sel []*mode
	for _, md := range other {
		if md.class == InertiaGravity && md.b != nil {
			sel = append(sel, md)
		}
	}
	sort.SliceStable(sel, func(i, j int) bool { return cmplxAbs(sel[i].lam) < cmplxAbs(sel[j].lam) })
	for _, c := range clusters(sel, clusterTol*res.MaxFrequency) {
		for _, sub := range blochRotate(op, tr, c) {
			rotatePairs(op, pr, sub)
		}
	}
	type entry struct {
		md    *mode
		plus  bool
		score float64
		freq  float64
	}
	byK := map[int][]entry{}
	var fs fscratch
	for _, md := range sel {
		t := fr.dominantIndex(md.a, md.b, &fs)
		byK[t] = append(byK[t], entry{md, true, md.score, imag(md.lam)})
		byK[fr.neg(t)] = append(byK[fr.neg(t)], entry{md, false, md.score, imag(md.lam)})
	}
	for _, es := range byK {
		sort.SliceStable(es, func(i, j int) bool {
			if es[i].score != es[j].score {
				return es[i].score > es[j].score
			}
			return es[i].freq > es[j].freq
		})
		for _, e := range es[:len(es)/2] {
			if e.plus {
				e.md.class = Spurious
			}
		}
	}
}
