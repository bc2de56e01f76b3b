package ncout

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"gyrebench/sim/internal/testcheck"
)

// sampleFile has every feature the encoder supports: fixed and record
// variables of each type, scalar and padded attributes, odd-length names
// and text, explicit and default fill values, special float values.
func sampleFile(format Format) *File {
	f := &File{Format: format, NumRecs: 3}
	f.AddDim("time", Unlimited)
	f.AddDim("x", 3)
	f.AddDim("y", 2)
	f.AddDim("odd_5", 5)
	f.SetAttr("title", "round trip")
	f.SetAttr("odd", "abcde")
	f.SetAttr("empty", "")
	f.SetAttr("ints", []int32{1, -2, math.MaxInt32, math.MinInt32})
	f.SetAttr("one_float", float32(1.5))
	f.SetAttr("doubles", []float64{math.Pi, math.Copysign(0, -1), 1e300, math.Inf(-1)})
	f.AddVar("grid", Double, []string{"y", "x"}, []float64{1, 2, 3, 4.5, math.NaN(), -6e-310}).
		SetAttr("units", "m").
		SetAttr("scale", float64(2))
	f.AddVar("count", Int, []string{"odd_5"}, []int32{-1, 0, 1, 2, math.MaxInt32})
	f.AddVar("scalar", Float, nil, []float32{2.5})
	f.AddVar("t", Double, []string{"time"}, []float64{0, 10, 20}).SetAttr("units", "s")
	f.AddVar("u", Float, []string{"time", "x"}, []float32{1, 2, 3, 4, 5, 6, 7, 8, float32(math.Inf(1))}).
		SetAttr("_FillValue", float32(-999))
	f.AddVar("filled", Int, []string{"x"}, nil).SetAttr("_FillValue", int32(-7))
	f.AddVar("default_fill", Double, []string{"y"}, nil)
	f.AddVar("rec_fill", Int, []string{"time", "y"}, nil)
	return f
}

// normAttr turns scalar attribute values into the slices Read returns.
func normAttr(v any) any {
	switch x := v.(type) {
	case int32:
		return []int32{x}
	case float32:
		return []float32{x}
	case float64:
		return []float64{x}
	}
	return v
}

// bits makes float data comparable bit for bit (NaN, −0).
func bits(v any) any {
	switch x := v.(type) {
	case []float64:
		b := make([]uint64, len(x))
		for i := range x {
			b[i] = math.Float64bits(x[i])
		}
		return b
	case []float32:
		b := make([]uint32, len(x))
		for i := range x {
			b[i] = math.Float32bits(x[i])
		}
		return b
	}
	return v
}

func sameAttrs(t *testing.T, where string, got, want []Attr) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d attributes, want %d", where, len(got), len(want))
	}
	for i := range want {
		if got[i].Name != want[i].Name || !reflect.DeepEqual(bits(got[i].Value), bits(normAttr(want[i].Value))) {
			t.Errorf("%s: attribute %d = %q: %#v; want %q: %#v", where, i, got[i].Name, got[i].Value, want[i].Name, want[i].Value)
		}
	}
}

func TestRoundTrip(t *testing.T) {
	fills := map[string]any{
		"filled":       []int32{-7, -7, -7},
		"default_fill": []float64{FillDouble, FillDouble},
		"rec_fill":     []int32{FillInt, FillInt, FillInt, FillInt, FillInt, FillInt},
	}
	for _, format := range []Format{CDF1, CDF2} {
		t.Run(format.String(), func(t *testing.T) {
			want := sampleFile(format)
			var buf bytes.Buffer
			n, err := want.WriteTo(&buf)
			if err != nil {
				t.Fatal(err)
			}
			if n != int64(buf.Len()) {
				t.Errorf("WriteTo reported %d bytes, wrote %d", n, buf.Len())
			}
			if magic := buf.Bytes()[:4]; string(magic) != "CDF"+string(rune(format)) {
				t.Errorf("magic %q", magic)
			}
			if buf.Len()%4 != 0 {
				t.Errorf("file length %d is not a multiple of 4", buf.Len())
			}
			got, err := Read(&buf)
			if err != nil {
				t.Fatal(err)
			}
			if got.Format != format || got.NumRecs != 3 {
				t.Errorf("format %v, numrecs %d; want %v, 3", got.Format, got.NumRecs, format)
			}
			if !reflect.DeepEqual(got.Dims, want.Dims) {
				t.Errorf("dims %v; want %v", got.Dims, want.Dims)
			}
			sameAttrs(t, "global", got.Attrs, want.Attrs)
			if len(got.Vars) != len(want.Vars) {
				t.Fatalf("%d variables, want %d", len(got.Vars), len(want.Vars))
			}
			for i, w := range want.Vars {
				g := got.Vars[i]
				if g.Name != w.Name || g.Type != w.Type || !reflect.DeepEqual(g.Dims, w.Dims) && len(w.Dims) > 0 || len(g.Dims) != len(w.Dims) {
					t.Errorf("variable %d: %s %v %v; want %s %v %v", i, g.Name, g.Type, g.Dims, w.Name, w.Type, w.Dims)
				}
				sameAttrs(t, w.Name, g.Attrs, w.Attrs)
				wd := w.Data
				if wd == nil {
					wd = fills[w.Name]
				}
				if !reflect.DeepEqual(bits(g.Data), bits(wd)) {
					t.Errorf("%s data %v; want %v", w.Name, g.Data, wd)
				}
			}
		})
	}
}

