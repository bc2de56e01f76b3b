// Package scenario reads and writes scenario files: strict TOML with the
// sections grid, physics, scheme, time, initial and output (the contract in
// the design notes), mapped onto sim.Config.
//
// Parsing is strict: an unknown key, a wrong type or a malformed file is an
// error naming the key and the line. Overrides given as dotted key=value
// pairs (the command line's --set) are typed by the same schema. Format
// writes a fully resolved scenario whose floats round-trip exactly, so a
// written recipe reproduces its run bit for bit.
package scenario

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"github.com/pelletier/go-toml/v2"

	"gyrebench/sim"
	"gyrebench/sim/cases"
	"gyrebench/sim/scheme"
)

// Scenario is a parsed scenario file.
type Scenario struct {
	Description string // one line, for listings
	Config      sim.Config
}

type fileGrid struct {
	Kind     *string  `toml:"kind"`
	N        *int     `toml:"n"`
	Length   *float64 `toml:"length"`
	Height   *float64 `toml:"height"`
	Optimize *string  `toml:"optimize"`
	Distort  *float64 `toml:"distort"`
	Jitter   *float64 `toml:"jitter"`
	Seed     *int     `toml:"seed"`
}

type filePhysics struct {
	G      *float64 `toml:"g"`
	F0     *float64 `toml:"f0"`
	Beta   *float64 `toml:"beta"`
	Depth  *float64 `toml:"depth"`
	Radius *float64 `toml:"radius"`
	Omega  *float64 `toml:"omega"`
}

type fileScheme struct {
	Name       *string  `toml:"name"`
	APVMFactor *float64 `toml:"apvm_factor"`
	Hodge      *string  `toml:"hodge"`
}

type fileTime struct {
	Integrator *string  `toml:"integrator"`
	Dt         *float64 `toml:"dt"`
	Duration   *float64 `toml:"duration"`
	Asselin    *float64 `toml:"asselin"`
}

type fileOutput struct {
	Every     *float64 `toml:"every"`
	Snapshots *bool    `toml:"snapshots"`
}

type file struct {
	Title       *string        `toml:"title"`
	Description *string        `toml:"description"`
	Grid        fileGrid       `toml:"grid"`
	Physics     filePhysics    `toml:"physics"`
	Scheme      fileScheme     `toml:"scheme"`
	Time        fileTime       `toml:"time"`
	Initial     map[string]any `toml:"initial"`
	Output      fileOutput     `toml:"output"`
}

