// Package timeline writes, reads and validates what was done to a run:
// the fully resolved scenario it started from plus the ordered list of
// events (scheme, Hodge star, integrator, Δt and grid changes, rewinds, blow-ups,
// marked moments) with the step count at which each applied.
//
// # Exactness
//
// Steps are exact; times are for people. A replay (package sim/session,
// whose Player and live sessions apply each event as the command it
// records, through the same Session.Apply as the live run) applies each
// event when the model's step count reaches the event's step, calling the
// same sim.Model methods in the same order as the live run did (SetScheme,
// SetHodge, SetIntegrator, SetDt, Regrid, SetState, a Step that fails), so its state
// at every event is bit for bit the live run's. Changing a choice to the
// value already in effect calls nothing, live and in replay. Play and
// pause are recorded for the record and change nothing.
//
// A rewind sets the state to the one the run had when it last left the
// target step (after that step's own events), as the workbench's ring of
// recent states does; the replay keeps a copy of each state a rewind will
// need. A rewind never goes back past a grid change, because the ring is
// emptied there. After a rewind the step count continues from the target,
// so event steps never decrease except across a rewind.
//
// A blow-up event records that the step taken from that step failed (the
// model put its state back and restarted its integrator); the replay
// takes the same step and requires it to fail. This matters only for
// multi-step integrators, whose restart changes the next step.
//
// # File format
//
// A timeline file is TOML: the scenario, exactly as package scenario writes
// and reads it, then a [timeline] table and one [[event]] table per event,
// in order:
//
//	title = "Shear layers rolling up"
//	[grid]
//	kind = "hex"
//	...
//	[output]
//	every = 3600.0
//	snapshots = false
//
//	[timeline]
//	version = 1
//	end_step = 900          # the replay stops here, after the last event
//	end_time = 108000.0     # simulated seconds at end_step, for people
//
//	[[event]]
//	step = 300
//	time = 36000.0
//	cmd = "set-scheme"
//	scheme = "trisk-enstrophy"
//
//	[[event]]
//	step = 600
//	time = 72000.0
//	cmd = "set-grid"
//	kind = "quad"
//	n = 64
//
// Each event has step (an integer, required), time (seconds, optional) and
// cmd with its own keys:
//
//	set-scheme      scheme = NAME
//	set-hodge       hodge = "consistent" | "diagonal" (scheme.hodge: the edge
//	                Hodge star; the two differ where the dual is not orthogonal)
//	set-integrator  integrator = NAME
//	set-dt          dt = SECONDS
//	set-grid        kind = KIND, n = N, optimize = "none" | "lloyd" (optional,
//	                icosahedral only; left out, the run keeps its own)
//	mark            label = TEXT        (a moment a replay in the workbench pauses at)
//	rewind          to_step = STEP, to_time = SECONDS (optional, for people)
//	blow-up         (no keys)
//	play, pause     (no keys)
//
// Parsing is strict: an unknown key, a key of another cmd, a wrong type, an
// unknown cmd, steps that go backwards without a rewind, an event past
// end_step or a value the engine refuses is an error naming the event (its
// index, counted from 1, and its line) and the field.
package timeline
