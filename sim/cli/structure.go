package cli

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"gyrebench/sim/atomicfile"
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
	if *out == "" {
		return fail("--out: an output folder is required, e.g. --out structure-hex16")
	}
	cfg, err := analysisConfig(pos, *grid, *n, sets)
	if err != nil {
		return fail("%v", err)
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
