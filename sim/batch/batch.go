// Package batch runs a scenario headless and writes its standard files:
// series.csv (invariants over time), final.nc (NetCDF classic, UGRID 1.0 +
// CF 1.8), summary.json, recipe.toml (the fully resolved scenario) and,
// when asked, snapshots.nc. Every file is written under a temporary name
// and renamed, so an interrupted or failed run never leaves a half file.
package batch

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"gyrebench/sim"
	"gyrebench/sim/atomicfile"
	"gyrebench/sim/diag"
	"gyrebench/sim/dissip"
	"gyrebench/sim/ncout"
	"gyrebench/sim/scenario"
)

// Options controls a headless run.
type Options struct {
	OutDir      string    // where the files go; created if missing
	Workers     int       // goroutines for the tendency loops; ≤ 0 means by mesh size
	Progress    io.Writer // progress line (a terminal); nil for quiet
	Description string    // carried into recipe.toml
	// Schedule, when set, changes the run between steps and decides when
	// it ends (a recorded timeline); the duration is then not used.
	Schedule Schedule
	// Recipe, when set, is written as recipe.toml instead of the scenario
	// (a timeline writes itself, so that rerunning it repeats the run).
	Recipe []byte
}

// A Schedule drives a run from outside, between steps: the events of a
// recorded timeline (package sim/timeline). The runner calls Before at the
// start and before every step.
type Schedule interface {
	// Before applies what is due at m's current step and returns the model
	// to go on with and whether the run ends here. When it replaces the
	// model (a grid change) it closes the one it replaced. A step count
	// that goes back (a rewind) drops the later rows of series.csv.
	Before(m *sim.Model) (next *sim.Model, end bool, err error)
	// MaxStep is the largest step count the run reaches, for the progress
	// line.
	MaxStep() int64
}

// Summary is summary.json.
type Summary struct {
	Title              string      `json:"title"`
	Grid               string      `json:"grid"`
	N                  int         `json:"n"`
	Cells              int         `json:"cells"`
	Edges              int         `json:"edges"`
	Vertices           int         `json:"vertices"`
	SpacingM           float64     `json:"spacing_m"` // mean distance between neighbouring cell centres
	Scheme             string      `json:"scheme"`
	Integrator         string      `json:"integrator"`
	Dt                 float64     `json:"dt_s"`
	Steps              int64       `json:"steps"`
	TimeS              float64     `json:"time_s"`
	WallSeconds        float64     `json:"wall_seconds"`
	Workers            int         `json:"workers"`
	BlewUp             bool        `json:"blew_up"`
	BlowUp             *BlowUpInfo `json:"blow_up,omitempty"`
	Interrupted        bool        `json:"interrupted"`
	Mass               float64     `json:"mass"`
	Energy             float64     `json:"energy"`
	PotentialEnstrophy float64     `json:"potential_enstrophy"`
	MassRelDrift       float64     `json:"mass_rel_drift"`
	EnergyRelDrift     float64     `json:"energy_rel_drift"`
	EnstrophyRelDrift  float64     `json:"enstrophy_rel_drift"`
	// CirculationDrift is the change of the total circulation, m² s⁻¹:
	// absolute, because on the sphere its reference is zero.
	CirculationDrift float64  `json:"circulation_drift"`
	HMin             float64  `json:"h_min"`
	HMax             float64  `json:"h_max"`
	CourantMax       float64  `json:"courant_max"`
	L1H              *float64 `json:"l1_h,omitempty"`
	L2H              *float64 `json:"l2_h,omitempty"`
	LInfH            *float64 `json:"linf_h,omitempty"`

	// The explicit dissipation at the end of the run (scenario keys
	// scheme.viscosity, scheme.hyperviscosity, scheme.divergence_damping).
	Viscosity         float64 `json:"viscosity_m2_s"`
	Hyperviscosity    float64 `json:"hyperviscosity_m4_s"`
	DivergenceDamping float64 `json:"divergence_damping_m2_s"`
	// Budget holds the time integrals of the budget columns of series.csv
	// (package dissip's Ledger): the change of energy (m⁵ s⁻²) and
	// potential enstrophy (m s⁻²) from the start, split by cause.
	Budget BudgetIntegrals `json:"budget_integrals"`
}

