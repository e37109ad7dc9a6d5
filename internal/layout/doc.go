// Package layout is the arithmetic behind the rules: it expands a table's partition
// policy into partitions, lays the partitions out in segments, estimates the encoded
// size of a column and the cost of a full scan. It is pure (no I/O) so every number a
// finding carries can be tested on its own.
//
// Every result is deterministic across architectures: where a product feeds a sum it
// is written float64(x*y) + z, because an explicit conversion forbids the compiler from
// fusing the two into one FMA instruction (which rounds differently).
package layout

// go generate ./... rewrites docs/estimator-accuracy.md from the reference-encoder sweep.
//go:generate go test . -run ^TestEncoderSweep$ -update -count=1
