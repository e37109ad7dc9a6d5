package layout

import (
	"math"

	"github.com/scangate/scangate/schema"
)

// Scan is the estimated cost of a full scan of one column: the CPU it burns, the wall
// time on the engine's cores, the bound no schedule can beat, and the bytes it reads.
type Scan struct {
	CPUMs, WallMs, BoundMs float64
	Bytes                  float64
}

// ScanColumn estimates a full scan of column c: each segment is a task of
// overheadMs + b_s/theta, theta = scanMBPerS*1000 bytes per ms (MB = 10^6 bytes),
// tasks in partition order (full segments of a partition, then its part-empty one),
// list-scheduled on the engine's cores. tableRows sizes the column's dictionary
// (0 → the sum of the partitions). Engine values left at zero or invalid take the
// format defaults, a negative overhead counts as 0, so every result is finite.
func ScanColumn(c schema.Column, tableRows int64, parts []Partition, e schema.Engine) Scan {
	return ScanColumnWith(c, tableRows, parts, e, nil)
}

// ScanColumnWith is ScanColumn keeping estimates in memo (nil: none).
func ScanColumnWith(c schema.Column, tableRows int64, parts []Partition, e schema.Engine, memo *Smaller) Scan {
	src := source{c: c, tableRows: tableRowsOr(tableRows, parts), parts: parts, capacity: e.SegmentRows, memo: memo}
	return scanOf(&src, len(parts), e)
}

// tableRowsOr is tableRows, or the sum of the partitions when it is not above 0.
func tableRowsOr(tableRows int64, parts []Partition) int64 {
	if tableRows <= 0 {
		for _, p := range parts {
			tableRows = satAdd(tableRows, max(p.Rows, 0))
		}
	}
	return tableRows
}

// visitor is called for each partition, in order, with its full-segment count and
// bytes and its part-empty segment's rows and bytes (columnBytes).
type visitor = func(full int64, fullBytes float64, partRows int64, partBytes float64)

// source is where a scan's segment estimates come from: columnBytes of a column over
// partitions, or the estimates kept of them (Estimated).
type source struct {
	c         schema.Column
	tableRows int64
	parts     []Partition
	capacity  int64
	memo      *Smaller
	kept      *Estimated
}

// each delivers the estimates to visit in partition order and returns their bytes and
// segments. (A method, not a function value, so visit stays on the caller's stack.)
func (src *source) each(visit visitor) (bytes float64, segments int64) {
	if src.kept != nil {
		return src.kept.replay(visit)
	}
	return columnBytes(src.c, src.tableRows, src.parts, src.capacity, src.memo, visit)
}

// scanOf is the scan of the segments src delivers, over parts partitions: each
// segment is a task of overheadMs + b_s/theta, list-scheduled on the engine's cores.
func scanOf(src *source, parts int, e schema.Engine) Scan {
	f, theta, cores := scanRates(e)
	// At most two groups per partition; few partitions keep them on the stack.
	var buf [32]TaskGroup
	groups := buf[:0]
	if n := 2 * parts; n > len(buf) {
		groups = make([]TaskGroup, 0, n)
	}
	add := func(n int64, ms float64) {
		if k := len(groups) - 1; k >= 0 && groups[k].Ms == ms {
			groups[k].Count = satAdd(groups[k].Count, n)
			return
		}
		groups = append(groups, TaskGroup{Count: n, Ms: ms})
	}
	bytes, segs := src.each(func(full int64, fb float64, rest int64, rb float64) {
		if full > 0 {
			add(full, f+fb/theta)
		}
		if rest > 0 {
			add(1, f+rb/theta)
		}
	})
	wall, bound := Schedule(groups, cores)
	return Scan{
		CPUMs:   float64(float64(segs)*f) + bytes/theta,
		WallMs:  wall,
		BoundMs: bound,
		Bytes:   bytes,
	}
}

// ScanCeiling is an upper bound on ScanColumn's WallMs without the schedule: list
// scheduling never ends later than sum/cores + the longest task (Graham 1969, "Bounds
// on multiprocessing timing anomalies", SIAM J. Appl. Math. 17(2): the last task to
// finish starts when its core frees first, before the average load). The task times
// are ScanColumn's, from the same estimates.
func ScanCeiling(c schema.Column, tableRows int64, parts []Partition, e schema.Engine, memo *Smaller) float64 {
	_, ceiling := ScanBounds(c, tableRows, parts, e, memo)
	return ceiling
}

// ScanBounds is ScanCeiling with the floor no schedule beats, max(sum/cores, longest
// task) (ScanColumn's BoundMs), from the same estimates in one pass: the schedule's
// WallMs lies between the two.
func ScanBounds(c schema.Column, tableRows int64, parts []Partition, e schema.Engine, memo *Smaller) (floor, ceiling float64) {
	src := source{c: c, tableRows: tableRowsOr(tableRows, parts), parts: parts, capacity: e.SegmentRows, memo: memo}
	return boundsOf(&src, e)
}

// boundsOf is ScanBounds of the segments src delivers.
func boundsOf(src *source, e schema.Engine) (floor, ceiling float64) {
	f, theta, cores := scanRates(e)
	var sum, longest float64
	task := func(n int64, ms float64) {
		if n > 0 && ms > 0 && !math.IsInf(ms, 1) {
			sum = float64(float64(n)*ms) + sum
			longest = max(longest, ms)
		}
	}
	src.each(func(full int64, fb float64, rest int64, rb float64) {
		task(full, f+fb/theta)
		if rest > 0 {
			task(1, f+rb/theta)
		}
	})
	return max(sum/float64(cores), longest), sum/float64(cores) + longest
}

