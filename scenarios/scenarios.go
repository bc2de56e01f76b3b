// Package scenarios embeds the built-in scenario files, so that the binary
// runs them without a checkout. Each file is TOML in the scenario format of
// package sim/scenario; its name without ".toml" is the scenario's name.
package scenarios

import (
	"embed"
	"fmt"
	"io/fs"
	"sort"
	"strings"
)

//go:embed *.toml
var files embed.FS

// Default is the scenario that `gyrebench serve` opens.
const Default = "shear-rollup"

// Names lists the built-in scenarios, sorted.
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

// Source returns the TOML text of a built-in scenario.
func Source(name string) ([]byte, error) {
	b, err := files.ReadFile(name + ".toml")
	if err != nil {
		return nil, fmt.Errorf("scenario %q: not a built-in; built-ins: %s", name, strings.Join(Names(), ", "))
	}
	return b, nil
}
