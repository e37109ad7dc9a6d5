package advisor

import (
	"fmt"
	"math"
	"strings"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// Variant is one candidate change to a table's partition policy, in the words a hint
// uses, with the table it would produce. The rules' hints and the plan's sweep both
// draw their partition changes from Variants, so they name layouts alike.
type Variant struct {
	Change string // imperative, as a hint says it
	Window bool   // keeps a recent window of the finest grain, merges older periods
	Spec   schema.Table
}

// recentWindow is how many periods of a grain a tiered layout keeps fine before it
// merges older periods into a coarser grain: about two weeks, two months, half a
// year, a year (common practice for a recent window reloaded on every refresh).
var recentWindow = map[schema.Grain]int{schema.Day: 14, schema.Week: 8, schema.Month: 6, schema.Quarter: 4}

// windowFor is how many periods of grain g a tiered layout keeps fine before merging:
// the recent window of the grain (recentWindow), widened to cover the days the routine
// refresh reloads, so a merge behind the window never touches what it rewrites.
func windowFor(spec schema.Table, g schema.Grain) (int, bool) {
	w, ok := recentWindow[g]
	if d := spec.Routine.RecentDays; ok && d > 0 {
		w = max(w, units.Int(math.Ceil(float64(d)/g.Days()-1e-9)))
	}
	return w, ok
}

// Variants lists the candidate partition changes for spec with segments of
// segmentRows rows: for time, each coarser grain, alone and behind a recent window of
// the finest; for even, other counts; for list, merged neighbours; and a single
// partition when the rows fit in one segment. Today's policy is not among them.
func Variants(spec schema.Table, segmentRows int64) []Variant {
	var out []Variant
	p := spec.Partitions
	switch p.Scheme {
	case schema.SchemeTime:
		out = timeVariants(spec)
	case schema.SchemeEven:
		out = evenVariants(spec, segmentRows)
	case schema.SchemeList:
		out = listVariants(spec, segmentRows)
	}
	return withOne(out, spec, segmentRows)
}

// withOne adds to out a single partition when spec's rows fit in one segment.
func withOne(out []Variant, spec schema.Table, segmentRows int64) []Variant {
	p := spec.Partitions
	if p.Scheme != schema.SchemeNone && spec.Rows <= segmentRows {
		one := spec
		one.Partitions = schema.Partitions{Scheme: schema.SchemeNone, Pos: p.Pos}
		out = append(out, Variant{Change: "use partitions: {scheme: none}", Spec: one})
	}
	return out
}

// timeVariants coarsens one tier at a time to each coarser grain, absorbing later tiers
// the new grain is not finer than; for the newest tier it also tries keeping a recent
// window fine and merging the rest.
func timeVariants(spec schema.Table) []Variant {
	tiers := spec.Partitions.Tiers
	var out []Variant
	for i, tier := range tiers {
		for _, g := range schema.Grains[tier.Grain.Rank()+1:] {
			if i > 0 && g.Rank() <= tiers[i-1].Grain.Rank() {
				continue
			}
			merged, j := MergeTiers(tiers, i, g, 0)
			out = append(out, withTiers(spec, merged, "turn "+tierWords(tiers[i:j])+" into "+tierWords(merged[i:i+1])))
			if w, ok := windowFor(spec, tier.Grain); ok && i == 0 && tier.Keep > w {
				merged, _ := MergeTiers(tiers, 0, g, w)
				if len(merged) > 1 && merged[1].Grain == g {
					v := withTiers(spec, merged, fmt.Sprintf("keep %s partitions for %d %ss, then merge into %ss (%s)", tier.Grain, w, tier.Grain, g, tierWords(merged[:2])))
					v.Window = true
					out = append(out, v)
				}
			}
		}
	}
	return out
}

// MergeTiers rewrites tiers from i on: keep the first `window` periods of tier i as
// they are, then cover the rest of tier i and every later tier no coarser than g with
// periods of g. It returns the new tiers and the index of the first tier left untouched.
func MergeTiers(tiers []schema.Tier, i int, g schema.Grain, window int) ([]schema.Tier, int) {
	span := 0.0
	j := i
	for ; j < len(tiers) && tiers[j].Grain.Rank() <= g.Rank(); j++ {
		span += float64(tiers[j].Keep) * tiers[j].Grain.Days()
	}
	out := append([]schema.Tier(nil), tiers[:i]...)
	if window > 0 {
		out = append(out, schema.Tier{Grain: tiers[i].Grain, Keep: window, Pos: tiers[i].Pos})
		span -= float64(window) * tiers[i].Grain.Days()
	}
	// Round up: the periods must still cover the whole span the tiers kept.
	keep := max(1, units.Int(math.Ceil(span/g.Days()-1e-9)))
	out = append(out, schema.Tier{Grain: g, Keep: keep, Pos: tiers[i].Pos})
	return append(out, tiers[j:]...), j
}

func withTiers(spec schema.Table, tiers []schema.Tier, change string) Variant {
	s := spec
	s.Partitions.Tiers = tiers
	return Variant{Change: change, Spec: s}
}

func tierWords(tiers []schema.Tier) string {
	w := make([]string, len(tiers))
	for i, t := range tiers {
		w[i] = units.Num(int64(t.Keep)) + " " + string(t.Grain) + " " + units.Plural(int64(t.Keep), "partition", "partitions")
	}
	return strings.Join(w, " + ")
}

// evenVariants offers the largest partition count below today's whose split wastes no
// segment (or, failing that, the count with the fewest segments), and a few much
// smaller counts for tables with far too many partitions.
func evenVariants(spec schema.Table, s int64) []Variant {
	c := spec.Partitions.Count
	segs := func(k int) int64 {
		q, r := spec.Rows/int64(k), spec.Rows%int64(k)
		return int64(k-int(r))*layout.Segments(q, s) + r*layout.Segments(q+1, s)
	}
	ideal := layout.Segments(spec.Rows, s)
	best, bestSeg := 0, int64(math.MaxInt64)
	// Scanning down from c stops at the first waste-free count; cap the scan so a
	// million-partition table stays cheap.
	for k := c - 1; k >= 1 && k >= c-100_000; k-- {
		if seg := segs(k); seg < bestSeg {
			best, bestSeg = k, seg
			if seg == ideal {
				break
			}
		}
	}
	counts := []int{}
	if best > 0 {
		counts = append(counts, best)
	}
	for _, div := range []int{10, 100, 1000} {
		if k := c / div; k >= 1 && k != best {
			counts = append(counts, k)
		}
	}
	var out []Variant
	for _, k := range counts {
		o := spec
		o.Partitions.Count = k
		out = append(out, Variant{Change: fmt.Sprintf("use count: %d", k), Spec: o})
	}
	return out
}

// listVariants merges neighbouring listed partitions until each holds at least one
// full segment.
func listVariants(spec schema.Table, s int64) []Variant {
	var items []schema.Item
	var names []string
	for _, it := range spec.Partitions.Items {
		if n := len(items); n > 0 && items[n-1].Rows < s {
			items[n-1].Rows += it.Rows
			items[n-1].Name += "+" + it.Name
			continue
		}
		items = append(items, it)
	}
	if len(items) == len(spec.Partitions.Items) {
		return mergePair(spec, s)
	}
	for _, it := range items {
		if strings.Contains(it.Name, "+") {
			names = append(names, it.Name)
		}
	}
	o := spec
	o.Partitions.Items = items
	return []Variant{{Change: fmt.Sprintf("merge neighbouring listed partitions so each holds at least %s rows (%s)", units.Count(s), strings.Join(names, ", ")), Spec: o}}
}

// mergePair merges the two neighbouring listed partitions whose merge saves the most
// segments, for lists whose partitions each already fill a segment.
func mergePair(spec schema.Table, s int64) []Variant {
	items := spec.Partitions.Items
	bestAt, bestSaved := -1, int64(0)
	for i := 0; i+1 < len(items); i++ {
		a, b := items[i].Rows, items[i+1].Rows
		saved := layout.Segments(a, s) + layout.Segments(b, s) - layout.Segments(a+b, s)
		// Among equal savings, merge the smallest pair: the least disruptive change.
		if saved > bestSaved || (saved == bestSaved && saved > 0 && a+b < items[bestAt].Rows+items[bestAt+1].Rows) {
			bestAt, bestSaved = i, saved
		}
	}
	if bestAt < 0 {
		return nil
	}
	merged := append([]schema.Item(nil), items[:bestAt]...)
	pair := schema.Item{Name: items[bestAt].Name + "+" + items[bestAt+1].Name, Rows: items[bestAt].Rows + items[bestAt+1].Rows, Pos: items[bestAt].Pos}
	merged = append(append(merged, pair), items[bestAt+2:]...)
	o := spec
	o.Partitions.Items = merged
	return []Variant{{Change: fmt.Sprintf("merge listed partitions %q and %q", items[bestAt].Name, items[bestAt+1].Name), Spec: o}}
}

// Label is a short name of a partition policy for the sweep table: "14 day + 24 month",
// "even x5", "3 listed", "none".
func Label(p schema.Partitions) string {
	switch p.Scheme {
	case schema.SchemeTime:
		w := make([]string, len(p.Tiers))
		for i, t := range p.Tiers {
			w[i] = units.Num(int64(t.Keep)) + " " + string(t.Grain)
		}
		return strings.Join(w, " + ")
	case schema.SchemeEven:
		return "even x" + units.Num(int64(p.Count))
	case schema.SchemeList:
		return units.Num(int64(len(p.Items))) + " listed"
	}
	return string(p.Scheme)
}
