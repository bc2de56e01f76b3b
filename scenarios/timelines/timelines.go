// Package timelines embeds the built-in recorded timelines (package
// sim/timeline): prepared demonstrations the workbench offers under "Load
// timeline". Each file is a timeline file; its name without ".toml" is
// the timeline's name.
package timelines

import (
	"embed"
	"fmt"
	"io/fs"
	"sort"
	"strings"
)

//go:embed *.toml
var files embed.FS

// Names lists the built-in timelines, sorted.
func Names() []string {
	entries, _ := fs.ReadDir(files, ".")
	var s []string
	for _, e := range entries {
		if n, ok := strings.CutSuffix(e.Name(), ".toml"); ok {
			s = append(s, n)
		}
	}
	sort.Strings(s)
	return s
}

// Source returns the text of a built-in timeline.
func Source(name string) ([]byte, error) {
	b, err := files.ReadFile(name + ".toml")
	if err != nil {
		return nil, fmt.Errorf("timeline %q: not a built-in; built-ins: %s", name, strings.Join(Names(), ", "))
	}
	return b, nil
}
