package rules

import (
	"fmt"

	"github.com/scangate/scangate/internal/analysis"

	"github.com/scangate/scangate/internal/units"
)

// ScanOverhead fires when the fixed per-segment CPU of one full scan nears or passes
// the budget.
var ScanOverhead = Rule{
	ID:      scanOverheadID,
	Default: Error,
	Title:   "Fixed per-segment CPU of a full scan is over budget",
	Why: "Every scan pays segment_overhead_ms of CPU per segment to dispatch it and merge its " +
		"result, however few rows the segment holds. Segments x segment_overhead_ms is paid by " +
		"every query that scans the table, before a single byte is read. Above the budget it " +
		"is an error; above 80% of it, a warning.",
	Fix: "Reduce the segment count: coarser partitions, fewer even partitions, merged listed " +
		"partitions, or a larger engine segment size where the deployment allows it. The first " +
		"hint is the table's one recommendation, the same under every finding of the table and " +
		"in `scangate plan`: the least disruptive layout that fits every budget, or when none " +
		"does the one nearest all of them at once that makes no budget worse.",
	Params: []Param{overheadWarnShare},
	Check:  checkScanOverhead,
	How:    "segments x engine.segment_overhead_ms, the fixed CPU of one full scan, against budgets.scan_overhead_ms (the table's own budget, else the manifest's, else the project config's). An error above the budget, a warning above warn_share of it.",
	Bad: `engine: {segment_rows: 8Mi, segment_overhead_ms: 1.5}
budgets: {scan_overhead_ms: 500}
tables:
  - name: meter_reads
    rows: 4.8G
    partitions: {scheme: time, tiers: [{grain: day, keep: 730}]}  # 730 segments: 1,095 ms`,
	Good: `engine: {segment_rows: 32Mi, segment_overhead_ms: 1.5}
budgets: {scan_overhead_ms: 500}
tables:
  - name: meter_reads
    rows: 4.8G
    partitions: {scheme: time, tiers: [{grain: month, keep: 24}]}  # 144 segments: 216 ms`,
}

func init() { register(ScanOverhead) }

const scanOverheadID = "scan-overhead"

// overheadWarnShare is the share of the budget above which a warning is raised.
var overheadWarnShare = Param{Name: "warn_share", Default: 0.8, Doc: "Share of the budget above which a warning is raised (default 0.8).",
	Range: shareRange}

func checkScanOverhead(t *analysis.Table, cfg Config) []Finding {
	b := t.Budgets.ScanOverheadMs
	if b == nil {
		return nil
	}
	f := t.Layout.FixedMs
	sev := grade(f, *b, cfg.Value(scanOverheadID, overheadWarnShare))
	if sev == 0 {
		return nil
	}
	msg := fmt.Sprintf("a full scan pays %s ms of fixed CPU for %s segments (%s ms each), %s of the %s ms budget",
		units.Ms(f), units.Num(t.Layout.Segments), units.Ms(t.Engine.SegmentOverheadMs), units.Pct(f / *b), units.Ms(*b))
	allowed := units.Int64(*b / t.Engine.SegmentOverheadMs) // +Inf at overhead 0: saturates
	var extra []string
	if allowed < t.Layout.Ideal {
		extra = append(extra, fmt.Sprintf("the budget allows at most %s segments, but %s rows need at least %s segments of %s rows: no partition change alone can fit",
			units.Num(allowed), units.Count(t.Layout.Rows), units.Num(t.Layout.Ideal), units.Count(t.Engine.SegmentRows)))
	}
	return []Finding{advised(t, sev, t.Spec.Pos, "scan-overhead", msg, extra, map[string]float64{
		"fixed_ms":  f,
		"budget_ms": *b,
		"segments":  float64(t.Layout.Segments),
	})}
}
