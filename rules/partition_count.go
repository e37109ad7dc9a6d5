package rules

import (
	"fmt"

	"github.com/scangate/scangate/schema"

	"github.com/scangate/scangate/internal/analysis"

	"github.com/scangate/scangate/internal/units"
)

// PartitionCount fires when one table has more partitions than an engine handles well.
var PartitionCount = Rule{
	ID:      partitionCountID,
	Default: Warning,
	Title:   "More than 5,000 partitions in one table",
	Why: "Every partition carries metadata, its own refresh work and at least one segment. " +
		"Past a few thousand partitions per table, refresh planning and metadata operations " +
		"slow down whatever the row counts (a rule of thumb, from memory, common practice).",
	Fix: "Use a coarser grain for older periods (tiers), fewer even partitions, or merge " +
		"listed partitions. The first hint is the table's one recommendation (a layout above the " +
		"limit still warns, so the recommendation avoids it when any layout tried does).",
	Params: []Param{partitionLimit},
	Check:  checkPartitionCount,
	How:    "The partitions the scheme expands to (sum of keep over the tiers, count, or the listed items) against limit.",
	Bad: `    partitions:
      scheme: time
      tiers: [{grain: day, keep: 6000}]`,
	Good: `    partitions:
      scheme: time
      tiers: [{grain: day, keep: 31}, {grain: month, keep: 196}]`,
}

func init() { register(PartitionCount) }

const partitionCountID = "partition-count"

// partitionLimit is the most partitions one table should have.
var partitionLimit = Param{Name: "limit", Default: 5000, Doc: "Most partitions one table may have before a warning (default 5,000).",
	// A table generates at most schema.MaxPartitions; a higher limit could never be passed.
	Range: schema.Range{Min: 1, Max: schema.MaxPartitions, Integer: true}}

func checkPartitionCount(t *analysis.Table, cfg Config) []Finding {
	n := int64(t.Layout.Partitions)
	limit := units.Int64(cfg.Value(partitionCountID, partitionLimit))
	if n <= limit {
		return nil
	}
	msg := fmt.Sprintf("%s partitions, above the limit of %s per table", units.Num(n), units.Num(limit))
	return []Finding{advised(t, Warning, t.Spec.Partitions.Pos, "partitions", msg, nil, map[string]float64{
		"partitions": float64(n),
		"limit":      float64(limit),
	})}
}
