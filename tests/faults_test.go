package tests

import (
	"bufio"
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"image/png"
	"io"
	"io/fs"
	"net/http"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"

	"gyrebench/server"
	"gyrebench/sim/batch"
	"gyrebench/sim/figure/figuretest"
	"gyrebench/sim/ncout"
	"gyrebench/sim/scenario"
	"gyrebench/sim/timeline"
)

// Faults: a headless run killed while it writes, and the workbench shut
// down while it streams, sweeps and replays. Either way, every file under
// a final name is whole: atomicfile writes under ".NAME.*.tmp" and
// renames, so a file is either absent, the old one, or complete.

// killSets make hex64 (live_test.go) a headless run that writes a
// snapshot every ten steps, on a grid big enough that each record takes a
// visible share of the run; the duration is added per run.
var killSets = []string{"--set", "output.every=600", "--set", "output.snapshots=true"}

// gyrebenchBinary builds the gyrebench command into the test's temporary
// folder (without the race detector: the faults it meets are the
// operating system's, not the scheduler's) and returns its path.
func gyrebenchBinary(t *testing.T) string {
	t.Helper()
	goTool, err := exec.LookPath("go")
	if err != nil {
		goTool = filepath.Join(runtime.GOROOT(), "bin", "go")
	}
	bin := filepath.Join(t.TempDir(), "gyrebench")
	cmd := exec.Command(goTool, "build", "-o", bin, "gyrebench")
	cmd.Dir = ".."
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build gyrebench: %v\n%s", err, out)
	}
	return bin
}

// isTemp reports whether name is an atomicfile temporary: "." + the final
// name + "." + random + ".tmp".
func isTemp(name string) bool {
	return strings.HasPrefix(name, ".") && strings.HasSuffix(name, ".tmp")
}

// tempFinal is the final name a temporary file stands for.
func tempFinal(name string) string {
	s := strings.TrimSuffix(strings.TrimPrefix(name, "."), ".tmp")
	if i := strings.LastIndexByte(s, '.'); i >= 0 {
		return s[:i]
	}
	return s
}

// runFiles are the final names a headless run writes.
var runFiles = []string{"final.nc", "snapshots.nc", "series.csv", "summary.json", "recipe.toml"}

// TestKillRunWhileWriting runs 'gyrebench run' as its own process and
// kills it with SIGKILL at points found by watching its output folder:
// mid-run, while snapshots.nc grows under its temporary name, and then
// at each new name that appears while the run writes its files at the
// end. After each kill, every file under a final name is complete
// (final.nc and snapshots.nc read by ncdump and by ncout, series.csv with
// whole rows of every column, summary.json and recipe.toml parsing), and
// nothing else is there but the temporaries of the files not yet
// committed.
func TestKillRunWhileWriting(t *testing.T) {
	if testing.Short() {
		t.Skip("runs in the full suite: it builds the command and kills it; nothing in it is concurrent within this process")
	}
	ncdump := ncdumpPath(t)
	bin := gyrebenchBinary(t)

	// Mid-run: a run far too long to finish, killed once snapshots.nc
	// (under its temporary name) holds a few records. A record is h, u
	// and ζ in doubles: 4096 + 12288 + 8192 values on hex n = 64.
	const record = (4096 + 12288 + 8192) * 8
	hex := writeScenario(t, "hex64", hex64)
	out := filepath.Join(t.TempDir(), "long")
	seen, killed := killWhen(t, bin, hex, 60*100000, out, func(names map[string]int64) bool {
		for n, size := range names {
			if isTemp(n) && tempFinal(n) == "snapshots.nc" && size >= 4*record {
				return true
			}
		}
		return false
	})
	if !killed {
		t.Fatalf("the long run ended before it was killed; it saw %v", seen)
	}
	left := checkRunFolder(t, ncdump, out)
	if len(left) != 0 {
		t.Errorf("killed mid-run, before any file was finished, the folder holds final names %v", left)
	}

	// At the end: a short run, killed after the k-th name that appears in
	// its folder (temporaries and final names alike), k = 1, 2, ...:
	// each kill lands at a later point of the final writes. A run that
	// ends before its k-th name is seen has written everything.
	var points []string
	for k := 2; k <= 2*len(runFiles)+1; k++ {
		out := filepath.Join(t.TempDir(), fmt.Sprintf("short-%d", k))
		seen, killed := killWhen(t, bin, hex, 60*300, out, func(names map[string]int64) bool { return len(names) >= k })
		left := checkRunFolder(t, ncdump, out)
		if !killed {
			if !slices.Equal(left, slices.Sorted(slices.Values(runFiles))) {
				t.Errorf("the run ended by itself with final files %v; want all of %v", left, runFiles)
			}
			points = append(points, fmt.Sprintf("k=%d: ended first", k))
			continue
		}
		points = append(points, fmt.Sprintf("k=%d: killed with %d names seen, %v complete", k, len(seen), left))
	}
	t.Logf("kill points:\n%s", strings.Join(points, "\n"))
}

