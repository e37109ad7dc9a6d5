package layout

import (
	"math"

	"github.com/scangate/scangate/schema"
)

// Window is the reach of a table's routine refresh in terms every layout of the table
// shares, so a candidate policy can be asked what the same refresh would rebuild: the
// newest span of time (scheme time, in 1/48 day) or the rows of the last partitions
// (even, list). Whole: no routine refresh is declared (or it reaches every partition),
// so every refresh rebuilds the whole table.
type Window struct {
	Span48 int64 // time: the newest days reloaded, in 1/48 day
	Rows   int64 // even, list: the rows of the last partitions rebuilt
	Whole  bool
}

// WindowOf is the routine refresh spec declares, read against its own partitions parts
// (Expand(spec)). recent_partitions beyond the partition count reach the whole table.
func WindowOf(spec schema.Table, parts []Partition) Window {
	r := spec.Routine
	switch {
	case r.RecentDays > 0 && spec.Partitions.Scheme == schema.SchemeTime:
		return Window{Span48: int64(r.RecentDays) * grain48(schema.Day)}
	case r.RecentPartitions > 0 && r.RecentPartitions < len(parts):
		var rows int64
		for _, p := range parts[len(parts)-r.RecentPartitions:] {
			rows = satAdd(rows, max(p.Rows, 0))
		}
		return Window{Rows: rows}
	}
	return Window{Whole: true}
}

// Rebuild is what one refresh of a table rebuilds, laid out one way.
type Rebuild struct {
	First, End int     // the partitions rebuilt: parts[First:End]
	Partitions int     // End - First
	Rows       int64   // rows rebuilt
	Days       float64 // the span the rebuilt partitions cover (scheme time); 0 otherwise
	Seconds    float64 // estimated wall time (RefreshSeconds)
}

// Rebuilt is what the refresh of window w rebuilds of the table laid out as spec (parts
// = Expand(spec)), refreshing parallelism partitions at a time at rowsPerS rows per
// second each. A time window rebuilds the newest partitions until they cover its span
// (every partition holding any of the reloaded days; a window that straddles a period
// boundary rebuilds one partition more on the days it does, which is not counted); a
// rows window rebuilds the last partitions until they hold its rows. A layout without
// time periods, or a whole window, rebuilds every partition.
func (w Window) Rebuilt(spec schema.Table, parts []Partition, parallelism int, rowsPerS float64) Rebuild {
	first, end := 0, len(parts)
	tiers := spec.Partitions.Tiers
	switch {
	case w.Whole || len(parts) == 0:
	case w.Span48 > 0 && spec.Partitions.Scheme == schema.SchemeTime:
		var span int64
		end = 0
		for end < len(parts) && span < w.Span48 {
			if t := parts[end].Tier; t >= 0 && int(t) < len(tiers) {
				span += grain48(tiers[t].Grain)
			}
			end++
		}
	case w.Rows > 0 && spec.Partitions.Scheme != schema.SchemeTime:
		var rows int64
		first = len(parts)
		for first > 0 && (first == len(parts) || rows < w.Rows) {
			first--
			rows = satAdd(rows, max(parts[first].Rows, 0))
		}
	}
	b := Rebuild{First: first, End: end, Partitions: end - first}
	var span int64
	for _, p := range parts[first:end] {
		b.Rows = satAdd(b.Rows, max(p.Rows, 0))
		if t := p.Tier; t >= 0 && int(t) < len(tiers) {
			span += grain48(tiers[t].Grain)
		}
	}
	b.Days = float64(span) / float64(grain48(schema.Day))
	b.Seconds = RefreshSeconds(parts[first:end], parallelism, rowsPerS)
	return b
}

// RefreshSeconds estimates the wall time of refreshing parts: each partition is one
// task of rows / rowsPerS seconds, list-scheduled in order on parallelism workers (the
// engine processes that many partitions at once; a partition is never split), as
// Schedule does, with runs of equal partitions assigned together; nothing is allocated
// up to stackCores workers, since every table and candidate layout is timed. A
// non-positive or non-finite rate gives 0.
func RefreshSeconds(parts []Partition, parallelism int, rowsPerS float64) float64 {
	if !(rowsPerS > 0) || math.IsInf(rowsPerS, 1) || len(parts) == 0 {
		return 0
	}
	m := max(parallelism, 1)
	var buf [stackCores]coreLoad
	h := newCoreHeap(&buf, m)
	for i := 0; i < len(parts); {
		j := i + 1
		for j < len(parts) && parts[j].Rows == parts[i].Rows {
			j++
		}
		c, t := int64(j-i), float64(max(parts[i].Rows, 0))/rowsPerS
		switch {
		case !(t > 0) || math.IsInf(t, 1):
		case c <= 4*int64(m):
			h.run(c, t)
		default:
			h.bulk(c, t)
		}
		i = j
	}
	return h.makespan()
}
