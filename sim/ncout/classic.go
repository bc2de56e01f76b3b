package ncout

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strings"
	"unicode/utf8"
)

// Type is a NetCDF classic external data type (nc_type in the format
// specification).
type Type int32

// The types this package writes and reads. NC_BYTE (1) and NC_SHORT (3)
// exist in the format but are not supported here.
const (
	Char   Type = 2 // NC_CHAR: 8-bit characters; text attributes only
	Int    Type = 4 // NC_INT: 32-bit two's-complement integer
	Float  Type = 5 // NC_FLOAT: IEEE 754 binary32
	Double Type = 6 // NC_DOUBLE: IEEE 754 binary64
)

func (t Type) String() string {
	switch t {
	case 1:
		return "NC_BYTE"
	case Char:
		return "NC_CHAR"
	case 3:
		return "NC_SHORT"
	case Int:
		return "NC_INT"
	case Float:
		return "NC_FLOAT"
	case Double:
		return "NC_DOUBLE"
	}
	return fmt.Sprintf("nc_type(%d)", int32(t))
}

// size returns the external size of one value in bytes.
func (t Type) size() int64 {
	switch t {
	case Char:
		return 1
	case Int, Float:
		return 4
	case Double:
		return 8
	}
	return 0
}

// Format selects the classic-format variant, stored in the fourth byte of
// the magic number.
type Format byte

// Formats.
const (
	CDF1 Format = 1 // "CDF\x01", classic: 32-bit offsets (files up to 2 GiB of fixed data)
	CDF2 Format = 2 // "CDF\x02", 64-bit offset: 64-bit begin offsets
)

func (f Format) String() string {
	switch f {
	case CDF1:
		return "CDF-1 (classic)"
	case CDF2:
		return "CDF-2 (64-bit offset)"
	}
	return fmt.Sprintf("Format(%d)", byte(f))
}

// Unlimited, as a dimension length, declares the record dimension, as in
// the format itself (dim_length = 0) and NC_UNLIMITED in the C library.
const Unlimited = 0

// Default fill values of the format specification (NC_FILL_INT,
// NC_FILL_FLOAT, NC_FILL_DOUBLE), written for variables without data
// unless the variable has its own _FillValue attribute.
const (
	FillInt    int32   = -2147483647
	FillFloat  float32 = 9.9692099683868690e+36
	FillDouble float64 = 9.9692099683868690e+36
)

// Limits of the classic format: counts are 32-bit non-negative integers.
const maxCount = math.MaxInt32

// Dim is a named dimension. Len == Unlimited marks the record dimension;
// a file has at most one.
type Dim struct {
	Name string
	Len  int
}

// Attr is a named attribute. Value is one of string (NC_CHAR), int32 or
// []int32 (NC_INT), float32 or []float32 (NC_FLOAT), float64 or []float64
// (NC_DOUBLE). Read returns string, []int32, []float32 or []float64.
type Attr struct {
	Name  string
	Value any
}

// Var is a variable. Dims names its dimensions, slowest-varying first;
// only the first may be the record dimension, which makes it a record
// variable. Data holds all values in row-major order as []int32 (Int),
// []float32 (Float) or []float64 (Double); for a record variable, the
// records one after another. A nil Data is written as fill values (the
// variable's _FillValue, else the default fill of its type).
type Var struct {
	Name  string
	Type  Type
	Dims  []string
	Attrs []Attr
	Data  any
}

// SetAttr sets attribute name to value, replacing an attribute of the
// same name in place or appending a new one, and returns v. The value is
// checked when the file is written.
func (v *Var) SetAttr(name string, value any) *Var {
	v.Attrs = setAttr(v.Attrs, name, value)
	return v
}

// Attr returns the value of attribute name.
func (v *Var) Attr(name string) (any, bool) { return getAttr(v.Attrs, name) }

// File is a NetCDF classic dataset held in memory: its dimensions, global
// attributes and variables. The zero value is an empty CDF-2 file.
// NumRecs is the number of records every record variable's Data holds.
type File struct {
	Format  Format // 0 means CDF2
	Dims    []Dim
	Attrs   []Attr
	Vars    []*Var
	NumRecs int
}

