package server

import (
	"encoding/json"
	"fmt"
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"time"

	"github.com/go-chi/chi/v5"

	"gyrebench/sim/sweep"
	"gyrebench/web"
)

func (sw *sweeps) job(w http.ResponseWriter, req *http.Request) *sweep.Job {
	id := chi.URLParam(req, "id")
	j, ok := sw.get(id)
	if !ok {
		http.Error(w, "no sweep "+strconv.Quote(id)+"; the workbench's sweeps are listed at /sweeps", http.StatusNotFound)
	}
	return j
}

func (sw *sweeps) servePage(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.Status()
	v := web.SweepView{
		ID: in.ID, Scenario: in.Scenario, Dir: in.Dir, State: in.State, Message: in.Message,
		Jobs: in.Jobs, Done: in.Done, Total: in.Total, BlewUp: in.BlewUp,
		ElapsedS: strconv.FormatFloat(in.ElapsedS, 'f', 1, 64), Elapsed: fmtWallTime(in.ElapsedS),
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
		v.Results = sweepResults(in)
	}
	render(w, req, web.SweepPage(v))
}

func sweepRunRow(id string, r SweepRunInfo) web.SweepRunRow {
	row := web.SweepRunRow{Index: r.Index, Name: r.Name, Choices: r.Choices, State: r.State, Message: r.Message}
	if r.State != sweep.RunWaiting && r.State != sweep.RunRunning && r.State != sweep.RunSkipped {
		row.Steps = strconv.FormatInt(r.Steps, 10)
		row.Wall = fmtWallTime(r.WallS)
		if r.L2H != nil {
			row.L2 = expNum(*r.L2H, 3)
		}
		for _, f := range []string{"summary.json", "series.csv", "final.nc", "recipe.toml"} {
			row.Files = append(row.Files, web.Link{Label: f, Href: runFileURL(id, r.Name, f)})
		}
	}
	return row
}

func runFileURL(id, run, name string) string {
	return "/sweep/" + id + "/run/" + url.PathEscape(run) + "/" + name
}

// expNum writes x in e-notation with prec digits after the point and
// the exponent without a leading zero, as the page's script does.
func expNum(x float64, prec int) string {
	s := strconv.FormatFloat(x, 'e', prec, 64)
	return strings.NewReplacer("e-0", "e-", "e+0", "e+").Replace(s)
}

func fmtWallTime(s float64) string {
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

// results is the results part of an ended sweep's page.
func sweepResults(in SweepInfo) *web.SweepResults {
	r := &web.SweepResults{ID: in.ID, State: in.State, Zip: "/sweep/" + in.ID + "/sweep.zip", Dir: in.Dir}
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
			r.Plots = append(r.Plots, web.SweepPlot{Name: p.base, Title: p.title, PNG: file(p.base + ".png"), SVG: file(p.base + ".svg")})
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
		r.Fits = append(r.Fits, web.SweepFit{Group: group, Order: strconv.FormatFloat(f.Order, 'f', 2, 64), OrderLInf: strconv.FormatFloat(f.OrderLInf, 'f', 2, 64), Runs: len(f.Runs), Spacings: strings.Join(sp, ", ")})
	}
	if res := in.Result; res != nil {
		r.Keys = res.Keys
		for _, row := range res.Rows {
			sr := web.SweepResultRow{Run: row.Run, Cells: strconv.Itoa(row.Cells),
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

func (sw *sweeps) serveResults(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	in := j.Status()
	if !in.Ended() {
		http.Error(w, "sweep "+in.ID+" is still "+in.State+"; its results come when it ends", http.StatusConflict)
		return
	}
	render(w, req, web.SweepResultsPart(*sweepResults(in)))
}

func (sw *sweeps) serveStop(w http.ResponseWriter, req *http.Request) {
	if !sameOrigin(req) {
		http.Error(w, "cross-site request refused: sweeps are stopped from the workbench's own pages", http.StatusForbidden)
		return
	}
	if code, err := parseForm(w, req, stopFormBytes); err != nil {
		http.Error(w, err.Error(), code)
		return
	}
	j := sw.job(w, req)
	if j == nil {
		return
	}
	j.Stop() // stopping an ended sweep changes nothing
	http.Redirect(w, req, "/sweep/"+j.ID(), http.StatusSeeOther)
}

// serveEvents streams the sweep's progress as server-sent events: one
// "progress" event with a SweepInfo now and after every change (latest
// wins: changes in quick succession may arrive as one), until the sweep
// has ended, then the stream closes. A browser's EventSource that
// reconnects to an ended sweep gets its final state once more.
func (sw *sweeps) serveEvents(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	rc := http.NewResponseController(w)
	h := w.Header()
	h.Set("Content-Type", "text/event-stream")
	h.Set("Cache-Control", "no-store")
	w.WriteHeader(http.StatusOK)
	ctx := req.Context()
	keep := time.NewTicker(sweepKeepAlive)
	defer keep.Stop()
	send := func(b []byte) bool {
		// The server's write timeout is for pages; a stream lasts as long
		// as the sweep, with a deadline per message instead.
		_ = rc.SetWriteDeadline(time.Now().Add(writeTimeout))
		if _, err := w.Write(b); err != nil {
			return false
		}
		return rc.Flush() == nil
	}
	if !send([]byte("retry: 2000\n\n")) {
		return
	}
	for {
		in, changed := j.Snapshot()
		b, err := json.Marshal(in)
		if err != nil {
			return
		}
		if !send(append(append([]byte("event: progress\ndata: "), b...), "\n\n"...)) || in.Ended() {
			return
		}
		for waiting := true; waiting; {
			select {
			case <-changed:
				waiting = false
			case <-keep.C:
				if !send([]byte(": still " + in.State + "\n\n")) {
					return
				}
			case <-ctx.Done():
				return
			}
		}
	}
}

func (sw *sweeps) serveJSON(w http.ResponseWriter, req *http.Request) {
	j := sw.job(w, req)
	if j == nil {
		return
	}
	w.Header().Set("Content-Type", "application/json")
	_ = json.NewEncoder(w).Encode(j.Status())
}

func (sw *sweeps) serveListJSON(w http.ResponseWriter, req *http.Request) {
	infos := []SweepInfo{}
	for _, j := range sw.list() {
		infos = append(infos, j.Status())
	}
	w.Header().Set("Content-Type", "application/json")
	_ = json.NewEncoder(w).Encode(infos)
}
