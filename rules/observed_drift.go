package rules

import (
	"fmt"
	"math"
	"strconv"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/units"
)

// ObservedDrift fires when a table's declared rows or a column's declared distinct count
// has drifted from what `scangate survey` measured in the data (check --observed).
var ObservedDrift = Rule{
	ID:      observedDriftID,
	Default: Warning,
	Title:   "Declared rows or distinct values differ from the surveyed data",
	Why: "Every figure scangate computes for a table (segments, scan cost, memory, forecast) " +
		"rests on the rows and column profiles the manifest declares. When the data has moved " +
		"away from them, the findings describe a table that no longer exists.",
	Fix: "Write the measured figures into the manifest: `scangate survey --into MANIFEST DATA` " +
		"replaces the table's entry from its data (or its warehouse query's result), or set " +
		"the numbers the hint names by hand.",
	Params: []Param{driftRowsTolerance, driftDistinctTolerance},
	Check:  checkObservedDrift,
	How: "Only with check --observed FILE (survey --format json), for each table of the same name: " +
		"the relative difference of declared and observed rows against rows_tolerance, and of each " +
		"declared distinct count and the observed one against distinct_tolerance, widened to three " +
		"standard errors when the observed count is a sketch's estimate.",
	Bad: `  - name: meter_reads
    rows: 7.2G        # survey observed 9.1G rows
    partitions: {scheme: none}`,
	Good: `  - name: meter_reads
    rows: 9.1G
    partitions: {scheme: none}`,
}

func init() { register(ObservedDrift) }

const observedDriftID = "observed-drift"

var (
	driftRowsTolerance = Param{Name: "rows_tolerance", Default: 0.05, Doc: "Relative difference accepted between declared and observed rows (default 0.05, 5%).",
		Range: shareRange}
	driftDistinctTolerance = Param{Name: "distinct_tolerance", Default: 0.1, Doc: "Relative difference accepted between a declared and an observed distinct count (default 0.1, 10%).",
		Range: shareRange}
)

func checkObservedDrift(t *analysis.Table, cfg Config) []Finding {
	obs := cfg.Observed.Table(t.Spec.Name)
	if obs == nil {
		return nil
	}
	var out []Finding
	declared := t.Layout.Rows
	if rel, ok := drift(declared, obs.Rows, cfg.Value(observedDriftID, driftRowsTolerance)); ok {
		msg := fmt.Sprintf("declares %s rows but the data holds %s (%s), more than %s apart",
			units.Count(declared), units.Count(obs.Rows), signedShare(rel), percent(cfg.Value(observedDriftID, driftRowsTolerance)))
		hint := fmt.Sprintf("set rows: %d as surveyed, or rewrite the table from its data with `scangate survey --into`", obs.Rows)
		if len(t.Spec.Partitions.Items) > 0 && !t.Spec.RowsDeclared {
			hint = fmt.Sprintf("correct the listed partitions' rows to the surveyed %s, or rewrite the table with `scangate survey --into`", units.Count(obs.Rows))
		}
		out = append(out, finding(t, Warning, t.Spec.RowsPos, "rows", msg, []string{hint}, map[string]float64{
			"declared_rows": float64(declared), "observed_rows": float64(obs.Rows),
		}))
	}
	for _, c := range t.Spec.Columns {
		if c.Distinct == 0 {
			continue
		}
		var seen *int64
		var bound float64
		for _, oc := range obs.Columns {
			if oc.Name == c.Name {
				d := oc.Distinct
				seen, bound = &d, 3*oc.DistinctError
			}
		}
		if seen == nil {
			continue
		}
		tol := math.Max(cfg.Value(observedDriftID, driftDistinctTolerance), bound)
		rel, ok := drift(c.Distinct, *seen, tol)
		if !ok {
			continue
		}
		msg := fmt.Sprintf("column %s declares %s distinct values but the data holds %s (%s), more than %s apart",
			c.Name, units.Count(c.Distinct), units.Count(*seen), signedShare(rel), percent(tol))
		hint := fmt.Sprintf("set distinct: %d on column %s as surveyed; the dictionary and index width of its segments follow it", *seen, c.Name)
		out = append(out, finding(t, Warning, c.Pos, "distinct of "+c.Name, msg, []string{hint}, map[string]float64{
			"declared_distinct": float64(c.Distinct), "observed_distinct": float64(*seen),
		}))
	}
	return out
}

// drift is the relative difference of observed from declared and whether it is beyond tol.
func drift(declared, observed int64, tol float64) (float64, bool) {
	if declared == observed {
		return 0, false
	}
	if declared == 0 {
		return math.Inf(1), true
	}
	rel := (float64(observed) - float64(declared)) / float64(declared)
	return rel, math.Abs(rel) > tol
}

func signedShare(rel float64) string {
	if math.IsInf(rel, 0) {
		return "all of them"
	}
	return fmt.Sprintf("%+.1f%%", rel*100)
}

func percent(share float64) string { return strconv.FormatFloat(share*100, 'f', -1, 64) + "%" }