// AddDim appends a dimension; length Unlimited makes it the record
// dimension.
func (f *File) AddDim(name string, length int) { f.Dims = append(f.Dims, Dim{name, length}) }

// AddVar appends a variable and returns it, so that attributes can be set
// on it. data may be nil (fill values) and may be set later on the Var.
func (f *File) AddVar(name string, t Type, dims []string, data any) *Var {
	v := &Var{Name: name, Type: t, Dims: append([]string(nil), dims...), Data: data}
	f.Vars = append(f.Vars, v)
	return v
}

// SetAttr sets a global attribute, replacing one of the same name in place.
func (f *File) SetAttr(name string, value any) { f.Attrs = setAttr(f.Attrs, name, value) }

// Attr returns the value of global attribute name.
func (f *File) Attr(name string) (any, bool) { return getAttr(f.Attrs, name) }

// Var returns the variable called name, or nil.
func (f *File) Var(name string) *Var {
	for _, v := range f.Vars {
		if v.Name == name {
			return v
		}
	}
	return nil
}

// Dim returns the dimension called name. For the record dimension Len is
// Unlimited; the record count is NumRecs.
func (f *File) Dim(name string) (Dim, bool) {
	for _, d := range f.Dims {
		if d.Name == name {
			return d, true
		}
	}
	return Dim{}, false
}

func setAttr(as []Attr, name string, value any) []Attr {
	for i := range as {
		if as[i].Name == name {
			as[i].Value = value
			return as
		}
	}
	return append(as, Attr{name, value})
}

func getAttr(as []Attr, name string) (any, bool) {
	for _, a := range as {
		if a.Name == name {
			return a.Value, true
		}
	}
	return nil, false
}

// WriteTo encodes the file in the classic format and writes it to w. It
// implements io.WriterTo. Nothing is written when the file is invalid.
func (f *File) WriteTo(w io.Writer) (int64, error) {
	l, err := f.layout()
	if err != nil {
		return 0, err
	}
	if err := f.checkData(l); err != nil {
		return 0, err
	}
	cw := &countWriter{w: w}
	bw := bufio.NewWriterSize(cw, 1<<16)
	bw.Write(f.appendHeader(nil, l, f.NumRecs))
	for i, v := range f.Vars {
		if !l.isRec[i] {
			writeValues(bw, v, 0, l.nelems[i])
		}
	}
	for r := int64(0); r < int64(f.NumRecs); r++ {
		for i, v := range f.Vars {
			if l.isRec[i] {
				writeValues(bw, v, r*l.nelems[i], l.nelems[i])
			}
		}
	}
	if err := bw.Flush(); err != nil {
		return cw.n, fmt.Errorf("ncout: writing file: %w", err)
	}
	return cw.n, nil
}

type countWriter struct {
	w io.Writer
	n int64
}

func (c *countWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.n += int64(n)
	return n, err
}

// layout is where everything goes, derived from the header alone.
type layout struct {
	format    Format
	recDim    int     // index of the record dimension, or -1
	isRec     []bool  // per variable
	nelems    []int64 // values per variable (per record for record variables)
	vsize     []int64
	begin     []int64
	headerLen int64
	recBegin  int64 // offset of the first record
	recSize   int64 // bytes per record, all record variables
}

