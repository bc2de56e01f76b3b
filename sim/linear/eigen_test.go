package linear

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// plantedSkew returns Q K Qᵀ for a random orthogonal Q and a block-diagonal
// antisymmetric K with the given σ (2×2 blocks [[0, σ], [−σ, 0]]) and
// zeros: a matrix with known eigenvalues ±iσ and a known kernel dimension.
func plantedSkew(n int, sigma []float64, rng *rand.Rand) []float64 {
	k := mat.NewDense(n, n, nil)
	for j, s := range sigma {
		k.Set(2*j, 2*j+1, s)
		k.Set(2*j+1, 2*j, -s)
	}
	g := mat.NewDense(n, n, nil)
	for r := 0; r < n; r++ {
		for c := 0; c < n; c++ {
			g.Set(r, c, rng.NormFloat64())
		}
	}
	var qr mat.QR
	qr.Factorize(g)
	var q mat.Dense
	qr.QTo(&q)
	var t, b mat.Dense
	t.Mul(&q, k)
	b.Mul(&t, q.T())
	return b.RawMatrix().Data
}

func TestSkewEigenResiduals(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, tc := range []struct {
		n     int
		sigma []float64
	}{
		{6, []float64{3, 1, 0.5}},
		{9, []float64{2, 2, 1e-3, 1}},     // odd: padded; kernel of 1
		{12, []float64{5, 5, 5, 1}},       // degenerate cluster, kernel of 4
		{13, []float64{1, 2, 3, 4, 5, 6}}, // odd, kernel of 1
		{40, []float64{1e-4, 2, 2, 3, 7}}, // a wide range, kernel of 30
	} {
		b := plantedSkew(tc.n, tc.sigma, rng)
		sp, err := skewEigen(b, tc.n, 1e-9)
		if err != nil {
			t.Fatal(err)
		}
		k0 := 0
		if sp.Kernel != nil {
			_, k0 = sp.Kernel.Dims()
		}
		if len(sp.Sigma) != len(tc.sigma) || 2*len(sp.Sigma)+k0 != tc.n {
			t.Fatalf("n=%d: %d pairs and a kernel of %d, want %d pairs and %d", tc.n, len(sp.Sigma), k0, len(tc.sigma), tc.n-2*len(tc.sigma))
		}
		want := append([]float64(nil), tc.sigma...)
		sortDesc(want)
		bm := mat.NewDense(tc.n, tc.n, b)
		for j, s := range sp.Sigma {
			if math.Abs(s-want[j]) > 1e-13*want[0] {
				t.Errorf("n=%d: σ_%d = %.16g, want %.16g", tc.n, j, s, want[j])
			}
			a, bb := sp.A.ColView(j), sp.B.ColView(j)
			var ba, bb2 mat.VecDense
			ba.MulVec(bm, a)
			bb2.MulVec(bm, bb)
			// B a = −σ b, B b = σ a.
			ba.AddScaledVec(&ba, s, bb)
			bb2.AddScaledVec(&bb2, -s, a)
			if r := max(mat.Norm(&ba, 2), mat.Norm(&bb2, 2)); r > 1e-12*want[0] {
				t.Errorf("n=%d: pair %d residual %.3g", tc.n, j, r)
			}
		}
		// All vectors together orthonormal.
		all := mat.NewDense(tc.n, tc.n, nil)
		for j := range sp.Sigma {
			all.SetCol(2*j, mat.Col(nil, j, sp.A))
			all.SetCol(2*j+1, mat.Col(nil, j, sp.B))
		}
		for j := 0; j < k0; j++ {
			all.SetCol(2*len(sp.Sigma)+j, mat.Col(nil, j, sp.Kernel))
			var r mat.VecDense
			r.MulVec(bm, sp.Kernel.ColView(j))
			if mat.Norm(&r, 2) > 1e-12*want[0] {
				t.Errorf("n=%d: kernel vector %d residual %.3g", tc.n, j, mat.Norm(&r, 2))
			}
		}
		var g mat.Dense
		g.Mul(all.T(), all)
		for r := 0; r < tc.n; r++ {
			for c := 0; c < tc.n; c++ {
				w := 0.0
				if r == c {
					w = 1
				}
				if math.Abs(g.At(r, c)-w) > 1e-12 {
					t.Fatalf("n=%d: vectors not orthonormal: G[%d,%d] = %g", tc.n, r, c, g.At(r, c))
				}
			}
		}
		vals := skewValues(b, tc.n)
		if math.Abs(vals[0]-want[0]) > 1e-13*want[0] {
			t.Errorf("n=%d: skewValues max %.16g, want %.16g", tc.n, vals[0], want[0])
		}
	}
}

func sortDesc(x []float64) {
	for i := range x {
		for j := i + 1; j < len(x); j++ {
			if x[j] > x[i] {
				x[i], x[j] = x[j], x[i]
			}
		}
	}
}