// killWhen starts 'gyrebench run scenario' for duration seconds with
// killSets and --out out, polls out until
// ready holds for every name seen so far in it (with its latest size),
// then kills the process with SIGKILL. It reports the names seen and
// whether the kill came before the run ended by itself. The polling is
// bounded by hang, a guard against a hang.
func killWhen(t *testing.T, bin, scenarioFile string, duration int, out string, ready func(map[string]int64) bool) (map[string]int64, bool) {
	t.Helper()
	args := append([]string{"run", scenarioFile, "--out", out, "--workers", "1", "--set", fmt.Sprintf("time.duration=%d", duration)}, killSets...)
	cmd := exec.Command(bin, args...)
	var stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = io.Discard, &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	exited := make(chan error, 1)
	go func() { exited <- cmd.Wait() }()
	seen := map[string]int64{}
	deadline := time.Now().Add(hang)
	for {
		if ents, err := os.ReadDir(out); err == nil {
			for _, e := range ents {
				if info, err := e.Info(); err == nil {
					seen[e.Name()] = info.Size()
				}
			}
		}
		if ready(seen) {
			break
		}
		select {
		case err := <-exited:
			if err != nil {
				t.Fatalf("gyrebench run %s failed: %v\n%s", scenarioFile, err, stderr.String())
			}
			return seen, false
		default:
		}
		if time.Now().After(deadline) {
			_ = cmd.Process.Kill()
			t.Fatalf("no kill point within %v (a hang guard); seen %v; stderr:\n%s", hang, seen, stderr.String())
		}
		runtime.Gosched()
	}
	_ = cmd.Process.Signal(syscall.SIGKILL)
	err := <-exited
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		if ws, ok := ee.Sys().(syscall.WaitStatus); ok && ws.Signaled() && ws.Signal() == syscall.SIGKILL {
			return seen, true
		}
	}
	if err != nil {
		t.Fatalf("gyrebench run %s: %v\n%s", scenarioFile, err, stderr.String())
	}
	return seen, false // it had ended before the signal reached it
}

// checkRunFolder checks that every file in a run's folder under a final
// name is complete and that everything else is a temporary of one of
// the run's files; it returns the final names, sorted.
func checkRunFolder(t *testing.T, ncdump, dir string) []string {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil && !errors.Is(err, fs.ErrNotExist) {
		t.Fatal(err)
	}
	var finals []string
	for _, e := range ents {
		name := e.Name()
		if isTemp(name) {
			if !slices.Contains(runFiles, tempFinal(name)) {
				t.Errorf("%s: a temporary of %q, which a run does not write", name, tempFinal(name))
			}
			continue
		}
		if !slices.Contains(runFiles, name) {
			t.Errorf("%s: not a file a run writes (%v)", name, runFiles)
			continue
		}
		finals = append(finals, name)
		checkComplete(t, ncdump, filepath.Join(dir, name))
	}
	slices.Sort(finals)
	return finals
}