// The exact bytes of a tiny file, worked out by hand from the format
// specification: magic, numrecs, dim_list, ABSENT gatt_list, var_list with
// one NC_INT variable whose data start right after the header.
func TestGoldenBytes(t *testing.T) {
	word := func(ws ...uint32) []byte {
		var b []byte
		for _, w := range ws {
			b = binary.BigEndian.AppendUint32(b, w)
		}
		return b
	}
	for _, tc := range []struct {
		format Format
		begin  []byte
	}{
		{CDF1, word(80)},    // 4-byte begin: header is 80 bytes
		{CDF2, word(0, 84)}, // 8-byte begin: header is 84 bytes
	} {
		f := &File{Format: tc.format}
		f.AddDim("x", 2)
		f.AddVar("v", Int, []string{"x"}, []int32{1, -2})
		var want []byte
		want = append(want, 'C', 'D', 'F', byte(tc.format))
		want = append(want, word(0)...)                     // numrecs
		want = append(want, word(0x0A, 1, 1)...)            // NC_DIMENSION, 1 dim, name length 1
		want = append(want, 'x', 0, 0, 0)                   // name padded to 4
		want = append(want, word(2)...)                     // dim length
		want = append(want, word(0, 0)...)                  // gatt_list ABSENT
		want = append(want, word(0x0B, 1, 1)...)            // NC_VARIABLE, 1 var, name length 1
		want = append(want, 'v', 0, 0, 0)                   // name
		want = append(want, word(1, 0)...)                  // 1 dim: id 0
		want = append(want, word(0, 0)...)                  // vatt_list ABSENT
		want = append(want, word(4, 8)...)                  // NC_INT, vsize 8
		want = append(want, tc.begin...)                    // begin
		want = append(want, word(1, uint32(0xFFFFFFFE))...) // data 1, -2
		var buf bytes.Buffer
		if _, err := f.WriteTo(&buf); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(buf.Bytes(), want) {
			t.Errorf("%v:\n got % x\nwant % x", tc.format, buf.Bytes(), want)
		}
	}
}

