package ncout

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
)

// Writer appends records to a classic-format file, for time snapshots.
// After each record it rewrites numrecs in the header, so the file is
// complete and readable between records; the underlying file is never
// closed by the Writer. Combine it with atomicfile.Create to publish the
// file under its final name only when the run is over.
//
// A Writer is not safe for concurrent use. After an error every later
// call returns that error.
type Writer struct {
	ws      io.WriteSeeker
	vars    []*Var // record variables, in file order (Data unused)
	nelems  []int64
	numrecs int
	pos     int64 // offset of the next record
	recSize int64
	buf     []byte
	err     error
}

// NewWriter writes f to ws from its start — the header, the fixed-size
// variables and the NumRecs records f already holds — and returns a Writer
// that appends further records.
func NewWriter(ws io.WriteSeeker, f *File) (*Writer, error) {
	l, err := f.layout()
	if err != nil {
		return nil, err
	}
	if l.recDim < 0 {
		return nil, fmt.Errorf("ncout: NewWriter: the file has no unlimited dimension to append records along")
	}
	if _, err := ws.Seek(0, io.SeekStart); err != nil {
		return nil, fmt.Errorf("ncout: NewWriter: %w", err)
	}
	if _, err := f.WriteTo(ws); err != nil {
		return nil, err
	}
	return newWriter(ws, f, l), nil
}

func newWriter(ws io.WriteSeeker, f *File, l *layout) *Writer {
	w := &Writer{ws: ws, numrecs: f.NumRecs, recSize: l.recSize}
	for i, v := range f.Vars {
		if l.isRec[i] {
			w.vars = append(w.vars, &Var{Name: v.Name, Type: v.Type, Dims: v.Dims, Attrs: v.Attrs})
			w.nelems = append(w.nelems, l.nelems[i])
		}
	}
	w.pos = l.recBegin + int64(w.numrecs)*l.recSize
	return w
}

// ResumeWriter returns a Writer that appends records to the classic file
// in rws, which must have the layout this package writes (as files from
// NewWriter and File.WriteTo do). Bytes after the last complete record,
// such as a partial record left by a crash, are overwritten and, when rws
// has a Truncate(int64) error method (as *os.File does), cut off.
func ResumeWriter(rws io.ReadWriteSeeker) (*Writer, error) {
	size, err := rws.Seek(0, io.SeekEnd)
	if err != nil {
		return nil, fmt.Errorf("ncout: ResumeWriter: %w", err)
	}
	if _, err := rws.Seek(0, io.SeekStart); err != nil {
		return nil, fmt.Errorf("ncout: ResumeWriter: %w", err)
	}
	f, h, err := decodeHeader(rws, size)
	if err != nil {
		return nil, err
	}
	l, err := f.layout()
	if err != nil {
		return nil, fmt.Errorf("ncout: ResumeWriter: %w", err)
	}
	if l.recDim < 0 {
		return nil, fmt.Errorf("ncout: ResumeWriter: the file has no unlimited dimension to append records along")
	}
	for i, v := range f.Vars {
		if h.begin[i] != l.begin[i] || h.vsize[i] != l.vsize[i] {
			return nil, fmt.Errorf("ncout: ResumeWriter: variable %q is stored at byte %d (%d bytes), not where this package puts it (byte %d, %d bytes)", v.Name, h.begin[i], h.vsize[i], l.begin[i], l.vsize[i])
		}
	}
	w := newWriter(rws, f, l)
	if w.pos > size {
		return nil, fmt.Errorf("ncout: ResumeWriter: numrecs = %d needs %d bytes; the file has %d", f.NumRecs, w.pos, size)
	}
	if h.streaming {
		if err := w.patchNumRecs(); err != nil {
			return nil, err
		}
	}
	if t, ok := rws.(interface{ Truncate(int64) error }); ok && size > w.pos {
		if err := t.Truncate(w.pos); err != nil {
			return nil, fmt.Errorf("ncout: ResumeWriter: dropping bytes after the last record: %w", err)
		}
	}
	return w, nil
}

