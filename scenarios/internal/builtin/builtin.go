// Package builtin reads a set of embedded TOML files by name: the
// built-in scenarios and the built-in timelines are each one such set.
package builtin

import (
	"fmt"
	"io/fs"
	"sort"
	"strings"
)

// Set is the TOML files at the top of FS; a file's name without ".toml"
// is the name of what it holds, and What says what that is ("scenario",
// "timeline"), for messages.
type Set struct {
	FS   fs.FS
	What string
}

// Names lists the names in the set, sorted.
func (s Set) Names() []string {
	entries, _ := fs.ReadDir(s.FS, ".")
	var names []string
	for _, e := range entries {
		if n, ok := strings.CutSuffix(e.Name(), ".toml"); ok {
			names = append(names, n)
		}
	}
	sort.Strings(names)
	return names
}

// Source returns the text of the file called name, or an error listing
// the names there are.
func (s Set) Source(name string) ([]byte, error) {
	b, err := fs.ReadFile(s.FS, name+".toml")
	if err != nil {
		return nil, fmt.Errorf("%s %q: not a built-in; built-ins: %s", s.What, name, strings.Join(s.Names(), ", "))
	}
	return b, nil
}
