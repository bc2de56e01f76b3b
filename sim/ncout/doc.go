// Package ncout writes and reads NetCDF classic files and writes gyrebench
// meshes and fields in them following the UGRID 1.0 and CF 1.8
// conventions: the final.nc (and snapshot) files of design notes §3.
//
// # The classic format
//
// The encoder follows the NetCDF classic format specification (Unidata,
// "The NetCDF Classic Format Specification", NetCDF Users Guide, formats
// CDF-1 "classic" and CDF-2 "64-bit offset"):
//
//	netcdf_file = header data
//	header      = magic numrecs dim_list gatt_list var_list
//	data        = non_recs recs
//
// All numbers are big-endian; names, attribute values and each variable's
// data are padded with zero bytes to a multiple of 4; an empty list is
// ABSENT (eight zero bytes); a variable's vsize is its size in bytes (per
// record for record variables) rounded up to 4, and begin is the byte
// offset of its data (of its first record), 32 bits wide in CDF-1 and 64
// bits in CDF-2. Fixed-size variables follow the header in definition
// order; then come numrecs records, each holding one record of every
// record variable in definition order. Since only 4- and 8-byte types are
// written, the format's no-padding special case for a single record
// variable of a narrow type never arises. Files are CDF-2 ("CDF\x02") by
// default; set File.Format = CDF1 for the classic variant.
//
// A File is the whole dataset in memory, with exported fields and a few
// helpers (AddDim, AddVar, SetAttr, Var, Attr). Attribute values are Go
// strings (NC_CHAR), int32, float32 or float64 values or slices (NC_INT,
// NC_FLOAT, NC_DOUBLE); variable data are []int32, []float32 or []float64,
// in row-major order, with the records of a record variable one after
// another. File.WriteTo encodes it; Read and Open decode one, values
// included. Nothing is written when a File is invalid: the error names
// the dimension, variable or attribute, the value and what is allowed.
//
// Writer appends records to a file on an io.WriteSeeker, rewriting
// numrecs after each record so that the file is valid between records;
// ResumeWriter continues a file written earlier.
//
// Not supported: CDF-5 and NetCDF-4 (HDF5) files, NC_BYTE and NC_SHORT,
// NC_CHAR variables, and variables larger than 4 GiB.
//
// # UGRID meshes
//
// MeshFile builds the file of a mesh.Mesh plus data fields; NewSnapshots
// streams the same fields with a leading unlimited time dimension. The
// rules come from the UGRID Conventions v1.0 (ugrid-conventions.github.io,
// "UGRID Conventions (v1.0)"), as summarised in references.md §7:
//
//   - global Conventions = "CF-1.8 UGRID-1.0", title, source, history;
//   - a dummy NC_INT variable "mesh" without dimensions with cf_role =
//     "mesh_topology", topology_dimension = 2 (NC_INT), node, face and edge
//     coordinates and the face_node, edge_node, face_edge and edge_face
//     connectivities;
//   - nodes are the mesh's vertices, faces its cells, edges its edges;
//   - connectivity variables are NC_INT of shape (elements, k), with their
//     cf_role and start_index = 0. The nodes and edges of each face are
//     listed anticlockwise seen from above (from outside on the sphere), and
//     edge k of a face joins its nodes k and k+1. Unused trailing entries of
//     faces with fewer nodes than the largest face (pentagons among hexagons)
//     hold _FillValue = ConnectivityFill = 2147483647: UGRID asks for a fill
//     "obviously larger than the number of nodes", and its example's 999999
//     is smaller than the node count of the largest meshes gyrebench builds.
//     edge_face_connectivity carries the _FillValue too, as UGRID requires,
//     though on a closed surface every edge has two faces;
//   - on the doubly periodic plane, coordinates are x/y in metres
//     (projection_x_coordinate, projection_y_coordinate) in [0, Lx) × [0, Ly),
//     and the mesh variable carries period_x and period_y: differences
//     between nodes of a face must be unwrapped to the nearest periodic
//     image. On the sphere they are longitude/latitude in degrees_east and
//     degrees_north;
//   - mesh_face_area (cell areas) and mesh_node_area (dual cell areas) are
//     CF cell_area variables, for a field's cell_measures
//     (FaceAreaMeasure, NodeAreaMeasure);
//   - UGRID defines no sign for edge normals; the files state, on the mesh
//     variable and on mesh_edge_normal_x/_y (and _z on the sphere, where
//     they are Cartesian): n_e points from edge_face_connectivity[e,0] to
//     [e,1], and t_e = k × n_e runs from edge_node_connectivity[e,0] to
//     [e,1]. These are mesh.EdgeCells and mesh.EdgeVertices, so the
//     normal velocity u_e of gyrebench is written unchanged. On a grid
//     whose dual is not orthogonal (mesh.Mesh.Orthogonal false: distorted
//     planes, the cubed sphere) n_e is the direction of the dual edge, not
//     the edge's normal, and the mesh variable says so in dual_edges
//     (DualEdgesNonOrthogonal);
//   - fields are NC_DOUBLE with mesh, location, units, standard_name and/or
//     long_name, coordinates and an optional cell_measures;
//   - snapshot time is the coordinate variable "time", NC_DOUBLE, with
//     units TimeUnits = "seconds since 2000-01-01 00:00:00" (a nominal
//     origin: the simulation starts at that date) and long_name "simulated
//     time"; times must increase strictly.
//
// Output files should be written with WriteFile, or for snapshots onto an
// atomicfile.Create file, so that a crash never leaves a half-written file
// under the final name.
package ncout