// layout validates the header (names, dimensions, types, attributes) and
// computes sizes and offsets following the format specification: fixed
// variables in order after the header, then the records, each holding
// every record variable in order; each vsize is rounded up to 4 bytes.
func (f *File) layout() (*layout, error) {
	format := f.Format
	if format == 0 {
		format = CDF2
	}
	if format != CDF1 && format != CDF2 {
		return nil, fmt.Errorf("ncout: format = %d: unknown; allowed: 1 (CDF-1), 2 (CDF-2)", byte(format))
	}
	l := &layout{format: format, recDim: -1}
	dimIndex := make(map[string]int, len(f.Dims))
	for i, d := range f.Dims {
		if err := checkName(d.Name); err != nil {
			return nil, fmt.Errorf("ncout: dimension %d: %w", i, err)
		}
		if _, dup := dimIndex[d.Name]; dup {
			return nil, fmt.Errorf("ncout: dimension %q: defined twice", d.Name)
		}
		dimIndex[d.Name] = i
		if d.Len < 0 || d.Len > maxCount {
			return nil, fmt.Errorf("ncout: dimension %q: length %d; allowed: 1 to %d, or Unlimited (0)", d.Name, d.Len, maxCount)
		}
		if d.Len == Unlimited {
			if l.recDim >= 0 {
				return nil, fmt.Errorf("ncout: dimension %q: a second unlimited dimension (%q is one); the classic format allows one", d.Name, f.Dims[l.recDim].Name)
			}
			l.recDim = i
		}
	}
	if f.NumRecs < 0 || f.NumRecs > maxCount {
		return nil, fmt.Errorf("ncout: NumRecs = %d; allowed: 0 to %d", f.NumRecs, maxCount)
	}
	if l.recDim < 0 && f.NumRecs != 0 {
		return nil, fmt.Errorf("ncout: NumRecs = %d without an unlimited dimension; want 0", f.NumRecs)
	}
	if err := checkAttrs(f.Attrs, 0); err != nil {
		return nil, fmt.Errorf("ncout: global %w", err)
	}
	n := len(f.Vars)
	l.isRec = make([]bool, n)
	l.nelems = make([]int64, n)
	l.vsize = make([]int64, n)
	l.begin = make([]int64, n)
	varNames := make(map[string]bool, n)
	const maxVsize = math.MaxUint32 - 3
	for i, v := range f.Vars {
		if v == nil {
			return nil, fmt.Errorf("ncout: variable %d is nil", i)
		}
		if err := checkName(v.Name); err != nil {
			return nil, fmt.Errorf("ncout: variable %d: %w", i, err)
		}
		if varNames[v.Name] {
			return nil, fmt.Errorf("ncout: variable %q: defined twice", v.Name)
		}
		varNames[v.Name] = true
		if v.Type != Int && v.Type != Float && v.Type != Double {
			return nil, fmt.Errorf("ncout: variable %q: type %v; allowed: NC_INT, NC_FLOAT, NC_DOUBLE", v.Name, v.Type)
		}
		ne := int64(1)
		for k, dn := range v.Dims {
			di, ok := dimIndex[dn]
			if !ok {
				return nil, fmt.Errorf("ncout: variable %q: dimension %q is not defined", v.Name, dn)
			}
			if di == l.recDim {
				if k != 0 {
					return nil, fmt.Errorf("ncout: variable %q: the unlimited dimension %q is dimension %d; it must be the first", v.Name, dn, k)
				}
				l.isRec[i] = true
				continue
			}
			ne *= int64(f.Dims[di].Len)
			if ne*v.Type.size() > maxVsize {
				return nil, fmt.Errorf("ncout: variable %q: more than %d bytes (per record); the classic format does not allow it here", v.Name, int64(maxVsize))
			}
		}
		l.nelems[i] = ne
		l.vsize[i] = pad4(ne * v.Type.size())
		if err := checkAttrs(v.Attrs, v.Type); err != nil {
			return nil, fmt.Errorf("ncout: variable %q: %w", v.Name, err)
		}
	}
	l.headerLen = int64(len(f.appendHeader(nil, l, 0)))
	off := l.headerLen
	for i := range f.Vars {
		if !l.isRec[i] {
			l.begin[i] = off
			off += l.vsize[i]
		}
	}
	l.recBegin = off
	for i := range f.Vars {
		if l.isRec[i] {
			l.begin[i] = off
			off += l.vsize[i]
			l.recSize += l.vsize[i]
		}
	}
	if format == CDF1 {
		for i, b := range l.begin {
			if b > math.MaxInt32 {
				return nil, fmt.Errorf("ncout: variable %q starts at byte %d, beyond the 2 GiB of CDF-1; use CDF-2", f.Vars[i].Name, b)
			}
		}
	}
	return l, nil
}

// checkData checks that each variable's Data has the Go type of its
// netCDF type and the length of its shape (with NumRecs records).
func (f *File) checkData(l *layout) error {
	for i, v := range f.Vars {
		want := l.nelems[i]
		if l.isRec[i] {
			want *= int64(f.NumRecs)
		}
		if err := checkSlice(v, v.Data, want); err != nil {
			return err
		}
	}
	return nil
}

