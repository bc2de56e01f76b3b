package ncout

import (
	"bytes"
	"strings"
	"testing"
)

// FuzzRead: any byte string either reads as a file or is refused with an
// "ncout:" error, without a panic and without allocating beyond what the
// bytes can hold; what reads is written back by WriteTo to bytes that
// read to the same bytes again.
//
//	go test -run '^$' -fuzz FuzzRead -fuzztime 60s ./sim/ncout/
func FuzzRead(f *testing.F) {
	small := &File{}
	small.AddDim("time", 0)
	small.NumRecs = 2
	small.AddDim("nCells", 3)
	small.SetAttr("title", "fuzz seed")
	small.AddVar("h", Double, []string{"nCells"}, []float64{1, 2, 3}).SetAttr("units", "m")
	small.AddVar("n", Int, []string{"nCells"}, []int32{4, 5, 6})
	small.AddVar("t", Double, []string{"time"}, []float64{0, 60})
	small.AddVar("h_t", Float, []string{"time", "nCells"}, []float32{1, 2, 3, 4, 5, 6})
	var b bytes.Buffer
	if _, err := small.WriteTo(&b); err != nil {
		f.Fatal(err)
	}
	f.Add(b.Bytes())
	f.Add(b.Bytes()[:len(b.Bytes())/2])
	f.Add([]byte("CDF\x01"))
	f.Add([]byte("CDF\x02\xff\xff\xff\xff"))
	f.Add([]byte{})
	f.Fuzz(func(t *testing.T, data []byte) {
		file, err := Read(bytes.NewReader(data))
		if err != nil {
			if !strings.HasPrefix(err.Error(), "ncout:") {
				t.Fatalf("error %q does not say where it comes from (ncout:)", err)
			}
			return
		}
		var w bytes.Buffer
		if _, err := file.WriteTo(&w); err != nil {
			return // a file read is not always one this package writes
		}
		again, err := Read(bytes.NewReader(w.Bytes()))
		if err != nil {
			t.Fatalf("WriteTo of a file read does not read back: %v", err)
		}
		var w2 bytes.Buffer
		if _, err := again.WriteTo(&w2); err != nil || !bytes.Equal(w.Bytes(), w2.Bytes()) {
			t.Fatalf("WriteTo, Read, WriteTo changed the bytes (%v)", err)
		}
	})
}
