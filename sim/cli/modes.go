package cli

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"gyrebench/sim"
	"gyrebench/sim/atomicfile"
	"gyrebench/sim/linear"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scenario"
)

// verifyBelow and verifyAbove are the multiples of the predicted limit that
// --verify-dt runs: one just below, one just above.
const verifyBelow, verifyAbove = 0.9, 1.1

// cmdModes is `gyrebench modes`: the linear analysis of package linear,
// written to modes.csv and summary.json in --out.
func cmdModes(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs, fail := newCommand("modes", stderr)
	var af analysisFlags
	af.register(fs, "physics.f0=0")
	verify := fs.Bool("verify-dt", false, "run short nonlinear checks at 0.9 and 1.1 times each predicted Δt limit")
	extreme := fs.Bool("extreme", false, "only the largest |frequency| (Lanczos, any size) and the Δt limits")
	cfg, code, ok := af.parse(fs, args, fail)
	if !ok {
		return code
	}
	res, err := linear.Analyse(ctx, cfg, linear.Options{ExtremeOnly: *extreme})
	var tooLarge *linear.TooLargeError
	switch {
	case errors.As(err, &tooLarge):
		return fail("%v; choose a smaller --n, or add --extreme for the extreme frequency and the Δt limits only", err)
	case err != nil:
		return fail("%v", err)
	}
	sum := res.Summary()
	if *verify {
		trials, err := linear.VerifyLimits(ctx, cfg, res, []float64{verifyBelow, verifyAbove})
		if err != nil {
			return fail("--verify-dt: %v", err)
		}
		sum.Verify, sum.VerifySteps, sum.VerifyBlowUpFactor = trials, linear.VerifySteps, linear.BlowUpFactor
	}
	if err := os.MkdirAll(af.out, 0o755); err != nil {
		return fail("--out %s: %v", af.out, err)
	}
	if err := atomicfile.WriteFile(filepath.Join(af.out, "modes.csv"), res.WriteCSV); err != nil {
		return fail("%v", err)
	}
	if err := writeJSON(filepath.Join(af.out, "summary.json"), sum); err != nil {
		return fail("%v", err)
	}
	reportModes(stdout, sum, af.out)
	return ExitOK
}

func reportModes(w io.Writer, s linear.Summary, dir string) {
	fmt.Fprintf(w, "%s n=%d, %s: %d unknowns (%d cells, %d edges), %s, %.2f s\n",
		s.Grid, s.N, s.Scheme, s.Unknowns, s.Cells, s.Edges, s.Method, s.WallSeconds)
	if s.Method == "dense-skew" || s.Method == "dense-general" {
		c := s.Counts
		fmt.Fprintf(w, "modes: %d inertia_gravity, %d geostrophic, %d rossby, %d spurious; %d growing (tolerance %.3g s⁻¹)\n",
			c.InertiaGravity, c.Geostrophic, c.Rossby, c.Spurious, s.Growing, s.GrowthTolerance)
	}
	fmt.Fprintf(w, "max |frequency| %.6g s⁻¹\n", s.MaxFrequency)
	for _, l := range s.Limits {
		if l.MaxDt == 0 {
			fmt.Fprintf(w, "  %-9s no stable Δt (%s)\n", l.Integrator, l.Note)
			continue
		}
		fmt.Fprintf(w, "  %-9s Δt ≤ %.6g s (|ωΔt| ≤ %.6g; bound by the %s)\n", l.Integrator, l.MaxDt, l.AxisBound, l.Binding)
	}
	for _, t := range s.Verify {
		state := "survived"
		if t.BlewUp {
			state = "blew up (" + t.Reason + ")"
		}
		fmt.Fprintf(w, "  verify %-9s %.2f × limit, Δt = %.6g s: %s after %d steps, growth %.3g\n",
			t.Integrator, t.Factor, t.Dt, state, t.Steps, t.Growth)
	}
	fmt.Fprintf(w, "files in %s\n", dir)
}

