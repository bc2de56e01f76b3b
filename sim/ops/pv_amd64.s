//go:build amd64 && !purego

#include "textflag.h"

// pv3SSE2, pv4SSE2 and pv6SSE2 are pv3, pv4 and pv6 (ops.go) two
// vertices at a time: each vertex's pair (Σ t d u, Σ K h) is one packed
// sum of products (t d, K)(u_e, h_i), and the two vertices' quotients
// one packed division. Every operation is the Go loop's, in its order
// (SSE2 has no fused multiply-add; packed and scalar IEEE operations
// round alike), so the results are its bits.
//
// Registers. DI: args; SI: the vertices' (edge, cell) pairs; R10:
// their (t d, K) pairs; R8: u; R9: h; R11: f; R12: A_v; R13: q; CX: the
// vertex; X6, X7: the two vertices' sums.

// pvArgs offsets (pvArgs in pv_amd64.go)
#define P_Q 0
#define P_F 8
#define P_AREA 16
#define P_U 24
#define P_H 32
#define P_EC 40
#define P_TK 48
#define P_N 56

// SLOT adds slot k's (t d u_e, K h_i) to ACC.
#define SLOT(k, ACC) \
	MOVQ   (8*k)(SI), AX \
	MOVL   AX, DX \
	SHRQ   $32, AX \
	MOVSD  (R8)(DX*8), X0 \
	MOVHPD (R9)(AX*8), X0 \
	MOVUPD (16*k)(R10), X1 \
	MULPD  X1, X0 \
	ADDPD  X0, ACC

#define SETUP \
	MOVQ  a+0(FP), DI \
	MOVQ  P_EC(DI), SI \
	MOVQ  P_TK(DI), R10 \
	MOVQ  P_U(DI), R8 \
	MOVQ  P_H(DI), R9 \
	MOVQ  P_F(DI), R11 \
	MOVQ  P_AREA(DI), R12 \
	MOVQ  P_Q(DI), R13 \
	XORQ  CX, CX

// QUOTIENT stores q for the vertices CX and CX+1 from their sums,
// (c + f A_v)/m, and moves on by two vertices of deg slots each.
#define QUOTIENT(deg) \
	MOVAPD   X6, X2 \
	UNPCKLPD X7, X2 \
	UNPCKHPD X7, X6 \
	MOVUPD   (R11)(CX*8), X3 \
	MOVUPD   (R12)(CX*8), X4 \
	MULPD    X4, X3 \
	ADDPD    X3, X2 \
	DIVPD    X6, X2 \
	MOVUPD   X2, (R13)(CX*8) \
	ADDQ     $(16*deg), SI \
	ADDQ     $(32*deg), R10 \
	ADDQ     $2, CX

// func pv3SSE2(a *pvArgs)
TEXT ·pv3SSE2(SB), NOSPLIT, $0-8
	SETUP

pv3:
	CMPQ  CX, P_N(DI)
	JGE   pv3done
	XORPD X6, X6
	XORPD X7, X7
	SLOT(0, X6)
	SLOT(1, X6)
	SLOT(2, X6)
	SLOT(3, X7)
	SLOT(4, X7)
	SLOT(5, X7)
	QUOTIENT(3)
	JMP   pv3

pv3done:
	RET

// func pv4SSE2(a *pvArgs)
TEXT ·pv4SSE2(SB), NOSPLIT, $0-8
	SETUP

pv4:
	CMPQ  CX, P_N(DI)
	JGE   pv4done
	XORPD X6, X6
	XORPD X7, X7
	SLOT(0, X6)
	SLOT(1, X6)
	SLOT(2, X6)
	SLOT(3, X6)
	SLOT(4, X7)
	SLOT(5, X7)
	SLOT(6, X7)
	SLOT(7, X7)
	QUOTIENT(4)
	JMP   pv4

pv4done:
	RET

// func pv6SSE2(a *pvArgs)
TEXT ·pv6SSE2(SB), NOSPLIT, $0-8
	SETUP

pv6:
	CMPQ  CX, P_N(DI)
	JGE   pv6done
	XORPD X6, X6
	XORPD X7, X7
	SLOT(0, X6)
	SLOT(1, X6)
	SLOT(2, X6)
	SLOT(3, X6)
	SLOT(4, X6)
	SLOT(5, X6)
	SLOT(6, X7)
	SLOT(7, X7)
	SLOT(8, X7)
	SLOT(9, X7)
	SLOT(10, X7)
	SLOT(11, X7)
	QUOTIENT(6)
	JMP   pv6

pv6done:
	RET
