package server

import (
	"bytes"
	"encoding/json"
	"slices"
	"strings"
	"testing"
)

// FuzzParseClient: any websocket text message is either a known command
// or refused with an error that names a field and says what is allowed;
// the refusal is valid JSON; an accepted command survives re-encoding.
//
//	go test -run '^$' -fuzz FuzzParseClient -fuzztime 60s ./server/
func FuzzParseClient(f *testing.F) {
	for _, s := range []string{
		`{"cmd":"play"}`, `{"id":3,"cmd":"set-dt","value":60}`, `{"cmd":"set-grid","value":{"kind":"hex","n":32}}`,
		`{"cmd":"load","value":"dipole"}`, `play please`, `{"cmd":"play","speed":2}`, `{"cmd":"fly"}`,
		`{"cmd":"play"}{"cmd":"pause"}`, `[]`, `null`, `{"cmd":7}`, `{"id":1e400,"cmd":"play"}`, "\xff\xfe",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		m, ce := parseMsg(data, false)
		if ce != nil {
			if ce.Field == "" || ce.Message == "" {
				t.Fatalf("%q: refusal without a field or a message: %+v", data, ce)
			}
			if !strings.Contains(ce.Message, "want") && !strings.Contains(ce.Message, "allowed") && !strings.Contains(ce.Message, "send") {
				t.Fatalf("%q: refusal %q does not say what is allowed", data, ce.Message)
			}
			reply := errorReply(m, ce)
			var e struct {
				Type  string `json:"type"`
				Field string `json:"field"`
			}
			if !json.Valid(reply.data) || json.Unmarshal(reply.data, &e) != nil || e.Type != "error" || e.Field != ce.Field {
				t.Fatalf("%q: error reply %s is not an error message naming %q", data, reply.data, ce.Field)
			}
			return
		}
		if !slices.Contains(commands, m.Cmd) {
			t.Fatalf("%q: accepted unknown command %q", data, m.Cmd)
		}
		again, err := json.Marshal(m)
		if err != nil {
			t.Fatalf("%q: accepted, but does not re-encode: %v", data, err)
		}
		m2, ce := parseMsg(again, false)
		var want bytes.Buffer
		_ = json.Compact(&want, m.Value) // Marshal compacts a raw value
		if ce != nil || m2.ID != m.ID || m2.Cmd != m.Cmd || string(m2.Value) != want.String() {
			t.Fatalf("%q: re-encoded as %s, which parses as %+v (%v)", data, again, m2, ce)
		}
	})
}
