package timeline

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"reflect"
	"regexp"
	"sort"
	"strings"

	"github.com/pelletier/go-toml/v2"

	"gyrebench/sim/dissip"
	"gyrebench/sim/scenario"
)

// Is reports whether data is meant as a timeline file: TOML with a
// [timeline] table or [[event]] tables. Malformed TOML is not a timeline
// (the scenario parser then reports the syntax error).
func Is(data []byte) bool {
	var probe struct {
		Timeline any `toml:"timeline"`
		Event    any `toml:"event"`
	}
	if toml.Unmarshal(data, &probe) != nil {
		return false
	}
	return probe.Timeline != nil || probe.Event != nil
}

// header matches a table header line, [name] or [[name]], with an
// optional comment.
var header = regexp.MustCompile(`^\s*(\[\[?)\s*([A-Za-z0-9_.-]+)\s*\]\]?\s*(#.*)?$`)

// split separates the scenario from the [timeline] and [[event]] tables,
// line by line, blanking in each part the lines of the other so that line
// numbers stay those of the file. It returns the line of each [[event]]
// header.
func split(data []byte) (scen, tl []byte, eventLines []int) {
	var a, b bytes.Buffer
	mine := false
	for i, line := range strings.SplitAfter(string(data), "\n") {
		if m := header.FindStringSubmatch(line); m != nil {
			root, _, _ := strings.Cut(m[2], ".")
			mine = root == "timeline" || root == "event"
			if m[1] == "[[" && m[2] == "event" {
				eventLines = append(eventLines, i+1)
			}
		}
		nl := ""
		if strings.HasSuffix(line, "\n") {
			nl = "\n"
		}
		if mine {
			a.WriteString(nl)
			b.WriteString(line)
		} else {
			a.WriteString(line)
			b.WriteString(nl)
		}
	}
	return a.Bytes(), b.Bytes(), eventLines
}

type fileHead struct {
	Timeline *struct {
		Version *int64   `toml:"version"`
		EndStep *int64   `toml:"end_step"`
		EndTime *float64 `toml:"end_time"`
	} `toml:"timeline"`
	Event []map[string]any `toml:"event"`
}

// keysOf lists the keys each command takes besides step, time and cmd.
var keysOf = map[Cmd][]string{
	SetScheme:     {"scheme"},
	SetHodge:      {"hodge"},
	SetIntegrator: {"integrator"},
	SetDt:         {"dt"},
	SetGrid:       {"kind", "n", "optimize"},
	Mark:          {"label"},
	Rewind:        {"to_step", "to_time"},
	// Each coefficient left out is 0.
	SetDissipation: {"viscosity", "hyperviscosity", "divergence_damping"},
}

// optional keys may be left out.
var optional = map[string]bool{"time": true, "to_time": true, "optimize": true,
	"viscosity": true, "hyperviscosity": true, "divergence_damping": true}

// Parse reads a timeline file and validates it (Validate). name is used
// in messages (a file name).
func Parse(data []byte, name string) (*Timeline, error) {
	var whole map[string]any
	if err := toml.Unmarshal(data, &whole); err != nil {
		return nil, describe(err, name)
	}
	scen, tlPart, lines := split(data)
	// The line split is simple; check that it cut the document where TOML
	// does (a multi-line string holding a line like "[grid]" would not).
	var sm, tm map[string]any
	if toml.Unmarshal(scen, &sm) != nil || toml.Unmarshal(tlPart, &tm) != nil || !sameParts(whole, sm, tm) {
		return nil, fmt.Errorf("%s: cannot tell the scenario from the [timeline] and [[event]] tables; write each table header on a line of its own, outside multi-line strings", name)
	}
	sc, err := scenario.Parse(scen, name)
	if err != nil {
		return nil, err
	}
	var head fileHead
	dec := toml.NewDecoder(bytes.NewReader(tlPart))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&head); err != nil {
		var sme *toml.StrictMissingError
		if errors.As(err, &sme) && len(sme.Errors) > 0 {
			e := sme.Errors[0]
			row, _ := e.Position()
			return nil, fmt.Errorf("%s:%d: %s: unknown key; the [timeline] table holds version, end_step and end_time", name, row, strings.Join(e.Key(), "."))
		}
		return nil, describe(err, name)
	}
	h := head.Timeline
	switch {
	case h == nil:
		return nil, fmt.Errorf("%s: no [timeline] table: a timeline file needs one, with version = %d and end_step", name, Version)
	case h.Version == nil:
		return nil, fmt.Errorf("%s: timeline.version: missing; this program reads version = %d", name, Version)
	case *h.Version != Version:
		return nil, fmt.Errorf("%s: timeline.version = %d: this program reads version = %d only", name, *h.Version, Version)
	case h.EndStep == nil:
		return nil, fmt.Errorf("%s: timeline.end_step: missing; it is the step the replay stops at", name)
	}
	tl := &Timeline{Config: sc.Config, Description: sc.Description, EndStep: *h.EndStep}
	if h.EndTime != nil {
		tl.EndTime = *h.EndTime
	}
	n := len(head.Event)
	for i, raw := range head.Event {
		line := 0
		if i < len(lines) {
			line = lines[i]
		}
		e, err := event(raw, i+1, n, line)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		tl.Events = append(tl.Events, e)
	}
	if err := tl.validate(lines); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	return tl, nil
}

