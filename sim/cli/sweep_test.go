package cli

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gyrebench/sim/internal/testcheck"
	"gyrebench/sim/sweep"
)

// TestMain lets the test binary stand in for the gyrebench binary: with
// GYREBENCH_TEST_AS_CLI=1 it runs Main on its arguments and exits, so that
// the job list can be run by a shell as separate processes.
func TestMain(m *testing.M) {
	if os.Getenv("GYREBENCH_TEST_AS_CLI") == "1" {
		os.Exit(Main(context.Background(), os.Args[1:], os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

func TestSweepBadInput(t *testing.T) {
	many := func(n, from int) string {
		s := make([]string, n)
		for i := range s {
			s[i] = strconv.Itoa(from + 2*i)
		}
		return strings.Join(s, ",")
	}
	for _, tc := range []struct {
		name string
		args []string
		want []string // substrings of stderr
	}{
		{"unknown key", []string{"steady-geostrophic", "--vary", "grid.size=8,16"}, []string{"--vary grid.size", "unknown key"}},
		{"empty list", []string{"steady-geostrophic", "--vary", "grid.n="}, []string{"--vary grid.n", "empty list"}},
		{"wrong type", []string{"steady-geostrophic", "--vary", "grid.n=8,sixteen"}, []string{"--vary grid.n", `"sixteen"`, "integer"}},
		{"invalid value", []string{"steady-geostrophic", "--vary", "grid.n=8,9"}, []string{"--vary grid.n=9", "even"}},
		{"too many runs", []string{"steady-geostrophic", "--vary", "grid.n=" + many(40, 8), "--vary", "output.every=" + many(30, 100)}, []string{"--vary", "at most 1000"}},
		{"bad set", []string{"steady-geostrophic", "--vary", "grid.n=8", "--set", "time.dt=soon"}, []string{"--set time.dt", `"soon"`}},
		{"no vary", []string{"steady-geostrophic"}, []string{"--vary", "at least one"}},
		{"no scenario", []string{"--vary", "grid.n=8"}, []string{"exactly one scenario"}},
		{"unknown scenario", []string{"no-such-flow", "--vary", "grid.n=8"}, []string{`"no-such-flow"`, "built-ins"}},
		{"jobs", []string{"steady-geostrophic", "--vary", "grid.n=8", "--jobs", "0"}, []string{"--jobs = 0"}},
		{"workers", []string{"steady-geostrophic", "--vary", "grid.n=8", "--workers", "999"}, []string{"--workers = 999"}},
		{"collect with vary", []string{"--collect", "x", "--vary", "grid.n=8"}, []string{"--collect DIR takes no"}},
	} {
		dir := filepath.Join(t.TempDir(), "sweep")
		args := append([]string{"sweep"}, tc.args...)
		if tc.name != "collect with vary" {
			args = append(args, "--out", dir, "--jobs-file", filepath.Join(dir, "jobs.txt"))
		}
		code, _, stderr := gyre(t, args...)
		if code != ExitBadInput {
			t.Errorf("%s: exit %d, want %d; stderr %s", tc.name, code, ExitBadInput, stderr)
		}
		for _, s := range tc.want {
			if !strings.Contains(stderr, s) {
				t.Errorf("%s: stderr %q lacks %q", tc.name, stderr, s)
			}
		}
		if _, err := os.Stat(dir); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("%s: %s was created (err %v); bad input must write nothing", tc.name, dir, err)
		}
	}
	code, _, stderr := gyre(t, "sweep", "--collect", filepath.Join(t.TempDir(), "missing"))
	if code != ExitBadInput || !strings.Contains(stderr, "--collect") {
		t.Errorf("collect of a missing folder: exit %d, %s", code, stderr)
	}
}

// splitLine splits a job line the way a POSIX shell splits words made of
// safe characters and single-quoted strings (what WriteJobs writes).
func splitLine(t *testing.T, line string) []string {
	t.Helper()
	var words []string
	var cur strings.Builder
	in, quoted := false, false
	for _, r := range line {
		switch {
		case quoted && r == '\'':
			quoted = false
		case quoted:
			cur.WriteRune(r)
		case r == '\'':
			quoted, in = true, true
		case r == ' ':
			if in {
				words = append(words, cur.String())
				cur.Reset()
				in = false
			}
		case strings.ContainsRune("\"\\$`;&|<>()*?[]#~!{}", r):
			t.Fatalf("job line has an unquoted shell character %q: %s", r, line)
		default:
			cur.WriteRune(r)
			in = true
		}
	}
	if quoted {
		t.Fatalf("unterminated quote in %s", line)
	}
	if in {
		words = append(words, cur.String())
	}
	return words
}

// reproducible returns sweep.csv without its last column, wall_seconds,
// the one column that depends on the machine.
func reproducible(t *testing.T, path string) string {
	t.Helper()
	recs := testcheck.ReadCSV(t, path)
	if h := recs[0]; h[len(h)-1] != "wall_seconds" {
		t.Fatalf("%s: last column %q, want wall_seconds", path, h[len(h)-1])
	}
	var out bytes.Buffer
	w := csv.NewWriter(&out)
	for _, r := range recs {
		w.Write(r[:len(r)-1])
	}
	w.Flush()
	return out.String()
}

func jobLines(t *testing.T, path string) []string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
}

// compareSweeps demands the same sweep.csv up to wall_seconds, and the
// same sweep.json and plots byte for byte.
func compareSweeps(t *testing.T, got, want string) {
	t.Helper()
	if g, w := reproducible(t, filepath.Join(got, sweep.CSVFile)), reproducible(t, filepath.Join(want, sweep.CSVFile)); g != w {
		t.Errorf("%s/sweep.csv differs from the direct sweep's (wall_seconds aside):\n%s\nwant\n%s", got, g, w)
	}
	for _, f := range []string{sweep.JSONFile, "error.png", "error.svg", "energy-drift.png", "enstrophy-drift.svg"} {
		g, err1 := os.ReadFile(filepath.Join(got, f))
		w, err2 := os.ReadFile(filepath.Join(want, f))
		if err1 != nil || err2 != nil || !bytes.Equal(g, w) {
			t.Errorf("%s/%s differs from the direct sweep's (%v, %v)", got, f, err1, err2)
		}
	}
}

// The job list: every line is a complete `gyrebench run` that a POSIX
// shell splits into the words our splitter finds; run in this process or
// as separate processes by the runner in the package documentation
// (xargs, and the array-job form for one line), it fills folders from
// which --collect assembles the sweep.csv of a direct sweep, wall_seconds
// aside, and byte-identical sweep.json and plots.
func TestSweepJobsAndCollect(t *testing.T) {
	t.Chdir(t.TempDir()) // the job lines use --out as given: relative here
	common := []string{"steady-geostrophic", "--vary", "grid.n=8,16,32", "--set", "time.duration=1200", "--set", "output.every=600", "--set", "time.dt=60"}
	code, stdout, stderr := gyre(t, append(append([]string{"sweep"}, common...), "--out", "direct", "--jobs", "2")...)
	if code != ExitOK {
		t.Fatalf("direct sweep: exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "fitted order") {
		t.Errorf("direct sweep prints no fitted order: %s", stdout)
	}
	sh := needTool(t, "sh", "dash")

	for _, via := range []string{"in-process", "processes"} {
		dir := "via-" + via
		jobs := filepath.Join(dir, "jobs.txt")
		code, _, stderr := gyre(t, append(append([]string{"sweep"}, common...), "--out", dir, "--jobs-file", jobs)...)
		if code != ExitOK {
			t.Fatalf("%s: --jobs-file: exit %d: %s", via, code, stderr)
		}
		if _, err := os.Stat(filepath.Join(dir, sweep.CSVFile)); !errors.Is(err, os.ErrNotExist) {
			t.Fatalf("%s: --jobs-file ran the sweep (sweep.csv exists)", via)
		}
		lines := jobLines(t, jobs)
		if len(lines) != 3 {
			t.Fatalf("%s: %d job lines, want 3:\n%s", via, len(lines), strings.Join(lines, "\n"))
		}
		for i, line := range lines {
			words := splitLine(t, line)
			want := []string{"gyrebench", "run", filepath.Join(dir, "jobs", fmt.Sprintf("point-%03d.toml", i+1)),
				"--out", filepath.Join(dir, fmt.Sprintf("point-%03d", i+1)), "--workers", "1"}
			if !slices.Equal(words, want) {
				t.Errorf("%s: line %d = %q, want %q", via, i+1, words, want)
			}
			// The shell's own word splitting agrees.
			out, err := exec.Command(sh, "-c", `gyrebench() { printf '%s\n' "$@"; }; `+line).Output()
			if err != nil {
				t.Fatal(err)
			}
			if got := strings.Split(strings.TrimSuffix(string(out), "\n"), "\n"); !slices.Equal(got, words[1:]) {
				t.Errorf("%s: sh splits line %d into %q, we into %q", via, i+1, got, words[1:])
			}
		}
		if via == "in-process" {
			for _, line := range lines {
				if code, _, stderr := gyre(t, splitLine(t, line)[1:]...); code != ExitOK {
					t.Fatalf("%s: exit %d: %s", line, code, stderr)
				}
			}
		} else {
			runAsProcesses(t, sh, jobs)
		}
		code, stdout, stderr = gyre(t, "sweep", "--collect", dir)
		if code != ExitOK {
			t.Fatalf("%s: --collect: exit %d: %s", via, code, stderr)
		}
		if !strings.Contains(stdout, "3 runs") {
			t.Errorf("%s: --collect says %q", via, stdout)
		}
		compareSweeps(t, dir, "direct")
	}
}

// runAsProcesses runs the job list as the package documentation says:
// the array-job form for line 1, xargs for all lines (line 1 again).
func runAsProcesses(t *testing.T, sh, jobs string) {
	t.Helper()
	xargs := needTool(t, "xargs", "findutils")
	needTool(t, "sed", "sed")
	self, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	bin := t.TempDir()
	script := "#!/bin/sh\nexec " + strconv.Quote(self) + ` "$@"` + "\n"
	if err := os.WriteFile(filepath.Join(bin, "gyrebench"), []byte(script), 0o755); err != nil {
		t.Fatal(err)
	}
	env := append(os.Environ(), "GYREBENCH_TEST_AS_CLI=1", "PATH="+bin+string(os.PathListSeparator)+os.Getenv("PATH"), "TASK_ID=1")
	for _, cmd := range []*exec.Cmd{
		exec.Command(sh, "-c", `sh -c "$(sed -n "${TASK_ID}p" `+jobs+`)"`),
		exec.Command(sh, "-c", xargs+` -d '\n' -n 1 -P 2 sh -c < `+jobs),
	} {
		cmd.Env = env
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("%s: %v\n%s", cmd.Args, err, out)
		}
	}
}

// A sweep with a run that blows up writes everything and exits 3.
func TestSweepBlowUpExit(t *testing.T) {
	dir := t.TempDir()
	code, _, stderr := gyre(t, "sweep", "overstep-rk3", "--set", "grid.n=16", "--set", "time.duration=15000",
		"--set", "output.every=5000", "--vary", "time.dt=600,1500", "--out", dir)
	if code != ExitBlewUp {
		t.Fatalf("exit %d, want %d: %s", code, ExitBlewUp, stderr)
	}
	if !strings.Contains(stderr, "1 of 2 runs blew up") {
		t.Errorf("stderr %q does not count the blow-up", stderr)
	}
	rows := reproducible(t, filepath.Join(dir, sweep.CSVFile))
	if !strings.Contains(rows, "point-002,1500,") || strings.Count(rows, ",true,false,") != 1 {
		t.Errorf("sweep.csv does not mark the one blown-up run:\n%s", rows)
	}
}
