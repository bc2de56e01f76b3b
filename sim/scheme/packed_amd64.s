//go:build amd64 && !purego

#include "textflag.h"

// hexCellsSSE2 is cells6 (trisk.go) for trisk-energy and
// trisk-enstrophy (quadCellsSSE2 and triCellsSSE2 below are cells4 and
// cells3), with each edge's pair (b_m, a_m) in the two lanes of
// one SSE2 register: the sums A and B, the depth tendency and the
// recurrence for G run once for both, as packed operations. Every
// operation is the Go kernel's, in its order, on the same operands (SSE2
// has no fused multiply-add, and packed and scalar IEEE operations round
// alike), so the results are the same bits; the tests compare them.
//
// Frame: qe_0 … qe_5 (qe_3, qe_2) at 0(SP) … 40(SP).
//
// Registers. DI: args; SI: the cell's six slots; CX: the cell's index;
// R8: q; R9: fk; R10: tt; R11: h; R12: 1/A; R13: ∂h/∂t or x0.
// X0–X5: P_m = (b_m, a_m); X6: S = (B-lane sum, A-lane sum), later G;
// X7: T; X8: Σ l d u²; X9: the prefix sum C_m; X12, X13: q of the
// previous and current vertex, later Φ and H = 2S.

// args offsets (cellArgs in packed_amd64.go)
#define A_H 0
#define A_INVA 8
#define A_OUT 16
#define A_X0 24
#define A_BOTTOM 32
#define A_SLOTS 40
#define A_Q 48
#define A_FK 56
#define A_TT 64
#define A_N 72
#define A_G 80
#define A_A 88
#define A_B 96
#define A_DT 104
#define A_MODE 112
#define A_ENST 120
#define A_QSIGN 128
#define A_HALF 144
#define A_QUARTER 152
#define A_SIGN 160

// EDGE loads edge m of the cell (its slot at off(SI)): qe_m =
// ½(q_prev + q_m) to qe(SP), a_m = quarterSign·F, the kinetic-energy
// share into X8, and P = (qe_m a_m, a_m), added to S.
#define EDGE(off, qe, P, QPREV, QCUR) \
	MOVL   off+12(SI), DX \
	MOVSD  (R8)(DX*8), QCUR \
	MOVAPD QPREV, X10 \
	ADDSD  QCUR, X10 \
	MULSD  A_HALF(DI), X10 \
	MOVSD  X10, qe(SP) \
	MOVL   off+8(SI), AX \
	MOVL   AX, BX \
	ANDL   $1, BX \
	ANDL   $-2, AX \
	MOVSD  (R9)(AX*8), P \
	MULSD  A_QSIGN(DI)(BX*8), P \
	ADDSD  8(R9)(AX*8), X8 \
	UNPCKLPD P, P \
	MULSD  X10, P \
	ADDPD  P, X6

// TERM adds C_m P_m to T, C_m in X9.
#define TERM(P) \
	MOVAPD   X9, X14 \
	UNPCKLPD X14, X14 \
	MULPD    P, X14 \
	ADDPD    X14, X7

// NEXTG steps G (X6) from edge m to m+1: G += r_m H − (P_m + P_{m+1}).
#define NEXTG(roff, PM, PN) \
	MOVSD    roff(SI), X10 \
	UNPCKLPD X10, X10 \
	MULPD    X13, X10 \
	MOVAPD   PM, X11 \
	ADDPD    PN, X11 \
	SUBPD    X11, X10 \
	ADDPD    X10, X6

// SHAREE stores edge m's trisk-energy share (q_e G_a + G_b) + Φ.
#define SHAREE(off, qe) \
	MOVHLPS X6, X10 \
	MULSD   qe(SP), X10 \
	ADDSD   X6, X10 \
	ADDSD   X12, X10 \
	MOVL    off+8(SI), AX \
	MOVSD   X10, (R10)(AX*8)

// SHAREZ stores edge m's trisk-enstrophy share 2 q_e G_a + Φ.
#define SHAREZ(off, qe) \
	MOVHLPS X6, X10 \
	MULSD   qe(SP), X10 \
	ADDSD   X10, X10 \
	ADDSD   X12, X10 \
	MOVL    off+8(SI), AX \
	MOVSD   X10, (R10)(AX*8)

