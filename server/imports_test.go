package server

import (
	"go/parser"
	"go/token"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestLayering: the server carries commands and messages and computes no
// physics, so it imports none of the engine's grid, scheme and integrator
// packages; it reaches them through sim, sim/session, sim/linear and
// sim/display (the drawing geometry).
func TestLayering(t *testing.T) {
	files, err := filepath.Glob("*.go")
	if err != nil || len(files) == 0 {
		t.Fatalf("no Go files here (%v)", err)
	}
	forbidden := []string{"gyrebench/sim/mesh", "gyrebench/sim/scheme", "gyrebench/sim/step"}
	fset := token.NewFileSet()
	for _, name := range files {
		if strings.HasSuffix(name, "_test.go") {
			continue
		}
		f, err := parser.ParseFile(fset, name, nil, parser.ImportsOnly)
		if err != nil {
			t.Fatal(err)
		}
		for _, imp := range f.Imports {
			p, _ := strconv.Unquote(imp.Path.Value)
			for _, bad := range forbidden {
				if p == bad {
					t.Errorf("%s imports %s: the server goes through sim, sim/session or sim/linear", name, p)
				}
			}
		}
	}
}
