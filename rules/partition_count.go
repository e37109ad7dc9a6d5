package rules

import "fmt"

// PartitionCount fires when one table has more partitions than an engine handles well.
var PartitionCount = Rule{
	ID:      "partition-count",
	Default: Warning,
	Title:   "More than 5,000 partitions in one table",
	Why: "Every partition carries metadata, its own refresh work and at least one segment. " +
		"Past a few thousand partitions per table, refresh planning and metadata operations " +
		"slow down whatever the row counts (a rule of thumb, from memory, common practice).",
	Fix: "Use a coarser grain for older periods (tiers), fewer even partitions, or merge " +
		"listed partitions. The hint names the coarser layout and its partition count.",
	Check: checkPartitionCount,
}

// partitionLimit is the most partitions one table should have.
const partitionLimit = 5000

func checkPartitionCount(t *Table) []Finding {
	n := int64(t.Layout.Partitions)
	if n <= partitionLimit {
		return nil
	}
	msg := fmt.Sprintf("%s partitions, above the limit of %s per table", num(n), num(partitionLimit))
	var hints []string
	var best *Option
	opts := t.Options()
	for i := range opts {
		o := &opts[i]
		if o.Engine || o.Layout.Partitions > partitionLimit {
			continue
		}
		// Prefer the layout that keeps the most partitions under the limit.
		if best == nil || o.Layout.Partitions > best.Layout.Partitions {
			best = o
		}
	}
	if best != nil {
		hints = append(hints, fmt.Sprintf("%s: %s -> %s partitions, %s", best.Change, num(n), num(int64(best.Layout.Partitions)), t.effect(*best)))
	}
	return []Finding{t.finding(Warning, t.Spec.Partitions.Pos, "partitions", msg, hints, map[string]float64{
		"partitions": float64(n),
		"limit":      partitionLimit,
	})}
}