// checkComplete checks that the file at path is whole, by its kind.
func checkComplete(t *testing.T, ncdump, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Error(err)
		return
	}
	name := filepath.Base(path)
	switch {
	case strings.HasSuffix(name, ".nc"):
		// ncdump prints every value, so it reads the file to its end.
		cmd := exec.Command(ncdump, path)
		cmd.Stdout = io.Discard
		var errb bytes.Buffer
		cmd.Stderr = &errb
		if err := cmd.Run(); err != nil {
			t.Errorf("%s: ncdump: %v: %s", path, err, errb.String())
		}
		f, err := ncout.Read(bytes.NewReader(b))
		if err != nil {
			t.Errorf("%s: %v", path, err)
			return
		}
		if f.Var("h") == nil {
			t.Errorf("%s: no variable h", path)
		}
		if name == "snapshots.nc" && f.NumRecs < 1 {
			t.Errorf("%s: %d records", path, f.NumRecs)
		}
	case name == "series.csv":
		checkCSV(t, path, b, batch.SeriesColumns)
	case strings.HasSuffix(name, ".csv"):
		checkCSV(t, path, b, nil)
	case strings.HasSuffix(name, ".json"):
		if !json.Valid(b) {
			t.Errorf("%s: not valid JSON (%d bytes)", path, len(b))
		}
	case strings.HasSuffix(name, ".toml"):
		checkTOML(t, path, b)
	case strings.HasSuffix(name, ".png"):
		if _, err := png.Decode(bytes.NewReader(b)); err != nil {
			t.Errorf("%s: %v", path, err)
		}
	case strings.HasSuffix(name, ".svg"):
		if _, _, err := figuretest.Parse(b); err != nil {
			t.Errorf("%s: %v", path, err)
		}
		if !bytes.Contains(b, []byte("</svg>")) {
			t.Errorf("%s: no closing </svg>", path)
		}
	case strings.HasSuffix(name, ".txt"):
		if len(b) > 0 && b[len(b)-1] != '\n' {
			t.Errorf("%s: the last line is cut", path)
		}
	default:
		t.Errorf("%s: a file of a kind these tests do not know how to check", path)
	}
}

// checkCSV checks that a CSV file ends with a line end and has a header
// (header, when given) and rows of as many fields as the header.
func checkCSV(t *testing.T, path string, b []byte, header []string) {
	t.Helper()
	if len(b) == 0 || b[len(b)-1] != '\n' {
		t.Errorf("%s: the last row is cut (%d bytes)", path, len(b))
		return
	}
	rows, err := csv.NewReader(bytes.NewReader(b)).ReadAll() // fails on a row of another width
	if err != nil {
		t.Errorf("%s: %v", path, err)
		return
	}
	if len(rows) < 2 {
		t.Errorf("%s: %d rows; want a header and at least one row", path, len(rows))
		return
	}
	if header != nil && !slices.Equal(rows[0], header) {
		t.Errorf("%s: header %v; want %v", path, rows[0], header)
	}
}

// checkTOML checks that a TOML file the runs write parses as what it is:
// a timeline, or a scenario (recipe.toml and a sweep's job files).
func checkTOML(t *testing.T, path string, b []byte) {
	t.Helper()
	var err error
	if bytes.Contains(b, []byte("[timeline]")) {
		_, err = timeline.Parse(b, path)
	} else {
		_, err = scenario.Parse(b, path)
	}
	if err != nil {
		t.Errorf("%s: %v", path, err)
	}
}