// SETUP loads the cell kernels' pointers from the args in DI.
#define SETUP \
	MOVQ a+0(FP), DI \
	MOVQ A_SLOTS(DI), SI \
	MOVQ A_Q(DI), R8 \
	MOVQ A_FK(DI), R9 \
	MOVQ A_TT(DI), R10 \
	MOVQ A_H(DI), R11 \
	MOVQ A_INVA(DI), R12 \
	MOVQ A_OUT(DI), R13 \
	CMPQ A_MODE(DI), $2 \
	JNE  2(PC) \
	MOVQ A_X0(DI), R13 \
	XORQ CX, CX

// FIRSTQ loads q of the vertex before edge 0 (the last slot's, at off)
// into X12 and clears S and Σ l d u².
#define FIRSTQ(off) \
	MOVL  off+12(SI), DX \
	MOVSD (R8)(DX*8), X12 \
	XORPD X6, X6 \
	XORPD X8, X8

// T1 starts T = C_1 P_1 with C_1 = r_0; CNEXT(off) steps C_m to
// C_{m+1} = C_m + r_m, r_m at off(SI).
#define T1 \
	MOVSD    0(SI), X9 \
	MOVAPD   X9, X7 \
	UNPCKLPD X7, X7 \
	MULPD    X1, X7

#define CNEXT(off) \
	ADDSD off(SI), X9

// MIDDLE computes Φ (into X12) and H = 2S (X13), stores the depth
// tendency or the stage's depth as the mode says, and sets G_0 =
// (S − P_0) − (T + T) in X6. Its label arguments name its branch
// targets, local to each kernel.
#define MIDDLE(flat, first, general, done) \
	MOVSD   (R11)(CX*8), X11 \
	MOVQ    A_BOTTOM(DI), BX \
	TESTQ   BX, BX \
	JZ      flat \
	ADDSD   (BX)(CX*8), X11 \
flat: \
	MULSD   A_G(DI), X11 \
	MOVAPD  X8, X12 \
	MULSD   A_QUARTER(DI), X12 \
	MULSD   (R12)(CX*8), X12 \
	ADDSD   X11, X12 \
	MOVAPD  X6, X13 \
	ADDPD   X6, X13 \
	MOVHLPS X13, X11 \
	ADDSD   X11, X11 \
	MULSD   (R12)(CX*8), X11 \
	MOVSD   A_SIGN(DI), X14 \
	XORPD   X14, X11 \
	MOVQ    A_MODE(DI), AX \
	CMPQ    AX, $1 \
	JEQ     first \
	JGT     general \
	MOVSD   X11, (R13)(CX*8) \
	JMP     done \
first: \
	MULSD   A_DT(DI), X11 \
	ADDSD   (R11)(CX*8), X11 \
	MOVSD   X11, (R11)(CX*8) \
	JMP     done \
general: \
	MULSD   A_DT(DI), X11 \
	ADDSD   (R11)(CX*8), X11 \
	MULSD   A_B(DI), X11 \
	MOVSD   (R13)(CX*8), X14 \
	MULSD   A_A(DI), X14 \
	ADDSD   X11, X14 \
	MOVSD   X14, (R11)(CX*8) \
done: \
	SUBPD   X0, X6 \
	ADDPD   X7, X7 \
	SUBPD   X7, X6

// NEXTCELL moves to the next cell, its slots stride bytes on, and
// loops to label while cells are left.
#define NEXTCELL(stride, label) \
	ADDQ $stride, SI \
	INCQ CX \
	CMPQ CX, A_N(DI) \
	JLT  label

// func hexCellsSSE2(a *cellArgs)
TEXT ·hexCellsSSE2(SB), NOSPLIT, $48-8
	SETUP

hex:
	FIRSTQ(80)
	EDGE(0, 0, X0, X12, X13)
	EDGE(16, 8, X1, X13, X12)
	EDGE(32, 16, X2, X12, X13)
	EDGE(48, 24, X3, X13, X12)
	EDGE(64, 32, X4, X12, X13)
	EDGE(80, 40, X5, X13, X12)
	T1
	CNEXT(16)
	TERM(X2)
	CNEXT(32)
	TERM(X3)
	CNEXT(48)
	TERM(X4)
	CNEXT(64)
	TERM(X5)
	MIDDLE(hexflat, hexfirst, hexgeneral, hexshares)
	CMPQ A_ENST(DI), $0
	JNE  hexenstrophy
	SHAREE(0, 0)
	NEXTG(0, X0, X1)
	SHAREE(16, 8)
	NEXTG(16, X1, X2)
	SHAREE(32, 16)
	NEXTG(32, X2, X3)
	SHAREE(48, 24)
	NEXTG(48, X3, X4)
	SHAREE(64, 32)
	NEXTG(64, X4, X5)
	SHAREE(80, 40)
	JMP  hexnext

