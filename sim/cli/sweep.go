package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"runtime"
	"strings"

	"gyrebench/sim/batch"
	"gyrebench/sim/sweep"
)

const sweepUsage = `usage:
  gyrebench sweep FILE_OR_NAME --vary key=v1,v2,... [--vary ...] [--set key=value]... --out DIR [--jobs J] [--workers W]
  gyrebench sweep FILE_OR_NAME --vary ... --out DIR --jobs-file PATH   write one 'gyrebench run' line per run instead
  gyrebench sweep --collect DIR                                         assemble sweep.csv and the plots from DIR's run folders`

// cmdSweep runs the product of --vary choices (package sweep). Exit codes:
// 0 ok; 1 bad input, nothing written; 3 at least one run blew up (every
// file, sweep.csv included, is written; blew_up says which); 130
// interrupted, run folders so far written, no sweep.csv.
func cmdSweep(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs, fail := newCommand("sweep", stderr)
	fs.Usage = func() { fmt.Fprintln(stderr, sweepUsage); fs.PrintDefaults() }
	var sets, varies multi
	fs.Var(&varies, "vary", "a scenario key and its values, e.g. --vary grid.n=16,32,64 (repeatable; the product is run)")
	fs.Var(&sets, "set", "override a scenario key for every run, e.g. --set time.duration=21600 (repeatable)")
	out := fs.String("out", "", "sweep folder: one folder per run, sweep.csv, sweep.json and the plots")
	jobs := fs.Int("jobs", runtime.NumCPU(), "runs at once")
	workers := fs.Int("workers", 1, "goroutines inside each run")
	jobsFile := fs.String("jobs-file", "", "write the job list here (one 'gyrebench run' per line) instead of running")
	collect := fs.String("collect", "", "assemble sweep.csv and the plots from the run folders in this sweep folder")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return ExitBadInput
	}
	if *collect != "" {
		if len(pos) > 0 || len(varies) > 0 || len(sets) > 0 || *out != "" || *jobsFile != "" {
			return fail("--collect DIR takes no scenario, --vary, --set, --out or --jobs-file; the runs are already in DIR")
		}
		res, err := sweep.Collect(*collect)
		if err != nil {
			return fail("%v", err)
		}
		report(stdout, *collect, res)
		return ExitOK
	}
	if len(pos) != 1 {
		return fail("want exactly one scenario file or built-in name (see 'gyrebench scenarios'), got %d\n%s", len(pos), sweepUsage)
	}
	if *out == "" {
		return fail("--out: a sweep folder is required")
	}
	if *workers < 1 || *workers > 256 {
		return fail("--workers = %d: must be between 1 and 256", *workers)
	}
	if *jobs < 1 || *jobs > 256 {
		return fail("--jobs = %d: must be between 1 and 256", *jobs)
	}
	var axes []sweep.Axis
	for _, v := range varies {
		a, err := sweep.ParseVary(v)
		if err != nil {
			return fail("%v", err)
		}
		axes = append(axes, a)
	}
	sc, err := Load(pos[0])
	if err != nil {
		return fail("%v", err)
	}
	plan, err := sweep.NewPlan(sc.Config, pos[0], sc.Description, sets, axes)
	if err != nil {
		return fail("%v", err)
	}
	if *jobsFile != "" {
		if err := sweep.WriteJobs(*jobsFile, *out, plan, *workers); err != nil {
			return fail("%v", err)
		}
		fmt.Fprintf(stdout, "%d runs: one 'gyrebench run' per line in %s; when all have run: gyrebench sweep --collect %s\n",
			len(plan.Runs), *jobsFile, *out)
		return ExitOK
	}
	res, outcome, err := sweep.Execute(ctx, plan, *out, sweep.Options{
		Jobs: *jobs, Workers: *workers,
		Done: func(done, total int, r *sweep.Run, sum *batch.Summary, err error) {
			if err != nil {
				fmt.Fprintf(stderr, "[%d/%d] %s: %v\n", done, total, r.Name, err)
				return
			}
			fmt.Fprintf(stderr, "[%d/%d] %s: %d steps in %.2f s\n", done, total, r.Name, sum.Steps, sum.WallSeconds)
		},
	})
	switch {
	case errors.Is(err, batch.ErrInterrupted):
		fmt.Fprintf(stderr, "gyrebench sweep: %v; rerun the sweep to finish it\n", err)
		return ExitInterrupted
	case err != nil:
		return fail("%v", err)
	}
	report(stdout, *out, res)
	if outcome.BlewUp > 0 {
		fmt.Fprintf(stderr, "gyrebench sweep: %d of %d runs blew up (blew_up in %s/%s); every file is written\n",
			outcome.BlewUp, outcome.Runs, *out, sweep.CSVFile)
		return ExitBlewUp
	}
	return ExitOK
}

func report(w io.Writer, dir string, res *sweep.Result) {
	fmt.Fprintf(w, "%d runs; %s\n", len(res.Rows), strings.Join(prefixAll(dir+"/", res.Files), " "))
	for _, f := range res.Fits {
		var g []string
		for _, c := range f.Group {
			g = append(g, c.Key+"="+c.Value)
		}
		name := strings.Join(g, ",")
		if name != "" {
			name += ": "
		}
		fmt.Fprintf(w, "%sfitted order l2 %.3f, l∞ %.3f over %d runs (l2_h and linf_h against spacing_m)\n", name, f.Order, f.OrderLInf, len(f.Runs))
	}
}

func prefixAll(p string, s []string) []string {
	out := make([]string, len(s))
	for i, x := range s {
		out[i] = p + x
	}
	return out
}
