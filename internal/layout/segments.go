package layout

import "math"

// Segments is ceil(rows / segmentRows): a partition's rows fill whole segments and one
// part-empty one. 0 rows → 0 segments. A segmentRows below 1 counts as 1.
func Segments(rows, segmentRows int64) int64 {
	if rows <= 0 {
		return 0
	}
	s := max(segmentRows, 1)
	n := rows / s // division first: rows + s - 1 could overflow
	if rows%s != 0 {
		n++
	}
	return n
}

// Layout is the segment layout of one table: how many segments its partitions force,
// against how many the rows alone would need.
type Layout struct {
	Partitions int
	Rows       int64
	Segments   int64   // N = sum ceil(r_p/S)
	Ideal      int64   // N* = ceil(R/S)
	Excess     int64   // N - N*
	Fill       float64 // R/(N*S), 0 when N = 0
	// The same three with the open partition left out (truncation is never blamed on it).
	ClosedSegments, ClosedIdeal, ClosedExcess int64
	FixedMs                                   float64 // N * segment_overhead_ms: fixed CPU of one full scan
}

// Compute lays parts out in segments of segmentRows rows (a segment never spans two
// partitions) and prices the fixed per-segment scan overhead. A negative or non-finite
// overheadMs counts as 0 so every result stays finite.
func Compute(parts []Partition, segmentRows int64, overheadMs float64) Layout {
	s := max(segmentRows, 1)
	if !(overheadMs >= 0) || math.IsInf(overheadMs, 0) {
		overheadMs = 0
	}
	l := Layout{Partitions: len(parts)}
	var openRows, openSegs int64
	for _, p := range parts {
		r := max(p.Rows, 0)
		n := Segments(r, s)
		l.Rows = satAdd(l.Rows, r)
		l.Segments = satAdd(l.Segments, n)
		if p.Open {
			openRows = satAdd(openRows, r)
			openSegs = satAdd(openSegs, n)
		}
	}
	l.Ideal = Segments(l.Rows, s)
	l.Excess = l.Segments - l.Ideal
	if l.Segments > 0 {
		l.Fill = float64(l.Rows) / (float64(l.Segments) * float64(s))
	}
	l.ClosedSegments = l.Segments - openSegs
	l.ClosedIdeal = Segments(l.Rows-openRows, s)
	l.ClosedExcess = l.ClosedSegments - l.ClosedIdeal
	l.FixedMs = float64(l.Segments) * overheadMs
	return l
}

// satAdd adds two non-negative counts, stopping at MaxInt64 instead of wrapping, so a
// list of huge items cannot turn a row total negative.
func satAdd(a, b int64) int64 {
	if a > math.MaxInt64-b {
		return math.MaxInt64
	}
	return a + b
}
