package sweep

import (
	"archive/zip"
	"errors"
	"io"
	"os"
	"path/filepath"
)

// RunOutputs are the files of a run folder (batch.Run) that a sweep
// offers to readers; nothing else in a run folder is offered.
func RunOutputs() []string {
	return []string{"summary.json", "series.csv", "recipe.toml", "final.nc", "snapshots.nc"}
}

// TopFiles are the files of the sweep folder it offers: the plan, and
// what Collect wrote (Result.Files).
func (in Status) TopFiles() []string {
	return append([]string{PlanFile}, in.Files...)
}

// ContentType is the media type of a file the sweep writes.
func ContentType(name string) string {
	switch filepath.Ext(name) {
	case ".csv":
		return "text/csv; charset=utf-8"
	case ".json":
		return "application/json"
	case ".png":
		return "image/png"
	case ".svg":
		return "image/svg+xml"
	case ".toml":
		return "application/toml"
	case ".nc":
		return "application/x-netcdf"
	case ".zip":
		return "application/zip"
	}
	return "application/octet-stream"
}

// WriteZip writes the files the sweep offers as one zip: the plan and
// Collect's files, and every run folder's outputs that exist, under the
// sweep folder's name. A file not written (yet) is left out.
func WriteZip(w io.Writer, in Status) error {
	names := in.TopFiles()
	for _, r := range in.Runs {
		for _, f := range RunOutputs() {
			names = append(names, r.Name+"/"+f)
		}
	}
	top := filepath.Base(in.Dir)
	zw := zip.NewWriter(w)
	for _, n := range names {
		if err := addToZip(zw, filepath.Join(in.Dir, filepath.FromSlash(n)), top+"/"+n); err != nil {
			return err
		}
	}
	return zw.Close()
}

func addToZip(zw *zip.Writer, p, name string) error {
	f, err := os.Open(p)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil || !st.Mode().IsRegular() {
		return err
	}
	fh, err := zip.FileInfoHeader(st)
	if err != nil {
		return err
	}
	fh.Name, fh.Method = name, zip.Deflate
	if filepath.Ext(p) == ".png" {
		fh.Method = zip.Store // compressed already
	}
	zw2, err := zw.CreateHeader(fh)
	if err != nil {
		return err
	}
	_, err = io.Copy(zw2, f)
	return err
}
