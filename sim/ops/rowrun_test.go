package ops

import (
	"slices"
	"testing"
)

func TestRowRuns(t *testing.T) {
	for _, c := range []struct {
		start []int32
		want  []RowRun
	}{
		{[]int32{0}, nil},
		{[]int32{0, 6, 12, 18}, []RowRun{{0, 3, 6}}},
		{[]int32{0, 3, 6, 10, 14, 17}, []RowRun{{0, 2, 3}, {2, 4, 4}, {4, 5, 3}}},
		{[]int32{0, 5, 11, 16}, []RowRun{{0, 1, 5}, {1, 2, 6}, {2, 3, 5}}},
	} {
		if got := RowRuns(c.start); !slices.Equal(got, c.want) {
			t.Errorf("RowRuns(%v) = %v, want %v", c.start, got, c.want)
		}
	}
	r := RowRun{Lo: 10, Hi: 20, N: 6}
	for _, c := range []struct {
		lo, hi, a, b int
		ok           bool
	}{
		{0, 100, 10, 20, true}, {12, 15, 12, 15, true}, {15, 30, 15, 20, true},
		{0, 10, 10, 10, false}, {20, 30, 20, 20, false},
	} {
		if a, b, ok := r.Clip(c.lo, c.hi); a != c.a || b != c.b || ok != c.ok {
			t.Errorf("%v.Clip(%d, %d) = %d, %d, %t; want %d, %d, %t", r, c.lo, c.hi, a, b, ok, c.a, c.b, c.ok)
		}
	}
}