// BudgetIntegrals are the time integrals of the budget rates.
type BudgetIntegrals struct {
	EnergyScheme         float64 `json:"energy_scheme"`
	EnergyDissipation    float64 `json:"energy_dissipation"`
	EnergyResidual       float64 `json:"energy_residual"`
	EnstrophyScheme      float64 `json:"enstrophy_scheme"`
	EnstrophyDissipation float64 `json:"enstrophy_dissipation"`
	EnstrophyResidual    float64 `json:"enstrophy_residual"`
}

// BlowUpInfo says where and when a run blew up.
type BlowUpInfo struct {
	Step    int64   `json:"step"`
	TimeS   float64 `json:"time_s"`
	Cell    int     `json:"cell"`
	Edge    int     `json:"edge"`
	Value   string  `json:"value"`
	Message string  `json:"message"`
}

// BudgetSamples is the number of times per output interval that a run
// samples the budget's instantaneous rates (dissip.Ledger.Sample).
const BudgetSamples = 8

// ErrInterrupted is returned, wrapped, when the context ended the run.
var ErrInterrupted = errors.New("run interrupted")

// SeriesColumns are the columns of series.csv, in order.
var SeriesColumns = []string{
	"time_s", "mass", "energy", "potential_enstrophy",
	"mass_rel_drift", "energy_rel_drift", "enstrophy_rel_drift",
	"h_min", "h_max", "courant_max",
	"circulation", "circulation_drift", "circulation_rel_drift", "courant_advective", "max_speed",
	"l1_h", "l2_h", "linf_h",
	// The budget of each output interval (package dissip's Ledger): the
	// scheme's own term, the explicit dissipation and the time-stepping
	// residual of dE/dt and dZ/dt.
	"energy_rate_scheme", "energy_rate_dissipation", "energy_rate_residual",
	"enstrophy_rate_scheme", "enstrophy_rate_dissipation", "enstrophy_rate_residual",
}

// circulationDrift returns the change of the total circulation
// Σ_v A_v (ζ_v + f_v) since the start, in m² s⁻¹, and its relative
// change, which is NaN on the sphere: there the total circulation of a
// closed surface is zero (ζ integrates to zero, and so does f = 2Ω sin θ),
// so its start is round-off and a change relative to it means nothing.
func circulationDrift(sphere bool, now, start float64) (abs, rel float64) {
	if sphere {
		return now - start, math.NaN()
	}
	return now - start, diag.RelDrift(now, start)
}

// Run validates cfg, runs it to its duration and writes the files. It
// returns a *sim.BlowUpError (wrapped) when the run blew up and
// ErrInterrupted (wrapped) when ctx ended it; in both cases every file has
// been written from the last good state. A config error returns before
// anything is written.
func Run(ctx context.Context, cfg sim.Config, opt Options) (*Summary, error) {
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	if opt.OutDir == "" {
		return nil, fmt.Errorf("--out: an output folder is required")
	}
	model, err := sim.NewModel(cfg, opt.Workers)
	if err != nil {
		return nil, err
	}
	r := &runner{model: model, cfg: cfg, opt: opt}
	defer func() { r.model.Close() }() // a schedule may have replaced the model
	if err := os.MkdirAll(opt.OutDir, 0o755); err != nil {
		return nil, fmt.Errorf("--out %s: %w", opt.OutDir, err)
	}

	if cfg.Output.Snapshots {
		if err := r.openSnapshots(); err != nil {
			return nil, err
		}
		defer r.snapFile.Abort()
	}
	runErr := r.loop(ctx)
	if err := r.finish(runErr); err != nil {
		return nil, err
	}
	return r.summary, runErr
}

type runner struct {
	model *sim.Model
	cfg   sim.Config
	opt   Options

	series   bytes.Buffer
	rowSteps []int64 // the step of each series row
	rowEnds  []int   // the end of each row in series
	ledger   dissip.Ledger
	ledgers  []dissip.Ledger // the ledger after each row, for rewinds
	snapFile *atomicfile.File
	snaps    *ncout.Snapshots
	snapZeta []float64
	summary  *Summary
	wall     time.Duration
}

