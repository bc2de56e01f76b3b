package linear

import (
	"context"
	"runtime"
	"testing"

	"gyrebench/sim"
)

// BenchmarkAnalyseHex16 is the dense analysis of hex n = 16 (256 cells,
// 768 edges: 1024 unknowns). Besides time and allocation per run it
// reports HeapSys, the heap obtained from the system, an upper bound on
// the heap the analysis held at once.
func BenchmarkAnalyseHex16(b *testing.B) {
	cfg := sim.DefaultConfig()
	cfg.Grid.Kind, cfg.Grid.N = "hex", 16
	runtime.GC()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Analyse(context.Background(), cfg, Options{}); err != nil {
			b.Fatal(err)
		}
	}
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(after.HeapSys)/(1<<20), "heap-sys-MB")
}

// BenchmarkStableDtHex64 is the extreme-frequency route at the default
// resolution of the workbench (hex n = 64: 16 384 unknowns).
func BenchmarkStableDtHex64(b *testing.B) {
	cfg := sim.DefaultConfig()
	for b.Loop() {
		if _, err := StableDt(context.Background(), cfg, "rk3"); err != nil {
			b.Fatal(err)
		}
	}
}
