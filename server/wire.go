package server

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"gyrebench/scenarios/timelines"
	"gyrebench/sim/session"
)

// The edge between the websocket's JSON and package session's typed
// commands: one parser for runs and pairs (parseMsg), one decoder of a
// message's value into a session.Command (decode). A pair message is a
// run message with the key side added.

// wireMsg is one command from a client. Value's type depends on Cmd; Side
// names the side of a pair.
type wireMsg struct {
	ID    int64           `json:"id,omitempty"`
	Side  *string         `json:"side,omitempty"`
	Cmd   string          `json:"cmd"`
	Value json.RawMessage `json:"value,omitempty"`
}

// side is the message's side, "" when it names none.
func (m wireMsg) side() string {
	if m.Side == nil {
		return ""
	}
	return *m.Side
}

// commands lists the client commands, for messages.
var commands = []string{"play", "pause", "step", "reset", "set-dt", "set-integrator", "set-scheme", "set-hodge", "set-grid", "set-field", "load", "scrub", "linear", "structure", "mark", "replay", "stop-replay", "set-dissipation"}

func refuse(field, value, format string, args ...any) *session.Error {
	return &session.Error{Field: field, Value: value, Message: fmt.Sprintf(format, args...)}
}

// parseMsg decodes a client message strictly: one JSON object with the
// keys id, cmd and value (and side, when sided), cmd a known command.
func parseMsg(data []byte, sided bool) (wireMsg, *session.Error) {
	var m wireMsg
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	keys, example := "id, cmd and value", `{"cmd": "play"}`
	if sided {
		keys, example = "id, side, cmd and value", `{"cmd": "play"} or {"side": "b", "cmd": "set-scheme", "value": "apvm"}`
	}
	err := dec.Decode(&m)
	if err == nil && m.Side != nil && !sided {
		err = errors.New(`json: unknown field "side"`)
	}
	if err != nil {
		v := cut(string(data))
		return m, refuse("message", v, "message %q is not a command: %v; want a JSON object such as %s with the keys %s", v, err, example, keys)
	}
	if dec.More() {
		return m, refuse("message", shown(data), "message holds more than one JSON value; send one command per message")
	}
	if !slices.Contains(commands, m.Cmd) {
		return m, refuse("cmd", m.Cmd, "cmd = %q: unknown command; allowed: %s", m.Cmd, strings.Join(commands, ", "))
	}
	return m, nil
}

// cut shortens a value for messages.
func cut(s string) string {
	if len(s) > 64 {
		s = s[:61] + "..."
	}
	return s
}

// shown is a raw JSON value as text for messages, cut to a sensible length.
func shown(raw json.RawMessage) string {
	s := strings.TrimSpace(string(raw))
	if s == "" {
		s = "(missing)"
	}
	return cut(s)
}

// gridValue is the value of set-grid.
type gridValue struct {
	Kind     string          `json:"kind"`
	N        json.RawMessage `json:"n"`
	Optimize *string         `json:"optimize"` // icosahedral only; absent keeps the run's
}

// dissipationValue is the value of set-dissipation: any of the three
// coefficients, each a number or a string holding one; a coefficient left
// out keeps its current value.
type dissipationValue struct {
	Viscosity         json.RawMessage `json:"viscosity"`
	Hyperviscosity    json.RawMessage `json:"hyperviscosity"`
	DivergenceDamping json.RawMessage `json:"divergence_damping"`
}

// replayValue is the value of replay: a built-in timeline by name, or a
// timeline file's text.
type replayValue struct {
	Builtin string `json:"builtin"`
	Name    string `json:"name"`
	TOML    string `json:"toml"`
}

// strict decodes raw into v, refusing unknown keys.
func strict(raw json.RawMessage, v any) error {
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	return dec.Decode(v)
}

