package layout

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/scangate/scangate/schema"
)

// The scan ceiling is Graham's bound for list scheduling (R. L. Graham, "Bounds on
// multiprocessing timing anomalies", SIAM J. Appl. Math. 17(2), 1969): no list
// schedule ends after sum/cores + the longest task, and none before max(sum/cores,
// longest). Random columns, partitions and engines hold ScanColumn's schedule between
// the two, so a sweep that prices a layout by its ceiling never reads less than the
// schedule gives.
func TestScanCeilingBoundsTheSchedule(t *testing.T) {
	r := rand.New(rand.NewPCG(1969, 17))
	for n := range 3000 {
		c, parts, rows, e := randomScan(r, 1)
		tableRows := rows
		if r.IntN(3) == 0 {
			tableRows = 0
		}
		s := ScanColumn(c, tableRows, parts, e)
		ceiling := ScanCeiling(c, tableRows, parts, e, nil)
		if s.WallMs > ceiling*(1+1e-9) || s.WallMs < s.BoundMs*(1-1e-9) {
			t.Fatalf("case %d: schedule %v ms outside [%v, %v] (bound, ceiling)", n, s.WallMs, s.BoundMs, ceiling)
		}
		// ScanBounds' floor is the schedule's own bound, from the same task times.
		if floor, c2 := ScanBounds(c, tableRows, parts, e, nil); c2 != ceiling || math.Abs(floor-s.BoundMs) > 1e-9*s.BoundMs || s.WallMs < floor*(1-1e-9) {
			t.Fatalf("case %d: bounds [%v, %v], schedule %v with bound %v, ceiling %v", n, floor, c2, s.WallMs, s.BoundMs, ceiling)
		}
	}
}

// randomScan is a random column (any order, some strings, some measured sizes), at
// least minParts partitions of random rows (their sum is rows) and an engine, for the
// tests that hold the scan's bounds and kept estimates to ScanColumn.
func randomScan(r *rand.Rand, minParts int) (schema.Column, []Partition, int64, schema.Engine) {
	orders := []schema.Order{"", schema.Sorted, schema.Clustered}
	c := schema.Column{Name: "c", Type: "int64", Distinct: r.Int64N(1e7), Order: orders[r.IntN(len(orders))]}
	if r.IntN(4) == 0 {
		c.Type, c.AvgLength = "string", float64(1+r.IntN(40))
	}
	if r.IntN(6) == 0 {
		c.EncodedBytes = 1 + r.Int64N(1e10)
	}
	parts := make([]Partition, minParts+r.IntN(61-minParts))
	var rows int64
	for k := range parts {
		parts[k].Rows = r.Int64N(1 << uint(4+r.IntN(28)))
		rows += parts[k].Rows
	}
	e := schema.Engine{SegmentRows: 1 << uint(10+r.IntN(16)), Cores: 1 + r.IntN(96), SegmentOverheadMs: r.Float64() * 5, ScanMBPerS: 50 + r.Float64()*2000}
	return c, parts, rows, e
}

// The plain ceiling bounds the scan ceiling from the layout alone: each segment's
// estimate is at most its values written plain (the Apache Parquet format's PLAIN
// encoding sizes, PlainBytes) or its share of a measured size, so Graham's sum and
// longest task are bounded term by term. Random columns of every type, partitions,
// engines and table sizes, some above or below the partitions' sum.
func TestPlainCeilingBoundsTheScanCeiling(t *testing.T) {
	r := rand.New(rand.NewPCG(1969, 18))
	orders := []schema.Order{"", schema.Sorted, schema.Clustered}
	types := []string{"int64", "string", "bool", "date", "float64"}
	tight := 0
	for n := range 3000 {
		c := schema.Column{Name: "c", Type: types[r.IntN(len(types))], AvgLength: float64(r.IntN(40)), Distinct: r.Int64N(1e7), Order: orders[r.IntN(len(orders))]}
		if r.IntN(6) == 0 {
			c.EncodedBytes = 1 + r.Int64N(1e10)
		}
		if c.Order == schema.Clustered && r.IntN(2) == 0 {
			c.RunLength = 1 + r.Int64N(1e5)
		}
		parts := make([]Partition, 1+r.IntN(60))
		var rows, largest int64
		for k := range parts {
			parts[k].Rows = r.Int64N(1 << uint(4+r.IntN(28)))
			rows += parts[k].Rows
			largest = max(largest, parts[k].Rows)
		}
		e := schema.Engine{SegmentRows: 1 << uint(10+r.IntN(16)), Cores: 1 + r.IntN(96), SegmentOverheadMs: r.Float64() * 5, ScanMBPerS: 50 + r.Float64()*2000}
		tableRows := []int64{rows, 0, rows / 2, rows * 3}[r.IntN(4)]
		ceiling := ScanCeiling(c, tableRows, parts, e, nil)
		plain := PlainCeiling(c, tableRows, Compute(parts, e.SegmentRows, e.SegmentOverheadMs), min(largest, e.SegmentRows), e)
		if ceiling > plain*(1+1e-9) {
			t.Fatalf("case %d (%+v, table rows %d): scan ceiling %v ms above the plain ceiling %v", n, c, tableRows, ceiling, plain)
		}
		if plain < 2*ceiling {
			tight++
		}
	}
	// A bound that is always far above would prune nothing: most cases come within 2x.
	if tight < 1500 {
		t.Fatalf("the plain ceiling is within 2x of the scan ceiling in only %d of 3000 cases", tight)
	}
}
