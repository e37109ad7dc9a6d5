// Package advisor plans a table's layout: it generates candidate partition layouts,
// sweeps them over candidate segment capacities, prices each (fixed CPU per scan, scan
// wall time of the widest column, the model's refresh peak, partition count), marks
// the Pareto front of fixed ms against refresh memory, recommends the least disruptive
// layout that fits every budget, and projects the figures month by month with growth.
//
// It sits between the arithmetic and the rules: schema -> layout -> advisor -> rules ->
// report. It imports schema and layout only; the rules quote its recommendation in
// their hints, and the plan command prints the whole sweep, so the two never disagree.
// It is pure: no I/O, no clock (the caller passes the date forecasts count from).
package advisor
