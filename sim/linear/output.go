package linear

import (
	"bufio"
	"context"
	"encoding/json"
	"io"
	"math"
	"strconv"

	"gyrebench/sim"
)

// CSVColumns are the columns of modes.csv, in order.
var CSVColumns = []string{"growth_rate_per_s", "frequency_per_s", "class", "kx", "ky", "omega_continuous", "omega_discrete_theory"}

// WriteCSV writes one row per eigenvalue with the header CSVColumns:
// growth rate and angular frequency in s⁻¹, the class, the dominant
// wavevector in rad m⁻¹ and the theoretical frequencies in s⁻¹. Values
// that do not apply are empty. Floats round-trip exactly.
func (r *Result) WriteCSV(w io.Writer) error {
	bw := bufio.NewWriter(w)
	for i, c := range CSVColumns {
		if i > 0 {
			bw.WriteByte(',')
		}
		bw.WriteString(c)
	}
	bw.WriteByte('\n')
	f := func(v float64) string {
		if math.IsNaN(v) {
			return ""
		}
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	for _, m := range r.Modes {
		bw.WriteString(f(m.GrowthRate) + "," + f(m.Frequency) + "," + string(m.Class) + "," +
			f(m.Kx) + "," + f(m.Ky) + "," + f(m.OmegaContinuous) + "," + f(m.OmegaDiscrete) + "\n")
	}
	return bw.Flush()
}

// MarshalJSON writes NaN fields as null.
func (m Mode) MarshalJSON() ([]byte, error) {
	p := func(v float64) *float64 {
		if math.IsNaN(v) {
			return nil
		}
		return &v
	}
	return json.Marshal(struct {
		GrowthRate      float64  `json:"growth_rate_per_s"`
		Frequency       float64  `json:"frequency_per_s"`
		Class           Class    `json:"class"`
		Kx              *float64 `json:"kx"`
		Ky              *float64 `json:"ky"`
		OmegaContinuous *float64 `json:"omega_continuous"`
		OmegaDiscrete   *float64 `json:"omega_discrete_theory"`
		Score           float64  `json:"score"`
	}{m.GrowthRate, m.Frequency, m.Class, p(m.Kx), p(m.Ky), p(m.OmegaContinuous), p(m.OmegaDiscrete), m.Score})
}

// Summary is summary.json.
type Summary struct {
	Grid               string  `json:"grid"`
	N                  int     `json:"n"`
	Scheme             string  `json:"scheme"`
	Cells              int     `json:"cells"`
	Edges              int     `json:"edges"`
	Vertices           int     `json:"vertices"`
	Unknowns           int     `json:"unknowns"`
	F0                 float64 `json:"f0_per_s"`
	Beta               float64 `json:"beta_per_m_s"`
	Depth              float64 `json:"depth_m"`
	G                  float64 `json:"g_m_per_s2"`
	Method             string  `json:"method"`
	SkewAdjoint        bool    `json:"skew_adjoint_in_energy_norm"`
	SkewDefect         float64 `json:"skew_defect"`
	Counts             Counts  `json:"counts"`
	Expected           *Counts `json:"expected_counts,omitempty"`
	MaxFrequency       float64 `json:"max_abs_frequency_per_s"`
	SpectralRadius     float64 `json:"spectral_radius_per_s"`
	Growing            int     `json:"positive_growth"`
	GrowthTolerance    float64 `json:"growth_tolerance_per_s"`
	MaxGrowthRate      float64 `json:"max_growth_rate_per_s"`
	ZeroTolerance      float64 `json:"zero_frequency_tolerance_per_s"`
	Iterations         int     `json:"iterations,omitempty"`
	Rule               string  `json:"classification_rule,omitempty"`
	Limits             []Limit `json:"integrators"`
	Verify             []Trial `json:"verify_dt,omitempty"`
	VerifyBlowUpFactor float64 `json:"verify_blow_up_factor,omitempty"`
	VerifySteps        int     `json:"verify_steps,omitempty"`
	WallSeconds        float64 `json:"wall_seconds"`
}

// Summary returns the summary of r (without verification runs).
func (r *Result) Summary() Summary {
	return Summary{
		Grid: r.Grid, N: r.N, Scheme: r.Scheme,
		Cells: r.Cells, Edges: r.Edges, Vertices: r.Vertices, Unknowns: r.Unknowns,
		F0: r.F0, Beta: r.Beta, Depth: r.Depth, G: r.G,
		Method: r.Method, SkewAdjoint: r.SkewAdjoint, SkewDefect: r.SkewDefect,
		Counts: r.Counts, Expected: r.Expected,
		MaxFrequency: r.MaxFrequency, SpectralRadius: r.SpectralRadius,
		Growing: r.Growing, GrowthTolerance: r.GrowthTolerance, MaxGrowthRate: r.MaxGrowthRate,
		ZeroTolerance: r.ZeroTolerance, Iterations: r.Iterations, Rule: r.Rule,
		Limits: r.Limits, WallSeconds: r.WallSeconds,
	}
}

// VerifyLimits runs VerifyDt for rk3, rk4 and leapfrog at each factor
// times the limit in r (euler has none and is skipped).
func VerifyLimits(ctx context.Context, cfg sim.Config, r *Result, factors []float64) ([]Trial, error) {
	var out []Trial
	for _, l := range r.Limits {
		if l.MaxDt == 0 {
			continue
		}
		for _, f := range factors {
			t, err := VerifyDt(ctx, cfg, l.Integrator, f*l.MaxDt)
			if err != nil {
				return out, err
			}
			t.Factor = f
			out = append(out, t)
		}
	}
	return out, nil
}
