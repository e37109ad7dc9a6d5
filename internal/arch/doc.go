// Package arch states scangate's layers and holds the test that keeps the imports to
// them. Data flows one way: file -> schema -> layout -> advisor -> analysis -> rules ->
// report -> exit code; a package imports only packages of lower layers, never one of
// its own layer and never one nested beneath its own path.
package arch

// Module is the module path every layer is named under.
const Module = "github.com/scangate/scangate"

// Layers are scangate's packages from the bottom up, relative to Module. A new package
// must be placed here before the architecture test passes.
var Layers = [][]string{
	{"schema", "internal/units", "internal/escape", "internal/arch", "internal/suggest", "internal/yamledit", "bench/gen"}, // the contract and leaves
	{"internal/layout", "internal/calibrate", "internal/survey"},                                                           // the arithmetic; calibrate's fit; measuring a table from its values
	{"internal/advisor", "internal/datafile"},                                                                              // candidate layouts, sweeps, forecasts; reading data files
	{"internal/analysis"},                    // one analysis per model
	{"rules"},                                // the rule engine and one file per rule
	{"internal/baseline", "internal/change"}, // accepted debt; diff's comparison
	{"internal/report", "internal/adopt"},    // the format registry and every format; recommendations written into manifests
	{"internal/run"},                         // the driver
	{"cmd/scangate", "bench/cmd/decodeonly", "bench/cmd/gen", "bench/cmd/measure"}, // commands and tools
}

// Offline are the layers below the driver: they never reach the network or run programs.
const Offline = 7
