package scheme

// apvm's own passes: the PV on cells and the TRiSK sums of l u (one cell
// pass), then the correction q_e − q̂_e (one edge pass). Both compute
// what ops.TRiSK's CellSums and Edge compute, in the same order, with
// each side's sum stored beside the edge (gv[e][o], as tt) instead of in
// a cell slot, so that the edge pass reads it without an index.

// unitSign is the sign of a side's value, n_{e,i} = +1 where o = 0 and
// −1 where o = 1; multiplying by it is exact (as quarterSign).
var unitSign = [2]float64{1, -1}

// cellPV sets, for the cells [lo, hi), q_i = (1/A_i) Σ_v K_{i,v} q_v, for
// the normal PV gradient, and each side's TRiSK cell sum of l u (ops.TRiSK:
// G_j = ½(A − a_j) + C_j A − B − L_j), for the tangential velocity.
// Hexagons, quadrilaterals and triangles go to written-out kernels with
// the same arithmetic in the same order.
func (s *trisk) cellPV(lo, hi int) {
	for _, r := range s.runs {
		a, b, ok := r.Clip(lo, hi)
		if !ok {
			continue
		}
		switch r.N {
		case 6:
			s.cellPV6(a, b)
		case 4:
			s.cellPV4(a, b)
		case 3:
			s.cellPV3(a, b)
		default:
			s.cellPVAny(a, b)
		}
	}
}

// cellPVAny is cellPV for cells of any number of edges.
func (s *trisk) cellPVAny(lo, hi int) {
	start := s.g.CellEdgeStart[lo : hi+1]
	k0, k1 := int(start[0]), int(start[len(start)-1])
	slots, kite := s.slots[k0:k1], s.g.CellKiteArea[k0:k1]
	kite = kite[:len(slots)]
	qc, invA := s.qcell[lo:hi], s.invArea[lo:hi]
	invA = invA[:len(qc)]
	q, lu, gv := s.q, s.lu, s.gv
	var a, c [maxCellEdges]float64
	for i := range qc {
		j0, j1 := int(start[i])-k0, int(start[i+1])-k0
		sl, kt := slots[j0:j1], kite[j0:j1]
		kt = kt[:len(sl)]
		inv := invA[i]
		m := 0.0
		for k, sk := range sl {
			m += kt[k] * q[sk.vert]
		}
		qc[i] = m * inv
		var sumA, sumB, cm float64
		for k, sk := range sl {
			ak := unitSign[sk.side&1] * lu[sk.side>>1]
			a[k], c[k] = ak, cm
			sumA += ak
			sumB += cm * ak
			cm += sk.r
		}
		var l float64
		for k, sk := range sl {
			gv[sk.side>>1][sk.side&1] = 0.5*(sumA-a[k]) + c[k]*sumA - sumB - l
			l += a[k]
		}
	}
}

// cellPV6 is cellPVAny for hexagons, written out: the same products and
// sums in the same order, the zero terms of C_0 = 0 and L_0 = 0 included
// so that no bit changes.
func (s *trisk) cellPV6(lo, hi int) {
	k0 := int(s.g.CellEdgeStart[lo])
	qc, invA := s.qcell[lo:hi], s.invArea[lo:hi]
	invA = invA[:len(qc)]
	slots, kite := s.slots[k0:k0+6*len(qc)], s.g.CellKiteArea[k0:k0+6*len(qc)]
	q, lu, gv := s.q, s.lu, s.gv
	for i := range qc {
		sl, kt := (*[6]cellSlot)(slots[6*i:6*i+6]), (*[6]float64)(kite[6*i:6*i+6])
		inv := invA[i]
		m := 0.0 + kt[0]*q[sl[0].vert] + kt[1]*q[sl[1].vert] + kt[2]*q[sl[2].vert] + kt[3]*q[sl[3].vert] + kt[4]*q[sl[4].vert] + kt[5]*q[sl[5].vert]
		qc[i] = m * inv
		s0, s1, s2, s3, s4, s5 := sl[0].side, sl[1].side, sl[2].side, sl[3].side, sl[4].side, sl[5].side
		a0, a1, a2 := unitSign[s0&1]*lu[s0>>1], unitSign[s1&1]*lu[s1>>1], unitSign[s2&1]*lu[s2>>1]
		a3, a4, a5 := unitSign[s3&1]*lu[s3>>1], unitSign[s4&1]*lu[s4>>1], unitSign[s5&1]*lu[s5>>1]
		c0 := 0.0
		c1 := c0 + sl[0].r
		c2 := c1 + sl[1].r
		c3 := c2 + sl[2].r
		c4 := c3 + sl[3].r
		c5 := c4 + sl[4].r
		sumA := 0.0 + a0 + a1 + a2 + a3 + a4 + a5
		sumB := 0.0 + c0*a0 + c1*a1 + c2*a2 + c3*a3 + c4*a4 + c5*a5
		l1 := 0.0 + a0
		l2 := l1 + a1
		l3 := l2 + a2
		l4 := l3 + a3
		l5 := l4 + a4
		gv[s0>>1][s0&1] = 0.5*(sumA-a0) + c0*sumA - sumB - 0.0
		gv[s1>>1][s1&1] = 0.5*(sumA-a1) + c1*sumA - sumB - l1
		gv[s2>>1][s2&1] = 0.5*(sumA-a2) + c2*sumA - sumB - l2
		gv[s3>>1][s3&1] = 0.5*(sumA-a3) + c3*sumA - sumB - l3
		gv[s4>>1][s4&1] = 0.5*(sumA-a4) + c4*sumA - sumB - l4
		gv[s5>>1][s5&1] = 0.5*(sumA-a5) + c5*sumA - sumB - l5
	}
}

