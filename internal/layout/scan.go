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
	f := e.SegmentOverheadMs
	if !(f >= 0) || math.IsInf(f, 0) {
		f = 0
	}
	rate := e.ScanMBPerS
	if !(rate > 0) || math.IsInf(rate, 0) {
		rate = schema.DefaultScanMBPerS
	}
	theta := rate * 1000
	cores := e.Cores
	if cores < 1 {
		cores = schema.DefaultCores
	}
	if tableRows <= 0 {
		for _, p := range parts {
			tableRows = satAdd(tableRows, max(p.Rows, 0))
		}
	}
	// At most two groups per partition; few partitions keep them on the stack.
	var buf [32]TaskGroup
	groups := buf[:0]
	if n := 2 * len(parts); n > len(buf) {
		groups = make([]TaskGroup, 0, n)
	}
	add := func(n int64, ms float64) {
		if k := len(groups) - 1; k >= 0 && groups[k].Ms == ms {
			groups[k].Count = satAdd(groups[k].Count, n)
			return
		}
		groups = append(groups, TaskGroup{Count: n, Ms: ms})
	}
	bytes, segs := columnBytes(c, tableRows, parts, e.SegmentRows, func(full int64, fb float64, rest int64, rb float64) {
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
