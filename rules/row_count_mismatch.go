package rules

import (
	"fmt"
	"math"
	"strconv"

	"github.com/scangate/scangate/internal/analysis"

	"github.com/scangate/scangate/internal/units"
)

// RowCountMismatch fires when a list table's declared rows and its listed partitions
// disagree by more than 1%.
var RowCountMismatch = Rule{
	ID:      rowCountMismatchID,
	Default: Error,
	Title:   "Declared rows and listed partitions disagree",
	Why: "A list-partitioned table may declare its rows and also list each partition's rows. " +
		"When the two differ by more than 1%, one of them is stale, and every figure scangate " +
		"computes for the table (segments, scan cost, memory) rests on the listed partitions.",
	Fix: "Update rows to the sum of the listed partitions, correct the partition that is " +
		"wrong, or drop rows and let the listed partitions speak for the table.",
	Params: []Param{mismatchTolerance},
	Check:  checkRowCountMismatch,
	How:    "The sum of the listed partitions' rows against the table's rows; the relative difference must stay within tolerance.",
	Bad: `  - name: billing_lines
    rows: 150M
    partitions:
      scheme: list
      items: [{name: "2025", rows: 70M}, {name: "2026", rows: 70M}]   # 140M`,
	Good: `  - name: billing_lines
    rows: 140M
    partitions:
      scheme: list
      items: [{name: "2025", rows: 70M}, {name: "2026", rows: 70M}]`,
}

func init() { register(RowCountMismatch) }

const rowCountMismatchID = "row-count-mismatch"

// mismatchTolerance is the relative difference accepted between the two counts.
var mismatchTolerance = Param{Name: "tolerance", Default: 0.01, Doc: "Relative difference accepted between declared and listed rows (default 0.01, 1%).",
	Range: shareRange}

func checkRowCountMismatch(t *analysis.Table, cfg Config) []Finding {
	if !t.Spec.RowsDeclared || len(t.Spec.Partitions.Items) == 0 {
		return nil
	}
	var sum int64
	for _, it := range t.Spec.Partitions.Items {
		sum += it.Rows
	}
	declared := t.Spec.Rows
	diff := float64(sum) - float64(declared)
	rel := math.Inf(1)
	if declared > 0 {
		rel = diff / float64(declared)
	} else if sum == 0 {
		rel = 0
	}
	tol := cfg.Value(rowCountMismatchID, mismatchTolerance)
	if math.Abs(rel) <= tol {
		return nil
	}
	share := "all"
	if !math.IsInf(rel, 0) {
		share = fmt.Sprintf("%+.1f%%", rel*100)
	}
	msg := fmt.Sprintf("rows declares %s (%s) but the %d listed partitions sum to %s (%s), more than %s apart",
		units.Count(declared), units.Num(declared), len(t.Spec.Partitions.Items), units.Count(sum), share, strconv.FormatFloat(tol*100, 'f', -1, 64)+"%")
	hints := []string{fmt.Sprintf("set rows: %d, or correct the listed partitions; the layout is computed from the listed %s rows", sum, units.Count(sum))}
	return []Finding{finding(t, Error, t.Spec.RowsPos, "rows", msg, hints, map[string]float64{
		"declared_rows": float64(declared),
		"listed_rows":   float64(sum),
	})}
}
