// Package session is one live model and everything done to it, without
// a network and without goroutines: the workbench's runs, both sides of a
// lockstep pair, a replay in the workbench and the headless replay of
// 'gyrebench run timeline.toml' all go through it.
//
// A Session owns its *sim.Model, the series of invariant points (relative
// drifts from the initial state, with the dissipation budget), the
// markers of mid-run changes, the ring of recent states one can rewind
// to, the timeline being recorded (package sim/timeline) and a timeline
// being replayed. It also holds the limits of a live run: the largest Δt
// (DtMax, from MaxCourant), the grid families and resolutions a run may
// switch to (MaxLiveCells) and the memory of its ring (MaxRingCells).
//
// # Commands
//
// What is done to a session is a typed Command (Play, Pause, Step, Reset,
// Load, SetScheme, SetHodge, SetIntegrator, SetDt, SetGrid,
// SetDissipation, Scrub, Rewind, Mark, Replay, StopReplay, ExpectBlowUp)
// applied by one method, Apply. Apply validates first: a refusal is an
// *Error naming the field, the value and what is allowed, and changes
// nothing. Otherwise it changes the model and returns a Result: the
// timeline event it recorded, the points and markers it added and what
// else changed (Effect), which is all a front end needs to bring its
// watchers up to date. A change to the choice already in effect changes
// and records nothing.
//
// A replay turns each timeline event into its command (CommandOf) and
// applies it with the same Apply, so the recorded run, the replay in the
// workbench and the headless replay make the same sim.Model calls in the
// same order and agree bit for bit. Player is the headless replay, a
// batch.Schedule.
//
// # Concurrency
//
// A Session is not safe for concurrent use: one goroutine (the
// workbench's actor of the run or pair) owns it and calls every method.
package session
