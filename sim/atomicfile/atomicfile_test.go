package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"testing"
)

func names(t *testing.T, dir string) []string {
	t.Helper()
	es, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var ns []string
	for _, e := range es {
		ns = append(ns, e.Name())
	}
	return ns
}

func TestWriteFile(t *testing.T) {
	boom := errors.New("boom")
	for _, tc := range []struct {
		name    string
		old     string // content already under the final name; "" for none
		write   func(w io.Writer) error
		wantErr error
		want    string // content under the final name afterwards; "" for no file
	}{
		{"success", "", func(w io.Writer) error { _, err := io.WriteString(w, "hello\n"); return err }, nil, "hello\n"},
		{"replaces", "old\n", func(w io.Writer) error { _, err := io.WriteString(w, "new\n"); return err }, nil, "new\n"},
		{"fails before writing", "", func(io.Writer) error { return boom }, boom, ""},
		{"fails after writing", "", func(w io.Writer) error { io.WriteString(w, "half"); return boom }, boom, ""},
		{"failure keeps old file", "old\n", func(w io.Writer) error { io.WriteString(w, "half"); return boom }, boom, "old\n"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			path := filepath.Join(dir, "out.csv")
			if tc.old != "" {
				if err := os.WriteFile(path, []byte(tc.old), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			err := WriteFile(path, tc.write)
			if !errors.Is(err, tc.wantErr) {
				t.Fatalf("error %v; want %v", err, tc.wantErr)
			}
			got, rerr := os.ReadFile(path)
			switch {
			case tc.want == "" && !errors.Is(rerr, os.ErrNotExist):
				t.Errorf("a file %q is left under the final name (read error %v)", got, rerr)
			case tc.want != "" && string(got) != tc.want:
				t.Errorf("final file holds %q (%v); want %q", got, rerr, tc.want)
			}
			wantNames := 0
			if tc.want != "" {
				wantNames = 1
			}
			if ns := names(t, dir); len(ns) != wantNames {
				t.Errorf("directory holds %v; temporary files were left behind", ns)
			}
			if tc.want != "" {
				if fi, err := os.Stat(path); err != nil || fi.Mode().Perm() != Mode {
					t.Errorf("mode %v (%v); want %v", fi.Mode().Perm(), err, Mode)
				}
			}
		})
	}
}

func TestWriteFileBadDir(t *testing.T) {
	path := filepath.Join(t.TempDir(), "missing", "out.nc")
	err := WriteFile(path, func(io.Writer) error { return nil })
	if err == nil || !errors.Is(err, os.ErrNotExist) {
		t.Fatalf("error %v; want one wrapping os.ErrNotExist", err)
	}
}

// A pending File can be written, sought and rewritten; nothing appears
// under the final name before Commit, and Abort leaves nothing at all.
func TestCreateCommitAbort(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "snap.nc")
	f, err := Create(path)
	if err != nil {
		t.Fatal(err)
	}
	fmt.Fprint(f, "0000abcd")
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		t.Fatal(err)
	}
	fmt.Fprint(f, "1234")
	if _, err := os.Stat(path); !errors.Is(err, os.ErrNotExist) {
		t.Fatalf("final name exists before Commit: %v", err)
	}
	if filepath.Dir(f.TempName()) != dir || filepath.Ext(f.TempName()) != ".tmp" {
		t.Errorf("temporary file %s; want a .tmp file in %s", f.TempName(), dir)
	}
	if err := f.Commit(); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(path); string(got) != "1234abcd" {
		t.Errorf("committed %q; want %q", got, "1234abcd")
	}
	if err := f.Abort(); err != nil {
		t.Errorf("Abort after Commit: %v", err)
	}
	if err := f.Commit(); err == nil {
		t.Error("second Commit succeeded")
	}
	if got, _ := os.ReadFile(path); string(got) != "1234abcd" {
		t.Errorf("Abort after Commit changed the file to %q", got)
	}

	g, err := Create(filepath.Join(dir, "gone.nc"))
	if err != nil {
		t.Fatal(err)
	}
	fmt.Fprint(g, "x")
	if err := g.Abort(); err != nil {
		t.Fatal(err)
	}
	if ns := names(t, dir); len(ns) != 1 || ns[0] != "snap.nc" {
		t.Errorf("after Abort the directory holds %v; want only snap.nc", ns)
	}
}
