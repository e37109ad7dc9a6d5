package rules

import "fmt"

// TruncatedSegments fires when partition boundaries leave segments part-empty.
var TruncatedSegments = Rule{
	ID:      "truncated-segments",
	Default: Warning,
	Title:   "Partitions leave segments part-empty",
	Why: "A segment never spans two partitions, so every partition ends in a segment that " +
		"is only partly filled. Each extra segment costs the fixed per-segment CPU on every " +
		"scan and holds its own dictionaries. The excess is the segments the table has beyond " +
		"ceil(rows / segment_rows); the newest time partition is still filling and is not counted.",
	Fix: "Use coarser partitions (a coarser grain, fewer even partitions, merged listed " +
		"partitions), or keep a short recent window fine-grained and merge older periods. The " +
		"hint names the change with the fewest segments and its effect.",
	Check: checkTruncatedSegments,
}

// Thresholds of DESIGN §5: a warning from max(8, N/10) excess segments, else a note.
const (
	truncWarnMin   = 8
	truncWarnShare = 10 // N/10
)

func checkTruncatedSegments(t *Table) []Finding {
	l := t.Layout
	e := l.ClosedExcess
	if e < 1 {
		return nil
	}
	sev := Note
	if e >= max(truncWarnMin, l.ClosedSegments/truncWarnShare) {
		sev = Warning
	}
	msg := fmt.Sprintf("%s excess %s: partitions hold %s segments where %s would do (fill %s), %s ms of fixed CPU per scan",
		num(e), plural(e, "segment", "segments"), num(l.ClosedSegments), num(l.ClosedIdeal), pct(closedFill(t)),
		ms(float64(e)*t.Engine.SegmentOverheadMs))
	var hints []string
	if o, ok := t.bestTrim(); ok {
		hints = append(hints, fmt.Sprintf("%s: %s", o.Change, t.effect(o)))
		// The change with the fewest segments, when it is another one, is worth a look too.
		if f, ok := t.fewestSegments(); ok && f.Change != o.Change {
			hints = append(hints, fmt.Sprintf("or %s: %s", f.Change, t.effect(f)))
		}
	}
	return []Finding{t.finding(sev, t.Spec.Partitions.Pos, "partitions", msg, hints, map[string]float64{
		"segments":        float64(l.Segments),
		"ideal_segments":  float64(l.Ideal),
		"excess_segments": float64(e),
		"fill":            l.Fill,
		"fixed_ms":        l.FixedMs,
	})}
}

// closedFill is the fill of the closed partitions' segments.
func closedFill(t *Table) float64 {
	var rows int64
	for _, p := range t.Parts {
		if !p.Open {
			rows += p.Rows
		}
	}
	if t.Layout.ClosedSegments == 0 {
		return 0
	}
	return float64(rows) / (float64(t.Layout.ClosedSegments) * float64(t.Engine.SegmentRows))
}

// bestTrim is the partition change (not an engine change) to suggest: among the
// changes that remove at least half of the excess, the one that keeps the most
// partitions (fewer segments breaks a tie); failing that, the one with fewest segments.
func (t *Table) bestTrim() (Option, bool) {
	target := t.Layout.Segments - (t.Layout.ClosedExcess+1)/2
	var best *Option
	opts := t.Options()
	for i := range opts {
		o := &opts[i]
		if o.Engine || o.Layout.Segments > target {
			continue
		}
		if best == nil || o.Layout.Partitions > best.Layout.Partitions ||
			(o.Layout.Partitions == best.Layout.Partitions && o.Layout.Segments < best.Layout.Segments) {
			best = o
		}
	}
	if best != nil {
		return *best, true
	}
	return t.fewestSegments()
}

// fewestSegments is the partition change with the fewest segments; among equals, the
// one that keeps the most partitions.
func (t *Table) fewestSegments() (Option, bool) {
	var best *Option
	opts := t.Options()
	for i := range opts {
		o := &opts[i]
		if o.Engine || o.Layout.Segments >= t.Layout.Segments {
			continue
		}
		if best == nil || o.Layout.Segments < best.Layout.Segments ||
			(o.Layout.Segments == best.Layout.Segments && o.Layout.Partitions > best.Layout.Partitions) {
			best = o
		}
	}
	if best == nil {
		return Option{}, false
	}
	return *best, true
}
