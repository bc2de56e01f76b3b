package sweep

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"gyrebench/sim/batch"
	"gyrebench/sim/mesh"
	"gyrebench/sim/scenario"
)

// ResolutionKeys are the keys that change the grid spacing within one
// family. Runs that differ only in these form one convergence curve; every
// other varied key (grid.kind, scheme.name, ...) separates curves.
var ResolutionKeys = []string{"grid.n", "grid.length", "grid.height"}

// Row is one run's line of sweep.csv.
type Row struct {
	Run         string
	Choices     []Choice
	SpacingM    float64 // mean dual edge length (distance between neighbouring cell centres), m
	Cells       int
	Dt          float64
	Steps       int64
	TimeS       float64
	BlewUp      bool
	Interrupted bool
	L1H         *float64
	L2H         *float64
	LInfH       *float64
	MassDrift   float64
	EnergyDrift float64
	EnstDrift   float64
	WallSeconds float64

	// Series from the run's series.csv: time and relative drifts.
	TimeSeries, EnergySeries, EnstrophySeries []float64
}

// Fit is a least-squares line through (ln spacing, ln l2_h) of one group
// of runs: l2_h ≈ exp(LogIntercept) · spacing^Order; OrderLInf is the
// slope of the same fit to ln linf_h, given beside it because the two can
// differ much (on centroidal grids the largest error converges more
// slowly than the mean).
type Fit struct {
	Group        []Choice  `json:"group"` // the non-resolution choices shared by the runs; empty for one curve
	Order        float64   `json:"order"`
	OrderLInf    float64   `json:"order_linf"`
	LogIntercept float64   `json:"log_intercept"`
	Runs         []string  `json:"runs"`
	SpacingM     []float64 `json:"spacing_m"`
	L2H          []float64 `json:"l2_h"`
	LInfH        []float64 `json:"linf_h"`
}

// Result is what Collect assembles.
type Result struct {
	Keys  []string // varied keys, in --vary order
	Rows  []Row    // in product order
	Fits  []Fit    // one per group with at least two distinct spacings
	Files []string // files written, relative to the sweep folder
}

// FitOrder returns the least-squares slope and intercept of ln y against
// ln x. ok is false with fewer than two distinct x or any non-positive or
// non-finite value.
func FitOrder(x, y []float64) (order, logIntercept float64, ok bool) {
	if len(x) != len(y) || len(x) < 2 {
		return 0, 0, false
	}
	var mx, my float64
	for i := range x {
		if !(x[i] > 0) || !(y[i] > 0) || math.IsInf(x[i], 0) || math.IsInf(y[i], 0) {
			return 0, 0, false
		}
		mx += math.Log(x[i])
		my += math.Log(y[i])
	}
	n := float64(len(x))
	mx, my = mx/n, my/n
	var sxy, sxx float64
	for i := range x {
		dx := math.Log(x[i]) - mx
		sxy += dx * (math.Log(y[i]) - my)
		sxx += dx * dx
	}
	// Distinct spacings differ by far more than this in the logarithm.
	if sxx < 1e-24 {
		return 0, 0, false
	}
	order = sxy / sxx
	return order, my - order*mx, true
}

// Collect reads every run folder of the sweep in dir and writes sweep.csv,
// sweep.json and the plots (error against spacing, energy and enstrophy
// drift against time, each as PNG and SVG). The runs are those of dir's
// sweep-plan.json, in product order; without a plan, every subfolder
// named run-* holding a summary.json, sorted by name, with the keys whose
// recipe values differ between them (sorted) as the choices. Nothing is
// written when a run folder is missing or unreadable.
func Collect(dir string) (*Result, error) {
	res, err := Read(dir)
	if err != nil {
		return nil, err
	}
	if err := res.Write(dir); err != nil {
		return nil, err
	}
	return res, nil
}

