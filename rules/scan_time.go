package rules

import (
	"fmt"

	"github.com/scangate/scangate/internal/analysis"

	"github.com/scangate/scangate/internal/units"
)

// ScanTime fires when the estimated wall time of a full scan of the table's widest
// column nears or passes the budget.
var ScanTime = Rule{
	ID:      scanTimeID,
	Default: Error,
	Title:   "Estimated full scan of the widest column is over the time budget",
	Why: "A full scan runs one task per segment: the fixed per-segment CPU plus the segment's " +
		"encoded bytes at the engine's scan rate. The tasks are spread over the engine's cores " +
		"in partition order, each to the core that frees first; the estimate is when the last " +
		"core finishes. It needs column profiles; without them the rule stays quiet. Above the " +
		"budget it is an error; above 80% of it, a warning.",
	Fix: "Fewer, fuller segments cut the fixed part; a better encoded column (lower " +
		"cardinality, sorted or clustered order) cuts the byte part; more cores cut both. The " +
		"first hint is the table's one recommendation, the same under every finding of the " +
		"table and in `scangate plan`.",
	Params: []Param{scanWarnShare},
	Check:  checkScanTime,
	How:    "Each segment is a task of segment_overhead_ms plus its encoded bytes of the widest column at scan_mb_per_s; tasks are list-scheduled in partition order on cores cores and the estimate is the makespan. Encoded bytes come from the column profile (a per-segment dictionary plus bit-packed or run-length encoded indexes, or the plain values when those are smaller) or encoded_bytes.",
	Bad: `engine: {segment_rows: 1Mi, cores: 4}
budgets: {scan_ms: 1000}
tables:
  - name: events
    rows: 2G
    partitions: {scheme: none}
    columns:
      - {name: payload_id, type: int64}     # unique values: written plain, 8 bytes a row`,
	Good: `engine: {segment_rows: 1Mi, cores: 16}
budgets: {scan_ms: 1000}
tables:
  - name: events
    rows: 2G
    partitions: {scheme: none}
    columns:
      - {name: payload_kind, type: int64, distinct: 50k, order: sorted}   # sorted runs: bytes a segment`,
}

func init() { register(ScanTime) }

const scanTimeID = "scan-time"

// scanWarnShare is the share of the budget above which a warning is raised.
var scanWarnShare = Param{Name: "warn_share", Default: 0.8, Doc: "Share of the budget above which a warning is raised (default 0.8).",
	Range: shareRange}

func checkScanTime(t *analysis.Table, cfg Config) []Finding {
	b := t.Budgets.ScanMs
	if b == nil || t.Widest == nil {
		return nil
	}
	w := t.Scan.WallMs
	sev := grade(w, *b, cfg.Value(scanTimeID, scanWarnShare))
	if sev == 0 {
		return nil
	}
	msg := fmt.Sprintf("a full scan of column %s (%s encoded, %s segments) takes about %s ms on %d cores, %s of the %s ms budget",
		t.Widest.Name, units.Size(t.Scan.Bytes), units.Num(t.Layout.Segments), units.Ms(w), t.Engine.Cores, units.Pct(w / *b), units.Ms(*b))
	var extra []string
	if cores := coresNeeded(t.Scan.CPUMs, *b); cores > int64(t.Engine.Cores) {
		extra = append(extra, fmt.Sprintf("the scan needs %s ms of CPU in all; at this layout it fits the budget only with %s or more cores", units.Ms(t.Scan.CPUMs), units.Num(cores)))
	}
	return []Finding{advised(t, sev, t.Spec.Pos, "scan-time", msg, extra, map[string]float64{
		"wall_ms":   w,
		"bound_ms":  t.Scan.BoundMs,
		"cpu_ms":    t.Scan.CPUMs,
		"budget_ms": *b,
		"bytes":     t.Scan.Bytes,
	})}
}

// coresNeeded is the fewest cores whose even share of the CPU fits the budget.
func coresNeeded(cpuMs, budget float64) int64 {
	return max(units.Int64(min(cpuMs/budget, 1e15))+1, 1) // NaN counts as 0
}
