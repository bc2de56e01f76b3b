// Package cli implements gyrebench's headless sub-commands: run,
// scenarios and bench. main.go dispatches to Main; the workbench (serve)
// lives in package server.
//
// Exit codes (design contract): 0 ok; 1 bad input, with a message naming
// the field, the value and what is allowed; 3 the run blew up, after
// writing every file from the last good step; 130 interrupted (Ctrl-C),
// after writing every file so far.
package cli

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"runtime"
	"strings"
	"time"

	"gyrebench/scenarios"
	"gyrebench/sim"
	"gyrebench/sim/batch"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scenario"
	"gyrebench/sim/session"
	"gyrebench/sim/timeline"
)

// Exit codes.
const (
	ExitOK          = 0
	ExitBadInput    = 1
	ExitBlewUp      = 3
	ExitInterrupted = 130
)

// Main runs the sub-command in args (without the program name) and returns
// the exit code.
func Main(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		usage(stderr)
		return ExitBadInput
	}
	switch args[0] {
	case "run":
		return cmdRun(ctx, args[1:], stdout, stderr)
	case "scenarios":
		return cmdScenarios(args[1:], stdout, stderr)
	case "bench":
		return cmdBench(args[1:], stdout, stderr)
	case "sweep":
		return cmdSweep(ctx, args[1:], stdout, stderr)
	case "modes":
		return cmdModes(ctx, args[1:], stdout, stderr)
	case "structure":
		return cmdStructure(ctx, args[1:], stdout, stderr)
	case "help", "-h", "--help":
		usage(stdout)
		return ExitOK
	}
	fmt.Fprintf(stderr, "gyrebench: unknown command %q; commands: serve, run, scenarios, sweep, modes, structure, bench\n", args[0])
	return ExitBadInput
}

func usage(w io.Writer) {
	fmt.Fprint(w, `gyrebench: a workbench for shallow-water discretisations

  gyrebench serve [--addr 127.0.0.1:8080] [--host NAME]... [--max-runs 16] [--share [--control-key KEY]]
                                              the live workbench in the browser
  gyrebench run FILE_OR_NAME [--set key=value]... [--out DIR] [--workers W]
                                              FILE may be a recorded timeline (saved in the workbench)
  gyrebench scenarios                         list the built-in scenarios
  gyrebench scenarios show NAME               print a built-in scenario
  gyrebench bench [--grid hex] [--n 512] [--steps N] [--workers W] [--scheme S] [--integrator I]
                  [--distort A] [--jitter J] [--hodge consistent|diagonal]
  gyrebench sweep FILE_OR_NAME --vary key=v1,v2,... [--set key=value]... --out DIR [--jobs J] [--jobs-file PATH] | --collect DIR
  gyrebench modes [FILE_OR_NAME] [--grid G] [--n N] [--set key=value]... --out DIR [--verify-dt] [--extreme]
  gyrebench structure [FILE_OR_NAME] [--grid G] [--n N] [--set key=value]... --out DIR
                                              what the grid, Hodge star and scheme conserve (structure.json)
`)
}

// multi collects repeated --set flags.
type multi []string

func (m *multi) String() string     { return strings.Join(*m, " ") }
func (m *multi) Set(s string) error { *m = append(*m, s); return nil }

// Load reads a scenario file or a built-in scenario by name.
func Load(fileOrName string) (*scenario.Scenario, error) {
	if st, err := os.Stat(fileOrName); err == nil && !st.IsDir() {
		data, err := os.ReadFile(fileOrName)
		if err != nil {
			return nil, err
		}
		if timeline.Is(data) {
			return nil, fmt.Errorf("%s is a timeline file: 'gyrebench run' replays it; this command takes a scenario", fileOrName)
		}
		return scenario.Parse(data, fileOrName)
	}
	if strings.HasSuffix(fileOrName, ".toml") || strings.ContainsRune(fileOrName, os.PathSeparator) {
		return nil, fmt.Errorf("scenario file %q: not found", fileOrName)
	}
	src, err := scenarios.Source(fileOrName)
	if err != nil {
		return nil, err
	}
	return scenario.Parse(src, fileOrName+".toml")
}

// parseInterleaved parses flags that may come before or after the one
// positional argument.
func parseInterleaved(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		args = fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}

