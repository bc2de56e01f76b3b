package builtin

import (
	"os"
	"slices"
	"strings"
	"testing"
)

// Names lists the .toml files only, sorted; Source reads one by name and
// refuses an unknown name with a message that lists the known ones.
func TestSet(t *testing.T) {
	s := Set{FS: os.DirFS("testdata"), What: "sample"}
	if got, want := s.Names(), []string{"alpha", "beta"}; !slices.Equal(got, want) {
		t.Errorf("Names() = %q, want %q", got, want)
	}
	if b, err := s.Source("beta"); err != nil || string(b) != "x = 1\n" {
		t.Errorf("Source(beta) = %q, %v; want the file's text", b, err)
	}
	for _, name := range []string{"gamma", "notes", "../beta"} {
		_, err := s.Source(name)
		if err == nil || !strings.Contains(err.Error(), `sample "`+name+`"`) || !strings.Contains(err.Error(), "built-ins: alpha, beta") {
			t.Errorf("Source(%q): error %v, want one naming the sample and listing alpha, beta", name, err)
		}
	}
}