func checkSlice(v *Var, data any, want int64) error {
	if data == nil {
		return nil
	}
	var got int64
	var ok bool
	switch d := data.(type) {
	case []int32:
		got, ok = int64(len(d)), v.Type == Int
	case []float32:
		got, ok = int64(len(d)), v.Type == Float
	case []float64:
		got, ok = int64(len(d)), v.Type == Double
	}
	if !ok {
		return fmt.Errorf("ncout: variable %q: data of Go type %T for %v; want %s", v.Name, data, v.Type, goType(v.Type))
	}
	if got != want {
		return fmt.Errorf("ncout: variable %q: %d values; its shape %v holds %d", v.Name, got, v.Dims, want)
	}
	return nil
}

func goType(t Type) string {
	switch t {
	case Int:
		return "[]int32"
	case Float:
		return "[]float32"
	case Double:
		return "[]float64"
	}
	return "?"
}

func pad4(n int64) int64 { return (n + 3) &^ 3 }

// checkName applies the naming rule of the format specification: a first
// character that is a letter, a digit, '_' or a multibyte UTF-8 character,
// then no control characters and no '/', and no trailing space.
func checkName(name string) error {
	if name == "" {
		return fmt.Errorf("empty name")
	}
	if len(name) > maxCount {
		return fmt.Errorf("name of %d bytes is too long", len(name))
	}
	if !utf8.ValidString(name) {
		return fmt.Errorf("name %q is not valid UTF-8", name)
	}
	for i, r := range name {
		if r < 0x80 {
			alnum := r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '_'
			if i == 0 && !alnum {
				return fmt.Errorf("name %q: must start with a letter, a digit or '_'", name)
			}
			if r < 0x20 || r == 0x7f || r == '/' {
				return fmt.Errorf("name %q: control characters and '/' are not allowed", name)
			}
		}
	}
	if strings.HasSuffix(name, " ") {
		return fmt.Errorf("name %q: must not end with a space", name)
	}
	return nil
}

// checkAttrs checks attribute names and values; varType, when not zero,
// is the type a _FillValue must have.
func checkAttrs(as []Attr, varType Type) error {
	seen := make(map[string]bool, len(as))
	for i, a := range as {
		if err := checkName(a.Name); err != nil {
			return fmt.Errorf("attribute %d: %w", i, err)
		}
		if seen[a.Name] {
			return fmt.Errorf("attribute %q: defined twice", a.Name)
		}
		seen[a.Name] = true
		t, n, ok := attrType(a.Value)
		if !ok {
			return fmt.Errorf("attribute %q: value of Go type %T; allowed: string, int32, []int32, float32, []float32, float64, []float64", a.Name, a.Value)
		}
		if n > maxCount {
			return fmt.Errorf("attribute %q: %d values is too many", a.Name, n)
		}
		if a.Name == "_FillValue" {
			if varType == 0 {
				return fmt.Errorf("attribute %q: only variables have a fill value", a.Name)
			}
			if t != varType || n != 1 {
				return fmt.Errorf("attribute %q: %d value(s) of %v; want one value of the variable's type %v", a.Name, n, t, varType)
			}
		}
	}
	return nil
}

// attrType returns the netCDF type and length of an attribute value.
func attrType(v any) (Type, int, bool) {
	switch x := v.(type) {
	case string:
		return Char, len(x), true
	case int32:
		return Int, 1, true
	case []int32:
		return Int, len(x), true
	case float32:
		return Float, 1, true
	case []float32:
		return Float, len(x), true
	case float64:
		return Double, 1, true
	case []float64:
		return Double, len(x), true
	}
	return 0, 0, false
}

// Header tags of the format specification.
const (
	tagDimension = 0x0A
	tagVariable  = 0x0B
	tagAttribute = 0x0C
)