func cmdRun(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs, fail := newCommand("run", stderr)
	var sets multi
	fs.Var(&sets, "set", "override a scenario key, e.g. --set time.dt=30 (repeatable)")
	out := fs.String("out", "", "output folder (default: run-<scenario>)")
	workers := fs.Int("workers", 0, "goroutines for the tendency loops (0: by mesh size, see sim.AutoWorkers)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return ExitBadInput
	}
	if len(pos) != 1 {
		return fail("want exactly one scenario file or built-in name; see 'gyrebench scenarios'")
	}
	if *workers < 0 || *workers > 256 {
		return fail("--workers = %d: must be between 0 (automatic) and 256", *workers)
	}
	sc, tl, err := loadRun(pos[0], sets) // a scenario, or a recorded timeline (timeline.go)
	if err != nil {
		return fail("%v", err)
	}
	dir := *out
	if dir == "" {
		dir = "run-" + strings.TrimSuffix(baseName(pos[0]), ".toml")
	}
	opt := batch.Options{OutDir: dir, Workers: *workers, Description: sc.Description}
	if tl != nil {
		opt.Schedule, opt.Recipe = session.NewPlayer(tl), tl.Format()
	}
	if isTerminal(stderr) {
		opt.Progress = stderr
	}
	sum, err := batch.Run(ctx, sc.Config, opt)
	var bu *sim.BlowUpError
	switch {
	case err == nil:
		fmt.Fprintf(stdout, "%d steps to t = %g s in %.2f s; energy drift %.3g, enstrophy drift %.3g; files in %s\n",
			sum.Steps, sum.TimeS, sum.WallSeconds, sum.EnergyRelDrift, sum.EnstrophyRelDrift, dir)
		return ExitOK
	case errors.As(err, &bu):
		fmt.Fprintf(stderr, "gyrebench run: %v; files from the last good step are in %s\n", err, dir)
		return ExitBlewUp
	case errors.Is(err, batch.ErrInterrupted):
		fmt.Fprintf(stderr, "gyrebench run: %v; files so far are in %s\n", err, dir)
		return ExitInterrupted
	}
	fmt.Fprintf(stderr, "gyrebench run: %v\n", err)
	return ExitBadInput
}

