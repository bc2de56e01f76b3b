package web

import (
	"fmt"
	"net/url"
	"strconv"
	"strings"

	"gyrebench/sim/sweep"
)

// SweepPageOf is the page of the sweep whose status is in.
func SweepPageOf(in sweep.Status) SweepView {
	v := SweepView{
		ID: in.ID, Scenario: in.Scenario, Dir: in.Dir, State: in.State, Message: in.Message,
		Jobs: in.Jobs, Done: in.Done, Total: in.Total, BlewUp: in.BlewUp,
		ElapsedS: strconv.FormatFloat(in.ElapsedS, 'f', 1, 64), Elapsed: WallTime(in.ElapsedS),
		Ended: in.Ended(),
	}
	for _, a := range in.Vary {
		v.Vary = append(v.Vary, a.Key+" = "+strings.Join(a.Values, ", "))
	}
	v.Sets = in.Sets
	for _, r := range in.Runs {
		v.Runs = append(v.Runs, sweepRunRow(in.ID, r))
	}
	if in.Ended() {
		v.Results = SweepResultsOf(in)
	}
	return v
}

// SweepRowOf is the sweep's line in the list of sweeps.
func SweepRowOf(in sweep.Status) SweepRow {
	var vary []string
	for _, a := range in.Vary {
		vary = append(vary, a.Key+" = "+strings.Join(a.Values, ", "))
	}
	return SweepRow{ID: in.ID, Scenario: in.Scenario, Vary: strings.Join(vary, "; "),
		State: in.State, Progress: fmt.Sprintf("%d / %d", in.Done, in.Total), Dir: in.Dir}
}

func sweepRunRow(id string, r sweep.RunStatus) SweepRunRow {
	row := SweepRunRow{Index: r.Index, Name: r.Name, Choices: r.Choices, State: r.State, Message: r.Message}
	if r.State != sweep.RunWaiting && r.State != sweep.RunRunning && r.State != sweep.RunSkipped {
		row.Steps = strconv.FormatInt(r.Steps, 10)
		row.Wall = WallTime(r.WallS)
		if r.L2H != nil {
			row.L2 = expNum(*r.L2H, 3)
		}
		for _, f := range []string{"summary.json", "series.csv", "final.nc", "recipe.toml"} {
			row.Files = append(row.Files, Link{Label: f, Href: "/sweep/" + id + "/run/" + url.PathEscape(r.Name) + "/" + f})
		}
	}
	return row
}

// expNum writes x in e-notation with prec digits after the point and
// the exponent without a leading zero, as the page's script does.
func expNum(x float64, prec int) string {
	s := strconv.FormatFloat(x, 'e', prec, 64)
	return strings.NewReplacer("e-0", "e-", "e+0", "e+").Replace(s)
}

// WallTime writes a wall-clock duration of s seconds for people.
func WallTime(s float64) string {
	switch {
	case s < 10:
		return strconv.FormatFloat(s, 'f', 2, 64) + " s"
	case s < 60:
		return strconv.FormatFloat(s, 'f', 1, 64) + " s"
	case s < 3600:
		return fmt.Sprintf("%d min %02d s", int(s)/60, int(s)%60)
	default:
		return fmt.Sprintf("%d h %02d min", int(s)/3600, int(s)%3600/60)
	}
}

// SweepResultsOf is the results part of an ended sweep's page.
func SweepResultsOf(in sweep.Status) *SweepResults {
	r := &SweepResults{ID: in.ID, State: in.State, Zip: "/sweep/" + in.ID + "/sweep.zip", Dir: in.Dir}
	if in.State != sweep.JobFinished {
		return r
	}
	file := func(name string) string { return "/sweep/" + in.ID + "/file/" + name }
	has := map[string]bool{}
	for _, f := range in.Files {
		has[f] = true
	}
	r.CSV, r.JSON = file(sweep.CSVFile), file(sweep.JSONFile)
	for _, p := range []struct{ base, title string }{
		{"error", "l2 depth error against grid spacing, with the fitted l2 and l∞ orders"},
		{"energy-drift", "relative energy drift against time"},
		{"enstrophy-drift", "relative potential-enstrophy drift against time"},
	} {
		if has[p.base+".png"] {
			r.Plots = append(r.Plots, SweepPlot{Name: p.base, Title: p.title, PNG: file(p.base + ".png"), SVG: file(p.base + ".svg")})
		}
	}
	for _, f := range in.Fits {
		var g []string
		for _, c := range f.Group {
			g = append(g, c.Key+"="+c.Value)
		}
		group := strings.Join(g, ", ")
		if group == "" {
			group = "all runs"
		}
		var sp []string
		for _, x := range f.SpacingM {
			sp = append(sp, strconv.FormatFloat(x/1000, 'f', 1, 64))
		}
		r.Fits = append(r.Fits, SweepFit{Group: group, Order: strconv.FormatFloat(f.Order, 'f', 2, 64), OrderLInf: strconv.FormatFloat(f.OrderLInf, 'f', 2, 64), Runs: len(f.Runs), Spacings: strings.Join(sp, ", ")})
	}
	if res := in.Result; res != nil {
		r.Keys = res.Keys
		for _, row := range res.Rows {
			sr := SweepResultRow{Run: row.Run, Cells: strconv.Itoa(row.Cells),
				Spacing: strconv.FormatFloat(row.SpacingM/1000, 'f', 1, 64), BlewUp: row.BlewUp,
				Energy: expNum(row.EnergyDrift, 2), Enstrophy: expNum(row.EnstDrift, 2)}
			for _, c := range row.Choices {
				sr.Choices = append(sr.Choices, c.Value)
			}
			if row.L2H != nil {
				sr.L2 = expNum(*row.L2H, 3)
			}
			r.Rows = append(r.Rows, sr)
		}
	}
	return r
}