// sameParts reports whether the scenario part and the timeline part
// together are the whole document.
func sameParts(whole, scen, tl map[string]any) bool {
	if len(whole) != len(scen)+len(tl) {
		return false
	}
	for k, v := range whole {
		part := scen
		if k == "timeline" || k == "event" {
			part = tl
		}
		w, ok := part[k]
		if !ok || !reflect.DeepEqual(v, w) {
			return false
		}
	}
	return true
}

// event reads one [[event]] table, checking its keys and their types.
func event(raw map[string]any, index, total, line int) (Event, error) {
	var e Event
	fail := func(field, format string, a ...any) error {
		return &fieldError{index: index, total: total, line: line, cmd: e.Cmd, field: field, msg: fmt.Sprintf(format, a...)}
	}
	c, ok := raw["cmd"]
	if !ok {
		return e, fail("cmd", "missing; allowed: %s", cmdList())
	}
	s, ok := c.(string)
	if !ok {
		return e, fail("cmd", "cmd = %v: must be a string, one of %s", c, cmdList())
	}
	if !known(Cmd(s)) {
		return e, fail("cmd", "cmd = %s: unknown command; allowed: %s", quote(s), cmdList())
	}
	e.Cmd = Cmd(s)
	allowed := append([]string{"step", "time", "cmd"}, keysOf[e.Cmd]...)
	keys := make([]string, 0, len(raw))
	for k := range raw {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if !contains(allowed, k) {
			return e, fail(k, "unknown key for cmd = %s; allowed: %s", quote(s), strings.Join(allowed, ", "))
		}
	}
	for _, k := range allowed {
		if _, ok := raw[k]; !ok && !optional[k] {
			return e, fail(k, "missing; cmd = %s needs %s", quote(s), strings.Join(allowed, ", "))
		}
	}
	var err error
	integer := func(k string) int64 {
		v, ok := raw[k].(int64)
		if !ok && err == nil {
			err = fail(k, "%s = %v: must be a whole number", k, show(raw[k]))
		}
		return v
	}
	float := func(k string) float64 {
		switch v := raw[k].(type) {
		case nil:
			return 0
		case int64:
			return float64(v)
		case float64:
			return v
		}
		if err == nil {
			err = fail(k, "%s = %v: must be a number", k, show(raw[k]))
		}
		return 0
	}
	str := func(k string) string {
		v, ok := raw[k].(string)
		if !ok && err == nil {
			err = fail(k, "%s = %v: must be a string", k, show(raw[k]))
		}
		return v
	}
	e.Step = integer("step")
	e.Time = float("time")
	switch e.Cmd {
	case SetScheme:
		e.Scheme = str("scheme")
	case SetHodge:
		e.Hodge = str("hodge")
	case SetIntegrator:
		e.Integrator = str("integrator")
	case SetDt:
		e.Dt = float("dt")
	case SetGrid:
		e.Kind = str("kind")
		if n := integer("n"); err == nil {
			if n < math.MinInt32 || n > math.MaxInt32 {
				err = fail("n", "n = %d: out of range", n)
			}
			e.N = int(n)
		}
		if _, ok := raw["optimize"]; ok {
			e.Optimize = str("optimize")
		}
	case Mark:
		e.Label = str("label")
	case Rewind:
		e.ToStep = integer("to_step")
		e.ToTime = float("to_time")
	case SetDissipation:
		e.Dissipation = dissip.Coefficients{Viscosity: float("viscosity"), Hyperviscosity: float("hyperviscosity"), DivergenceDamping: float("divergence_damping")}
	}
	return e, err
}

func show(v any) string {
	if s, ok := v.(string); ok {
		return quote(s)
	}
	return fmt.Sprint(v)
}

// describe turns a decoder error into "name:line: key: what".
func describe(err error, name string) error {
	var de *toml.DecodeError
	if errors.As(err, &de) {
		row, _ := de.Position()
		if key := strings.Join(de.Key(), "."); key != "" {
			return fmt.Errorf("%s:%d: %s: %s", name, row, key, de.Error())
		}
		return fmt.Errorf("%s:%d: %s", name, row, de.Error())
	}
	return fmt.Errorf("%s: %w", name, err)
}
