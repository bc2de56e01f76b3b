package ncout

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
)

// Open reads the classic-format file name with Read.
func Open(name string) (*File, error) {
	fh, err := os.Open(name)
	if err != nil {
		return nil, fmt.Errorf("ncout: %w", err)
	}
	defer fh.Close()
	f, err := Read(fh)
	if err != nil {
		return nil, fmt.Errorf("%w (file %s)", err, name)
	}
	return f, nil
}

// Read decodes a whole CDF-1 or CDF-2 file from r: dimensions, attributes
// and the values of every variable. Variables and attributes of types this
// package does not support (NC_BYTE, NC_SHORT, NC_CHAR variables) make it
// fail with an error naming them. A numrecs of STREAMING (0xFFFFFFFF) is
// resolved from the file size, as the specification says.
func Read(r io.Reader) (*File, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, fmt.Errorf("ncout: reading: %w", err)
	}
	f, h, err := decodeHeader(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		return nil, err
	}
	size := int64(len(data))
	for i, v := range f.Vars {
		n := h.nelems[i]
		w := v.Type.size()
		var chunk func(k int64) []byte // k-th contiguous run of n values
		count := int64(1)
		if h.isRec[i] {
			count = int64(f.NumRecs)
			chunk = func(k int64) []byte { b := h.begin[i] + k*h.recSize; return data[b : b+n*w] }
		} else {
			chunk = func(int64) []byte { return data[h.begin[i] : h.begin[i]+n*w] }
		}
		if h.isRec[i] && h.recSize < n*w {
			return nil, fmt.Errorf("ncout: variable %q: record size %d is smaller than one record of it (%d bytes)", v.Name, h.recSize, n*w)
		}
		if count > 0 && n > 0 {
			if h.begin[i] < 0 || h.begin[i] > size || (count > 1 && (count-1) > (size-h.begin[i])/h.recSize) ||
				h.begin[i]+(count-1)*h.recSize+n*w > size {
				return nil, fmt.Errorf("ncout: variable %q: %d value(s) from byte %d lie beyond the end of the %d-byte file", v.Name, count*n, h.begin[i], size)
			}
		}
		switch v.Type {
		case Int:
			v.Data = decodeRuns(count, n, w, chunk, func(b []byte) int32 { return int32(binary.BigEndian.Uint32(b)) })
		case Float:
			v.Data = decodeRuns(count, n, w, chunk, func(b []byte) float32 { return math.Float32frombits(binary.BigEndian.Uint32(b)) })
		case Double:
			v.Data = decodeRuns(count, n, w, chunk, func(b []byte) float64 { return math.Float64frombits(binary.BigEndian.Uint64(b)) })
		}
	}
	return f, nil
}

// decodeRuns decodes count runs of n values of w bytes each, run k being
// chunk(k), with decode.
func decodeRuns[T any](count, n, w int64, chunk func(k int64) []byte, decode func([]byte) T) []T {
	d := make([]T, 0, count*n)
	for k := int64(0); k < count; k++ {
		b := chunk(k)
		for j := int64(0); j < n; j++ {
			d = append(d, decode(b[w*j:]))
		}
	}
	return d
}

// header is what decodeHeader learns beyond the File: the stored sizes
// and offsets.
type header struct {
	isRec     []bool
	nelems    []int64 // per record for record variables
	vsize     []int64
	begin     []int64
	recSize   int64
	streaming bool // numrecs was STREAMING
}

// decoder reads big-endian header fields from r, never past size bytes.
type decoder struct {
	r    *bufio.Reader
	off  int64
	size int64
	err  error
}

var errTruncated = errors.New("file ends inside the header")

func (d *decoder) bytes(n int64) []byte {
	if d.err != nil {
		return nil
	}
	if n < 0 || n > d.size-d.off {
		d.err = errTruncated
		return nil
	}
	b := make([]byte, n)
	if _, err := io.ReadFull(d.r, b); err != nil {
		d.err = fmt.Errorf("reading header at byte %d: %w", d.off, err)
		return nil
	}
	d.off += n
	return b
}

func (d *decoder) u32() uint32 {
	b := d.bytes(4)
	if b == nil {
		return 0
	}
	return binary.BigEndian.Uint32(b)
}

func (d *decoder) u64() uint64 {
	b := d.bytes(8)
	if b == nil {
		return 0
	}
	return binary.BigEndian.Uint64(b)
}

// count reads a NON_NEG count that must fit in the rest of the file when
// each element takes at least min bytes.
func (d *decoder) count(what string, min int64) int64 {
	n := int64(d.u32())
	if d.err == nil && (n > maxCount || n*min > d.size-d.off) {
		d.err = fmt.Errorf("%s: count %d is impossible in a %d-byte file", what, n, d.size)
	}
	return n
}

func (d *decoder) name(what string) string {
	n := d.count(what+" name", 1)
	b := d.bytes(pad4(n))
	if b == nil {
		return ""
	}
	return string(b[:n])
}

// list reads the tag and length of a dim, attribute or variable list;
// ABSENT is two zero words.
func (d *decoder) list(tag uint32, what string, min int64) int64 {
	t := d.u32()
	n := d.count(what, min)
	if d.err == nil && t != tag && !(t == 0 && n == 0) {
		d.err = fmt.Errorf("%s: tag %#x; want %#x or ABSENT", what, t, tag)
	}
	return n
}

