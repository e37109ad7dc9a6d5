package rules

import (
	"fmt"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/units"
)

// NeedlessPartitioning fires when a table with several partitions would fit in one segment.
var NeedlessPartitioning = Rule{
	ID:      "needless-partitioning",
	Default: Note,
	Title:   "Several partitions for a table that fits in one segment",
	Why: "A table whose rows fit in a single segment gains nothing from partitions: each one " +
		"adds a segment of its own, with its own dictionaries and its fixed scan cost, and the " +
		"refresh has more pieces to process.",
	Fix: "Use partitions: {scheme: none} for the table. The recommendation ranks a layout " +
		"without needless partitions first, so the first hint, the table's one recommendation, " +
		"says so with its effect unless a budget rules it out.",
	Check: checkNeedlessPartitioning,
	How: "A table with two or more partitions whose rows are at most engine.segment_rows. With " +
		"refresh.routine, the hint adds what each routine refresh then rebuilds (the whole table).",
	Bad: `  - name: tariffs
    rows: 5000
    partitions: {scheme: even, count: 4}`,
	Good: `  - name: tariffs
    rows: 5000
    partitions: {scheme: none}`,
}

func init() { register(NeedlessPartitioning) }

func checkNeedlessPartitioning(t *analysis.Table, cfg Config) []Finding {
	l := t.Layout
	if l.Partitions < 2 || l.Rows > t.Engine.SegmentRows {
		return nil
	}
	msg := fmt.Sprintf("%d partitions and %s segments hold %s rows, which fit in one segment of %s rows",
		l.Partitions, units.Num(l.Segments), units.Count(l.Rows), units.Count(t.Engine.SegmentRows))
	return []Finding{advised(t, Note, t.Spec.Partitions.Pos, "partitions", msg, nil, map[string]float64{
		"partitions": float64(l.Partitions),
		"segments":   float64(l.Segments),
		"rows":       float64(l.Rows),
	})}
}
