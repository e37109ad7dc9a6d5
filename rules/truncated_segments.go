package rules

import (
	"fmt"

	"github.com/scangate/scangate/schema"

	"github.com/scangate/scangate/internal/analysis"

	"github.com/scangate/scangate/internal/units"
)

// TruncatedSegments fires when partition boundaries leave segments part-empty.
var TruncatedSegments = Rule{
	ID:      truncatedSegmentsID,
	Default: Warning,
	Title:   "Partitions leave segments part-empty",
	Why: "A segment never spans two partitions, so every partition ends in a segment that " +
		"is only partly filled. Each extra segment costs the fixed per-segment CPU on every " +
		"scan and holds its own dictionaries. The excess is the segments the table has beyond " +
		"ceil(rows / segment_rows); the newest time partition is still filling and is not counted.",
	Fix: "Use coarser partitions (a coarser grain, fewer even partitions, merged listed " +
		"partitions), or keep a short recent window fine-grained and merge older periods. The " +
		"first hint is the table's one recommendation, the same under every finding of the " +
		"table and in `scangate plan`; when it changes the engine's segment size, a line marked " +
		"alternative names the best layout at today's size.",
	Params: []Param{truncWarnMin, truncWarnShare},
	Check:  checkTruncatedSegments,
	How:    "For every closed partition p of r_p rows, ceil(r_p / segment_rows) segments; the ideal is ceil(sum r_p / segment_rows); the excess is their difference. A warning from max(warn_min, warn_share x segments) excess segments, else a note from 1.",
	Bad: `engine: {segment_rows: 8Mi}
tables:
  - name: meter_reads
    rows: 4.8G
    partitions:
      scheme: time
      tiers:
        - {grain: day, keep: 730}   # 6.6M rows a day: every day ends in a part-empty segment`,
	Good: `engine: {segment_rows: 8Mi}
tables:
  - name: meter_reads
    rows: 4.8G
    partitions:
      scheme: time
      tiers:
        - {grain: day, keep: 14}    # a recent window stays fine
        - {grain: month, keep: 24}  # older periods merged: 200M rows a month`,
}

func init() { register(TruncatedSegments) }

const truncatedSegmentsID = "truncated-segments"

// A warning from max(warn_min, warn_share x segments) excess segments, else a note.
var (
	// Each partition leaves at most one part-empty segment, and a table has at most
	// schema.MaxPartitions: a higher warn_min could never be reached.
	truncWarnMin   = Param{Name: "warn_min", Default: 8, Doc: "Excess segments from which a warning is raised however small the table (default 8).", Range: schema.Range{Min: 1, Max: schema.MaxPartitions, Integer: true}}
	truncWarnShare = Param{Name: "warn_share", Default: 0.1, Doc: "Share of the table's segments from which excess segments raise a warning (default 0.1).", Range: shareRange}
)

func checkTruncatedSegments(t *analysis.Table, cfg Config) []Finding {
	l := t.Layout
	e := l.ClosedExcess
	if e < 1 {
		return nil
	}
	sev := Note
	if float64(e) >= max(cfg.Value(truncatedSegmentsID, truncWarnMin), cfg.Value(truncatedSegmentsID, truncWarnShare)*float64(l.ClosedSegments)) {
		sev = Warning
	}
	msg := fmt.Sprintf("%s excess %s: partitions hold %s segments where %s would do (fill %s), %s ms of fixed CPU per scan",
		units.Num(e), units.Plural(e, "segment", "segments"), units.Num(l.ClosedSegments), units.Num(l.ClosedIdeal), units.Pct(closedFill(t)),
		units.Ms(float64(e)*t.Engine.SegmentOverheadMs))
	return []Finding{advised(t, sev, t.Spec.Partitions.Pos, "partitions", msg, []string{t.Alternative()}, map[string]float64{
		"segments":        float64(l.Segments),
		"ideal_segments":  float64(l.Ideal),
		"excess_segments": float64(e),
		"fill":            l.Fill,
		"fixed_ms":        l.FixedMs,
	})}
}

// closedFill is the fill of the closed partitions' segments.
func closedFill(t *analysis.Table) float64 {
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