// Read assembles the result without writing anything.
func Read(dir string) (*Result, error) {
	st, err := os.Stat(dir)
	if err != nil {
		return nil, fmt.Errorf("--collect %s: %w", dir, err)
	}
	if !st.IsDir() {
		return nil, fmt.Errorf("--collect %s: not a folder", dir)
	}
	plan, err := ReadPlan(dir)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		plan, err = inferPlan(dir)
		if err != nil {
			return nil, err
		}
	case err != nil:
		return nil, err
	}
	res := &Result{}
	for _, a := range plan.Axes {
		res.Keys = append(res.Keys, a.Key)
	}
	spacing := map[mesh.Spec]float64{}
	var missing []string
	for _, r := range plan.Runs {
		row, err := readRun(filepath.Join(dir, r.Name), r, spacing)
		if errors.Is(err, fs.ErrNotExist) {
			missing = append(missing, r.Name)
			continue
		}
		if err != nil {
			return nil, err
		}
		res.Rows = append(res.Rows, *row)
	}
	if len(missing) > 0 {
		n, more := len(missing), ""
		if n > 5 {
			more = fmt.Sprintf(" and %d more", len(missing)-5)
			missing = missing[:5]
		}
		return nil, fmt.Errorf("--collect %s: %d of %d runs have no summary.json or recipe.toml yet: %s%s",
			dir, n, len(plan.Runs), strings.Join(missing, ", "), more)
	}
	res.Fits = fits(res.Rows)
	return res, nil
}

// summaryFile is summary.json with the optional spacing a newer batch
// package may record.
type summaryFile struct {
	batch.Summary
	SpacingM *float64 `json:"spacing_m"`
}

func readRun(folder string, r Run, spacing map[mesh.Spec]float64) (*Row, error) {
	sb, err := os.ReadFile(filepath.Join(folder, "summary.json"))
	if err != nil {
		return nil, err
	}
	var sum summaryFile
	if err := json.Unmarshal(sb, &sum); err != nil {
		return nil, fmt.Errorf("%s: %w", filepath.Join(folder, "summary.json"), err)
	}
	recipe, err := os.ReadFile(filepath.Join(folder, "recipe.toml"))
	if err != nil {
		return nil, err
	}
	sc, err := scenario.Parse(recipe, filepath.Join(folder, "recipe.toml"))
	if err != nil {
		return nil, err
	}
	flat, err := flatten(recipe)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", filepath.Join(folder, "recipe.toml"), err)
	}
	for _, c := range r.Choices {
		if v, ok := flat[c.Key]; ok && v != c.Value {
			return nil, fmt.Errorf("%s: recipe.toml has %s = %s, the sweep plan says %s; the folder holds another run",
				folder, c.Key, v, c.Value)
		}
	}
	row := &Row{
		Run: r.Name, Choices: r.Choices, Cells: sum.Cells, Dt: sum.Dt, Steps: sum.Steps, TimeS: sum.TimeS,
		BlewUp: sum.BlewUp, Interrupted: sum.Interrupted,
		L1H: sum.L1H, L2H: sum.L2H, LInfH: sum.LInfH,
		MassDrift: sum.MassRelDrift, EnergyDrift: sum.EnergyRelDrift, EnstDrift: sum.EnstrophyRelDrift,
		WallSeconds: sum.WallSeconds,
	}
	if sum.SpacingM != nil {
		row.SpacingM = *sum.SpacingM
	} else {
		spec := sc.Config.MeshSpec()
		s, ok := spacing[spec]
		if !ok {
			m, err := mesh.New(spec)
			if err != nil {
				return nil, fmt.Errorf("%s: %w", filepath.Join(folder, "recipe.toml"), err)
			}
			s = m.Spacing()
			spacing[spec] = s
		}
		row.SpacingM = s
	}
	if err := readSeries(filepath.Join(folder, "series.csv"), row); err != nil {
		return nil, err
	}
	return row, nil
}

