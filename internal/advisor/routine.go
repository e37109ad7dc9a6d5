package advisor

import (
	"fmt"
	"math"
	"slices"

	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/schema"
)

// RoutineExtra is how many more rows each routine refresh rebuilds in layout c than in
// today's layout: the cost of merging partitions the routine refresh rewrites. 0 when
// it rebuilds no more (always so for a table that declares no routine refresh, whose
// every refresh rebuilds the whole table). The pick ranks candidates by it
// (better) and every hint quoting the candidate says it (Effect).
func (c *Candidate) RoutineExtra(today *Candidate) int64 {
	return max(c.Routine.Rows-today.Routine.Rows, 0)
}

// RoutineWords says what a layout costs each routine refresh against today's, "" when it
// rebuilds no more rows: "each routine refresh then rebuilds 365 days in 1 partition
// instead of 3 days in 3: 1.5G rows instead of 12.3M, +24.9 min".
func RoutineWords(today, then layout.Rebuild) string {
	if then.Rows <= today.Rows {
		return ""
	}
	days := func(b layout.Rebuild) string {
		if b.Days == 1 {
			return "1 day in "
		}
		if b.Days > 0 {
			return units.Short(b.Days) + " days in "
		}
		return ""
	}
	what := fmt.Sprintf("%s%s %s instead of %s%s", days(then), units.Num(int64(then.Partitions)),
		units.Plural(int64(then.Partitions), "partition", "partitions"), days(today), units.Num(int64(today.Partitions)))
	return fmt.Sprintf("each routine refresh then rebuilds %s: %s rows instead of %s, +%s",
		what, units.Count(then.Rows), units.Count(today.Rows), units.Seconds(then.Seconds-today.Seconds))
}

// routineToday is today's layout, whose routine refresh the others are weighed against;
// nil when the sweep has none.
func (sw *Sweep) routineToday() *Candidate {
	if sw.Today < 0 {
		return nil
	}
	return &sw.Candidates[sw.Today]
}

// RoutinePeak is the model's memory peak during a routine refresh with today's layouts
// (layout.RebuildPeak): the model stays online while every table rebuilds what its
// routine refresh reaches (the whole table when it declares none), with at most
// refresh_parallelism of the rebuilt partitions in flight. ok is false when no table
// declares a routine refresh (it is then the full refresh) or no table has profiles.
func (md *Model) RoutinePeak() (peak float64, ok bool) {
	if md.routinePeak != nil {
		return *md.routinePeak, !math.IsNaN(*md.routinePeak)
	}
	peak = math.NaN()
	defer func() { md.routinePeak = &peak }()
	if !md.profiled || !slices.ContainsFunc(md.M.Tables, func(t schema.Table) bool { return t.Routine.Declared() }) {
		return peak, false // nothing to lay out again
	}
	s := md.M.Engine.SegmentRows
	v := md.filled(s, 0, -1)
	var rebuilt float64
	inFlight, declared := 0, false
	for j, t := range md.M.Tables {
		spec, parts := md.grownTable(j, 0)
		if parts == nil {
			continue
		}
		w := layout.WindowOf(spec, parts)
		b := w.Rebuilt(spec, parts, md.parallelism, 0)
		declared = declared || !w.Whole
		inFlight = min(inFlight+b.Partitions, md.parallelism)
		switch {
		case len(t.Columns) == 0:
		case w.Whole:
			rebuilt += v.bytes[j]
		default:
			rebuilt += layout.TableBytes(spec.Columns, spec.Rows, parts[b.First:b.End], s)
		}
	}
	if !declared {
		return peak, false // each declared routine refresh reaches every partition
	}
	peak = layout.RebuildPeak(v.total.swap(0, 0), rebuilt, inFlight, s, md.rowBytes)
	return peak, true
}

// rebuilds is what the routine refresh of w and a full refresh rebuild of the table laid
// out as spec (policy p), computed once per policy: neither depends on the capacity.
func (md *Model) rebuilds(w layout.Window, spec schema.Table, p *policy) (routine, full layout.Rebuild) {
	if p.rebuilt == nil {
		rate := md.M.Engine.RefreshRowsPerS
		full := layout.Window{Whole: true}.Rebuilt(spec, p.parts, md.parallelism, rate)
		routine := full // without a routine refresh declared, every refresh is a full one
		if !w.Whole {
			routine = w.Rebuilt(spec, p.parts, md.parallelism, rate)
		}
		p.rebuilt = &[2]layout.Rebuild{routine, full}
	}
	return p.rebuilt[0], p.rebuilt[1]
}
