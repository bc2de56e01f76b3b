package ops

import "fmt"

// TRiSK evaluates the TRiSK tangential reconstruction
//
//	P_e = Σ_{e'} W_{e,e'} x_{e'},  W_{e,e'} = Σ_i n_{e,i} n_{e',i} w^i_{e,e'},
//	w^i_{e_j,e_{j+k}} = 1/2 − Σ_{m=0}^{k−1} R_{i,v_{j+m}}
//
// (Thuburn et al. 2009, J. Comput. Phys. 228, eq. 33; R = kite area over
// cell area) without storing a weight per edge pair. Per cell, with
// a_m = n_{m,i} x_{e_m} the outward values on its edges anticlockwise, the
// partial sums G_j = Σ_k w_{j,j+k} a_{j+k} obey
//
//	G_{j+1} = G_j − (a_j + a_{j+1})/2 + R_{i,v_j} Σ_m a_m,
//
// (subtract the two sums term by term; Σ_m R_{i,v_m} = 1), so a cell's n
// sums cost O(n) instead of O(n²), and P_e = G^{c0}_{j0} − G^{c1}_{j1}.
// The recurrence rounds differently from the direct sum, at the level of
// a few ulps: the weights stay antisymmetric to round-off, which is what
// the conservation tests check.
type TRiSK struct {
	g       Grid
	invArea []float64 // 1/A_i, so that R = kite × invArea needs no division
	slot0   []int32   // flat slot of edge e in its cell c0
	slot1   []int32   // flat slot of edge e in its cell c1
	nSlots  int
}

// maxCellEdges bounds the polygons the recurrence handles on the stack.
const maxCellEdges = 16

// NewTRiSK precomputes the edge slots of g.
func NewTRiSK(g Grid) *TRiSK {
	t := &TRiSK{g: g, invArea: make([]float64, g.NCells),
		slot0: make([]int32, g.NEdges), slot1: make([]int32, g.NEdges), nSlots: len(g.CellEdges)}
	for i := 0; i < g.NCells; i++ {
		lo, hi := int(g.CellEdgeStart[i]), int(g.CellEdgeStart[i+1])
		if hi-lo > maxCellEdges {
			panic(fmt.Sprintf("ops: cell %d has %d edges, more than %d", i, hi-lo, maxCellEdges))
		}
		t.invArea[i] = 1 / g.CellArea[i]
		for k := lo; k < hi; k++ {
			if e := g.CellEdges[k]; g.CellEdgeSign[k] > 0 {
				t.slot0[e] = int32(k)
			} else {
				t.slot1[e] = int32(k)
			}
		}
	}
	return t
}

// Slots returns the length of a cell-sum array (one value per cell slot).
func (t *TRiSK) Slots() int { return t.nSlots }

// CellSums sets G to the per-cell partial sums of the edge field x for the
// cells in [lo, hi).
func (t *TRiSK) CellSums(G, x []float64, lo, hi int) {
	start, edges, sign, kite := t.g.CellEdgeStart, t.g.CellEdges, t.g.CellEdgeSign, t.g.CellKiteArea
	var a, fr [maxCellEdges]float64
	for i := lo; i < hi; i++ {
		k0, k1 := int(start[i]), int(start[i+1])
		n := k1 - k0
		inv := t.invArea[i]
		sum := 0.0
		for m := 0; m < n; m++ {
			a[m] = float64(sign[k0+m]) * x[edges[k0+m]]
			fr[m] = kite[k0+m] * inv
			sum += a[m]
		}
		scan(G[k0:k1:k1], a[:n:n], fr[:n:n], sum)
	}
}

// CellSums2 is CellSums for two fields at once.
func (t *TRiSK) CellSums2(G, H, x, y []float64, lo, hi int) {
	start, edges, sign, kite := t.g.CellEdgeStart, t.g.CellEdges, t.g.CellEdgeSign, t.g.CellKiteArea
	var a, b, fr [maxCellEdges]float64
	for i := lo; i < hi; i++ {
		k0, k1 := int(start[i]), int(start[i+1])
		n := k1 - k0
		inv := t.invArea[i]
		sa, sb := 0.0, 0.0
		for m := 0; m < n; m++ {
			e, s := edges[k0+m], float64(sign[k0+m])
			a[m] = s * x[e]
			b[m] = s * y[e]
			fr[m] = kite[k0+m] * inv
			sa += a[m]
			sb += b[m]
		}
		scan2(G[k0:k1:k1], H[k0:k1:k1], a[:n:n], b[:n:n], fr[:n:n], sa, sb)
	}
}

// scan fills G for one cell: G_0 directly, the rest by the recurrence.
func scan(G, a, fr []float64, sum float64) {
	n := len(a)
	g0, s := 0.0, 0.0
	for k := 1; k < n; k++ {
		s += fr[k-1]
		g0 += (0.5 - s) * a[k]
	}
	G[0] = g0
	for j := 0; j+1 < n; j++ {
		g0 += fr[j]*sum - 0.5*(a[j]+a[j+1])
		G[j+1] = g0
	}
}

// scan2 is scan for two fields, interleaved so that their add chains
// overlap; each gives the same bits as scan.
func scan2(G, H, a, b, fr []float64, sa, sb float64) {
	n := len(a)
	g0, h0, s := 0.0, 0.0, 0.0
	for k := 1; k < n; k++ {
		s += fr[k-1]
		w := 0.5 - s
		g0 += w * a[k]
		h0 += w * b[k]
	}
	G[0], H[0] = g0, h0
	for j := 0; j+1 < n; j++ {
		g0 += fr[j]*sa - 0.5*(a[j]+a[j+1])
		h0 += fr[j]*sb - 0.5*(b[j]+b[j+1])
		G[j+1], H[j+1] = g0, h0
	}
}

// Edge returns P_e = Σ_{e'} W_{e,e'} x_{e'} from the cell sums G of x.
func (t *TRiSK) Edge(G []float64, e int) float64 {
	return G[t.slot0[e]] - G[t.slot1[e]]
}