// cellPV4 is cellPVAny for quadrilaterals, written out like cellPV6.
func (s *trisk) cellPV4(lo, hi int) {
	k0 := int(s.g.CellEdgeStart[lo])
	qc, invA := s.qcell[lo:hi], s.invArea[lo:hi]
	invA = invA[:len(qc)]
	slots, kite := s.slots[k0:k0+4*len(qc)], s.g.CellKiteArea[k0:k0+4*len(qc)]
	q, lu, gv := s.q, s.lu, s.gv
	for i := range qc {
		sl, kt := (*[4]cellSlot)(slots[4*i:4*i+4]), (*[4]float64)(kite[4*i:4*i+4])
		inv := invA[i]
		m := 0.0 + kt[0]*q[sl[0].vert] + kt[1]*q[sl[1].vert] + kt[2]*q[sl[2].vert] + kt[3]*q[sl[3].vert]
		qc[i] = m * inv
		s0, s1, s2, s3 := sl[0].side, sl[1].side, sl[2].side, sl[3].side
		a0, a1, a2, a3 := unitSign[s0&1]*lu[s0>>1], unitSign[s1&1]*lu[s1>>1], unitSign[s2&1]*lu[s2>>1], unitSign[s3&1]*lu[s3>>1]
		c0 := 0.0
		c1 := c0 + sl[0].r
		c2 := c1 + sl[1].r
		c3 := c2 + sl[2].r
		sumA := 0.0 + a0 + a1 + a2 + a3
		sumB := 0.0 + c0*a0 + c1*a1 + c2*a2 + c3*a3
		l1 := 0.0 + a0
		l2 := l1 + a1
		l3 := l2 + a2
		gv[s0>>1][s0&1] = 0.5*(sumA-a0) + c0*sumA - sumB - 0.0
		gv[s1>>1][s1&1] = 0.5*(sumA-a1) + c1*sumA - sumB - l1
		gv[s2>>1][s2&1] = 0.5*(sumA-a2) + c2*sumA - sumB - l2
		gv[s3>>1][s3&1] = 0.5*(sumA-a3) + c3*sumA - sumB - l3
	}
}

// cellPV3 is cellPVAny for triangles, written out like cellPV6.
func (s *trisk) cellPV3(lo, hi int) {
	k0 := int(s.g.CellEdgeStart[lo])
	qc, invA := s.qcell[lo:hi], s.invArea[lo:hi]
	invA = invA[:len(qc)]
	slots, kite := s.slots[k0:k0+3*len(qc)], s.g.CellKiteArea[k0:k0+3*len(qc)]
	q, lu, gv := s.q, s.lu, s.gv
	for i := range qc {
		sl, kt := (*[3]cellSlot)(slots[3*i:3*i+3]), (*[3]float64)(kite[3*i:3*i+3])
		inv := invA[i]
		m := 0.0 + kt[0]*q[sl[0].vert] + kt[1]*q[sl[1].vert] + kt[2]*q[sl[2].vert]
		qc[i] = m * inv
		s0, s1, s2 := sl[0].side, sl[1].side, sl[2].side
		a0, a1, a2 := unitSign[s0&1]*lu[s0>>1], unitSign[s1&1]*lu[s1>>1], unitSign[s2&1]*lu[s2>>1]
		c0 := 0.0
		c1 := c0 + sl[0].r
		c2 := c1 + sl[1].r
		sumA := 0.0 + a0 + a1 + a2
		sumB := 0.0 + c0*a0 + c1*a1 + c2*a2
		l1 := 0.0 + a0
		l2 := l1 + a1
		gv[s0>>1][s0&1] = 0.5*(sumA-a0) + c0*sumA - sumB - 0.0
		gv[s1>>1][s1&1] = 0.5*(sumA-a1) + c1*sumA - sumB - l1
		gv[s2>>1][s2&1] = 0.5*(sumA-a2) + c2*sumA - sumB - l2
	}
}

// anticipate sets the APVM correction q_e − q̂_e = c Δt (u_e ∂q/∂n + v_e ∂q/∂t),
// with v_e the TRiSK tangential velocity (Sadourny & Basdevant 1985; as
// used by Ringler et al. 2010, §5: from memory).
func (s *trisk) anticipate(lo, hi int) {
	u := s.x[s.nc+lo : s.nc+hi]
	corr, gv := s.corr[lo:hi], s.gv[lo:hi]
	cells, verts := s.g.EdgeCells[2*lo:2*hi], s.g.EdgeVertices[2*lo:2*hi]
	l, d := s.g.EdgeLength[lo:hi], s.g.DualLength[lo:hi]
	corr, gv, l, d = corr[:len(u)], gv[:len(u)], l[:len(u)], d[:len(u)]
	qc, q := s.qcell, s.q
	cdt := s.apvm * s.dt
	for e := range u {
		ce, ve := cells[2*e:2*e+2:2*e+2], verts[2*e:2*e+2:2*e+2]
		dqn := (qc[ce[1]] - qc[ce[0]]) / d[e]
		dqt := (q[ve[1]] - q[ve[0]]) / l[e]
		v := (gv[e][0] - gv[e][1]) / d[e]
		corr[e] = cdt * (u[e]*dqn + v*dqt)
	}
}