hexenstrophy:
	SHAREZ(0, 0)
	NEXTG(0, X0, X1)
	SHAREZ(16, 8)
	NEXTG(16, X1, X2)
	SHAREZ(32, 16)
	NEXTG(32, X2, X3)
	SHAREZ(48, 24)
	NEXTG(48, X3, X4)
	SHAREZ(64, 32)
	NEXTG(64, X4, X5)
	SHAREZ(80, 40)

hexnext:
	NEXTCELL(96, hex)
	RET

// func quadCellsSSE2(a *cellArgs): cells4, as hexCellsSSE2 is cells6.
TEXT ·quadCellsSSE2(SB), NOSPLIT, $32-8
	SETUP

quad:
	FIRSTQ(48)
	EDGE(0, 0, X0, X12, X13)
	EDGE(16, 8, X1, X13, X12)
	EDGE(32, 16, X2, X12, X13)
	EDGE(48, 24, X3, X13, X12)
	T1
	CNEXT(16)
	TERM(X2)
	CNEXT(32)
	TERM(X3)
	MIDDLE(quadflat, quadfirst, quadgeneral, quadshares)
	CMPQ A_ENST(DI), $0
	JNE  quadenstrophy
	SHAREE(0, 0)
	NEXTG(0, X0, X1)
	SHAREE(16, 8)
	NEXTG(16, X1, X2)
	SHAREE(32, 16)
	NEXTG(32, X2, X3)
	SHAREE(48, 24)
	JMP  quadnext

quadenstrophy:
	SHAREZ(0, 0)
	NEXTG(0, X0, X1)
	SHAREZ(16, 8)
	NEXTG(16, X1, X2)
	SHAREZ(32, 16)
	NEXTG(32, X2, X3)
	SHAREZ(48, 24)

quadnext:
	NEXTCELL(64, quad)
	RET

// func triCellsSSE2(a *cellArgs): cells3, as hexCellsSSE2 is cells6.
TEXT ·triCellsSSE2(SB), NOSPLIT, $24-8
	SETUP

tri:
	FIRSTQ(32)
	EDGE(0, 0, X0, X12, X13)
	EDGE(16, 8, X1, X13, X12)
	EDGE(32, 16, X2, X12, X13)
	T1
	CNEXT(16)
	TERM(X2)
	MIDDLE(triflat, trifirst, trigeneral, trishares)
	CMPQ A_ENST(DI), $0
	JNE  trienstrophy
	SHAREE(0, 0)
	NEXTG(0, X0, X1)
	SHAREE(16, 8)
	NEXTG(16, X1, X2)
	SHAREE(32, 16)
	JMP  trinext

trienstrophy:
	SHAREZ(0, 0)
	NEXTG(0, X0, X1)
	SHAREZ(16, 8)
	NEXTG(16, X1, X2)
	SHAREZ(32, 16)

trinext:
	NEXTCELL(48, tri)
	RET

// finishSSE2 is doMomentum and doFinish for an even number of edges, two
// at a time: f_e = (T^{c0}_e − T^{c1}_e)/d_e by one packed division for
// both, then, as mode says, stored (0), x + Δt f (1) or
// a x0 + b (x + Δt f) (2), each the Go loop's operations in its order.
//
// Registers. DI: args; SI: tt; DX: d; R8: x (or ∂u/∂t in mode 0); R9: x0;
// CX: the edge; BX: the number of edges; X12–X14: Δt, b, a in both lanes.

// finishArgs offsets (finishArgs in packed_amd64.go)
#define F_X 0
#define F_X0 8
#define F_TT 16
#define F_D 24
#define F_N 32
#define F_A 40
#define F_B 48
#define F_DT 56
#define F_MODE 64

// func finishSSE2(a *finishArgs)
TEXT ·finishSSE2(SB), NOSPLIT, $0-8
	MOVQ     a+0(FP), DI
	MOVQ     F_TT(DI), SI
	MOVQ     F_D(DI), DX
	MOVQ     F_X(DI), R8
	MOVQ     F_X0(DI), R9
	MOVQ     F_N(DI), BX
	MOVSD    F_DT(DI), X12
	UNPCKLPD X12, X12
	MOVSD    F_B(DI), X13
	UNPCKLPD X13, X13
	MOVSD    F_A(DI), X14
	UNPCKLPD X14, X14
	XORQ     CX, CX
	MOVQ     F_MODE(DI), AX
	CMPQ     AX, $1
	JEQ      first
	JGT      general

