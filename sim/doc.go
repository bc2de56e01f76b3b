// Package sim is the numerical engine of gyrebench: the rotating
// shallow-water equations on C-grids, split into the layers that a user
// swaps independently.
//
//   - mesh: topology (integers only) and metric (lengths, areas, Hodge
//     stars, TRiSK weights), plus the grid generators;
//   - scheme: the tendency of a state for a given discretisation;
//   - step: time integrators that advance a state with any tendency;
//   - diag: invariants and norms computed from a state and the metric;
//   - cases: initial conditions.
//
// The Model type in this package joins the layers for one run.
package sim