// Estimated is one column's segment estimates over a table's partitions at one
// capacity, kept as they were made: the scan's bounds and schedule read them instead of
// estimating every segment again (a sweep sizes every column to find the widest, then
// bounds and schedules the widest's scan). Its buffer is reused by the next Estimate.
type Estimated struct {
	parts     []estimatedPart
	tableRows int64
	capacity  int64
	bytes     float64
	segments  int64
}

type estimatedPart struct {
	full, rest           int64
	fullBytes, restBytes float64
}

// Estimate sizes column c over parts in segments of segmentRows rows, keeping every
// estimate (memo as ScanColumnWith takes it), and returns the bytes ColumnBytes would:
// its table rows are the sum of the partitions, as ColumnBytes takes them.
func (es *Estimated) Estimate(c schema.Column, parts []Partition, segmentRows int64, memo *Smaller) float64 {
	es.parts, es.tableRows, es.capacity = es.parts[:0], tableRowsOr(0, parts), segmentRows
	es.bytes, es.segments = columnBytes(c, es.tableRows, parts, segmentRows, memo, func(full int64, fb float64, rest int64, rb float64) {
		es.parts = append(es.parts, estimatedPart{full: full, fullBytes: fb, rest: rest, restBytes: rb})
	})
	return es.bytes
}

// For reports whether the estimates are the ones ScanColumnWith and ScanBounds of the
// same column and partitions would make with tableRows and engine e.
func (es *Estimated) For(tableRows int64, e schema.Engine) bool {
	return (tableRows <= 0 || tableRows == es.tableRows) && e.SegmentRows == es.capacity
}

// replay delivers the kept estimates as columnBytes delivered them.
func (es *Estimated) replay(visit visitor) (float64, int64) {
	for _, p := range es.parts {
		visit(p.full, p.fullBytes, p.rest, p.restBytes)
	}
	return es.bytes, es.segments
}

// Least is a lower bound, from the kept estimates' total alone, of the scan of any
// column over the same segments that is at least as wide (as many bytes): its tasks sum
// to at least segments x overhead + bytes/theta, spread over the cores at best. It is
// at most ScanBounds' floor of the widest column, which sums the same tasks; +Inf when
// a task is (then the floor leaves it out).
func (es *Estimated) Least(e schema.Engine) float64 {
	f, theta, cores := scanRates(e)
	return (float64(float64(es.segments)*f) + es.bytes/theta) / float64(cores)
}

// Scan is ScanColumnWith from the kept estimates (For must hold).
func (es *Estimated) Scan(e schema.Engine) Scan {
	return scanOf(&source{kept: es}, len(es.parts), e)
}

// Bounds is ScanBounds from the kept estimates (For must hold).
func (es *Estimated) Bounds(e schema.Engine) (floor, ceiling float64) {
	return boundsOf(&source{kept: es}, e)
}

// PlainCeiling is an upper bound on ScanCeiling that makes no estimate: it reads the
// layout l of the table's partitions and the rows of its largest segment. No segment's
// estimate is above its values written plain (SegmentSize keeps the smaller of the
// dictionary and the plain values) and a measured encoded size is spread over the rows
// in proportion, so the tasks sum to at most N x overhead + (the plain bytes)/theta, and
// none is longer than the largest segment's. A table whose scan is certainly within a
// budget by this bound needs no column estimate to say so.
func PlainCeiling(c schema.Column, tableRows int64, l Layout, largest int64, e schema.Engine) float64 {
	f, theta, cores := scanRates(e)
	if tableRows <= 0 {
		tableRows = l.Rows
	}
	// upper bounds SegmentBytes(c, tableRows, n) (DictionarySize: a segment is never
	// larger than its table, so a measured size is at most its share n/tableRows).
	upper := func(n int64) float64 {
		switch {
		case n <= 0 || tableRows <= 0:
			return 0
		case c.EncodedBytes > 0:
			return float64(c.EncodedBytes) * float64(n) / float64(tableRows)
		}
		return PlainBytes(c, n)
	}
	bytes := upper(l.Rows) // one value after another: the plain bytes add up
	if c.Type == "bool" && c.EncodedBytes <= 0 {
		bytes = float64(l.Rows)/8 + float64(l.Segments) // each segment rounds up to a byte
	}
	return float64(float64(l.Segments)*f+bytes/theta)/float64(cores) + f + upper(largest)/theta
}

// scanRates are ScanColumn's engine figures: the fixed ms per segment, the bytes per ms
// and the cores, with the format defaults for values left at zero or invalid.
func scanRates(e schema.Engine) (overheadMs, theta float64, cores int) {
	overheadMs = e.SegmentOverheadMs
	if !(overheadMs >= 0) || math.IsInf(overheadMs, 0) {
		overheadMs = 0
	}
	rate := e.ScanMBPerS
	if !(rate > 0) || math.IsInf(rate, 0) {
		rate = schema.DefaultScanMBPerS
	}
	cores = e.Cores
	if cores < 1 {
		cores = schema.DefaultCores
	}
	return overheadMs, rate * 1000, cores
}
