package ops

import "fmt"

// TRiSK evaluates the TRiSK tangential reconstruction
//
//	P_e = Σ_{e'} W_{e,e'} x_{e'},  W_{e,e'} = Σ_i n_{e,i} n_{e',i} w^i_{e,e'},
//	w^i_{e_j,e_{j+k}} = 1/2 − Σ_{m=0}^{k−1} R_{i,v_{j+m}}
//
// (Thuburn et al. 2009, J. Comput. Phys. 228, eq. 33; R = kite area over
// cell area) without storing a weight per edge pair. Per cell, with
// a_m = n_{m,i} x_{e_m} the outward values on its n edges anticlockwise and
// C_m = Σ_{i<m} R_{i,v_i} the kite fractions before edge m, the partial sums
// G_j = Σ_k w_{j,j+k} a_{j+k} are, since Σ_m R = 1,
//
//	G_j = ½(A − a_j) + C_j A − B − L_j,
//	A = Σ_m a_m,  B = Σ_m C_m a_m,  L_j = Σ_{m<j} a_m
//
// (split the sum at the wrap-around, where the running sum of R passes 1).
// A cell's n sums cost O(n) with short independent add chains, and
// P_e = G^{c0}_{j0} − G^{c1}_{j1}. This rounds differently from the direct
// double sum, at the level of a few ulps of Σ|a|: the weights stay
// antisymmetric to round-off, which is what the conservation tests check.
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
	t := &TRiSK{g: g, invArea: make([]float64, g.NumCells),
		slot0: make([]int32, g.NumEdges), slot1: make([]int32, g.NumEdges), nSlots: len(g.CellEdges)}
	for i := 0; i < g.NumCells; i++ {
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
	var a, c [maxCellEdges]float64
	for i := lo; i < hi; i++ {
		k0, k1 := int(start[i]), int(start[i+1])
		n := k1 - k0
		inv := t.invArea[i]
		var sumA, sumB, cm float64
		for m := 0; m < n; m++ {
			am := float64(sign[k0+m]) * x[edges[k0+m]]
			a[m], c[m] = am, cm
			sumA += am
			sumB += cm * am
			cm += kite[k0+m] * inv
		}
		g := G[k0:k1:k1]
		var l float64
		for j := 0; j < n; j++ {
			g[j] = 0.5*(sumA-a[j]) + c[j]*sumA - sumB - l
			l += a[j]
		}
	}
}

// CellSums2 is CellSums for two fields at once.
func (t *TRiSK) CellSums2(G, H, x, y []float64, lo, hi int) {
	start, edges, sign, kite := t.g.CellEdgeStart, t.g.CellEdges, t.g.CellEdgeSign, t.g.CellKiteArea
	var a, b, c [maxCellEdges]float64
	for i := lo; i < hi; i++ {
		k0, k1 := int(start[i]), int(start[i+1])
		n := k1 - k0
		inv := t.invArea[i]
		var sa, sb, ta, tb, cm float64
		for m := 0; m < n; m++ {
			e, s := edges[k0+m], float64(sign[k0+m])
			am, bm := s*x[e], s*y[e]
			a[m], b[m], c[m] = am, bm, cm
			sa += am
			sb += bm
			ta += cm * am
			tb += cm * bm
			cm += kite[k0+m] * inv
		}
		g, h := G[k0:k1:k1], H[k0:k1:k1]
		var la, lb float64
		for j := 0; j < n; j++ {
			g[j] = 0.5*(sa-a[j]) + c[j]*sa - ta - la
			h[j] = 0.5*(sb-b[j]) + c[j]*sb - tb - lb
			la += a[j]
			lb += b[j]
		}
	}
}

// Edge returns P_e = Σ_{e'} W_{e,e'} x_{e'} from the cell sums G of x.
func (t *TRiSK) Edge(G []float64, e int) float64 {
	return G[t.slot0[e]] - G[t.slot1[e]]
}