func baseName(p string) string {
	if i := strings.LastIndexAny(p, `/\`); i >= 0 {
		return p[i+1:]
	}
	return p
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

func cmdScenarios(args []string, stdout, stderr io.Writer) int {
	switch {
	case len(args) == 0:
		for _, n := range scenarios.Names() {
			sc, err := Load(n)
			if err != nil {
				fmt.Fprintf(stderr, "gyrebench scenarios: %v\n", err)
				return ExitBadInput
			}
			fmt.Fprintf(stdout, "%-22s %s\n", n, sc.Description)
		}
		return ExitOK
	case len(args) == 2 && args[0] == "show":
		src, err := scenarios.Source(args[1])
		if err != nil {
			fmt.Fprintf(stderr, "gyrebench scenarios show: %v\n", err)
			return ExitBadInput
		}
		stdout.Write(src)
		return ExitOK
	}
	fmt.Fprintln(stderr, "gyrebench scenarios: usage: 'gyrebench scenarios' or 'gyrebench scenarios show NAME'")
	return ExitBadInput
}

// BenchResult is the JSON object printed by bench.
type BenchResult struct {
	Grid               string  `json:"grid"`
	N                  int     `json:"n"`
	Cells              int     `json:"cells"`
	Edges              int     `json:"edges"`
	Vertices           int     `json:"vertices"`
	Workers            int     `json:"workers"`
	Steps              int     `json:"steps"`
	Seconds            float64 `json:"seconds"`
	StepsPerSecond     float64 `json:"steps_per_second"`
	CellStepsPerSecond float64 `json:"cell_steps_per_second"`
	// FastestStepSeconds is the shortest single step: on a machine shared
	// with other work it is steadier than the mean.
	FastestStepSeconds     float64 `json:"fastest_step_seconds"`
	FastestCellStepsPerSec float64 `json:"fastest_cell_steps_per_second"`
	Scheme                 string  `json:"scheme"`
	Hodge                  string  `json:"hodge"`
	Distort                float64 `json:"distort"`
	Jitter                 float64 `json:"jitter"`
	Integrator             string  `json:"integrator"`
	GoMaxProcs             int     `json:"gomaxprocs"`
	MeshBuildSeconds       float64 `json:"mesh_build_seconds"`
	PeakHeapMegabytes      float64 `json:"peak_heap_megabytes"`
	LiveHeapMegabytes      float64 `json:"live_heap_megabytes"`
	BytesAllocatedSteps    uint64  `json:"bytes_allocated_during_steps"`
}

func cmdBench(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("bench", flag.ContinueOnError)
	fs.SetOutput(stderr)
	grid := fs.String("grid", "hex", "grid kind: quad, hex, tri, icosahedral, cubed")
	n := fs.Int("n", 512, "cells per side (plane), level (icosahedral) or cells per cube edge (cubed)")
	hodge := fs.String("hodge", "consistent", "edge Hodge star on non-orthogonal grids: consistent, diagonal")
	steps := fs.Int("steps", 20, "time steps to time")
	workers := fs.Int("workers", 1, "goroutines for the tendency loops")
	schemeName := fs.String("scheme", "trisk-energy", "scheme")
	integ := fs.String("integrator", "rk3", "integrator")
	distort := fs.Float64("distort", 0, "plane only: smooth vertex displacement, 0 ≤ a < 0.3 (grid.distort)")
	jitter := fs.Float64("jitter", 0, "plane only: random vertex displacement in edge lengths (grid.jitter)")
	if err := fs.Parse(args); err != nil || fs.NArg() > 0 {
		if fs.NArg() > 0 {
			fmt.Fprintf(stderr, "gyrebench bench: unexpected argument %q\n", fs.Arg(0))
		}
		return ExitBadInput
	}
	if *steps < 1 || *steps > 1e6 {
		fmt.Fprintf(stderr, "gyrebench bench: --steps = %d: must be between 1 and 1000000\n", *steps)
		return ExitBadInput
	}
	if *workers < 1 || *workers > 256 {
		fmt.Fprintf(stderr, "gyrebench bench: --workers = %d: must be between 1 and 256\n", *workers)
		return ExitBadInput
	}
	cfg := sim.DefaultConfig()
	cfg.Grid.Kind, cfg.Grid.N = *grid, *n
	cfg.Grid.Distort, cfg.Grid.Jitter = *distort, *jitter
	cfg.Scheme.Name, cfg.Time.Integrator, cfg.Scheme.Hodge = *schemeName, *integ, *hodge
	if !mesh.Kind(*grid).OnSphere() {
		// Keep the spacing of the default scenario so the step is stable.
		cfg.Grid.Length = 1e6 * float64(*n) / 64
	} else {
		cfg.Initial.Case = "williamson-2"
	}
	cfg.Time.Dt = 30
	t0 := time.Now()
	m, err := sim.NewModel(cfg, *workers)
	if err != nil {
		fmt.Fprintf(stderr, "gyrebench bench: %v\n", err)
		return ExitBadInput
	}
	defer m.Close()
	build := time.Since(t0)
	// One step untimed: buffers a scheme sizes on its first call belong to
	// the set-up, not to the steady state that bytes_allocated_during_steps
	// reports.
	if err := m.Step(); err != nil {
		fmt.Fprintf(stderr, "gyrebench bench: %v\n", err)
		return ExitBlewUp
	}
	var before, after runtime.MemStats
	runtime.GC() // so that the live heap below is the model's, not the build's garbage
	runtime.ReadMemStats(&before)
	start := time.Now()
	fastest := time.Duration(1<<63 - 1)
	for i := 0; i < *steps; i++ {
		t0 := time.Now()
		if err := m.Step(); err != nil {
			fmt.Fprintf(stderr, "gyrebench bench: %v\n", err)
			return ExitBlewUp
		}
		fastest = min(fastest, time.Since(t0))
	}
	sec := time.Since(start).Seconds()
	runtime.ReadMemStats(&after)
	msh := m.Mesh()
	res := BenchResult{
		Grid: *grid, N: *n, Cells: msh.NumCells, Edges: msh.NumEdges, Vertices: msh.NumVertices,
		Workers: *workers, Steps: *steps, Seconds: sec,
		StepsPerSecond:         float64(*steps) / sec,
		CellStepsPerSecond:     float64(*steps) * float64(msh.NumCells) / sec,
		FastestStepSeconds:     fastest.Seconds(),
		FastestCellStepsPerSec: float64(msh.NumCells) / fastest.Seconds(),
		Scheme:                 *schemeName, Integrator: *integ, GoMaxProcs: runtime.GOMAXPROCS(0),
		Hodge: *hodge, Distort: *distort, Jitter: *jitter,
		MeshBuildSeconds:    build.Seconds(),
		PeakHeapMegabytes:   float64(after.HeapSys) / (1 << 20),
		LiveHeapMegabytes:   float64(before.HeapAlloc) / (1 << 20),
		BytesAllocatedSteps: after.TotalAlloc - before.TotalAlloc,
	}
	b, _ := json.Marshal(res)
	fmt.Fprintln(stdout, string(b))
	return ExitOK
}