func (d *decoder) attrs(where string) []Attr {
	n := d.list(tagAttribute, where+" attribute list", 12)
	var as []Attr
	for i := int64(0); i < n && d.err == nil; i++ {
		name := d.name(where + " attribute")
		t := Type(d.u32())
		if d.err == nil && t.size() == 0 {
			d.err = fmt.Errorf("%s attribute %q: type %v; supported: NC_CHAR, NC_INT, NC_FLOAT, NC_DOUBLE", where, name, t)
			return nil
		}
		k := d.count(fmt.Sprintf("%s attribute %q", where, name), t.size())
		b := d.bytes(pad4(k * t.size()))
		if b == nil {
			return nil
		}
		var val any
		switch t {
		case Char:
			val = string(b[:k])
		case Int:
			x := make([]int32, k)
			for j := range x {
				x[j] = int32(binary.BigEndian.Uint32(b[4*j:]))
			}
			val = x
		case Float:
			x := make([]float32, k)
			for j := range x {
				x[j] = math.Float32frombits(binary.BigEndian.Uint32(b[4*j:]))
			}
			val = x
		case Double:
			x := make([]float64, k)
			for j := range x {
				x[j] = math.Float64frombits(binary.BigEndian.Uint64(b[8*j:]))
			}
			val = x
		}
		as = append(as, Attr{name, val})
	}
	return as
}

// decodeHeader reads the header of a file of size bytes from r, which
// must be positioned at its start.
func decodeHeader(r io.Reader, size int64) (*File, *header, error) {
	d := &decoder{r: bufio.NewReader(r), size: size}
	f, h := d.header()
	if d.err != nil {
		return nil, nil, fmt.Errorf("ncout: not a readable classic NetCDF file: %w", d.err)
	}
	return f, h, nil
}

func (d *decoder) header() (*File, *header) {
	magic := d.bytes(4)
	if d.err != nil {
		return nil, nil
	}
	if string(magic[:3]) != "CDF" || (magic[3] != 1 && magic[3] != 2) {
		d.err = fmt.Errorf("magic %q; want \"CDF\\x01\" or \"CDF\\x02\" (CDF-5 and NetCDF-4/HDF5 are not supported)", magic)
		return nil, nil
	}
	f := &File{Format: Format(magic[3])}
	h := &header{}
	nr := d.u32()
	h.streaming = nr == math.MaxUint32
	if !h.streaming && nr > maxCount {
		d.err = fmt.Errorf("numrecs %d is negative", int32(nr))
	}
	nd := d.list(tagDimension, "dimension list", 8)
	recDim := -1
	for i := int64(0); i < nd && d.err == nil; i++ {
		name := d.name("dimension")
		n := int(d.count("dimension "+name, 0))
		if n == Unlimited {
			if recDim >= 0 {
				d.err = fmt.Errorf("dimension %q: a second unlimited dimension", name)
			}
			recDim = int(i)
		}
		f.Dims = append(f.Dims, Dim{name, n})
	}
	f.Attrs = d.attrs("global")
	nv := d.list(tagVariable, "variable list", 24)
	for i := int64(0); i < nv && d.err == nil; i++ {
		name := d.name("variable")
		v := &Var{Name: name}
		ndims := d.count("variable "+name+" dimensions", 4)
		ne, rec := int64(1), false
		for k := int64(0); k < ndims && d.err == nil; k++ {
			id := int64(d.u32())
			if id >= int64(len(f.Dims)) {
				d.err = fmt.Errorf("variable %q: dimension id %d; the file has %d dimensions", name, id, len(f.Dims))
				break
			}
			if int(id) == recDim {
				if k != 0 {
					d.err = fmt.Errorf("variable %q: the unlimited dimension is not its first", name)
				}
				rec = true
			} else {
				ne *= int64(f.Dims[id].Len)
				if ne > 1<<40 {
					d.err = fmt.Errorf("variable %q: shape of more than 2^40 values", name)
				}
			}
			v.Dims = append(v.Dims, f.Dims[id].Name)
		}
		v.Attrs = d.attrs("variable " + name)
		v.Type = Type(d.u32())
		if d.err == nil && v.Type != Int && v.Type != Float && v.Type != Double {
			d.err = fmt.Errorf("variable %q: type %v; supported: NC_INT, NC_FLOAT, NC_DOUBLE", name, v.Type)
		}
		vsize := int64(d.u32())
		var begin int64
		if f.Format == CDF1 {
			begin = int64(int32(d.u32()))
		} else {
			begin = int64(d.u64())
		}
		f.Vars = append(f.Vars, v)
		h.isRec = append(h.isRec, rec)
		h.nelems = append(h.nelems, ne)
		h.vsize = append(h.vsize, vsize)
		h.begin = append(h.begin, begin)
		if rec {
			h.recSize += vsize
		}
	}
	if d.err != nil {
		return nil, nil
	}
	if h.streaming {
		first := int64(-1)
		for i, b := range h.begin {
			if h.isRec[i] && (first < 0 || b < first) {
				first = b
			}
		}
		if first >= 0 && h.recSize > 0 && d.size > first {
			nr = uint32((d.size - first) / h.recSize)
		} else {
			nr = 0
		}
	}
	f.NumRecs = int(nr)
	return f, h
}
