package scenario

import (
	"bytes"
	"strings"
	"testing"

	"gyrebench/scenarios"
	"gyrebench/sim"
)

// FuzzParse: any file either parses or is refused with a message that
// starts with the file's name; what parses is written back by Format to a
// file that parses to the same Format (a fixed point), and validating it
// never panics.
//
//	go test -run '^$' -fuzz FuzzParse -fuzztime 60s ./sim/scenario/
func FuzzParse(f *testing.F) {
	for _, n := range scenarios.Names() {
		src, err := scenarios.Source(n)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(src)
	}
	for _, s := range []string{"", "title = \"x\"\n[wind]\nspeed = 3\n", "[grid]\nn = 1e400\n", "[grid]\nn = -3\nkind = \"hex\"\n",
		"[initial]\ncase = \"turbulence\"\nseed = nan\n", "[time]\ndt = inf\n", "title = '''\n[grid]\n'''\n", "\xff"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		sc, err := Parse(data, "fuzz.toml")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "fuzz.toml") {
				t.Fatalf("%q: error %q does not start with the file name", data, err)
			}
			return
		}
		if err := sc.Config.Validate(); err != nil && err.Error() == "" {
			t.Fatalf("%q: Validate gave an empty error", data)
		}
		text := Format(sc.Config, sc.Description)
		again, err := Parse(text, "formatted.toml")
		if err != nil {
			t.Fatalf("%q parses, but its Format does not: %v\n%s", data, err, text)
		}
		if text2 := Format(again.Config, again.Description); !bytes.Equal(text, text2) {
			t.Fatalf("%q: Format is not a fixed point:\n%s\nthen\n%s", data, text, text2)
		}
	})
}

// FuzzSet: any --set assignment either applies or is refused with a
// message that names --set or the key and leaves the config unchanged;
// what applies survives Format and Parse.
//
//	go test -run '^$' -fuzz FuzzSet -fuzztime 60s ./sim/scenario/
func FuzzSet(f *testing.F) {
	for _, s := range []string{"time.dt=30", "grid.n=64", "grid.kind=hex", "title=a b", "initial.u_rms=4", "time.dt=soon",
		"wind.speed=3", "=3", "grid.n", "time.duration=1e400", "title=\"quoted\\\"\"", "title=a\x00b\x7f", "title=\xff", "description=\x00", "initial.seed=nan", "output.snapshots=true"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, assignment string) {
		c := sim.DefaultConfig()
		before := Format(c, "")
		if err := Set(&c, assignment); err != nil {
			key, _, _ := strings.Cut(assignment, "=")
			msg := err.Error()
			if msg == "" || !strings.Contains(msg, "--set") && !strings.Contains(msg, strings.TrimSpace(key)) {
				t.Fatalf("--set %q: error %q names neither --set nor the key", assignment, msg)
			}
			if after := Format(c, ""); !bytes.Equal(before, after) {
				t.Fatalf("--set %q was refused but changed the config:\n%s", assignment, after)
			}
			return
		}
		text := Format(c, "")
		again, err := Parse(text, "set.toml")
		if err != nil {
			t.Fatalf("--set %q applies, but the result does not parse back: %v\n%s", assignment, err, text)
		}
		if text2 := Format(again.Config, ""); !bytes.Equal(text, text2) {
			t.Fatalf("--set %q: Format and Parse disagree:\n%s\nthen\n%s", assignment, text, text2)
		}
	})
}
