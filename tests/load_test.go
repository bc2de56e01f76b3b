package tests

import (
	"context"
	"encoding/json"
	"net/http"
	"os"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/coder/websocket"

	"gyrebench/server"
)

// BenchmarkViewers is the load of a group meeting: N websocket viewers
// watch one run of the default scenario for T seconds, each reading every
// message as a browser does; they may come and go in R rounds of T/R
// seconds each. It reports
//
//   - frames/s-per-viewer: the field frames each viewer received per
//     second (mean and slowest), against the server's cap of
//     server.DefaultMaxFPS;
//   - steps/s-one-viewer and steps/s-watched, and loss-%: the run's speed
//     with one viewer (a run pauses when nobody watches) in windows
//     before, between and after the rounds, against its speed while the
//     N watch too; the loss is the median over the rounds of each round
//     against the mean of the windows on either side of it, so that the
//     machine's drift cancels in part;
//   - heap-before-MB, heap-after-MB and heap-growth-%: the live heap after
//     a garbage collection, once the run has played with one viewer and
//     again after the last round's viewers have gone (memory kept per
//     viewer that has left shows as growth that scales with N × R).
//
// N, T and R are GYREBENCH_VIEWERS (default 50), GYREBENCH_LOAD_S
// (default 60) and GYREBENCH_LOAD_ROUNDS (default 1):
//
//	GYREBENCH_VIEWERS=50 GYREBENCH_LOAD_S=60 go test -run '^$' -bench BenchmarkViewers -benchtime 1x ./tests/
func BenchmarkViewers(b *testing.B) {
	viewers := envInt(b, "GYREBENCH_VIEWERS", 50)
	seconds := envInt(b, "GYREBENCH_LOAD_S", 60)
	rounds := envInt(b, "GYREBENCH_LOAD_ROUNDS", 1)
	window := time.Duration(seconds) * time.Second / time.Duration(rounds)
	quiet := max(window/4, 5*time.Second) // each window with one viewer
	for i := 0; i < b.N; i++ {
		_, base := startServer(b, server.Options{MaxFPS: server.DefaultMaxFPS})
		info := func() server.RunInfo { return runInfo(b, base, "1") }

		// A run pauses when nobody watches, so "unwatched" is the run
		// with one viewer, which plays it and stays to the end.
		ctx, cancel := context.WithCancel(context.Background())
		defer cancel()
		var wg sync.WaitGroup
		first := watch(b, ctx, &wg, base, "1")
		first.status = make(chan msg, 1)
		if err := first.c.Write(ctx, websocket.MessageText, []byte(`{"id":1,"cmd":"play"}`)); err != nil {
			b.Fatal(err)
		}
		waitRunning(b, info)
		alone := []float64{first.stepRate(b, quiet)}
		heapBefore := liveHeap()

		var watched, losses, fps []float64
		for range rounds {
			// N viewers for T/R seconds.
			vctx, leave := context.WithCancel(ctx)
			var vwg sync.WaitGroup
			group := make([]*viewer, viewers)
			for k := range group {
				group[k] = watch(b, vctx, &vwg, base, "1")
			}
			waitSubscribers(b, info, viewers+1)
			f0 := make([]int64, viewers)
			for k, v := range group {
				f0[k] = v.frames.Load()
			}
			t0 := time.Now()
			w := first.stepRate(b, window)
			elapsed := time.Since(t0).Seconds()
			for k, v := range group {
				fps = append(fps, float64(v.frames.Load()-f0[k])/elapsed)
			}
			leave()
			vwg.Wait()
			waitSubscribers(b, info, 1)
			alone = append(alone, first.stepRate(b, quiet))
			k := len(watched)
			watched = append(watched, w)
			losses = append(losses, 100*(1-w/((alone[k]+alone[k+1])/2)))
		}
		heapAfter := liveHeap()
		if s := info().State; s != server.StateRunning {
			b.Fatalf("the run is %s after the load; want it still running", s)
		}
		cancel()
		wg.Wait()
		b.ReportMetric(float64(viewers), "viewers")
		b.ReportMetric(mean(fps), "frames/s-per-viewer")
		b.ReportMetric(slices.Min(fps), "frames/s-slowest-viewer")
		b.ReportMetric(mean(alone), "steps/s-one-viewer")
		b.ReportMetric(mean(watched), "steps/s-watched")
		b.ReportMetric(median(losses), "loss-%")
		b.ReportMetric(float64(heapBefore)/(1<<20), "heap-before-MB")
		b.ReportMetric(float64(heapAfter)/(1<<20), "heap-after-MB")
		b.ReportMetric(100*(float64(heapAfter)/float64(heapBefore)-1), "heap-growth-%")
	}
}

func mean(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}

