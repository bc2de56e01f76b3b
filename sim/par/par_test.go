package par

import (
	"sync/atomic"
	"testing"
)

// Every index is visited exactly once, by contiguous chunks, for any
// number of workers and loop sizes, including loops too short to split.
func TestForCoversEachIndexOnce(t *testing.T) {
	for _, w := range []int{1, 2, 3, 8} {
		p := New(w)
		for _, n := range []int{0, 1, 5, 16, 1000, 4097} {
			hits := make([]atomic.Int32, n)
			for rep := 0; rep < 50; rep++ {
				p.For(n, func(lo, hi int) {
					for i := lo; i < hi; i++ {
						hits[i].Add(1)
					}
				})
			}
			for i := range hits {
				if got := hits[i].Load(); got != 50 {
					t.Fatalf("workers=%d n=%d: index %d visited %d times in 50 loops", w, n, i, got)
				}
			}
		}
		p.Close()
		p.Close() // a second Close is harmless
	}
}

func TestForAllocatesNothing(t *testing.T) {
	p := New(2)
	defer p.Close()
	data := make([]float64, 10000)
	fn := func(lo, hi int) {
		for i := lo; i < hi; i++ {
			data[i]++
		}
	}
	if a := testing.AllocsPerRun(100, func() { p.For(len(data), fn) }); a != 0 {
		t.Errorf("%v allocations per loop", a)
	}
}