// NumRecs returns the number of records in the file.
func (w *Writer) NumRecs() int { return w.numrecs }

// RecordVars returns the names of the record variables, in the order
// WriteRecord takes their data.
func (w *Writer) RecordVars() []string {
	names := make([]string, len(w.vars))
	for i, v := range w.vars {
		names[i] = v.Name
	}
	return names
}

// WriteRecord appends one record: one slice per record variable, in the
// order of RecordVars, each of the variable's type ([]int32, []float32 or
// []float64) and holding one record's worth of values; a nil slice writes
// fill values. The record is written first and numrecs after it.
func (w *Writer) WriteRecord(data ...any) error {
	if w.err != nil {
		return w.err
	}
	if len(data) != len(w.vars) {
		return fmt.Errorf("ncout: WriteRecord: %d slices; the file has %d record variables %v", len(data), len(w.vars), w.RecordVars())
	}
	if w.numrecs >= maxCount {
		return fmt.Errorf("ncout: WriteRecord: the file already holds %d records, the most the format allows", w.numrecs)
	}
	for i, v := range w.vars {
		if err := checkSlice(v, data[i], w.nelems[i]); err != nil {
			return fmt.Errorf("ncout: WriteRecord: %w", err)
		}
	}
	b := w.buf[:0]
	for i, v := range w.vars {
		b = appendValues(b, v, data[i], w.nelems[i])
	}
	w.buf = b
	if _, err := w.ws.Seek(w.pos, io.SeekStart); err != nil {
		return w.fail(err)
	}
	if _, err := w.ws.Write(b); err != nil {
		return w.fail(err)
	}
	w.pos += int64(len(b))
	w.numrecs++
	return w.patchNumRecs()
}

func (w *Writer) patchNumRecs() error {
	var nr [4]byte
	binary.BigEndian.PutUint32(nr[:], uint32(w.numrecs))
	if _, err := w.ws.Seek(4, io.SeekStart); err != nil {
		return w.fail(err)
	}
	if _, err := w.ws.Write(nr[:]); err != nil {
		return w.fail(err)
	}
	if _, err := w.ws.Seek(w.pos, io.SeekStart); err != nil {
		return w.fail(err)
	}
	return nil
}

func (w *Writer) fail(err error) error {
	w.err = fmt.Errorf("ncout: writing record %d: %w", w.numrecs, err)
	return w.err
}

var errClosed = errors.New("ncout: Writer is closed")

// Close ends the Writer and returns the first error it met, if any. It
// does not close the underlying file.
func (w *Writer) Close() error {
	err := w.err
	w.err = errClosed
	if err == errClosed {
		return nil
	}
	return err
}

// appendValues encodes n values (or fills) big-endian.
func appendValues(b []byte, v *Var, data any, n int64) []byte {
	switch d := data.(type) {
	case []int32:
		for _, x := range d {
			b = binary.BigEndian.AppendUint32(b, uint32(x))
		}
	case []float32:
		for _, x := range d {
			b = binary.BigEndian.AppendUint32(b, math.Float32bits(x))
		}
	case []float64:
		for _, x := range d {
			b = binary.BigEndian.AppendUint64(b, math.Float64bits(x))
		}
	case nil:
		for i := int64(0); i < n; i++ {
			switch v.Type {
			case Int:
				fill := FillInt
				if x, ok := fillAttr[int32](v); ok {
					fill = x
				}
				b = binary.BigEndian.AppendUint32(b, uint32(fill))
			case Float:
				fill := FillFloat
				if x, ok := fillAttr[float32](v); ok {
					fill = x
				}
				b = binary.BigEndian.AppendUint32(b, math.Float32bits(fill))
			case Double:
				fill := FillDouble
				if x, ok := fillAttr[float64](v); ok {
					fill = x
				}
				b = binary.BigEndian.AppendUint64(b, math.Float64bits(fill))
			}
		}
	}
	return b
}
