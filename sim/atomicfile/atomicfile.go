// Package atomicfile writes output files so that a crash, a failed write or
// a full disk never leaves a half-written file under the final name
// (the files of `gyrebench run --out DIR`, README "Headless use").
//
// The data go to a temporary file in the destination's own directory (so
// the final rename stays on one file system and is atomic on POSIX
// systems), which is synced to stable storage, closed and then renamed over
// the final name. On any error the temporary file is removed and an older
// file under the final name, if there was one, is left untouched.
//
// WriteFile covers the common case of a file produced in one go. Create
// returns a pending File for writers that need to seek, such as a NetCDF
// file whose record count is patched after each record; Commit publishes
// it and Abort discards it:
//
//	f, err := atomicfile.Create(path)
//	if err != nil {
//		return err
//	}
//	defer f.Abort() // no-op after a successful Commit
//	... write and seek ...
//	return f.Commit()
//
// Published files get mode 0644 (os.CreateTemp creates them 0600).
// Temporary files are named "." + base + ".*.tmp" in the same directory.
package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// Mode is the permission given to a committed file.
const Mode os.FileMode = 0o644

// WriteFile calls write with a temporary file in the directory of path and,
// if write returns nil, syncs it and renames it to path. If write or any
// later step fails, the temporary file is removed, path is not touched and
// the error is returned, wrapped with the path.
func WriteFile(path string, write func(io.Writer) error) error {
	f, err := Create(path)
	if err != nil {
		return err
	}
	if err := write(f); err != nil {
		return errors.Join(fmt.Errorf("writing %s: %w", path, err), f.Abort())
	}
	return f.Commit()
}

// File is a pending file: writes go to a temporary file that replaces the
// final path only on Commit. It implements io.Writer, io.Reader, io.Seeker
// and io.WriterAt. A File is not safe for concurrent use.
type File struct {
	tmp  *os.File
	path string
	done bool
}

// Create opens a new pending file for path. The directory of path must
// exist; path itself need not.
func Create(path string) (*File, error) {
	dir, base := filepath.Split(path)
	if base == "" {
		return nil, fmt.Errorf("atomic write of %q: the path names a directory, want a file", path)
	}
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".*.tmp")
	if err != nil {
		return nil, fmt.Errorf("atomic write of %s: %w", path, err)
	}
	return &File{tmp: tmp, path: path}, nil
}

// Name returns the final path the file will have after Commit.
func (f *File) Name() string { return f.path }

// TempName returns the name of the temporary file.
func (f *File) TempName() string { return f.tmp.Name() }

// Write, WriteAt, Read, Seek and Truncate act on the temporary file.
func (f *File) Write(p []byte) (int, error)               { return f.tmp.Write(p) }
func (f *File) WriteAt(p []byte, off int64) (int, error)  { return f.tmp.WriteAt(p, off) }
func (f *File) Read(p []byte) (int, error)                { return f.tmp.Read(p) }
func (f *File) Seek(off int64, whence int) (int64, error) { return f.tmp.Seek(off, whence) }
func (f *File) Truncate(size int64) error                 { return f.tmp.Truncate(size) }

// Commit syncs the temporary file, closes it and renames it to the final
// path. On failure the temporary file is removed. Commit after Commit or
// Abort returns an error.
func (f *File) Commit() error {
	if f.done {
		return fmt.Errorf("atomic write of %s: already committed or aborted", f.path)
	}
	f.done = true
	name := f.tmp.Name()
	fail := func(step string, err error) error {
		f.tmp.Close()
		os.Remove(name)
		return fmt.Errorf("atomic write of %s: %s: %w", f.path, step, err)
	}
	if err := f.tmp.Chmod(Mode); err != nil {
		return fail("chmod", err)
	}
	if err := f.tmp.Sync(); err != nil {
		return fail("sync", err)
	}
	if err := f.tmp.Close(); err != nil {
		os.Remove(name)
		return fmt.Errorf("atomic write of %s: close: %w", f.path, err)
	}
	if err := os.Rename(name, f.path); err != nil {
		os.Remove(name)
		return fmt.Errorf("atomic write of %s: rename: %w", f.path, err)
	}
	syncDir(filepath.Dir(f.path))
	return nil
}

// Abort closes and removes the temporary file. It is a no-op after Commit
// or Abort, so it can be deferred.
func (f *File) Abort() error {
	if f.done {
		return nil
	}
	f.done = true
	errC := f.tmp.Close()
	errR := os.Remove(f.tmp.Name())
	if err := errors.Join(errC, errR); err != nil {
		return fmt.Errorf("atomic write of %s: discarding %s: %w", f.path, f.tmp.Name(), err)
	}
	return nil
}

// syncDir makes the rename durable where the platform allows it. The file
// is already in place, so a failure here is not reported: on some systems
// directories cannot be synced at all.
func syncDir(dir string) {
	d, err := os.Open(dir)
	if err != nil {
		return
	}
	d.Sync()
	d.Close()
}