// Parse reads a scenario. name is used in messages (a file name).
// Missing keys take the defaults of sim.DefaultConfig. The result is not
// validated beyond types; call Config.Validate.
func Parse(data []byte, name string) (*Scenario, error) {
	var f file
	dec := toml.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&f); err != nil {
		return nil, describe(err, name)
	}
	s := &Scenario{Config: sim.DefaultConfig()}
	c := &s.Config
	if f.Title != nil {
		c.Title = *f.Title
	}
	if f.Description != nil {
		s.Description = *f.Description
	}
	str(&c.Grid.Kind, f.Grid.Kind)
	if f.Grid.N != nil {
		c.Grid.N = *f.Grid.N
	}
	num(&c.Grid.Length, f.Grid.Length)
	num(&c.Grid.Height, f.Grid.Height)
	str(&c.Grid.Optimize, f.Grid.Optimize)
	num(&c.Grid.Distort, f.Grid.Distort)
	num(&c.Grid.Jitter, f.Grid.Jitter)
	if f.Grid.Seed != nil {
		c.Grid.Seed = *f.Grid.Seed
	}
	num(&c.Physics.G, f.Physics.G)
	num(&c.Physics.F0, f.Physics.F0)
	num(&c.Physics.Beta, f.Physics.Beta)
	num(&c.Physics.Depth, f.Physics.Depth)
	num(&c.Physics.Radius, f.Physics.Radius)
	num(&c.Physics.Omega, f.Physics.Omega)
	str(&c.Scheme.Name, f.Scheme.Name)
	num(&c.Scheme.APVMFactor, f.Scheme.APVMFactor)
	str(&c.Scheme.Hodge, f.Scheme.Hodge)
	str(&c.Time.Integrator, f.Time.Integrator)
	num(&c.Time.Dt, f.Time.Dt)
	num(&c.Time.Duration, f.Time.Duration)
	num(&c.Time.Asselin, f.Time.Asselin)
	num(&c.Output.Every, f.Output.Every)
	if f.Output.Snapshots != nil {
		c.Output.Snapshots = *f.Output.Snapshots
	}
	if f.Initial != nil {
		c.Initial.Params = map[string]float64{}
		keys := make([]string, 0, len(f.Initial))
		for k := range f.Initial {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			v := f.Initial[k]
			if k == "case" {
				cs, ok := v.(string)
				if !ok {
					return nil, fmt.Errorf("%s:%d: initial.case = %v: must be a string naming a case", name, lineOf(data, "initial", k), v)
				}
				c.Initial.Case = cs
				continue
			}
			switch x := v.(type) {
			case int64:
				c.Initial.Params[k] = float64(x)
			case float64:
				c.Initial.Params[k] = x
			default:
				return nil, fmt.Errorf("%s:%d: initial.%s = %v: must be a number", name, lineOf(data, "initial", k), k, v)
			}
		}
		if cs, err := cases.Lookup(c.Initial.Case); err != nil {
			return nil, fmt.Errorf("%s:%d: %w", name, lineOf(data, "initial", "case"), err)
		} else if _, err := cs.Resolve(c.Initial.Params); err != nil {
			bad := ""
			for k := range c.Initial.Params {
				if _, e := cs.Resolve(map[string]float64{k: 0}); e != nil {
					bad = k
				}
			}
			return nil, fmt.Errorf("%s:%d: %w", name, lineOf(data, "initial", bad), err)
		}
	}
	return s, nil
}

func str(dst *string, src *string) {
	if src != nil {
		*dst = *src
	}
}

func num(dst *float64, src *float64) {
	if src != nil {
		*dst = *src
	}
}

// describe turns a decoder error into "name:line: key: what".
func describe(err error, name string) error {
	var sm *toml.StrictMissingError
	if errors.As(err, &sm) && len(sm.Errors) > 0 {
		e := sm.Errors[0]
		row, _ := e.Position()
		key := strings.Join(e.Key(), ".")
		return fmt.Errorf("%s:%d: %s: unknown key; allowed keys: %s", name, row, key, strings.Join(Keys(), ", "))
	}
	var de *toml.DecodeError
	if errors.As(err, &de) {
		row, _ := de.Position()
		key := strings.Join(de.Key(), ".")
		msg := de.Error()
		if key != "" {
			return fmt.Errorf("%s:%d: %s: %s", name, row, key, msg)
		}
		return fmt.Errorf("%s:%d: %s", name, row, msg)
	}
	return fmt.Errorf("%s: %w", name, err)
}

// lineOf finds the line of key in [section], for messages about keys the
// decoder accepted into a map. It returns 0 when not found.
func lineOf(data []byte, section, key string) int {
	header := regexp.MustCompile(`^\s*\[\s*([A-Za-z0-9_.-]+)\s*\]`)
	kv := regexp.MustCompile(`^\s*([A-Za-z0-9_-]+)\s*=`)
	in := false
	for i, line := range strings.Split(string(data), "\n") {
		if m := header.FindStringSubmatch(line); m != nil {
			in = m[1] == section
			continue
		}
		if m := kv.FindStringSubmatch(line); in && m != nil && m[1] == key {
			return i + 1
		}
	}
	return 0
}

// key is one settable scenario key.
type key struct {
	name string
	kind string // "string", "integer", "number", "boolean"
	set  func(c *sim.Config, v any)
}

