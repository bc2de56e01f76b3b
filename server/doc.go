// Package server is the live workbench: HTTP routes (chi), a registry of
// runs, one goroutine per run that owns its *sim.Model, and a websocket hub
// that streams fields, invariants and control messages to browsers.
//
// # Runs and pairs
//
// A run is one session (package sim/session: the model, its history,
// ring, markers, record and replay) owned by one actor goroutine
// (actor.go); a lockstep pair is two sessions owned by one actor
// (pair.go). Every command reaches the actor as a closure on one channel,
// so nothing in a session is shared and nothing needs a lock. The server
// parses a websocket message once (wire.go), turns it into a typed
// session.Command and applies it with session.Apply; a view (view.go)
// turns what Apply reports into messages for the watchers. Several
// websocket clients can watch one run; they all see the same thing, and
// all control it unless the workbench is shared (roles.go: then only a
// client holding the control key's cookie does). A run pauses when its
// last watcher leaves.
//
// # Limits
//
// Every request must name the workbench by a host it answers to (hosts.go):
// loopback, the bound address and Options.Hosts; anything else gets 421,
// the defence against DNS rebinding. Live runs and pairs together are
// bounded by Options.MaxRuns, one run's ring by MaxRingCells (ring entries
// × cells), every form body by its own byte bound, and a websocket write
// by Options.WriteTimeout.
//
// # Latest wins
//
// The run never waits for a client. Each subscriber has an ordered queue of
// control messages (JSON text, and the binary geometry) and a single slot
// for the newest field frame. Offering a frame replaces the one in the slot;
// the replaced frame counts as skipped, and the next frame the client does
// receive carries that count. A client whose control queue overflows (it
// stopped reading) is disconnected with a message.
//
// # Wire format
//
// Client to server: JSON text messages {"id": 7, "cmd": "set-dt", "value": 60}.
// id is optional and echoed in the reply: {"type":"ack"} on success or
// {"type":"error", "field", "value", "message"} on refusal; a refused
// command changes nothing. set-dissipation takes {"viscosity": ν₂,
// "hyperviscosity": ν₄, "divergence_damping": ν_δ}, any of them (a
// coefficient left out keeps its value); config carries them under
// "dissipation" with the grid-scale e-folding time and the hint package
// dissip writes, and every point its budget (energy_rate_scheme, ...).
//
// Server to client, JSON text: role (on a shared workbench only, first:
// {"type": "role", "role": "control" or "watch", "hint"}), hello (names
// and labels the UI offers),
// config (the current choices and limits), status (state, steps, time,
// steps per second, the server's clock wall_s, frames skipped for slow
// watchers, the blow-up if any), point (one row of invariants as relative
// drifts),
// history (all points and markers; sent on joining, and after a reset, a
// load or a rewind),
// marker (a mid-run change), ring (the times of the states one can rewind
// to), ack and error.
//
// Server to client, binary, little-endian, every section 4-byte aligned so
// the browser reads it with typed-array views:
//
//	geometry (sent once per grid):
//	  u8 kind=1, u8 sphere (0 plane, 1 sphere), u16 0, u32 gen,
//	  u32 nCells, u32 nVertices, u32 nCellPoints, u32 nDualPoints, u32 0,
//	  u32 0, f64 periodX, f64 periodY (0: not periodic),
//	  u32 cellStart[nCells+1], u32 dualStart[nVertices+1],
//	  f32 cellXY[2·nCellPoints], f32 dualXY[2·nDualPoints]
//	  (metres on the plane, degrees of longitude and latitude on the
//	  sphere; each cell polygon anticlockwise and unwrapped onto the
//	  periodic image nearest its centre; dual polygons, one per vertex,
//	  likewise around the vertex)
//	field frame:
//	  u8 kind=2, u8 field, u8 location (0 cells, 1 vertices), u8 0,
//	  u32 gen, u32 skipped, u32 count, f64 time (s), f64 steps,
//	  f32 min, f32 max, f32 values[count]
//
// Field values travel as float32: 4 bytes per value plus a 40-byte header,
// so a 16 384-cell hexagonal grid costs 65 576 bytes per cell field and
// 131 112 bytes per vertex field (32 768 vertices).
//
// # Where the rest is
//
// Each feature's own file says what it does and what it sends:
// linear_panel.go (the command "linear": stability and dispersion, and
// the warning, same fields as an error, that precedes the ack of a set-dt
// or set-integrator past the predicted limit; it is not a refusal),
// structure_panel.go (the command "structure"), figure_routes.go
// (/run/{id}/figure.png and .svg, drawn by package sim/figure),
// timeline_routes.go (the commands mark, replay and stop-replay drive the
// record of package sim/timeline; /run/{id}/timeline.toml and final.nc),
// pair.go and pair_routes.go (lockstep pairs at /pair/{id}, whose
// commands name their side) and sweep_*.go (sweeps of package sim/sweep
// at /sweeps/new and /sweep/{id}, one at a time under
// Options.SweepDir).
package server
