package tests

import (
	"encoding/json"
	"fmt"
	"math"
	"testing"

	"github.com/chromedp/chromedp"

	"gyrebench/server"
)

// TestAxisTicks runs the plots' tick rule (static/format.js) in Chromium:
// round values covering the span, and a bounded, increasing list even
// when the span is below the round-off of the values (a minimum depth of
// 1000 m that moves by 1e-13 m once made the old loop run forever).
func TestAxisTicks(t *testing.T) {
	ctx := browser(t)
	_, base := startServer(t, server.Options{Workers: 1, Scenario: writeScenario(t, "small-hex", smallHex)})
	do(t, ctx, chromedp.Navigate(base+"/"))
	cases := []struct {
		lo, hi float64
		n      int
		want   []float64 // nil: only bounded and increasing
	}{
		{0, 1, 5, []float64{0, 0.2, 0.4, 0.6, 0.8, 1}},
		{-3.5, 12, 4, []float64{0, 5, 10}},
		{1000, 1000 + 1e-13, 5, nil},
		{1e16, 1e16 + 4, 5, nil},
		{-1e-20, 1e-20, 4, []float64{-1e-20, -5e-21, 0, 5e-21, 1e-20}},
	}
	for _, c := range cases {
		expr := fmt.Sprintf(`import('/static/format.js').then((m) => m.ticks(%g, %g, %d))`, c.lo, c.hi, c.n)
		got, err := chromedp.Run(ctx, chromedp.Evaluate[[]float64](expr, chromedp.EvalAwaitPromise))
		if err != nil {
			t.Errorf("ticks(%g, %g, %d): %v", c.lo, c.hi, c.n, err)
			continue
		}
		if len(got) > 4*c.n+3 {
			t.Errorf("ticks(%g, %g, %d): %d values, want at most %d", c.lo, c.hi, c.n, len(got), 4*c.n+3)
		}
		for i := 1; i < len(got); i++ {
			if !(got[i] > got[i-1]) {
				t.Errorf("ticks(%g, %g, %d) = %v: not increasing", c.lo, c.hi, c.n, got)
				break
			}
		}
		if c.want == nil {
			continue
		}
		ok := len(got) == len(c.want)
		for i := 0; ok && i < len(got); i++ {
			ok = math.Abs(got[i]-c.want[i]) <= 1e-12*math.Max(1, math.Abs(c.want[i])) || math.Abs(got[i]-c.want[i]) < 1e-30
		}
		if !ok {
			t.Errorf("ticks(%g, %g, %d) = %v, want %v", c.lo, c.hi, c.n, got, c.want)
		}
	}

	// Labels at the digits tickDigits gives are all different.
	for _, c := range []struct {
		vals []float64
		want string
	}{
		{[]float64{999.5, 1000, 1000.5}, "999.5|1000|1000.5"},
		{[]float64{0, 0.2, 0.4}, "0|0.2|0.4"},
		{[]float64{-2e-14, -1e-14, 0, 1e-14}, "−2×10⁻¹⁴|−1×10⁻¹⁴|0|1×10⁻¹⁴"},
	} {
		b, _ := json.Marshal(c.vals)
		expr := fmt.Sprintf(`import('/static/format.js').then((m) => { const v = %s; const d = m.tickDigits(v); return v.map((x) => m.fmtNum(x, d)).join('|'); })`, b)
		got, err := chromedp.Run(ctx, chromedp.Evaluate[string](expr, chromedp.EvalAwaitPromise))
		if err != nil || got != c.want {
			t.Errorf("labels of %v: %q, %v; want %q", c.vals, got, err, c.want)
		}
	}
}