tendency:
	CMPQ     CX, BX
	JGE      done
	MOVUPD   (SI), X0
	MOVUPD   16(SI), X1
	MOVAPD   X0, X2
	UNPCKLPD X1, X2
	UNPCKHPD X1, X0
	SUBPD    X0, X2
	MOVUPD   (DX)(CX*8), X3
	DIVPD    X3, X2
	MOVUPD   X2, (R8)(CX*8)
	ADDQ     $32, SI
	ADDQ     $2, CX
	JMP      tendency

first:
	CMPQ     CX, BX
	JGE      done
	MOVUPD   (SI), X0
	MOVUPD   16(SI), X1
	MOVAPD   X0, X2
	UNPCKLPD X1, X2
	UNPCKHPD X1, X0
	SUBPD    X0, X2
	MOVUPD   (DX)(CX*8), X3
	DIVPD    X3, X2
	MULPD    X12, X2
	MOVUPD   (R8)(CX*8), X4
	ADDPD    X2, X4
	MOVUPD   X4, (R8)(CX*8)
	ADDQ     $32, SI
	ADDQ     $2, CX
	JMP      first

general:
	CMPQ     CX, BX
	JGE      done
	MOVUPD   (SI), X0
	MOVUPD   16(SI), X1
	MOVAPD   X0, X2
	UNPCKLPD X1, X2
	UNPCKHPD X1, X0
	SUBPD    X0, X2
	MOVUPD   (DX)(CX*8), X3
	DIVPD    X3, X2
	MULPD    X12, X2
	MOVUPD   (R8)(CX*8), X4
	ADDPD    X2, X4
	MULPD    X13, X4
	MOVUPD   (R9)(CX*8), X5
	MULPD    X14, X5
	ADDPD    X4, X5
	MOVUPD   X5, (R8)(CX*8)
	ADDQ     $32, SI
	ADDQ     $2, CX
	JMP      general

done:
	RET

// edgesSSE2 is doEdges for an even number of edges, two at a time:
// h_e = ½(h_{c0} + h_{c1}), F_e = (l_e h_e) u_e and ((l_e d_e) u_e) u_e
// as packed pairs over the two edges, the Go loop's operations in its
// order, stored as each edge's pair (F_e, l_e d_e u_e²).
//
// Registers. DI: args; SI: the edges' cells; R8: h; R9: u; R10: l;
// R11: d; R12: fk; CX: the edge; BX: the number of edges; X8: ½ in both
// lanes.

// edgeArgs offsets (edgeArgs in packed_amd64.go)
#define E_H 0
#define E_U 8
#define E_L 16
#define E_D 24
#define E_CELLS 32
#define E_FK 40
#define E_N 48
#define E_HALF 56

// func edgesSSE2(a *edgeArgs)
TEXT ·edgesSSE2(SB), NOSPLIT, $0-8
	MOVQ     a+0(FP), DI
	MOVQ     E_H(DI), R8
	MOVQ     E_U(DI), R9
	MOVQ     E_L(DI), R10
	MOVQ     E_D(DI), R11
	MOVQ     E_CELLS(DI), SI
	MOVQ     E_FK(DI), R12
	MOVQ     E_N(DI), BX
	MOVSD    E_HALF(DI), X8
	UNPCKLPD X8, X8
	XORQ     CX, CX

edges:
	CMPQ     CX, BX
	JGE      edgesdone
	// X0 = (h_{c0}, h_{c0'}), X1 = (h_{c1}, h_{c1'}) for edges e, e' = e+1.
	MOVL     0(SI), AX
	MOVL     4(SI), DX
	MOVSD    (R8)(AX*8), X0
	MOVSD    (R8)(DX*8), X1
	MOVL     8(SI), AX
	MOVL     12(SI), DX
	MOVHPD   (R8)(AX*8), X0
	MOVHPD   (R8)(DX*8), X1
	ADDPD    X1, X0
	MULPD    X8, X0
	MOVUPD   (R10)(CX*8), X2
	MOVUPD   (R9)(CX*8), X3
	MOVUPD   (R11)(CX*8), X4
	// F = (l h_e) u
	MULPD    X2, X0
	MULPD    X3, X0
	// K = ((l d) u) u
	MULPD    X4, X2
	MULPD    X3, X2
	MULPD    X3, X2
	MOVAPD   X0, X5
	UNPCKLPD X2, X5
	UNPCKHPD X2, X0
	MOVUPD   X5, (R12)
	MOVUPD   X0, 16(R12)
	ADDQ     $16, SI
	ADDQ     $32, R12
	ADDQ     $2, CX
	JMP      edges

edgesdone:
	RET

