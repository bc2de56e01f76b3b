package cli

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"gyrebench/sim"
	"gyrebench/sim/atomicfile"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scenario"
	"gyrebench/sim/structure"
)

// cmdStructure is `gyrebench structure`: the structure report of package
// structure for a scenario's grid, Hodge choice and scheme, written to
// structure.json in --out.
func cmdStructure(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("structure", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var sets multi
	fs.Var(&sets, "set", "override a scenario key, e.g. --set scheme.hodge=diagonal (repeatable)")
	grid := fs.String("grid", "", "grid kind (shorthand for --set grid.kind=)")
	n := fs.String("n", "", "cells per side, or the sphere's level or cells per cube edge (shorthand for --set grid.n=)")
	out := fs.String("out", "", "output folder (required)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return ExitBadInput
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "gyrebench structure: "+format+"\n", a...)
		return ExitBadInput
	}
	if len(pos) > 1 {
		return fail("want at most one scenario file or built-in name, got %d: %s", len(pos), strings.Join(pos, " "))
	}
	if *out == "" {
		return fail("--out: an output folder is required, e.g. --out structure-hex16")
	}
	cfg := sim.DefaultConfig()
	if len(pos) == 1 {
		sc, err := Load(pos[0])
		if err != nil {
			return fail("%v", err)
		}
		cfg = sc.Config
	}
	if *grid != "" {
		ok := false
		var names []string
		for _, k := range mesh.Kinds {
			ok = ok || string(k) == *grid
			names = append(names, string(k))
		}
		if !ok {
			return fail("--grid %q: unknown grid; allowed: %s", *grid, strings.Join(names, ", "))
		}
		cfg.Grid.Kind = *grid
	}
	if *n != "" {
		v, err := strconv.Atoi(*n)
		if err != nil {
			return fail("--n %q: must be an integer", *n)
		}
		cfg.Grid.N = v
	}
	for _, s := range sets {
		if err := scenario.Set(&cfg, s); err != nil {
			return fail("%v", err)
		}
	}
	if err := ctx.Err(); err != nil {
		return ExitInterrupted
	}
	rep, err := structure.FromConfig(cfg)
	if err != nil {
		return fail("%v", err)
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fail("--out %s: %v", *out, err)
	}
	if err := atomicfile.WriteFile(filepath.Join(*out, "structure.json"), func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetEscapeHTML(false)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}); err != nil {
		return fail("%v", err)
	}
	yes := map[bool]string{true: "yes", false: "no"}
	fmt.Fprintf(stdout, "%s n=%d, %s, Hodge %s (%s): incidence defect %d, H eigenvalues [%.4g, %.4g], consistency error %.3g\n",
		rep.Grid, rep.N, rep.Scheme, rep.Hodge, rep.HodgeMatrix, rep.IncidenceDefect, rep.HodgeMinEigenvalue, rep.HodgeMaxEigenvalue, rep.HodgeConsistencyError)
	fmt.Fprintf(stdout, "energy conserving %s (%.3g), enstrophy conserving %s (%.3g), steady geostrophic modes %s, consistent %s\n",
		yes[rep.EnergyConserving], rep.EnergyRateRelative, yes[rep.EnstrophyConserving], rep.EnstrophyRateRelative,
		yes[rep.SteadyGeostrophicModes], yes[rep.Consistent])
	fmt.Fprintf(stdout, "wrote %s\n", filepath.Join(*out, "structure.json"))
	return ExitOK
}
