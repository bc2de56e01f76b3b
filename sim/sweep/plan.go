package sweep

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/pelletier/go-toml/v2"

	"gyrebench/sim"
	"gyrebench/sim/atomicfile"
	"gyrebench/sim/scenario"
)

// MaxRuns caps the number of runs in one sweep, so that a mistyped list
// fails with a message instead of filling the disk.
const MaxRuns = 1000

// File names inside a sweep folder.
const (
	PlanFile   = "sweep-plan.json"
	CSVFile    = "sweep.csv"
	JSONFile   = "sweep.json"
	JobsFolder = "jobs"
)

// Axis is one --vary flag: a scenario key and the values it takes, in the
// order given.
type Axis struct {
	Key    string   `json:"key"`
	Values []string `json:"values"`
}

// ParseVary reads one --vary value, "key=v1,v2,...". It checks the form
// only (a key, a non-empty list, no empty or repeated item); NewPlan checks
// the key and the values against the scenario schema.
func ParseVary(s string) (Axis, error) {
	key, list, ok := strings.Cut(s, "=")
	key = strings.TrimSpace(key)
	if !ok || key == "" {
		return Axis{}, fmt.Errorf("--vary %q: want key=v1,v2,..., e.g. --vary grid.n=16,32,64", s)
	}
	if strings.TrimSpace(list) == "" {
		return Axis{}, fmt.Errorf("--vary %s: empty list of values; want at least one, e.g. --vary %s=16,32", key, key)
	}
	a := Axis{Key: key}
	seen := map[string]bool{}
	for _, v := range strings.Split(list, ",") {
		v = strings.TrimSpace(v)
		if v == "" {
			return Axis{}, fmt.Errorf("--vary %s=%s: empty value in the list", key, list)
		}
		if seen[v] {
			return Axis{}, fmt.Errorf("--vary %s=%s: value %q is repeated", key, list, v)
		}
		seen[v] = true
		a.Values = append(a.Values, v)
	}
	return a, nil
}

// Choice is one key's value in one run, in canonical form: the value as
// the run's recipe.toml writes it (integers without a point, floats in the
// shortest form that round-trips, strings unquoted).
type Choice struct {
	Key   string `json:"key"`
	Value string `json:"value"`
}

// Run is one point of the product.
type Run struct {
	Index   int        `json:"index"`
	Name    string     `json:"dir"` // folder name inside the sweep folder
	Choices []Choice   `json:"choices"`
	Config  sim.Config `json:"-"`
}

// Plan is a validated sweep: the base scenario, the axes, and every run of
// their product in product order (the last axis varies fastest).
type Plan struct {
	Version     int      `json:"version"`
	Scenario    string   `json:"scenario"` // FILE_OR_NAME as given, for people
	Description string   `json:"description,omitempty"`
	Sets        []string `json:"sets,omitempty"`
	Axes        []Axis   `json:"vary"`
	Runs        []Run    `json:"runs"`
}

// NewPlan applies sets and then every combination of the axes to base,
// validating each resulting config. Its errors name the flag and the value
// ("--vary grid.n = "x": must be an integer"). Nothing is written.
func NewPlan(base sim.Config, scenarioName, description string, sets []string, axes []Axis) (*Plan, error) {
	if len(axes) == 0 {
		return nil, fmt.Errorf("--vary: at least one is needed, e.g. --vary grid.n=16,32,64")
	}
	for _, s := range sets {
		if err := scenario.Set(&base, s); err != nil {
			return nil, err
		}
	}
	total := 1
	seen := map[string]bool{}
	for _, a := range axes {
		if len(a.Values) == 0 {
			return nil, fmt.Errorf("--vary %s: empty list of values", a.Key)
		}
		if seen[a.Key] {
			return nil, fmt.Errorf("--vary %s: the key is given twice; list all its values in one --vary", a.Key)
		}
		seen[a.Key] = true
		// Check each value alone, so the message names it even when the
		// product is too large.
		for _, v := range a.Values {
			c := base.Clone()
			if err := setVary(&c, a.Key, v); err != nil {
				return nil, err
			}
		}
		total *= len(a.Values)
		if total > MaxRuns {
			return nil, fmt.Errorf("--vary: the product has more than %d runs (%s); at most %d are allowed",
				MaxRuns, productText(axes), MaxRuns)
		}
	}
	p := &Plan{Version: 1, Scenario: scenarioName, Description: description, Sets: sets, Axes: axes}
	idx := make([]int, len(axes))
	for i := range total {
		c := base.Clone()
		var raw []Choice
		for k, a := range axes {
			v := a.Values[idx[k]]
			if err := setVary(&c, a.Key, v); err != nil {
				return nil, err
			}
			raw = append(raw, Choice{a.Key, v})
		}
		if err := c.Validate(); err != nil {
			return nil, fmt.Errorf("--vary %s: %w", choiceText(raw), err)
		}
		choices, err := canonical(scenario.Format(c, description), raw)
		if err != nil {
			return nil, err
		}
		p.Runs = append(p.Runs, Run{Index: i, Name: pointName(i, total), Choices: choices, Config: c})
		for k := len(axes) - 1; k >= 0; k-- {
			if idx[k]++; idx[k] < len(axes[k].Values) {
				break
			}
			idx[k] = 0
		}
	}
	return p, nil
}

func productText(axes []Axis) string {
	var s []string
	for _, a := range axes {
		s = append(s, strconv.Itoa(len(a.Values)))
	}
	return strings.Join(s, " × ")
}

