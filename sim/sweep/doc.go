// Package sweep runs the product of scenario choices — a resolution sweep,
// a scheme comparison, a time-step study — and assembles the results:
// sweep.csv (one row per run), sweep.json (the fitted convergence orders)
// and plots of the error against the grid spacing and of the invariant
// drifts against time, as PNG and SVG.
//
// # Plan
//
// A Plan is the validated product of Axes (one per --vary key=v1,v2,...),
// applied after the --set overrides to a base scenario. The last axis
// varies fastest; that order is the order of the run folders
// (point-001, point-002, …; the choices of each are in sweep.csv and
// sweep.json) and of the rows of sweep.csv, whatever order the
// runs finish in. Every run's config is validated before anything is
// written, and a sweep is capped at MaxRuns runs.
//
// PlanForm validates the same choices typed into the workbench's form (a
// text area of vary lines and one of set lines), within the workbench's
// bounds, naming the form field a refusal is about.
//
// # Running here or elsewhere
//
// Execute runs the plan in this process, a few runs at a time, each one
// deterministic and independent, and then calls Collect. WriteJobs instead
// writes a job list, one complete `gyrebench run` command per line, for a
// batch scheduler's array job or any runner of independent processes;
// Collect assembles the same sweep.csv from the folders those commands
// fill. With the command line:
//
//	gyrebench sweep steady-geostrophic --vary grid.n=16,32,64 --set time.duration=21600 \
//	    --out conv --jobs-file conv/jobs.txt
//	xargs -d '\n' -n 1 -P 4 sh -c < conv/jobs.txt      # four at a time (GNU xargs), or
//	sh -c "$(sed -n "${TASK_ID}p" conv/jobs.txt)"      # in an array job: line TASK_ID (1-based)
//	gyrebench sweep --collect conv
//
// The lines use the folder as given to --out, so run them from the folder
// sweep was run in (or give --out an absolute path), with gyrebench on the
// PATH. Each line reads a fully resolved scenario from DIR/jobs/ and
// writes DIR/<run folder>; nothing else is shared between jobs.
//
// # Files
//
// The sweep folder holds sweep-plan.json (the plan: scenario, --set, --vary
// and the run folder names, written first), the run folders (the files of
// `gyrebench run --out`), and, once all runs are there:
//
//   - sweep.csv: run, the varied keys (values as recipe.toml writes them),
//     spacing_m (mean distance between neighbouring cell centres, the
//     mean dual edge length), cells, dt_s, steps, time_s, blew_up,
//     interrupted, l1_h, l2_h, linf_h (empty where the case has no
//     reference solution), mass_rel_drift, energy_rel_drift,
//     enstrophy_rel_drift, wall_seconds. Every column but the last is a
//     function of the plan alone, so the same plan gives the same file up
//     to the wall_seconds column, wherever the runs ran.
//   - sweep.json: the varied keys, the blown-up runs, and per curve the
//     fitted orders side by side: the least-squares slopes of ln l2_h
//     (order) and of ln linf_h (order_linf) against ln spacing over the
//     runs that share every choice but the ResolutionKeys.
//   - error.png, error.svg (when some curve has two spacings or more),
//     energy-drift.png/.svg and enstrophy-drift.png/.svg.
//
// Every file is written under a temporary name and renamed. What a sweep
// offers to readers (TopFiles, and RunOutputs of each run folder), their
// media types (ContentType) and the zip of them all (WriteZip) are said
// here too, so that the workbench serves exactly those.
package sweep
