package server

import (
	"testing"
)

func TestSig4(t *testing.T) {
	for _, c := range []struct {
		x    float64
		want string
	}{
		{574.8123, "574.8"}, {10321, "10320"}, {0.0123456, "0.01235"}, {2446.39, "2446"}, {0, "0"}, {-61.234, "-61.23"},
	} {
		if got := sig4(c.x); got != c.want {
			t.Errorf("sig4(%g) = %q, want %q", c.x, got, c.want)
		}
	}
}