// newCommand returns the flag set of sub-command name, which reports to
// stderr, and fail, which prints a message prefixed with the command's
// name and returns ExitBadInput.
func newCommand(name string, stderr io.Writer) (*flag.FlagSet, func(format string, a ...any) int) {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	return fs, func(format string, a ...any) int {
		fmt.Fprintf(stderr, "gyrebench "+name+": "+format+"\n", a...)
		return ExitBadInput
	}
}

// analysisFlags are the flags of the analysis commands (modes,
// structure): scenario overrides, the grid shorthands and the output
// folder.
type analysisFlags struct {
	sets         multi
	grid, n, out string
}

// register adds the flags to fs; setExample is a --set example for the
// help text.
func (a *analysisFlags) register(fs *flag.FlagSet, setExample string) {
	fs.Var(&a.sets, "set", "override a scenario key, e.g. --set "+setExample+" (repeatable)")
	fs.StringVar(&a.grid, "grid", "", "grid kind: quad, hex, tri, icosahedral, cubed (shorthand for --set grid.kind=)")
	fs.StringVar(&a.n, "n", "", "cells per side, the icosahedral level or cells per cube edge (shorthand for --set grid.n=)")
	fs.StringVar(&a.out, "out", "", "output folder (required)")
}

// parse parses args with fs and resolves the scenario (analysisConfig).
// On a refusal it returns the exit code and ok false, fail having said
// why.
func (a *analysisFlags) parse(fs *flag.FlagSet, args []string, fail func(string, ...any) int) (cfg sim.Config, code int, ok bool) {
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return cfg, ExitBadInput, false
	}
	if a.out == "" {
		return cfg, fail("--out: an output folder is required, e.g. --out %s-hex16", fs.Name()), false
	}
	cfg, err = analysisConfig(pos, a.grid, a.n, a.sets)
	if err != nil {
		return cfg, fail("%v", err), false
	}
	return cfg, ExitOK, true
}

// writeJSON writes v as indented JSON to path, atomically, without HTML
// escapes.
func writeJSON(path string, v any) error {
	return atomicfile.WriteFile(path, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetEscapeHTML(false)
		enc.SetIndent("", "  ")
		return enc.Encode(v)
	})
}

// analysisConfig resolves the scenario of the analysis commands (modes,
// structure): the built-in or file named by pos (the default scenario when
// pos is empty), then --grid and --n, then each --set in order. A change
// of grid family drops a relaxation that belongs to the old one
// (GridConfig.SetKind). Errors name the flag or key and what is allowed.
func analysisConfig(pos []string, grid, n string, sets []string) (sim.Config, error) {
	if len(pos) > 1 {
		return sim.Config{}, fmt.Errorf("want at most one scenario file or built-in name, got %d: %s", len(pos), strings.Join(pos, " "))
	}
	cfg := sim.DefaultConfig()
	if len(pos) == 1 {
		sc, err := Load(pos[0])
		if err != nil {
			return sim.Config{}, err
		}
		cfg = sc.Config
	}
	if grid != "" {
		ok := false
		var names []string
		for _, k := range mesh.Kinds {
			ok = ok || string(k) == grid
			names = append(names, string(k))
		}
		if !ok {
			return sim.Config{}, fmt.Errorf("--grid %q: unknown grid; allowed: %s", grid, strings.Join(names, ", "))
		}
		cfg.Grid.SetKind(grid)
	}
	if n != "" {
		v, err := strconv.Atoi(n)
		if err != nil {
			return sim.Config{}, fmt.Errorf("--n %q: must be an integer", n)
		}
		cfg.Grid.N = v
	}
	if grid != "" || n != "" {
		if _, err := cfg.MeshSpec().Cells(); err != nil {
			return sim.Config{}, fmt.Errorf("--grid %s --n %d: %v", cfg.Grid.Kind, cfg.Grid.N, err)
		}
	}
	for _, s := range sets {
		if err := scenario.Set(&cfg, s); err != nil {
			return sim.Config{}, err
		}
	}
	return cfg, nil
}
