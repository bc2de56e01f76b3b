package timeline_test

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"gyrebench/scenarios/timelines"
	"gyrebench/sim/timeline"
)

// FuzzParse: any file either parses as a valid timeline or is refused
// with a message that starts with the file's name; what parses is written
// back by Format to a file that parses to the same Format.
//
//	go test -run '^$' -fuzz FuzzParse -fuzztime 60s ./sim/timeline/
func FuzzParse(f *testing.F) {
	for _, n := range timelines.Names() {
		src, err := timelines.Source(n)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(src)
		// The same with an event cut short and with a stray key.
		f.Add(bytes.Replace(src, []byte("[[event]]"), []byte("[[event]]\nat = -1"), 1))
		f.Add(bytes.Replace(src, []byte("[timeline]"), []byte("[timeline]\nspeed = 2"), 1))
	}
	for _, s := range []string{"", "[timeline]\n", "[[event]]\ncmd = \"play\"\n", "title = '''\n[timeline]\n'''\n", "\xff"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		// A guard against a hang (bad input must never hang), not a
		// judgement of speed: a parse takes microseconds.
		type result struct {
			tl  *timeline.Timeline
			err error
		}
		done := make(chan result, 1)
		go func() {
			tl, err := timeline.Parse(data, "fuzz.toml")
			done <- result{tl, err}
		}()
		var r result
		select {
		case r = <-done:
		case <-time.After(10 * time.Second):
			t.Fatalf("%q: Parse did not return within 10 s", data)
		}
		tl, err := r.tl, r.err
		if err != nil {
			if !strings.HasPrefix(err.Error(), "fuzz.toml") {
				t.Fatalf("%q: error %q does not start with the file name", data, err)
			}
			return
		}
		text := tl.Format()
		again, err := timeline.Parse(text, "formatted.toml")
		if err != nil {
			t.Fatalf("%q parses, but its Format does not: %v\n%s", data, err, text)
		}
		if text2 := again.Format(); !bytes.Equal(text, text2) {
			t.Fatalf("%q: Format is not a fixed point:\n%s\nthen\n%s", data, text, text2)
		}
	})
}