// viewer is a bare websocket client that reads every message, as a
// browser does, and counts the field frames. With status set it also
// decodes the status messages and offers the latest one there.
type viewer struct {
	c      *websocket.Conn
	frames atomic.Int64
	status chan msg
}

// watch connects a viewer to run id; it reads until ctx ends.
func watch(b *testing.B, ctx context.Context, wg *sync.WaitGroup, base, id string) *viewer {
	b.Helper()
	v := &viewer{c: dialViewer(b, base, id)}
	wg.Add(1)
	go func() {
		defer wg.Done()
		defer v.c.CloseNow()
		for {
			typ, data, err := v.c.Read(ctx)
			if err != nil {
				return
			}
			if typ == websocket.MessageBinary && len(data) > 0 && data[0] == 2 {
				v.frames.Add(1)
			}
			if typ == websocket.MessageText && v.status != nil {
				var m msg
				if json.Unmarshal(data, &m) == nil && m.Type == "status" {
					select { // latest wins
					case <-v.status:
					default:
					}
					v.status <- m
				}
			}
		}
	}()
	return v
}

// stepRate is the run's steps per second over a window of at least d of
// the server's own clock (the status messages' wall_s), as this viewer
// sees it.
func (v *viewer) stepRate(b *testing.B, d time.Duration) float64 {
	b.Helper()
	latest := func() msg {
		select {
		case m := <-v.status:
			return m
		case <-time.After(hang):
			b.Fatalf("no status message within %v (a hang guard)", hang)
		}
		return msg{}
	}
	s0 := latest()
	for {
		s1 := latest()
		if s1.State != server.StateRunning || s0.State != server.StateRunning {
			b.Fatalf("the run is %s; want it running", s1.State)
		}
		if s1.WallS-s0.WallS >= d.Seconds() {
			return float64(s1.Steps-s0.Steps) / (s1.WallS - s0.WallS)
		}
	}
}

// waitRunning waits, up to hang (a guard against a hang), until the run
// is running.
func waitRunning(b *testing.B, info func() server.RunInfo) {
	b.Helper()
	deadline := time.Now().Add(hang)
	for info().State != server.StateRunning {
		if time.Now().After(deadline) {
			b.Fatalf("the run is %s after %v; want it running", info().State, hang)
		}
		time.Sleep(20 * time.Millisecond) // polling a condition, bounded by hang
	}
}

// envInt reads a positive integer setting of a benchmark from the
// environment.
func envInt(b *testing.B, name string, def int) int {
	b.Helper()
	s := os.Getenv(name)
	if s == "" {
		return def
	}
	v, err := strconv.Atoi(s)
	if err != nil || v < 1 {
		b.Fatalf("%s = %q: want a positive whole number", name, s)
	}
	return v
}

// runInfo returns run id as GET /api/runs reports it.
func runInfo(b *testing.B, base, id string) server.RunInfo {
	b.Helper()
	resp, err := http.Get(base + "/api/runs")
	if err != nil {
		b.Fatal(err)
	}
	defer resp.Body.Close()
	var infos []server.RunInfo
	if err := json.NewDecoder(resp.Body).Decode(&infos); err != nil {
		b.Fatalf("GET /api/runs: %v", err)
	}
	for _, in := range infos {
		if in.ID == id {
			return in
		}
	}
	b.Fatalf("GET /api/runs: no run %s in %+v", id, infos)
	return server.RunInfo{}
}

// waitSubscribers waits, up to hang (a guard against a hang), until the
// run counts n watchers.
func waitSubscribers(b *testing.B, info func() server.RunInfo, n int) {
	b.Helper()
	deadline := time.Now().Add(hang)
	for info().Subscribers != n {
		if time.Now().After(deadline) {
			b.Fatalf("the run counts %d watchers after %v; want %d", info().Subscribers, hang, n)
		}
		time.Sleep(20 * time.Millisecond) // polling a condition, bounded by hang
	}
}

// liveHeap is the heap in use after a garbage collection.
func liveHeap() uint64 {
	runtime.GC()
	runtime.GC() // the second frees what finalizers of the first let go
	var m runtime.MemStats
	runtime.ReadMemStats(&m)
	return m.HeapAlloc
}

// dialViewer connects a bare websocket viewer to run id; the caller
// closes it.
func dialViewer(b *testing.B, base, id string) *websocket.Conn {
	b.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), hang)
	defer cancel()
	u := "ws" + strings.TrimPrefix(base, "http") + "/run/" + id + "/ws"
	c, _, err := websocket.Dial(ctx, u, nil)
	if err != nil {
		b.Fatalf("dial %s: %v", u, err)
	}
	c.SetReadLimit(64 << 20)
	// No b.Cleanup here: it would hold every connection until the
	// benchmark ends, in the heap being measured. The viewer's reader
	// closes it when its context ends.
	return c
}
