package sweep

import (
	"os"
	"path/filepath"
	"testing"
	"time"
)

func TestNewSweepFolderNeverReuses(t *testing.T) {
	root := filepath.Join(t.TempDir(), "made", "here")
	now := time.Date(2024, 3, 5, 6, 7, 8, 0, time.UTC)
	// Something of the first name exists already (a file, not a folder).
	if err := os.MkdirAll(root, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(root, "20240305-060708-a_b_.._c"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for i, label := range []string{"a/b/../c", "a/b/../c", "a b/../c", "run1-shear-rollup"} {
		dir, err := NewFolder(root, label, now)
		if err != nil {
			t.Fatalf("%d %q: %v", i, label, err)
		}
		if filepath.Dir(dir) != root || seen[dir] {
			t.Errorf("%d %q: folder %s is not a new folder directly under %s", i, label, dir, root)
		}
		seen[dir] = true
		if st, err := os.Stat(dir); err != nil || !st.IsDir() {
			t.Errorf("%d %q: %s was not created: %v", i, label, dir, err)
		}
	}
	if !seen[filepath.Join(root, "20240305-060708-a_b_.._c-2")] || !seen[filepath.Join(root, "20240305-060708-a_b_.._c-3")] {
		t.Errorf("folders %v: want the -2 and -3 of the taken name", seen)
	}
}