func TestInvalidFiles(t *testing.T) {
	for _, tc := range []struct {
		name   string
		change func(f *File)
		want   []string // substrings of the error
	}{
		{"duplicate dim", func(f *File) { f.AddDim("x", 4) }, []string{`dimension "x"`, "twice"}},
		{"second unlimited", func(f *File) { f.AddDim("t2", Unlimited) }, []string{`"t2"`, "unlimited", `"time"`}},
		{"negative dim", func(f *File) { f.AddDim("neg", -1) }, []string{`"neg"`, "-1", "allowed"}},
		{"record dim not first", func(f *File) { f.AddVar("bad", Double, []string{"x", "time"}, nil) }, []string{`"bad"`, "must be the first"}},
		{"undefined dim", func(f *File) { f.AddVar("bad", Double, []string{"z"}, nil) }, []string{`"bad"`, `"z"`, "not defined"}},
		{"slash in name", func(f *File) { f.AddVar("a/b", Double, nil, nil) }, []string{`"a/b"`, "'/'"}},
		{"leading dot", func(f *File) { f.AddDim(".x", 1) }, []string{`".x"`, "must start"}},
		{"trailing space", func(f *File) { f.SetAttr("t ", "x") }, []string{`"t "`, "space"}},
		{"empty name", func(f *File) { f.AddDim("", 1) }, []string{"empty name"}},
		{"duplicate var", func(f *File) { f.AddVar("grid", Int, nil, nil) }, []string{`"grid"`, "twice"}},
		{"short data", func(f *File) { f.Var("grid").Data = []float64{1} }, []string{`"grid"`, "1 values", "6"}},
		{"record data", func(f *File) { f.NumRecs = 2 }, []string{`"t"`, "3 values", "holds 2"}},
		{"wrong Go type", func(f *File) { f.Var("count").Data = []float64{1, 2, 3, 4, 5} }, []string{`"count"`, "[]float64", "[]int32"}},
		{"char variable", func(f *File) { f.AddVar("c", Char, nil, nil) }, []string{`"c"`, "NC_CHAR", "allowed"}},
		{"bad attr type", func(f *File) { f.SetAttr("n", 3) }, []string{`"n"`, "int", "allowed"}},
		{"fill type", func(f *File) { f.Var("count").SetAttr("_FillValue", 1.0) }, []string{`"count"`, "_FillValue", "NC_INT"}},
		{"global fill", func(f *File) { f.SetAttr("_FillValue", 1.0) }, []string{"_FillValue", "only variables"}},
		{"records without dim", func(f *File) {
			*f = File{NumRecs: 1}
		}, []string{"NumRecs = 1", "unlimited"}},
		{"format", func(f *File) { f.Format = 5 }, []string{"format = 5", "allowed"}},
		{"too big", func(f *File) {
			f.AddDim("big", 1<<30)
			f.AddVar("huge", Double, []string{"big"}, nil)
		}, []string{`"huge"`, "bytes"}},
		{"CDF-1 offset", func(f *File) {
			*f = File{Format: CDF1}
			f.AddDim("big", 1<<28)
			f.AddVar("a", Double, []string{"big"}, nil)
			f.AddVar("b", Double, []string{"big"}, nil)
		}, []string{`"b"`, "CDF-1", "CDF-2"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			f := sampleFile(CDF2)
			tc.change(f)
			var buf bytes.Buffer
			_, err := f.WriteTo(&buf)
			if err == nil {
				t.Fatal("no error")
			}
			for _, s := range tc.want {
				if !strings.Contains(err.Error(), s) {
					t.Errorf("error %q does not mention %q", err, s)
				}
			}
			if buf.Len() != 0 {
				t.Errorf("%d bytes written for an invalid file", buf.Len())
			}
		})
	}
}

// Every strict prefix of a valid file is an error, never a panic or a
// silently shorter file.
func TestReadTruncated(t *testing.T) {
	var buf bytes.Buffer
	if _, err := sampleFile(CDF2).WriteTo(&buf); err != nil {
		t.Fatal(err)
	}
	full := buf.Bytes()
	for n := 0; n < len(full); n++ {
		if _, err := Read(bytes.NewReader(full[:n])); err == nil {
			t.Fatalf("Read of the first %d of %d bytes succeeded", n, len(full))
		}
	}
	bad := append([]byte("CDF\x05"), full[4:]...)
	if _, err := Read(bytes.NewReader(bad)); err == nil || !strings.Contains(err.Error(), "CDF-5") {
		t.Errorf("CDF-5 magic: error %v", err)
	}
}

