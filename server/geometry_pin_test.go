package server

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
	"testing"

	"gyrebench/sim/display"
	"gyrebench/sim/mesh"
)

// pinMeshes are the meshes whose geometry message is pinned: two small
// ones byte for byte (testdata/geometry-*.bin, written by the encoder
// before the geometry moved to package sim/display) and larger ones of
// every family by their SHA-256.
var pinMeshes = []struct {
	name string
	spec mesh.Spec
	file string // the whole message, in testdata; "" for a hash only
	hash string // SHA-256 of the message
}{
	{"hex-4", mesh.Spec{Kind: mesh.Hex, N: 4, Length: 1e6}, "geometry-hex-4.bin", ""},
	{"icosahedral-1", mesh.Spec{Kind: mesh.Icosahedral, N: 1, Radius: 6.371e6}, "geometry-icosahedral-1.bin", ""},
	{"quad-8", mesh.Spec{Kind: mesh.Quad, N: 8, Length: 1e6}, "", "48b2d4aa381c42f989aa42fb6897686a017dc3c2018fc08ffd7e08bbdc39ad8f"},
	{"tri-8", mesh.Spec{Kind: mesh.Tri, N: 8, Length: 1e6}, "", "d1692ba5e3c45f136c2a7973aa37e103abf1bc43e547feacb79c91d2041c7479"},
	{"hex-12-distorted", mesh.Spec{Kind: mesh.Hex, N: 12, Length: 2e6, Distort: 0.2}, "", "30487467fdb7928ed1d5995f5193d21f9a02a2a6531b2b24f9510aed06bc9896"},
	{"icosahedral-3", mesh.Spec{Kind: mesh.Icosahedral, N: 3, Radius: 6.371e6}, "", "ac6e2692554cd81029ab7133125c3dc5859039f4461eb77226e47e20fd7176ec"},
	{"icosahedral-3-lloyd", mesh.Spec{Kind: mesh.Icosahedral, N: 3, Radius: 6.371e6, Optimize: mesh.OptimizeLloyd}, "", "6a345adb757cd004bf8cd310c38d47e98dfda2e5836683b576d8d858ec9ff8de"},
	{"cubed-6", mesh.Spec{Kind: mesh.Cubed, N: 6, Radius: 6.371e6}, "", "0f82c7dc159016eadf29160a6544a75dcfdd229d5b1785b0f518027ccff2d82f"},
}

// The binary geometry message is what the browser decodes
// (static/protocol.js): it must not change by a bit when the code that
// builds it does.
func TestGeometryMessagePinned(t *testing.T) {
	for _, c := range pinMeshes {
		t.Run(c.name, func(t *testing.T) {
			m, err := mesh.New(c.spec)
			if err != nil {
				t.Fatal(err)
			}
			got := encodeGeometry(display.Of(m), 3)
			if c.file != "" {
				path := filepath.Join("testdata", c.file)
				want, err := os.ReadFile(path)
				if err != nil {
					t.Fatal(err)
				}
				if !bytes.Equal(got, want) {
					n := 0
					for n < min(len(got), len(want)) && got[n] == want[n] {
						n++
					}
					t.Fatalf("geometry message of %d bytes differs from the pinned %d bytes, first at byte %d", len(got), len(want), n)
				}
				return
			}
			sum := sha256.Sum256(got)
			if h := hex.EncodeToString(sum[:]); h != c.hash {
				t.Errorf("geometry message SHA-256 = %s, pinned %s", h, c.hash)
			}
		})
	}
}