func (r *runner) loop(ctx context.Context) error {
	m := r.model
	dt := r.cfg.Time.Dt
	total := int64(math.Round(r.cfg.Time.Duration / dt))
	every := max(int64(math.Round(r.cfg.Output.Every/dt)), 1)
	// The budget's rates are sampled BudgetSamples times per output
	// interval (one scheme tendency each), so that the trapezoid rule's
	// error in the interval means stays small beside the time stepper's.
	sample := max(every/BudgetSamples, 1)
	r.series.WriteString(strings.Join(SeriesColumns, ",") + "\n")
	if err := r.record(); err != nil {
		return err
	}
	start := time.Now()
	lastShown := start
	defer func() { r.wall = time.Since(start) }()
	if r.opt.Schedule != nil {
		total = r.opt.Schedule.MaxStep()
	}
	for r.opt.Schedule != nil || m.Steps() < total {
		if s := r.opt.Schedule; s != nil {
			end, err := r.schedule(s)
			m = r.model
			if err != nil {
				r.endRow()
				return err
			}
			if end {
				r.endRow()
				break
			}
		}
		if err := ctx.Err(); err != nil {
			r.endRow()
			return fmt.Errorf("%w at step %d (t = %g s)", ErrInterrupted, m.Steps(), m.Time())
		}
		if err := m.Step(); err != nil {
			r.endRow()
			return err
		}
		if m.Steps()%every == 0 || m.Steps() == total {
			if err := r.record(); err != nil {
				return err
			}
		} else if m.Steps()%sample == 0 {
			r.ledger.Sample(m.Time(), m.Rates())
		}
		if r.opt.Progress != nil {
			if now := time.Now(); now.Sub(lastShown) > 200*time.Millisecond || m.Steps() == total {
				lastShown = now
				progress(r.opt.Progress, m.Steps(), total, m.Time(), now.Sub(start))
			}
		}
	}
	if r.opt.Progress != nil {
		fmt.Fprintln(r.opt.Progress)
	}
	return nil
}

// endRow records the last good state if it is not the last row already.
func (r *runner) endRow() {
	if n := len(r.rowSteps); n > 0 && r.rowSteps[n-1] == r.model.Steps() {
		return
	}
	_ = r.record()
}

// schedule lets the schedule act before a step; after a rewind it drops
// the series rows of the steps now undone.
func (r *runner) schedule(s Schedule) (bool, error) {
	nm, end, err := s.Before(r.model)
	if nm != nil {
		r.model = nm
	}
	steps := r.model.Steps()
	k := len(r.rowSteps)
	for k > 0 && r.rowSteps[k-1] > steps {
		k--
	}
	if k < len(r.rowSteps) { // k ≥ 1: the row of step 0 always stays
		r.series.Truncate(r.rowEnds[k-1])
		r.rowSteps, r.rowEnds = r.rowSteps[:k], r.rowEnds[:k]
		r.ledger, r.ledgers = r.ledgers[k-1], r.ledgers[:k]
	}
	return end, err
}

func progress(w io.Writer, steps, total int64, t float64, elapsed time.Duration) {
	const width = 30
	frac := min(max(float64(steps)/float64(max(total, 1)), 0), 1)
	bar := strings.Repeat("=", int(frac*width)) + strings.Repeat(" ", width-int(frac*width))
	rate := float64(steps) / elapsed.Seconds()
	eta := time.Duration(float64(total-steps)/rate) * time.Second
	fmt.Fprintf(w, "\r[%s] %5.1f%%  t = %s  %.0f steps/s  ETA %s ", bar, 100*frac, simTime(t), rate, eta.Round(time.Second))
}

func simTime(t float64) string {
	if t >= 86400 {
		return fmt.Sprintf("%.2f d", t/86400)
	}
	return fmt.Sprintf("%.0f s", t)
}

// record appends one series row and, if on, one snapshot.
func (r *runner) record() error {
	m := r.model
	inv := m.Invariants()
	ini := m.Initial()
	circAbs, circRel := circulationDrift(m.Mesh().Surface.Sphere, inv.Circulation, ini.Circulation)
	cols := []float64{
		m.Time(), inv.Mass, inv.Energy, inv.PotentialEnstrophy,
		diag.RelDrift(inv.Mass, ini.Mass), diag.RelDrift(inv.Energy, ini.Energy),
		diag.RelDrift(inv.PotentialEnstrophy, ini.PotentialEnstrophy),
		inv.HMin, inv.HMax, inv.CourantGravity,
		inv.Circulation, circAbs, circRel, inv.CourantAdvective, inv.MaxSpeed,
	}
	var row []string
	for _, v := range cols {
		if math.IsNaN(v) { // no meaningful value: an empty field
			row = append(row, "")
			continue
		}
		row = append(row, fmtFloat(v))
	}
	if ex := m.ExactDepth(); ex != nil {
		n := diag.ErrorNorms(m.Depth(), ex, m.Mesh().CellArea)
		row = append(row, fmtFloat(n.L1), fmtFloat(n.L2), fmtFloat(n.LInf))
	} else {
		row = append(row, "", "", "")
	}
	b := r.ledger.Record(m.Time(), inv.Energy, inv.PotentialEnstrophy, m.Rates())
	for _, v := range []float64{b.EnergyScheme, b.EnergyDissipation, b.EnergyResidual, b.EnstrophyScheme, b.EnstrophyDissipation, b.EnstrophyResidual} {
		row = append(row, fmtFloat(v))
	}
	r.series.WriteString(strings.Join(row, ",") + "\n")
	r.rowSteps, r.rowEnds = append(r.rowSteps, m.Steps()), append(r.rowEnds, r.series.Len())
	r.ledgers = append(r.ledgers, r.ledger)
	if r.snaps != nil {
		m.Diagnostics().Vorticity(r.snapZeta, nil, m.State())
		if err := r.snaps.Write(m.Time(), m.Depth(), m.Velocity(), r.snapZeta); err != nil {
			return fmt.Errorf("snapshots.nc: %w", err)
		}
	}
	return nil
}

func fmtFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func meta(cfg sim.Config) ncout.Meta {
	m := ncout.Meta{
		Title:  cfg.Title,
		Source: "gyrebench " + cfg.Scheme.Name + " / " + cfg.Time.Integrator,
		Attrs: []ncout.Attr{
			{Name: "gyrebench_scheme", Value: cfg.Scheme.Name},
			{Name: "gyrebench_integrator", Value: cfg.Time.Integrator},
			{Name: "gyrebench_case", Value: cfg.Initial.Case},
		},
	}
	// The dissipation, when on, in m2 s-1 and m4 s-1.
	for _, a := range []struct {
		name string
		v    float64
	}{
		{"gyrebench_viscosity", cfg.Scheme.Viscosity},
		{"gyrebench_hyperviscosity", cfg.Scheme.Hyperviscosity},
		{"gyrebench_divergence_damping", cfg.Scheme.DivergenceDamping},
	} {
		if a.v != 0 {
			m.Attrs = append(m.Attrs, ncout.Attr{Name: a.name, Value: a.v})
		}
	}
	return m
}

func (r *runner) openSnapshots() error {
	f, err := atomicfile.Create(filepath.Join(r.opt.OutDir, "snapshots.nc"))
	if err != nil {
		return fmt.Errorf("snapshots.nc: %w", err)
	}
	r.snapFile = f
	fields := stateFields(nil, nil, nil)
	r.snaps, err = ncout.NewSnapshots(f, r.model.Mesh(), meta(r.cfg), fields)
	if err != nil {
		return fmt.Errorf("snapshots.nc: %w", err)
	}
	r.snapZeta = make([]float64, r.model.Mesh().NumVertices)
	return nil
}

// stateFields describes depth, normal velocity and vorticity.
func stateFields(h, u, zeta []float64) []ncout.Field {
	return []ncout.Field{
		{Name: "h", Location: ncout.Face, Units: "m", LongName: "fluid depth", CellMeasures: ncout.FaceAreaMeasure, Data: h},
		{Name: "u", Location: ncout.Edge, Units: "m s-1", LongName: "velocity component along the edge normal n_e", Data: u},
		{Name: "relative_vorticity", Location: ncout.Node, Units: "s-1", LongName: "relative vorticity on the dual cells", CellMeasures: ncout.NodeAreaMeasure, Data: zeta},
	}
}

// FinalFile builds final.nc for m's current state: depth, normal
// velocity, relative and potential vorticity and the bottom height on m's
// mesh, with m's current scheme and integrator in the global attributes.
// The file refers to m's state until it is written.
func FinalFile(m *sim.Model) (*ncout.File, error) {
	msh := m.Mesh()
	zeta := make([]float64, msh.NumVertices)
	pv := make([]float64, msh.NumVertices)
	m.Diagnostics().Vorticity(zeta, pv, m.State())
	bottom := m.Bottom()
	if bottom == nil {
		bottom = make([]float64, msh.NumCells)
	}
	fields := append(stateFields(m.Depth(), m.Velocity(), zeta),
		ncout.Field{Name: "potential_vorticity", Location: ncout.Node, Units: "m-1 s-1", LongName: "potential vorticity (zeta + f) / h", CellMeasures: ncout.NodeAreaMeasure, Data: pv},
		ncout.Field{Name: "bottom_height", Location: ncout.Face, Units: "m", LongName: "bottom height above the reference level", CellMeasures: ncout.FaceAreaMeasure, Data: bottom},
	)
	return ncout.MeshFile(msh, meta(m.Config()), fields)
}