// numrecs = STREAMING (0xFFFFFFFF) is resolved from the file size.
func TestReadStreamingNumRecs(t *testing.T) {
	var buf bytes.Buffer
	if _, err := sampleFile(CDF2).WriteTo(&buf); err != nil {
		t.Fatal(err)
	}
	b := buf.Bytes()
	binary.BigEndian.PutUint32(b[4:], math.MaxUint32)
	f, err := Read(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	if f.NumRecs != 3 || !reflect.DeepEqual(f.Var("t").Data, []float64{0, 10, 20}) {
		t.Errorf("numrecs %d, t = %v; want 3, [0 10 20]", f.NumRecs, f.Var("t").Data)
	}
}

// recordsOf returns a copy of f holding only its first n records.
func recordsOf(f *File, n int) *File {
	g := *f
	g.NumRecs = n
	g.Vars = nil
	for _, v := range f.Vars {
		w := *v
		if len(v.Dims) > 0 && v.Dims[0] == "time" && v.Data != nil {
			per := reflect.ValueOf(v.Data).Len() / f.NumRecs
			w.Data = reflect.ValueOf(v.Data).Slice(0, n*per).Interface()
		}
		g.Vars = append(g.Vars, &w)
	}
	return &g
}

// record returns record r of each record variable of f, in order.
func record(f *File, r int) []any {
	var rec []any
	for _, v := range f.Vars {
		if len(v.Dims) > 0 && v.Dims[0] == "time" {
			if v.Data == nil {
				rec = append(rec, nil)
				continue
			}
			per := reflect.ValueOf(v.Data).Len() / f.NumRecs
			rec = append(rec, reflect.ValueOf(v.Data).Slice(r*per, (r+1)*per).Interface())
		}
	}
	return rec
}

func encode(t *testing.T, f *File) []byte {
	t.Helper()
	var buf bytes.Buffer
	if _, err := f.WriteTo(&buf); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// Streaming records gives the same bytes as writing the whole file, and
// the file is complete after each record.
func TestWriterMatchesWriteTo(t *testing.T) {
	full := sampleFile(CDF2)
	path := filepath.Join(t.TempDir(), "rec.nc")
	fh, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	w, err := NewWriter(fh, recordsOf(full, 1))
	if err != nil {
		t.Fatal(err)
	}
	if got := w.RecordVars(); !reflect.DeepEqual(got, []string{"t", "u", "rec_fill"}) {
		t.Errorf("RecordVars = %v", got)
	}
	// Bad records are refused before anything is written.
	for _, bad := range [][]any{
		record(full, 1)[:2],
		{[]float64{10}, []float64{4, 5, 6}, nil},
		{[]float64{10}, []float32{4, 5}, nil},
	} {
		if err := w.WriteRecord(bad...); err == nil {
			t.Errorf("WriteRecord(%v) succeeded", bad)
		}
	}
	for r := 1; r < 3; r++ {
		if err := w.WriteRecord(record(full, r)...); err != nil {
			t.Fatal(err)
		}
		got, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if want := encode(t, recordsOf(full, r+1)); !bytes.Equal(got, want) {
			t.Fatalf("after record %d the file differs from WriteTo of %d records", r, r+1)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if err := w.WriteRecord(record(full, 0)...); err == nil {
		t.Error("WriteRecord after Close succeeded")
	}
}

// ResumeWriter continues a file, dropping a partial record left behind.
func TestResumeWriter(t *testing.T) {
	full := sampleFile(CDF1)
	// A fourth record for the three-record sample.
	four := recordsOf(full, 3)
	four.NumRecs = 4
	for _, v := range four.Vars {
		switch v.Name {
		case "t":
			v.Data = []float64{0, 10, 20, 30}
		case "u":
			v.Data = append(append([]float32(nil), v.Data.([]float32)...), 10, 11, 12)
		}
	}
	path := filepath.Join(t.TempDir(), "resume.nc")
	partial := append(encode(t, recordsOf(full, 2)), 0xde, 0xad, 0xbe, 0xef, 1, 2, 3)
	if err := os.WriteFile(path, partial, 0o644); err != nil {
		t.Fatal(err)
	}
	fh, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	w, err := ResumeWriter(fh)
	if err != nil {
		t.Fatal(err)
	}
	if w.NumRecs() != 2 {
		t.Fatalf("resumed with %d records, want 2", w.NumRecs())
	}
	for r := 2; r < 4; r++ {
		if err := w.WriteRecord(record(four, r)...); err != nil {
			t.Fatal(err)
		}
	}
	got, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if want := encode(t, four); !bytes.Equal(got, want) {
		t.Errorf("resumed file (%d bytes) differs from WriteTo of 4 records (%d bytes)", len(got), len(want))
	}
}

// The outside judge: ncdump reads both formats and prints what was
// written.
func TestNcdumpReadsClassic(t *testing.T) {
	ncdump := ncdumpTool(t, "ncdump")
	for _, tc := range []struct {
		format Format
		kind   string
	}{{CDF1, "classic"}, {CDF2, "64-bit offset"}} {
		path := filepath.Join(t.TempDir(), "sample.nc")
		f := sampleFile(tc.format)
		f.Var("grid").Data = []float64{1, 2, 3, 4.5, 0.1, -6e-310}
		f.Var("u").Data = []float32{1, 2, 3, 4, 5, 6, 7, 8, 9.5}
		if err := os.WriteFile(path, encode(t, f), 0o644); err != nil {
			t.Fatal(err)
		}
		if got := strings.TrimSpace(runTool(t, ncdump, "-k", path)); got != tc.kind {
			t.Errorf("ncdump -k = %q; want %q", got, tc.kind)
		}
		dump := runTool(t, ncdump, "-p", "9,17", path)
		for _, s := range []string{
			"time = UNLIMITED ; // (3 currently)",
			"odd_5 = 5 ;",
			`:odd = "abcde" ;`,
			":ints = 1, -2, 2147483647, -2147483648 ;",
			":one_float = 1.5f ;",
			"float u(time, x) ;",
			"u:_FillValue = -999.f ;",
			"int filled(x) ;",
		} {
			if !strings.Contains(dump, s) {
				t.Errorf("%v: ncdump output lacks %q:\n%s", tc.format, s, dump)
			}
		}
		if got := dumpFloats(t, dump, "grid"); !reflect.DeepEqual(got, f.Var("grid").Data) {
			t.Errorf("ncdump grid = %v; want %v", got, f.Var("grid").Data)
		}
		if got := dumpFloats(t, dump, "t"); !reflect.DeepEqual(got, []float64{0, 10, 20}) {
			t.Errorf("ncdump t = %v", got)
		}
		if got := dumpInts(t, dump, "count"); !reflect.DeepEqual(got, f.Var("count").Data) {
			t.Errorf("ncdump count = %v", got)
		}
		if got := dumpValues(t, dump, "filled"); !reflect.DeepEqual(got, []string{"_", "_", "_"}) {
			t.Errorf("ncdump filled = %v; want fill values", got)
		}
		var us []float64
		for _, x := range f.Var("u").Data.([]float32) {
			us = append(us, float64(x))
		}
		if got := dumpFloats(t, dump, "u"); !reflect.DeepEqual(got, us) {
			t.Errorf("ncdump u = %v; want %v", got, us)
		}
	}
}

// The other direction: files from the reference library's ncgen are read
// correctly.
func TestReadNcgenFiles(t *testing.T) {
	ncgen := ncdumpTool(t, "ncgen")
	cdl := `netcdf gen {
dimensions:
	time = UNLIMITED ;
	x = 3 ;
variables:
	double t(time) ;
		t:units = "s" ;
	int n(x) ;
		n:_FillValue = -5 ;
	float u(time, x) ;
	double s ;
// global attributes:
		:title = "from ncgen" ;
		:vals = 1, 2, 3 ;
		:d = 0.25 ;
data:
 t = 0, 1.5 ;
 n = 7, _, 9 ;
 u = 1, 2, 3, 4, 5, 6 ;
 s = 3.25 ;
}
`
	dir := t.TempDir()
	src := filepath.Join(dir, "gen.cdl")
	if err := os.WriteFile(src, []byte(cdl), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, kind := range []string{"classic", "64-bit offset"} {
		out := filepath.Join(dir, "gen.nc")
		runTool(t, ncgen, "-k", kind, "-o", out, src)
		f, err := Open(out)
		if err != nil {
			t.Fatal(err)
		}
		checks := []struct {
			what      string
			got, want any
		}{
			{"numrecs", f.NumRecs, 2},
			{"dims", f.Dims, []Dim{{"time", Unlimited}, {"x", 3}}},
			{"title", attrOr(f.Attr("title")), "from ncgen"},
			{"vals", attrOr(f.Attr("vals")), []int32{1, 2, 3}},
			{"d", attrOr(f.Attr("d")), []float64{0.25}},
			{"t", f.Var("t").Data, []float64{0, 1.5}},
			{"n", f.Var("n").Data, []int32{7, -5, 9}},
			{"u", f.Var("u").Data, []float32{1, 2, 3, 4, 5, 6}},
			{"s", f.Var("s").Data, []float64{3.25}},
			{"u dims", f.Var("u").Dims, []string{"time", "x"}},
		}
		for _, c := range checks {
			if !reflect.DeepEqual(c.got, c.want) {
				t.Errorf("%s: %s = %#v; want %#v", kind, c.what, c.got, c.want)
			}
		}
	}
}

func attrOr(v any, ok bool) any {
	if !ok {
		return fmt.Sprint("missing")
	}
	return v
}

// Types outside this package's subset are refused by name, not misread.
func TestReadUnsupportedTypes(t *testing.T) {
	ncgen := ncdumpTool(t, "ncgen")
	dir := t.TempDir()
	for _, tc := range []struct {
		name, cdl string
		want      []string
	}{
		{"char variable", "netcdf c {\ndimensions:\n\tx = 2 ;\nvariables:\n\tchar c(x) ;\ndata:\n c = \"ab\" ;\n}\n", []string{`"c"`, "NC_CHAR"}},
		{"short attribute", "netcdf s {\nvariables:\n\tint v ;\n\t\tv:s = 1s ;\n}\n", []string{`"s"`, "NC_SHORT"}},
	} {
		src := filepath.Join(dir, "x.cdl")
		out := filepath.Join(dir, "x.nc")
		if err := os.WriteFile(src, []byte(tc.cdl), 0o644); err != nil {
			t.Fatal(err)
		}
		runTool(t, ncgen, "-k", "classic", "-o", out, src)
		_, err := Open(out)
		testcheck.ErrorSays(t, tc.name, err, tc.want...)
	}
}