func keys() []key {
	f := func(p func(c *sim.Config) *float64) func(c *sim.Config, v any) {
		return func(c *sim.Config, v any) { *p(c) = v.(float64) }
	}
	s := func(p func(c *sim.Config) *string) func(c *sim.Config, v any) {
		return func(c *sim.Config, v any) { *p(c) = v.(string) }
	}
	return []key{
		{"title", "string", s(func(c *sim.Config) *string { return &c.Title })},
		{"grid.kind", "string", func(c *sim.Config, v any) { c.Grid.SetKind(v.(string)) }},
		{"grid.n", "integer", func(c *sim.Config, v any) { c.Grid.N = v.(int) }},
		{"grid.length", "number", f(func(c *sim.Config) *float64 { return &c.Grid.Length })},
		{"grid.height", "number", f(func(c *sim.Config) *float64 { return &c.Grid.Height })},
		{"grid.optimize", "string", s(func(c *sim.Config) *string { return &c.Grid.Optimize })},
		{"grid.distort", "number", f(func(c *sim.Config) *float64 { return &c.Grid.Distort })},
		{"grid.jitter", "number", f(func(c *sim.Config) *float64 { return &c.Grid.Jitter })},
		{"grid.seed", "integer", func(c *sim.Config, v any) { c.Grid.Seed = v.(int) }},
		{"physics.g", "number", f(func(c *sim.Config) *float64 { return &c.Physics.G })},
		{"physics.f0", "number", f(func(c *sim.Config) *float64 { return &c.Physics.F0 })},
		{"physics.beta", "number", f(func(c *sim.Config) *float64 { return &c.Physics.Beta })},
		{"physics.depth", "number", f(func(c *sim.Config) *float64 { return &c.Physics.Depth })},
		{"physics.radius", "number", f(func(c *sim.Config) *float64 { return &c.Physics.Radius })},
		{"physics.omega", "number", f(func(c *sim.Config) *float64 { return &c.Physics.Omega })},
		{"scheme.name", "string", s(func(c *sim.Config) *string { return &c.Scheme.Name })},
		{"scheme.apvm_factor", "number", f(func(c *sim.Config) *float64 { return &c.Scheme.APVMFactor })},
		{"scheme.hodge", "string", s(func(c *sim.Config) *string { return &c.Scheme.Hodge })},
		{"time.integrator", "string", s(func(c *sim.Config) *string { return &c.Time.Integrator })},
		{"time.dt", "number", f(func(c *sim.Config) *float64 { return &c.Time.Dt })},
		{"time.duration", "number", f(func(c *sim.Config) *float64 { return &c.Time.Duration })},
		{"time.asselin", "number", f(func(c *sim.Config) *float64 { return &c.Time.Asselin })},
		{"initial.case", "string", s(func(c *sim.Config) *string { return &c.Initial.Case })},
		{"output.every", "number", f(func(c *sim.Config) *float64 { return &c.Output.Every })},
		{"output.snapshots", "boolean", func(c *sim.Config, v any) { c.Output.Snapshots = v.(bool) }},
	}
}

// Keys lists the fixed scenario keys as dotted paths; initial.<param>
// keys depend on the case.
func Keys() []string {
	var s []string
	for _, k := range keys() {
		s = append(s, k.name)
	}
	return append(s, "initial.<case parameter>", "description")
}

// Set applies one dotted key=value override, typed by the schema.
func Set(c *sim.Config, assignment string) error {
	name, value, ok := strings.Cut(assignment, "=")
	name, value = strings.TrimSpace(name), strings.TrimSpace(value)
	if !ok || name == "" {
		return fmt.Errorf("--set %q: want key=value, e.g. --set time.dt=30", assignment)
	}
	for _, k := range keys() {
		if k.name != name {
			continue
		}
		v, err := parseValue(k.kind, value)
		if err != nil {
			return fmt.Errorf("--set %s = %q: %v", name, value, err)
		}
		k.set(c, v)
		return nil
	}
	if p, ok := strings.CutPrefix(name, "initial."); ok {
		v, err := strconv.ParseFloat(value, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("--set %s = %q: must be a finite number", name, value)
		}
		cs, err := cases.Lookup(c.Initial.Case)
		if err != nil {
			return err
		}
		params := map[string]float64{}
		for k, x := range c.Initial.Params {
			params[k] = x
		}
		params[p] = v
		if _, err := cs.Resolve(params); err != nil {
			return err
		}
		c.Initial.Params = params
		return nil
	}
	return fmt.Errorf("--set %s: unknown key; allowed: %s", name, strings.Join(Keys(), ", "))
}