// decode turns a parsed message into the session command it names.
func decode(m wireMsg) (session.Command, *session.Error) {
	if c, ok := map[string]session.Command{"play": session.Play{}, "pause": session.Pause{}, "step": session.Step{},
		"reset": session.Reset{}, "stop-replay": session.StopReplay{}}[m.Cmd]; ok {
		return c, nil
	}
	switch m.Cmd {
	case "load", "set-scheme", "set-hodge", "set-integrator", "mark":
		fields := map[string]string{"load": "scenario", "set-scheme": "scheme.name", "set-hodge": "scheme.hodge", "set-integrator": "time.integrator", "mark": "label"}
		s, ce := parseString(m.Value, fields[m.Cmd])
		if ce != nil {
			return nil, ce
		}
		return map[string]session.Command{"load": session.Load{Scenario: s}, "set-scheme": session.SetScheme{Name: s},
			"set-hodge": session.SetHodge{Name: s}, "set-integrator": session.SetIntegrator{Name: s}, "mark": session.Mark{Label: s}}[m.Cmd], nil
	case "set-dt":
		dt, ce := parseNumber(m.Value, "time.dt", "a positive number of seconds")
		return session.SetDt{Seconds: dt}, ce
	case "scrub":
		i, ce := parseInt(m.Value, "scrub", "a whole number: a recent state, from 0 (the oldest)")
		return session.Scrub{Index: i}, ce
	case "set-grid":
		var g gridValue
		if err := strict(m.Value, &g); err != nil {
			return nil, refuse("grid", shown(m.Value), "grid = %s: want {\"kind\": one of %s, \"n\": cells per side, the level (icosahedral) or cells along a cube edge (cubed), \"optimize\" (icosahedral only): \"none\" or \"lloyd\"}", shown(m.Value), strings.Join(session.GridKinds(), ", "))
		}
		c := session.SetGrid{Kind: g.Kind}
		if len(g.N) > 0 {
			n, ce := parseInt(g.N, "grid.n", "a positive whole number: cells per side, the level (icosahedral) or cells along a cube edge (cubed)")
			if ce == nil && n <= 0 {
				ce = refuse("grid.n", strconv.Itoa(n), "grid.n = %d: must be a positive whole number", n)
			}
			if ce != nil {
				return nil, ce
			}
			c.N = n
		}
		if g.Optimize != nil {
			c.Optimize = *g.Optimize
		}
		return c, nil
	case "set-dissipation":
		var v dissipationValue
		if err := strict(m.Value, &v); err != nil {
			return nil, refuse("dissipation", shown(m.Value), "dissipation = %s: want {\"viscosity\": m² s⁻¹, \"hyperviscosity\": m⁴ s⁻¹, \"divergence_damping\": m² s⁻¹}, each a number ≥ 0 and any of them left out to keep it", shown(m.Value))
		}
		var c session.SetDissipation
		for _, f := range []struct {
			key string
			raw json.RawMessage
			dst **float64
		}{
			{"scheme.viscosity", v.Viscosity, &c.Viscosity},
			{"scheme.hyperviscosity", v.Hyperviscosity, &c.Hyperviscosity},
			{"scheme.divergence_damping", v.DivergenceDamping, &c.DivergenceDamping},
		} {
			if len(f.raw) == 0 {
				continue
			}
			x, ce := parseNumber(f.raw, f.key, "a finite number ≥ 0")
			if ce != nil {
				return nil, ce
			}
			*f.dst = &x
		}
		return c, nil
	case "replay":
		var v replayValue
		if err := strict(m.Value, &v); err != nil || (v.Builtin == "") == (v.TOML == "") {
			return nil, refuse("timeline", shown(m.Value), "timeline = %s: want {\"builtin\": one of %s} or {\"name\": file name, \"toml\": the file's text}", shown(m.Value), strings.Join(timelines.Names(), ", "))
		}
		return session.Replay{Builtin: v.Builtin, Name: v.Name, Text: []byte(v.TOML)}, nil
	}
	return nil, refuse("cmd", m.Cmd, "cmd = %q: not a command of the model; allowed: %s", m.Cmd, strings.Join(commands, ", "))
}

func parseString(raw json.RawMessage, field string) (string, *session.Error) {
	var s string
	if err := json.Unmarshal(raw, &s); err != nil {
		return "", refuse(field, shown(raw), "%s = %s: must be a string", field, shown(raw))
	}
	return s, nil
}

// parseNumber accepts a JSON number or a string holding one, as typed in a
// text field.
func parseNumber(raw json.RawMessage, field, what string) (float64, *session.Error) {
	var x float64
	if err := json.Unmarshal(raw, &x); err != nil {
		var s string
		if json.Unmarshal(raw, &s) != nil {
			return 0, refuse(field, shown(raw), "%s = %s: must be %s", field, shown(raw), what)
		}
		x, err = strconv.ParseFloat(strings.TrimSpace(s), 64)
		if err != nil {
			return 0, refuse(field, s, "%s = %q: must be %s", field, s, what)
		}
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, refuse(field, shown(raw), "%s = %s: must be %s", field, shown(raw), what)
	}
	return x, nil
}

func parseInt(raw json.RawMessage, field, what string) (int, *session.Error) {
	x, err := parseNumber(raw, field, what)
	if err != nil {
		return 0, err
	}
	if x != math.Trunc(x) || math.Abs(x) > 1<<30 {
		return 0, refuse(field, shown(raw), "%s = %s: must be %s", field, shown(raw), what)
	}
	return int(x), nil
}

// errorMsg refuses a command, or (type warning) warns about one accepted.
type errorMsg struct {
	Type    string `json:"type"`
	ID      int64  `json:"id,omitempty"`
	Cmd     string `json:"cmd,omitempty"`
	Field   string `json:"field"`
	Value   string `json:"value"`
	Message string `json:"message"`
}

// errorReply is the refusal of m.
func errorReply(m wireMsg, err error) outMsg {
	var se *session.Error
	if !errors.As(err, &se) {
		se = &session.Error{Field: "cmd", Value: m.Cmd, Message: err.Error()}
	}
	return textOut(errorMsg{Type: "error", ID: m.ID, Cmd: m.Cmd, Field: se.Field, Value: se.Value, Message: se.Message})
}

// reply answers m on sub: its refusal, or a warning (if any) and an ack.
func reply(sub *subscriber, m wireMsg, warn *outMsg, err error) {
	if err != nil {
		sub.send(errorReply(m, err))
		return
	}
	if warn != nil {
		sub.send(*warn)
	}
	sub.send(textOut(struct {
		Type string `json:"type"`
		ID   int64  `json:"id,omitempty"`
		Cmd  string `json:"cmd"`
		Side string `json:"side,omitempty"`
	}{"ack", m.ID, m.Cmd, m.side()}))
}