// setVary applies key=value through the scenario schema, with messages
// that name --vary rather than --set.
func setVary(c *sim.Config, key, value string) error {
	if err := scenario.Set(c, key+"="+value); err != nil {
		msg := err.Error()
		if rest, ok := strings.CutPrefix(msg, "--set"); ok {
			msg = "--vary" + rest
		} else {
			msg = fmt.Sprintf("--vary %s=%s: %s", key, value, msg)
		}
		return fmt.Errorf("%s", msg)
	}
	return nil
}

func choiceText(cs []Choice) string {
	var s []string
	for _, c := range cs {
		s = append(s, c.Key+"="+c.Value)
	}
	return strings.Join(s, ",")
}

// canonical returns the choices with each value as the recipe writes it;
// a key the recipe omits (a zero optional number) keeps the given value.
func canonical(recipe []byte, raw []Choice) ([]Choice, error) {
	flat, err := flatten(recipe)
	if err != nil {
		return nil, err
	}
	out := make([]Choice, len(raw))
	for i, c := range raw {
		out[i] = c
		if v, ok := flat[c.Key]; ok {
			out[i].Value = v
		}
	}
	return out, nil
}

// flatten reads a recipe into dotted key → canonical value.
func flatten(recipe []byte) (map[string]string, error) {
	var m map[string]any
	if err := toml.Unmarshal(recipe, &m); err != nil {
		return nil, fmt.Errorf("recipe: %w", err)
	}
	flat := map[string]string{}
	var walk func(prefix string, m map[string]any)
	walk = func(prefix string, m map[string]any) {
		for k, v := range m {
			switch x := v.(type) {
			case map[string]any:
				walk(prefix+k+".", x)
			case string:
				flat[prefix+k] = x
			case int64:
				flat[prefix+k] = strconv.FormatInt(x, 10)
			case float64:
				flat[prefix+k] = strconv.FormatFloat(x, 'g', -1, 64)
			case bool:
				flat[prefix+k] = strconv.FormatBool(x)
			default:
				flat[prefix+k] = fmt.Sprint(x)
			}
		}
	}
	walk("", m)
	return flat, nil
}

// pointName is the folder of run i of n: point-001, point-002, … in
// product order, 1-based, with as many digits as n needs (at least three)
// so that the folders sort in that order. The choices that make the point
// are in sweep.csv and sweep.json, not in the name.
func pointName(i, n int) string {
	w := max(3, len(strconv.Itoa(n)))
	return fmt.Sprintf("point-%0*d", w, i+1)
}

// WritePlan writes the plan to DIR/sweep-plan.json, creating DIR.
func WritePlan(dir string, p *Plan) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("--out %s: %w", dir, err)
	}
	b, err := json.MarshalIndent(p, "", "  ")
	if err != nil {
		return fmt.Errorf("%s: %w", PlanFile, err)
	}
	return writeBytes(filepath.Join(dir, PlanFile), append(b, '\n'))
}

// ReadPlan reads DIR/sweep-plan.json. It reports os.ErrNotExist (wrapped)
// when there is none.
func ReadPlan(dir string) (*Plan, error) {
	b, err := os.ReadFile(filepath.Join(dir, PlanFile))
	if err != nil {
		return nil, err
	}
	var p Plan
	if err := json.Unmarshal(b, &p); err != nil {
		return nil, fmt.Errorf("%s: %w", filepath.Join(dir, PlanFile), err)
	}
	if p.Version != 1 {
		return nil, fmt.Errorf("%s: version %d: this gyrebench reads version 1", filepath.Join(dir, PlanFile), p.Version)
	}
	for i, r := range p.Runs {
		if r.Name == "" || r.Name != filepath.Base(r.Name) || strings.HasPrefix(r.Name, ".") {
			return nil, fmt.Errorf("%s: run %d: folder name %q must be a plain name inside the sweep folder", filepath.Join(dir, PlanFile), i, r.Name)
		}
	}
	return &p, nil
}

func writeBytes(path string, b []byte) error {
	return atomicfile.WriteFile(path, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// WriteJobs writes the plan, one resolved scenario per run under
// DIR/jobs/, and the job list at path: one line per run, in product order,
//
//	gyrebench run DIR/jobs/point-001.toml --out DIR/point-001 --workers 1
//
// Each line is a complete, independent command, quoted for a POSIX shell
// where needed; paths are DIR as given, so the lines run from the folder
// sweep was run in. The scenario files are fully resolved (the same text a
// run writes as recipe.toml), so a job needs nothing but the binary and
// DIR.
func WriteJobs(path, dir string, p *Plan, workers int) error {
	if err := WritePlan(dir, p); err != nil {
		return err
	}
	jobs := filepath.Join(dir, JobsFolder)
	if err := os.MkdirAll(jobs, 0o755); err != nil {
		return fmt.Errorf("%s: %w", jobs, err)
	}
	var list bytes.Buffer
	for _, r := range p.Runs {
		in := filepath.Join(jobs, r.Name+".toml")
		if err := writeBytes(in, scenario.Format(r.Config, p.Description)); err != nil {
			return err
		}
		args := []string{"gyrebench", "run", in, "--out", filepath.Join(dir, r.Name), "--workers", strconv.Itoa(max(workers, 1))}
		for i, a := range args {
			if i > 0 {
				list.WriteByte(' ')
			}
			list.WriteString(shellQuote(a))
		}
		list.WriteByte('\n')
	}
	if err := writeBytes(path, list.Bytes()); err != nil {
		return fmt.Errorf("--jobs-file %s: %w", path, err)
	}
	return nil
}

// shellQuote quotes s for a POSIX shell when it holds anything but safe
// characters.
func shellQuote(s string) string {
	safe := s != ""
	for _, r := range s {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("._=,+-/:@%", r)) {
			safe = false
			break
		}
	}
	if safe {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}