func parseValue(kind, s string) (any, error) {
	switch kind {
	case "string":
		return strings.Trim(s, `"`), nil
	case "integer":
		v, err := strconv.Atoi(s)
		if err != nil {
			return nil, fmt.Errorf("must be an integer")
		}
		return v, nil
	case "boolean":
		v, err := strconv.ParseBool(s)
		if err != nil {
			return nil, fmt.Errorf("must be true or false")
		}
		return v, nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return nil, fmt.Errorf("must be a finite number")
	}
	return v, nil
}

// Format writes the fully resolved scenario as TOML. Floats are written
// with the shortest representation that parses back to the same bits.
func Format(c sim.Config, description string) []byte {
	var b bytes.Buffer
	q := strconv.Quote
	g := func(v float64) string {
		s := strconv.FormatFloat(v, 'g', -1, 64)
		if !strings.ContainsAny(s, ".eEn") {
			s += ".0"
		}
		return s
	}
	fmt.Fprintf(&b, "title = %s\n", q(c.Title))
	if description != "" {
		fmt.Fprintf(&b, "description = %s\n", q(description))
	}
	fmt.Fprintf(&b, "\n[grid]\nkind = %s\nn = %d\nlength = %s\n", q(c.Grid.Kind), c.Grid.N, g(c.Grid.Length))
	if c.Grid.Height != 0 {
		fmt.Fprintf(&b, "height = %s\n", g(c.Grid.Height))
	}
	if c.Grid.Optimize != "" {
		fmt.Fprintf(&b, "optimize = %s\n", q(c.Grid.Optimize))
	}
	if c.Grid.Distort != 0 {
		fmt.Fprintf(&b, "distort = %s\n", g(c.Grid.Distort))
	}
	if c.Grid.Jitter != 0 {
		fmt.Fprintf(&b, "jitter = %s\n", g(c.Grid.Jitter))
	}
	if c.Grid.Jitter != 0 || c.Grid.Seed != sim.DefaultConfig().Grid.Seed {
		fmt.Fprintf(&b, "seed = %d\n", c.Grid.Seed)
	}
	p := c.Physics
	fmt.Fprintf(&b, "\n[physics]\ng = %s\nf0 = %s\nbeta = %s\ndepth = %s\nradius = %s\nomega = %s\n",
		g(p.G), g(p.F0), g(p.Beta), g(p.Depth), g(p.Radius), g(p.Omega))
	fmt.Fprintf(&b, "\n[scheme]\nname = %s\n", q(c.Scheme.Name))
	if c.Scheme.APVMFactor != 0 {
		fmt.Fprintf(&b, "apvm_factor = %s\n", g(c.Scheme.APVMFactor))
	}
	if c.Scheme.Hodge != "" && c.Scheme.Hodge != scheme.HodgeConsistent {
		fmt.Fprintf(&b, "hodge = %s\n", q(c.Scheme.Hodge))
	}
	fmt.Fprintf(&b, "\n[time]\nintegrator = %s\ndt = %s\nduration = %s\n", q(c.Time.Integrator), g(c.Time.Dt), g(c.Time.Duration))
	if c.Time.Asselin != 0 {
		fmt.Fprintf(&b, "asselin = %s\n", g(c.Time.Asselin))
	}
	fmt.Fprintf(&b, "\n[initial]\ncase = %s\n", q(c.Initial.Case))
	if cs, err := cases.Lookup(c.Initial.Case); err == nil {
		if full, err := cs.Resolve(c.Initial.Params); err == nil {
			for _, prm := range cs.Params {
				fmt.Fprintf(&b, "%s = %s\n", prm.Name, g(full[prm.Name]))
			}
		}
	}
	fmt.Fprintf(&b, "\n[output]\nevery = %s\nsnapshots = %t\n", g(c.Output.Every), c.Output.Snapshots)
	return b.Bytes()
}