// WriteFinal writes final.nc for m's current state to path, as a run
// does, atomically. The workbench uses it for a live run's state, so that
// a live run and its headless replay are compared file to file.
func WriteFinal(path string, m *sim.Model) error {
	nc, err := FinalFile(m)
	if err == nil {
		err = ncout.WriteFile(path, nc)
	}
	if err != nil {
		return fmt.Errorf("final.nc: %w", err)
	}
	return nil
}

// finish writes every file from the model's current (last good) state.
func (r *runner) finish(runErr error) error {
	dir := r.opt.OutDir
	if err := WriteFinal(filepath.Join(dir, "final.nc"), r.model); err != nil {
		return err
	}
	if r.snaps != nil {
		if err := r.snaps.Close(); err != nil {
			return fmt.Errorf("snapshots.nc: %w", err)
		}
		if err := r.snapFile.Commit(); err != nil {
			return fmt.Errorf("snapshots.nc: %w", err)
		}
	}
	if err := atomicfile.WriteFile(filepath.Join(dir, "series.csv"), func(w io.Writer) error {
		_, err := w.Write(r.series.Bytes())
		return err
	}); err != nil {
		return fmt.Errorf("series.csv: %w", err)
	}
	r.summary = r.makeSummary(runErr)
	js, err := json.MarshalIndent(r.summary, "", "  ")
	if err != nil {
		return fmt.Errorf("summary.json: %w", err)
	}
	if err := atomicfile.WriteFile(filepath.Join(dir, "summary.json"), func(w io.Writer) error {
		_, err := w.Write(append(js, '\n'))
		return err
	}); err != nil {
		return fmt.Errorf("summary.json: %w", err)
	}
	// The recipe is the scenario as given, so rerunning it repeats the run
	// from the start.
	recipe := r.opt.Recipe
	if recipe == nil {
		recipe = scenario.Format(r.cfg, r.opt.Description)
	}
	if err := atomicfile.WriteFile(filepath.Join(dir, "recipe.toml"), func(w io.Writer) error {
		_, err := w.Write(recipe)
		return err
	}); err != nil {
		return fmt.Errorf("recipe.toml: %w", err)
	}
	return nil
}

func (r *runner) makeSummary(runErr error) *Summary {
	m := r.model
	msh := m.Mesh()
	inv, ini := m.Invariants(), m.Initial()
	c := m.Config()
	s := &Summary{
		Title: c.Title, Grid: c.Grid.Kind, N: c.Grid.N,
		Cells: msh.NumCells, Edges: msh.NumEdges, Vertices: msh.NumVertices, SpacingM: msh.Spacing(),
		Scheme: c.Scheme.Name, Integrator: c.Time.Integrator, Dt: c.Time.Dt,
		Steps: m.Steps(), TimeS: m.Time(), WallSeconds: r.wall.Seconds(), Workers: m.Workers(),
		Mass: inv.Mass, Energy: inv.Energy, PotentialEnstrophy: inv.PotentialEnstrophy,
		MassRelDrift:      diag.RelDrift(inv.Mass, ini.Mass),
		EnergyRelDrift:    diag.RelDrift(inv.Energy, ini.Energy),
		EnstrophyRelDrift: diag.RelDrift(inv.PotentialEnstrophy, ini.PotentialEnstrophy),
		CirculationDrift:  inv.Circulation - ini.Circulation,
		HMin:              inv.HMin, HMax: inv.HMax, CourantMax: inv.CourantGravity,
		Interrupted: errors.Is(runErr, ErrInterrupted),

		Viscosity: c.Scheme.Viscosity, Hyperviscosity: c.Scheme.Hyperviscosity, DivergenceDamping: c.Scheme.DivergenceDamping,
		Budget: BudgetIntegrals(r.ledger.Integrated),
	}
	var bu *sim.BlowUpError
	if errors.As(runErr, &bu) {
		s.BlewUp = true
		s.BlowUp = &BlowUpInfo{Step: bu.Step, TimeS: bu.Time, Cell: bu.Cell, Edge: bu.Edge, Value: fmtFloat(bu.Value), Message: bu.Error()}
	}
	if ex := m.ExactDepth(); ex != nil {
		n := diag.ErrorNorms(m.Depth(), ex, msh.CellArea)
		s.L1H, s.L2H, s.LInfH = &n.L1, &n.L2, &n.LInf
	}
	return s
}
