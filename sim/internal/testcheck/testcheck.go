// Package testcheck holds the assertions that the tests of several sim
// packages share. It is imported by tests only.
package testcheck

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"strings"
	"testing"

	"gyrebench/sim/mesh"
)

// ErrorSays checks that err is an error whose message holds every string
// of want, reporting through t what is missing; what names the case. It
// returns false when err is nil, so that a table loop can go on to the
// next case.
func ErrorSays(t testing.TB, what string, err error, want ...string) bool {
	t.Helper()
	if err == nil {
		t.Errorf("%s: no error, want one saying %q", what, want)
		return false
	}
	for _, s := range want {
		if !strings.Contains(err.Error(), s) {
			t.Errorf("%s: message %q lacks %q", what, err, s)
		}
	}
	return true
}

// ReadCSV returns the records of the CSV file at path, failing the test
// if it cannot be read or parsed.
func ReadCSV(t testing.TB, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return recs
}

// ReadJSON decodes the JSON file at path into v, failing the test if it
// cannot be read or decoded.
func ReadJSON(t testing.TB, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}

// Mesh builds the mesh of spec, failing the test when it cannot.
func Mesh(t testing.TB, spec mesh.Spec) *mesh.Mesh {
	t.Helper()
	m, err := mesh.New(spec)
	if err != nil {
		t.Fatal(err)
	}
	return m
}