// hodge5SSE2, hodge7SSE2 and hodge11SSE2 are hodgeRows5, hodgeRows7 and
// hodgeRows11 with hodgeFlux: each row's sums ((H v)_e, (H (ĥ∘v))_e) as
// one packed sum of products H_{e,j} (v_j, ĥ_j v_j), then the flux
// ½(h_e (H v)_e + (H(ĥ∘v))_e) and v_e (H v)_e, the Go code's operations
// in its order.
//
// Registers. DI: args; SI: the rows' columns; R10: their entries; R8:
// vh; R9: h; R11: the edges' cells; R12: fk; R13: l u or 0; CX: the
// edge's place in the range; BX: the number of edges; X6: the sums.

// hodgeArgs offsets (hodgeArgs in packed_amd64.go)
#define H_COL 0
#define H_VAL 8
#define H_VH 16
#define H_VHE 24
#define H_H 32
#define H_CELLS 40
#define H_FK 48
#define H_LU 56
#define H_N 64
#define H_HALF 72

// ENTRY adds entry r of the row to X6.
#define ENTRY(r) \
	MOVL     (4*r)(SI), AX \
	SHLQ     $4, AX \
	MOVUPD   (R8)(AX*1), X0 \
	MOVSD    (8*r)(R10), X1 \
	UNPCKLPD X1, X1 \
	MULPD    X1, X0 \
	ADDPD    X0, X6

#define HSETUP \
	MOVQ a+0(FP), DI \
	MOVQ H_COL(DI), SI \
	MOVQ H_VAL(DI), R10 \
	MOVQ H_VH(DI), R8 \
	MOVQ H_H(DI), R9 \
	MOVQ H_CELLS(DI), R11 \
	MOVQ H_FK(DI), R12 \
	MOVQ H_LU(DI), R13 \
	MOVQ H_N(DI), BX \
	XORQ CX, CX

// HFLUX stores the edge's flux and kinetic-energy share from X6 (and
// (H v)_e to l u when there is one), and moves on by one row of len
// entries.
#define HFLUX(len) \
	MOVL     0(R11), AX \
	MOVL     4(R11), DX \
	MOVSD    (R9)(AX*8), X1 \
	ADDSD    (R9)(DX*8), X1 \
	MULSD    H_HALF(DI), X1 \
	MOVAPD   X6, X2 \
	MULSD    X1, X2 \
	MOVHLPS  X6, X3 \
	ADDSD    X3, X2 \
	MULSD    H_HALF(DI), X2 \
	MOVQ     H_VHE(DI), AX \
	LEAQ     (CX)(CX*1), DX \
	MOVSD    (AX)(DX*8), X4 \
	MULSD    X6, X4 \
	UNPCKLPD X4, X2 \
	MOVUPD   X2, (R12) \
	TESTQ    R13, R13 \
	JZ       3(PC) \
	MOVSD    X6, (R13) \
	ADDQ     $8, R13 \
	ADDQ     $(4*len), SI \
	ADDQ     $(8*len), R10 \
	ADDQ     $8, R11 \
	ADDQ     $16, R12 \
	INCQ     CX

// func hodge5SSE2(a *hodgeArgs)
TEXT ·hodge5SSE2(SB), NOSPLIT, $0-8
	HSETUP

h5:
	CMPQ  CX, BX
	JGE   h5done
	XORPD X6, X6
	ENTRY(0)
	ENTRY(1)
	ENTRY(2)
	ENTRY(3)
	ENTRY(4)
	HFLUX(5)
	JMP   h5

h5done:
	RET

// func hodge7SSE2(a *hodgeArgs)
TEXT ·hodge7SSE2(SB), NOSPLIT, $0-8
	HSETUP

h7:
	CMPQ  CX, BX
	JGE   h7done
	XORPD X6, X6
	ENTRY(0)
	ENTRY(1)
	ENTRY(2)
	ENTRY(3)
	ENTRY(4)
	ENTRY(5)
	ENTRY(6)
	HFLUX(7)
	JMP   h7

h7done:
	RET

// func hodge11SSE2(a *hodgeArgs)
TEXT ·hodge11SSE2(SB), NOSPLIT, $0-8
	HSETUP

h11:
	CMPQ  CX, BX
	JGE   h11done
	XORPD X6, X6
	ENTRY(0)
	ENTRY(1)
	ENTRY(2)
	ENTRY(3)
	ENTRY(4)
	ENTRY(5)
	ENTRY(6)
	ENTRY(7)
	ENTRY(8)
	ENTRY(9)
	ENTRY(10)
	HFLUX(11)
	JMP   h11

h11done:
	RET
