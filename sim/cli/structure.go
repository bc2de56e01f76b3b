package cli

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"gyrebench/sim/structure"
)

// cmdStructure is `gyrebench structure`: the structure report of package
// structure for a scenario's grid, Hodge choice and scheme, written to
// structure.json in --out.
func cmdStructure(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs, fail := newCommand("structure", stderr)
	var af analysisFlags
	af.register(fs, "scheme.hodge=diagonal")
	cfg, code, ok := af.parse(fs, args, fail)
	if !ok {
		return code
	}
	if err := ctx.Err(); err != nil {
		return ExitInterrupted
	}
	rep, err := structure.FromConfig(cfg)
	if err != nil {
		return fail("%v", err)
	}
	if err := os.MkdirAll(af.out, 0o755); err != nil {
		return fail("--out %s: %v", af.out, err)
	}
	if err := writeJSON(filepath.Join(af.out, "structure.json"), rep); err != nil {
		return fail("%v", err)
	}
	yes := map[bool]string{true: "yes", false: "no"}
	fmt.Fprintf(stdout, "%s n=%d, %s, Hodge %s (%s): incidence defect %d, H eigenvalues [%.4g, %.4g], consistency error %.3g\n",
		rep.Grid, rep.N, rep.Scheme, rep.Hodge, rep.HodgeMatrix, rep.IncidenceDefect, rep.HodgeMinEigenvalue, rep.HodgeMaxEigenvalue, rep.HodgeConsistencyError)
	fmt.Fprintf(stdout, "energy conserving %s (%.3g), enstrophy conserving %s (%.3g), steady geostrophic modes %s, consistent %s\n",
		yes[rep.EnergyConserving], rep.EnergyRateRelative, yes[rep.EnstrophyConserving], rep.EnstrophyRateRelative,
		yes[rep.SteadyGeostrophicModes], yes[rep.Consistent])
	fmt.Fprintf(stdout, "wrote %s\n", filepath.Join(af.out, "structure.json"))
	return ExitOK
}
