package linear

import "sort"

// CSR is a square sparse matrix in compressed sparse row form: row r holds
// the entries Value[RowStart[r]:RowStart[r+1]] in the columns
// Col[RowStart[r]:RowStart[r+1]], in increasing column order.
type CSR struct {
	N        int
	RowStart []int32
	Col      []int32
	Value    []float64
}

// At returns the entry in row r, column c.
func (m *CSR) At(r, c int) float64 {
	lo, hi := int(m.RowStart[r]), int(m.RowStart[r+1])
	k := lo + sort.Search(hi-lo, func(k int) bool { return int(m.Col[lo+k]) >= c })
	if k < hi && int(m.Col[k]) == c {
		return m.Value[k]
	}
	return 0
}

// MulVec sets dst = M x. dst and x must not alias.
func (m *CSR) MulVec(dst, x []float64) {
	for r := 0; r < m.N; r++ {
		s := 0.0
		for k := m.RowStart[r]; k < m.RowStart[r+1]; k++ {
			s += m.Value[k] * x[m.Col[k]]
		}
		dst[r] = s
	}
}

// NNZ returns the number of stored entries.
func (m *CSR) NNZ() int { return len(m.Value) }

// Dense returns M as a row-major N×N slice.
func (m *CSR) Dense() []float64 {
	d := make([]float64, m.N*m.N)
	for r := 0; r < m.N; r++ {
		for k := m.RowStart[r]; k < m.RowStart[r+1]; k++ {
			d[r*m.N+int(m.Col[k])] = m.Value[k]
		}
	}
	return d
}

func (m *CSR) clone() *CSR {
	return &CSR{N: m.N, RowStart: append([]int32(nil), m.RowStart...), Col: append([]int32(nil), m.Col...), Value: append([]float64(nil), m.Value...)}
}

// builder collects entries column by column and builds a CSR.
type builder struct {
	n          int
	rows, cols []int32
	vals       []float64
}

func newBuilder(n int) *builder { return &builder{n: n} }

func (b *builder) add(r, c int, v float64) {
	b.rows = append(b.rows, int32(r))
	b.cols = append(b.cols, int32(c))
	b.vals = append(b.vals, v)
}

// build sorts by row (a counting sort; the entries of a row arrive in
// increasing column order because columns are added in order).
func (b *builder) build() *CSR {
	m := &CSR{N: b.n, RowStart: make([]int32, b.n+1), Col: make([]int32, len(b.vals)), Value: make([]float64, len(b.vals))}
	for _, r := range b.rows {
		m.RowStart[r+1]++
	}
	for r := 0; r < b.n; r++ {
		m.RowStart[r+1] += m.RowStart[r]
	}
	fill := append([]int32(nil), m.RowStart[:b.n]...)
	for k, r := range b.rows {
		p := fill[r]
		m.Col[p], m.Value[p] = b.cols[k], b.vals[k]
		fill[r]++
	}
	return m
}
