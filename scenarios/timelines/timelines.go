// Package timelines embeds the built-in recorded timelines (package
// sim/timeline): prepared demonstrations the workbench offers under "Load
// timeline". Each file is a timeline file; its name without ".toml" is
// the timeline's name.
package timelines

import (
	"embed"

	"gyrebench/scenarios/internal/builtin"
)

//go:embed *.toml
var files embed.FS

// builtins is the set of embedded files.
func builtins() builtin.Set { return builtin.Set{FS: files, What: "timeline"} }

// Names lists the built-in timelines, sorted.
func Names() []string { return builtins().Names() }

// Source returns the text of a built-in timeline.
func Source(name string) ([]byte, error) { return builtins().Source(name) }
