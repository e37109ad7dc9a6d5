package analysis

import (
	"fmt"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/schema"
)

// Option is one candidate change to a table's partition policy or to the engine's
// segment size, with the layout it would produce. Hints quote the best of them.
type Option struct {
	Change      string // imperative, as a hint says it
	Engine      bool   // changes the engine's segment size, not the table
	Window      bool   // keeps a recent window of the finest grain, merges older periods
	Spec        schema.Table
	SegmentRows int64
	Layout      layout.Layout
	Scan        layout.Scan // of the same widest column; zero without profiles

	Routine layout.Rebuild // what the routine refresh rebuilds in this layout
}

// largerSegments are the segment sizes tried, as multiples of today's.
var largerSegments = []int64{2, 4, 8}

// Options lists candidate changes for the table, each evaluated once.
func (t *Table) Options() []Option {
	if t.optDone {
		return t.options
	}
	t.optDone = true
	var specs []Option
	var base []int // specs[i] lays out the partitions of specs[base[i]], or today's for -1
	// The partition changes come from the advisor, so hints and the plan's sweep name
	// layouts alike.
	for _, v := range advisor.Variants(t.Spec, t.Engine.SegmentRows) {
		base = append(base, len(specs))
		specs = append(specs, Option{Change: v.Change, Window: v.Window, Spec: v.Spec})
	}
	// Larger segments alone, and with each partition change: when the budget allows
	// fewer segments than the rows need at today's size, only the pair fits.
	partitionOnly := len(specs)
	for _, k := range largerSegments {
		s := t.Engine.SegmentRows
		if s > schema.MaxCount/k {
			break
		}
		raise := fmt.Sprintf("raise engine.segment_rows from %s to %s", units.Count(s), units.Count(s*k))
		base = append(base, -1)
		specs = append(specs, Option{Change: raise, Engine: true, Spec: t.Spec, SegmentRows: s * k})
		for i, p := range specs[:partitionOnly] {
			base = append(base, i)
			specs = append(specs, Option{Change: p.Change + " and " + raise, Engine: true, Window: p.Window, Spec: p.Spec, SegmentRows: s * k})
		}
	}
	// A partition change expands to the same partitions at every segment size: expand
	// each once.
	today := t.Parts
	if t.settled {
		today, _ = layout.Expand(t.Spec) // Settle dropped them
	}
	t.options = make([]Option, 0, len(specs))
	expanded := make([][]layout.Partition, partitionOnly)
	failed := make([]bool, partitionOnly)
	for i, o := range specs {
		if o.SegmentRows == 0 {
			o.SegmentRows = t.Engine.SegmentRows
		}
		parts := today
		if b := base[i]; b >= 0 {
			if expanded[b] == nil && !failed[b] {
				var err error
				expanded[b], err = layout.Expand(o.Spec)
				failed[b] = err != nil
			}
			if failed[b] {
				continue
			}
			parts = expanded[b]
		}
		o.Layout = layout.Compute(parts, o.SegmentRows, t.Engine.SegmentOverheadMs)
		o.Routine = t.window.Rebuilt(o.Spec, parts, t.Engine.RefreshWorkers(), t.Engine.RefreshRowsPerS)
		if t.Widest != nil {
			e := t.Engine
			e.SegmentRows = o.SegmentRows
			o.Scan = layout.ScanColumn(*t.Widest, o.Spec.Rows, parts, e)
		}
		t.options = append(t.options, o)
	}
	return t.options
}

// Effect words an option's result against today's layout.
func (t *Table) Effect(o Option) string {
	e := fmt.Sprintf("%s -> %s segments, %s ms per scan", units.Num(t.Layout.Segments), units.Num(o.Layout.Segments), units.Signed(o.Layout.FixedMs-t.Layout.FixedMs))
	if r := advisor.RoutineWords(t.Routine, o.Routine); r != "" {
		e += "; " + r
	}
	return e
}