// appendHeader encodes the header:
//
//	header = magic numrecs dim_list gatt_list var_list
//
// with ABSENT (eight zero bytes) for an empty list, names as a length and
// the bytes padded to 4, and begin as 32 bits (CDF-1) or 64 bits (CDF-2).
func (f *File) appendHeader(b []byte, l *layout, numrecs int) []byte {
	b = append(b, 'C', 'D', 'F', byte(l.format))
	b = be32(b, uint32(numrecs))
	if len(f.Dims) == 0 {
		b = be32(be32(b, 0), 0)
	} else {
		b = be32(be32(b, tagDimension), uint32(len(f.Dims)))
		for _, d := range f.Dims {
			b = appendName(b, d.Name)
			b = be32(b, uint32(d.Len))
		}
	}
	b = appendAttrs(b, f.Attrs)
	if len(f.Vars) == 0 {
		return be32(be32(b, 0), 0)
	}
	dimIndex := make(map[string]int, len(f.Dims))
	for i, d := range f.Dims {
		dimIndex[d.Name] = i
	}
	b = be32(be32(b, tagVariable), uint32(len(f.Vars)))
	for i, v := range f.Vars {
		b = appendName(b, v.Name)
		b = be32(b, uint32(len(v.Dims)))
		for _, dn := range v.Dims {
			b = be32(b, uint32(dimIndex[dn]))
		}
		b = appendAttrs(b, v.Attrs)
		b = be32(b, uint32(v.Type))
		b = be32(b, uint32(l.vsize[i]))
		if l.format == CDF1 {
			b = be32(b, uint32(l.begin[i]))
		} else {
			b = binary.BigEndian.AppendUint64(b, uint64(l.begin[i]))
		}
	}
	return b
}

func be32(b []byte, v uint32) []byte { return binary.BigEndian.AppendUint32(b, v) }

func appendName(b []byte, s string) []byte {
	b = be32(b, uint32(len(s)))
	b = append(b, s...)
	return padTo4(b, int64(len(s)))
}

func padTo4(b []byte, n int64) []byte {
	for ; n%4 != 0; n++ {
		b = append(b, 0)
	}
	return b
}

func appendAttrs(b []byte, as []Attr) []byte {
	if len(as) == 0 {
		return be32(be32(b, 0), 0)
	}
	b = be32(be32(b, tagAttribute), uint32(len(as)))
	for _, a := range as {
		b = appendName(b, a.Name)
		t, n, _ := attrType(a.Value)
		b = be32(be32(b, uint32(t)), uint32(n))
		switch x := a.Value.(type) {
		case string:
			b = append(b, x...)
		case int32:
			b = be32(b, uint32(x))
		case []int32:
			for _, y := range x {
				b = be32(b, uint32(y))
			}
		case float32:
			b = be32(b, math.Float32bits(x))
		case []float32:
			for _, y := range x {
				b = be32(b, math.Float32bits(y))
			}
		case float64:
			b = binary.BigEndian.AppendUint64(b, math.Float64bits(x))
		case []float64:
			for _, y := range x {
				b = binary.BigEndian.AppendUint64(b, math.Float64bits(y))
			}
		}
		b = padTo4(b, int64(n)*t.size())
	}
	return b
}

// writeValues writes n values of v starting at value off, big-endian, or
// n fill values when v.Data is nil, in chunks through appendValues. Types
// are 4 or 8 bytes wide, so no padding is needed. Errors are sticky in bw
// and reported by Flush.
func writeValues(bw *bufio.Writer, v *Var, off, n int64) {
	const chunk = 8192
	buf := make([]byte, 0, 8*chunk)
	for lo := off; lo < off+n; lo += chunk {
		hi := min(lo+chunk, off+n)
		buf = appendValues(buf[:0], v, subslice(v.Data, lo, hi), hi-lo)
		bw.Write(buf)
	}
}

// subslice returns data[lo:hi] for the supported slice types, nil for nil.
func subslice(data any, lo, hi int64) any {
	switch d := data.(type) {
	case []int32:
		return d[lo:hi]
	case []float32:
		return d[lo:hi]
	case []float64:
		return d[lo:hi]
	}
	return nil
}

// fillAttr returns the variable's _FillValue, stored as a scalar or as a
// one-element slice (checkAttrs has checked type and length).
func fillAttr[T int32 | float32 | float64](v *Var) (T, bool) {
	a, _ := getAttr(v.Attrs, "_FillValue")
	switch x := a.(type) {
	case T:
		return x, true
	case []T:
		if len(x) == 1 {
			return x[0], true
		}
	}
	var zero T
	return zero, false
}
