// Package scenarios embeds the built-in scenario files, so that the binary
// runs them without a checkout. Each file is TOML in the scenario format of
// package sim/scenario; its name without ".toml" is the scenario's name.
package scenarios

import (
	"embed"

	"gyrebench/scenarios/internal/builtin"
)

//go:embed *.toml
var files embed.FS

// builtins is the set of embedded files.
func builtins() builtin.Set { return builtin.Set{FS: files, What: "scenario"} }

// Default is the scenario that `gyrebench serve` opens.
const Default = "shear-rollup"

// Names lists the built-in scenarios, sorted.
func Names() []string { return builtins().Names() }

// Source returns the TOML text of a built-in scenario.
func Source(name string) ([]byte, error) { return builtins().Source(name) }
