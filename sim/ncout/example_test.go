package ncout_test

import (
	"bytes"
	"fmt"
	"log"

	"gyrebench/sim/mesh"
	"gyrebench/sim/ncout"
)

// A depth field on a small quad mesh, written and read back. To write a
// file on disk atomically, use ncout.WriteFile(path, f).
func ExampleMeshFile() {
	m, err := mesh.New(mesh.Spec{Kind: mesh.Quad, N: 4, Length: 1e6})
	if err != nil {
		log.Fatal(err)
	}
	h := make([]float64, m.NumCells)
	for i := range h {
		h[i] = 1000
	}
	f, err := ncout.MeshFile(m, ncout.Meta{Title: "example"}, []ncout.Field{{
		Name: "h", Location: ncout.Face, Units: "m", LongName: "fluid depth",
		CellMeasures: ncout.FaceAreaMeasure, Data: h,
	}})
	if err != nil {
		log.Fatal(err)
	}
	var buf bytes.Buffer
	if _, err := f.WriteTo(&buf); err != nil {
		log.Fatal(err)
	}
	fmt.Printf("magic %q\n", buf.Bytes()[:4])

	back, err := ncout.Read(&buf)
	if err != nil {
		log.Fatal(err)
	}
	conv, _ := back.Attr("Conventions")
	role, _ := back.Var("mesh").Attr("cf_role")
	hv := back.Var("h")
	loc, _ := hv.Attr("location")
	cm, _ := hv.Attr("cell_measures")
	fmt.Println(conv, role)
	fmt.Println(hv.Dims, loc, cm, len(hv.Data.([]float64)))
	// Output:
	// magic "CDF\x02"
	// CF-1.8 UGRID-1.0 mesh_topology
	// [nmesh_face] face area: mesh_face_area 16
}
