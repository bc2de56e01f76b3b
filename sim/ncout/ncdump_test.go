package ncout

import (
	"os"
	"os/exec"
	"strconv"
	"strings"
	"testing"
)

// ncdumpTool returns the path of the named netcdf-bin tool (ncdump,
// ncgen): the outside judge of the format. Without it the test is skipped,
// except under CI=true, where it fails.
func ncdumpTool(t *testing.T, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		msg := name + " not found: install Debian's netcdf-bin (apt-get install -y netcdf-bin) to check files against the NetCDF reference library"
		if os.Getenv("CI") == "true" {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	return p
}

// runTool runs a tool and fails the test when it does not exit 0.
func runTool(t *testing.T, tool string, args ...string) string {
	t.Helper()
	out, err := exec.Command(tool, args...).CombinedOutput()
	if err != nil {
		t.Fatalf("%s %s: %v\n%s", tool, strings.Join(args, " "), err, out)
	}
	return string(out)
}

// dumpValues returns the printed values of variable name from the data
// section of ncdump output, "_" for fill values.
func dumpValues(t *testing.T, dump, name string) []string {
	t.Helper()
	_, data, ok := strings.Cut(dump, "\ndata:\n")
	if !ok {
		t.Fatalf("ncdump output has no data section:\n%s", dump)
	}
	_, rest, ok := strings.Cut(data, "\n "+name+" =")
	if !ok {
		t.Fatalf("ncdump data section has no variable %q:\n%s", name, data)
	}
	body, _, ok := strings.Cut(rest, ";")
	if !ok {
		t.Fatalf("ncdump data of %q does not end with ';'", name)
	}
	var vals []string
	for _, s := range strings.Split(body, ",") {
		vals = append(vals, strings.TrimSpace(s))
	}
	return vals
}

// dumpFloats parses printed doubles (written with -p 9,17, enough digits
// to round-trip every float64 exactly).
func dumpFloats(t *testing.T, dump, name string) []float64 {
	t.Helper()
	var out []float64
	for _, s := range dumpValues(t, dump, name) {
		x, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("ncdump value %q of %s: %v", s, name, err)
		}
		out = append(out, x)
	}
	return out
}

func dumpInts(t *testing.T, dump, name string) []int32 {
	t.Helper()
	var out []int32
	for _, s := range dumpValues(t, dump, name) {
		x, err := strconv.ParseInt(s, 10, 32)
		if err != nil {
			t.Fatalf("ncdump value %q of %s: %v", s, name, err)
		}
		out = append(out, int32(x))
	}
	return out
}
