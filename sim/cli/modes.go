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
	fs := flag.NewFlagSet("modes", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var sets multi
	fs.Var(&sets, "set", "override a scenario key, e.g. --set physics.f0=0 (repeatable)")
	grid := fs.String("grid", "", "grid kind: quad, hex, tri, icosahedral, cubed (shorthand for --set grid.kind=)")
	n := fs.String("n", "", "cells per side, the icosahedral level or cells per cube edge (shorthand for --set grid.n=)")
	out := fs.String("out", "", "output folder (required)")
	verify := fs.Bool("verify-dt", false, "run short nonlinear checks at 0.9 and 1.1 times each predicted Δt limit")
	extreme := fs.Bool("extreme", false, "only the largest |frequency| (Lanczos, any size) and the Δt limits")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return ExitBadInput
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "gyrebench modes: "+format+"\n", a...)
		return ExitBadInput
	}
	if *out == "" {
		return fail("--out: an output folder is required, e.g. --out modes-hex16")
	}
	cfg, err := analysisConfig(pos, *grid, *n, sets)
	if err != nil {
		return fail("%v", err)
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
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fail("--out %s: %v", *out, err)
	}
	if err := atomicfile.WriteFile(filepath.Join(*out, "modes.csv"), res.WriteCSV); err != nil {
		return fail("%v", err)
	}
	if err := atomicfile.WriteFile(filepath.Join(*out, "summary.json"), func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetEscapeHTML(false)
		enc.SetIndent("", "  ")
		return enc.Encode(sum)
	}); err != nil {
		return fail("%v", err)
	}
	reportModes(stdout, sum, *out)
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