// ncdumpPath finds ncdump; under CI=true a missing one fails the test.
func ncdumpPath(t *testing.T) string {
	t.Helper()
	p, err := exec.LookPath("ncdump")
	if err != nil {
		msg := "ncdump not found: install Debian's netcdf-bin (apt-get install -y netcdf-bin) to check files against the NetCDF reference library"
		if os.Getenv("CI") == "true" {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	return p
}

// TestShutdownLeavesCompleteFiles shuts the workbench down (Serve's
// context ends, as on Ctrl-C) while three websocket viewers watch a run
// that replays a built-in timeline and a sweep is running. Serve returns
// within hang (a guard against a hang, not a judgement of speed), every
// viewer's connection is closed, the port no longer answers, and the
// sweep's folder holds only complete files: the runs that ended before,
// the run cut short (its files from its last good step, summary.json
// saying interrupted), the plan, and no temporaries.
func TestShutdownLeavesCompleteFiles(t *testing.T) {
	ncdump := ncdumpPath(t)
	sweepDir := t.TempDir()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	pr, pw := io.Pipe()
	urls := make(chan string, 1)
	go func() {
		sc := bufio.NewScanner(pr)
		for sc.Scan() {
			if u, ok := strings.CutPrefix(sc.Text(), "gyrebench workbench: http"); ok {
				select {
				case urls <- "http" + strings.TrimSuffix(u, "/"):
				default:
				}
			}
		}
	}()
	served := make(chan error, 1)
	go func() {
		served <- server.Serve(ctx, server.Options{
			Addr: "127.0.0.1:0", Workers: 1, SweepDir: sweepDir, Stderr: pw,
			Scenario: writeScenario(t, "eddies", eddies),
		})
		pw.Close()
	}()
	var base string
	select {
	case base = <-urls:
	case err := <-served:
		t.Fatalf("Serve ended before it listened: %v", err)
	case <-time.After(hang):
		t.Fatalf("Serve printed no URL within %v (a hang guard)", hang)
	}

	// Three viewers; the first replays the built-in tour and plays it.
	var viewers []*client
	for range 3 {
		cl := dial(t, base, "1")
		cl.until(hang, "the first frame", func(m msg) bool { return m.Type == "frame" })
		viewers = append(viewers, cl)
	}
	// The tour opens with a mark at step 0, where the replay pauses; a
	// second play goes on towards its next mark, 1440 steps later.
	viewers[0].mustAck("replay", map[string]string{"builtin": "shear-tour"}, nil)
	viewers[0].mustAck("play", nil, nil)
	marked := false
	viewers[0].until(hang, "the replay to pause at its first mark", func(m msg) bool {
		marked = marked || (m.Type == "marker" && m.Kind == "mark")
		return marked && m.Type == "status" && m.State == server.StatePaused
	})
	viewers[0].mustAck("play", nil, nil)
	for _, cl := range viewers {
		advance(cl, 20)
	}

	// A sweep whose first runs end quickly and whose last is long: shut
	// down while the long one runs, after the short ones have ended.
	id := startSweep(t, base, url.Values{
		"scenario": {"steady-geostrophic"},
		"vary":     {"grid.n=8,12,96"},
		"set":      {"time.duration=86400"},
		"jobs":     {"1"},
	})
	p := openProgress(t, base, id, hang)
	var info server.SweepInfo
	for {
		in, ok := p.next()
		if !ok {
			t.Fatalf("the sweep's progress stream closed before its last run started: %+v", info)
		}
		info = in
		if in.State != "running" {
			t.Fatalf("the sweep ended (%s: %s) before the shutdown; its last run must be long enough to be cut", in.State, in.Message)
		}
		if in.Runs[len(in.Runs)-1].State == "running" {
			break
		}
	}
	p.body.Close()

	stopServe(t, cancel, served)
	for i, cl := range viewers {
		closed := false
		for !closed {
			select {
			case _, ok := <-cl.in:
				closed = !ok
			case <-time.After(hang):
				t.Fatalf("viewer %d: its connection is still open %v after Serve returned (a hang guard)", i, hang)
			}
		}
	}
	if resp, err := (&http.Client{Timeout: hang}).Get(base + "/"); err == nil {
		resp.Body.Close()
		t.Errorf("GET / after the shutdown: %s; want the connection refused", resp.Status)
	}

	// The sweep folder: one folder under the root, complete files only.
	roots, err := os.ReadDir(sweepDir)
	if err != nil || len(roots) != 1 {
		t.Fatalf("sweep root %s: %v, %v; want one sweep folder", sweepDir, roots, err)
	}
	dir := filepath.Join(sweepDir, roots[0].Name())
	var files []string
	err = filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, path)
		files = append(files, rel)
		if isTemp(d.Name()) {
			t.Errorf("%s: a temporary left after a graceful shutdown", rel)
			return nil
		}
		checkComplete(t, ncdump, path)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("sweep folder after the shutdown: %v", files)
	for i, r := range info.Runs {
		sb, err := os.ReadFile(filepath.Join(dir, r.Name, "summary.json"))
		if err != nil {
			t.Errorf("run %s: %v; every run started before the shutdown writes its files", r.Name, err)
			continue
		}
		var s batch.Summary
		if err := json.Unmarshal(sb, &s); err != nil {
			t.Errorf("run %s: summary.json: %v", r.Name, err)
			continue
		}
		if last := i == len(info.Runs)-1; s.Interrupted != last {
			t.Errorf("run %s: interrupted = %t; want %t (only the run in flight at the shutdown is cut)", r.Name, s.Interrupted, last)
		}
		if _, err := os.Stat(filepath.Join(dir, r.Name, "final.nc")); err != nil {
			t.Errorf("run %s: %v", r.Name, err)
		}
	}
}