func readSeries(path string, row *Row) error {
	b, err := os.ReadFile(path)
	if err != nil {
		return err
	}
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if len(recs) == 0 {
		return fmt.Errorf("%s: empty, want a header row", path)
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	idx := make([]int, 3)
	for k, name := range []string{"time_s", "energy_rel_drift", "enstrophy_rel_drift"} {
		i, ok := col[name]
		if !ok {
			return fmt.Errorf("%s: no column %s", path, name)
		}
		idx[k] = i
	}
	dst := []*[]float64{&row.TimeSeries, &row.EnergySeries, &row.EnstrophySeries}
	for n, rec := range recs[1:] {
		for k, i := range idx {
			v, err := strconv.ParseFloat(rec[i], 64)
			if err != nil {
				return fmt.Errorf("%s: row %d, column %s = %q: %w", path, n+2, recs[0][i], rec[i], err)
			}
			*dst[k] = append(*dst[k], v)
		}
	}
	return nil
}

// inferPlan builds a plan from point-* folders (and the run-* folders of
// sweeps written before the points were so named) when there is no
// sweep-plan.json: the choices are the recipe keys whose values differ.
func inferPlan(dir string) (*Plan, error) {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, fmt.Errorf("--collect %s: %w", dir, err)
	}
	var names []string
	var flats []map[string]string
	for _, e := range entries {
		if !e.IsDir() || !(strings.HasPrefix(e.Name(), "point-") || strings.HasPrefix(e.Name(), "run-")) {
			continue
		}
		b, err := os.ReadFile(filepath.Join(dir, e.Name(), "recipe.toml"))
		if err != nil {
			continue
		}
		if _, err := os.Stat(filepath.Join(dir, e.Name(), "summary.json")); err != nil {
			continue
		}
		f, err := flatten(b)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", filepath.Join(dir, e.Name(), "recipe.toml"), err)
		}
		names = append(names, e.Name())
		flats = append(flats, f)
	}
	if len(names) == 0 {
		return nil, fmt.Errorf("--collect %s: no %s and no run-* folders with summary.json and recipe.toml", dir, PlanFile)
	}
	all := map[string]bool{}
	for _, f := range flats {
		for k := range f {
			all[k] = true
		}
	}
	var keys []string
	for k := range all {
		for _, f := range flats[1:] {
			if f[k] != flats[0][k] {
				keys = append(keys, k)
				break
			}
		}
	}
	sort.Strings(keys)
	p := &Plan{Version: 1}
	for _, k := range keys {
		p.Axes = append(p.Axes, Axis{Key: k})
	}
	for i, n := range names {
		r := Run{Index: i, Name: n}
		for _, k := range keys {
			r.Choices = append(r.Choices, Choice{k, flats[i][k]})
		}
		p.Runs = append(p.Runs, r)
	}
	return p, nil
}

// fits groups the usable rows by their non-resolution choices, in order
// of first appearance, and fits each group with two or more spacings.
func fits(rows []Row) []Fit {
	type group struct {
		choices []Choice
		rows    []*Row
	}
	var groups []*group
	byKey := map[string]*group{}
	for i := range rows {
		r := &rows[i]
		if r.L2H == nil || !(*r.L2H > 0) || math.IsInf(*r.L2H, 0) || r.BlewUp || r.Interrupted {
			continue
		}
		var gc []Choice
		for _, c := range r.Choices {
			if !isResolution(c.Key) {
				gc = append(gc, c)
			}
		}
		k := choiceText(gc)
		g := byKey[k]
		if g == nil {
			g = &group{choices: gc}
			byKey[k] = g
			groups = append(groups, g)
		}
		g.rows = append(g.rows, r)
	}
	var out []Fit
	for _, g := range groups {
		f := Fit{Group: g.choices}
		for _, r := range g.rows {
			f.Runs = append(f.Runs, r.Run)
			f.SpacingM = append(f.SpacingM, r.SpacingM)
			f.L2H = append(f.L2H, *r.L2H)
			if r.LInfH != nil {
				f.LInfH = append(f.LInfH, *r.LInfH)
			}
		}
		var ok, okInf bool
		f.Order, f.LogIntercept, ok = FitOrder(f.SpacingM, f.L2H)
		f.OrderLInf, _, okInf = FitOrder(f.SpacingM, f.LInfH)
		if ok && okInf {
			if f.Group == nil {
				f.Group = []Choice{}
			}
			out = append(out, f)
		}
	}
	return out
}

func isResolution(key string) bool {
	for _, k := range ResolutionKeys {
		if k == key {
			return true
		}
	}
	return false
}

// CSVHeader returns the columns of sweep.csv for the varied keys.
// wall_seconds is last, so that the reproducible part of every line is a
// prefix of it.
func CSVHeader(keys []string) []string {
	h := append([]string{"run"}, keys...)
	return append(h, "spacing_m", "cells", "dt_s", "steps", "time_s", "blew_up", "interrupted",
		"l1_h", "l2_h", "linf_h", "mass_rel_drift", "energy_rel_drift", "enstrophy_rel_drift", "wall_seconds")
}

// CSV returns sweep.csv.
func (res *Result) CSV() []byte {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	w.Write(CSVHeader(res.Keys))
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	opt := func(v *float64) string {
		if v == nil {
			return ""
		}
		return g(*v)
	}
	for _, r := range res.Rows {
		rec := []string{r.Run}
		for _, c := range r.Choices {
			rec = append(rec, c.Value)
		}
		rec = append(rec, g(r.SpacingM), strconv.Itoa(r.Cells), g(r.Dt), strconv.FormatInt(r.Steps, 10), g(r.TimeS),
			strconv.FormatBool(r.BlewUp), strconv.FormatBool(r.Interrupted),
			opt(r.L1H), opt(r.L2H), opt(r.LInfH), g(r.MassDrift), g(r.EnergyDrift), g(r.EnstDrift), g(r.WallSeconds))
		w.Write(rec)
	}
	w.Flush()
	return b.Bytes()
}

// jsonFile is sweep.json.
type jsonFile struct {
	Keys        []string `json:"vary"`
	Runs        int      `json:"runs"`
	BlewUp      []string `json:"blew_up"`
	Fits        []Fit    `json:"fits"`
	Files       []string `json:"files"`
	ErrorPlotOK bool     `json:"error_plot"`
}

// Write writes sweep.csv, sweep.json and the plots into dir, each
// atomically, and records their names in res.Files.
func (res *Result) Write(dir string) error {
	plots, err := res.plots()
	if err != nil {
		return err
	}
	files := []string{CSVFile, JSONFile}
	for _, p := range plots {
		files = append(files, p.name)
	}
	js := jsonFile{Keys: res.Keys, Runs: len(res.Rows), BlewUp: []string{}, Fits: res.Fits, Files: files}
	if js.Keys == nil {
		js.Keys = []string{}
	}
	if js.Fits == nil {
		js.Fits = []Fit{}
	}
	for _, r := range res.Rows {
		if r.BlewUp {
			js.BlewUp = append(js.BlewUp, r.Run)
		}
	}
	for _, p := range plots {
		if strings.HasPrefix(p.name, "error.") {
			js.ErrorPlotOK = true
		}
	}
	jb, err := json.MarshalIndent(js, "", "  ")
	if err != nil {
		return fmt.Errorf("%s: %w", JSONFile, err)
	}
	for _, p := range plots {
		if err := writeBytes(filepath.Join(dir, p.name), p.data); err != nil {
			return err
		}
	}
	if err := writeBytes(filepath.Join(dir, JSONFile), append(jb, '\n')); err != nil {
		return err
	}
	if err := writeBytes(filepath.Join(dir, CSVFile), res.CSV()); err != nil {
		return err
	}
	res.Files = files
	return nil
}
