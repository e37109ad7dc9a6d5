package advisor

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/scangate/scangate/schema"
)

// A pruned sweep (Settings.Prune, what check reads) has the full sweep's pick, closest
// layout, front, alternative at today's capacity and, layout by layout, the same fits,
// misses, figures but the scan time, and no more warnings; the pick's figures in full.
// Random models of a few tables, some growing, with budgets from loose to tight.
func TestPrunedSweepKeepsThePick(t *testing.T) {
	r := rand.New(rand.NewPCG(14, 2026))
	types := []string{"int64", "string", "float64", "bool"}
	grains, skipped, stopped, held, floored, partial, bounded, skippedToday := 0, 0, 0, 0, 0, 0, 0, 0
	for trial := range 300 {
		var tables []schema.Table
		for n := range 1 + r.IntN(3) {
			spec := schema.Table{Name: fmt.Sprint("t", n), Rows: 1 + r.Int64N(1e10), RowsDeclared: true, GrowthPerYear: []float64{0, 0.15, 0.8}[r.IntN(3)]}
			switch r.IntN(3) {
			case 0:
				spec.Partitions = schema.Partitions{Scheme: schema.SchemeNone}
			case 1:
				spec.Partitions = schema.Partitions{Scheme: schema.SchemeEven, Count: 1 + r.IntN(300)}
			default:
				var tiers []schema.Tier
				for g := r.IntN(3); g < 5; g += 1 + r.IntN(3) {
					tiers = append(tiers, schema.Tier{Grain: schema.Grains[g], Keep: 1 + r.IntN(60)})
				}
				spec.Partitions = schema.Partitions{Scheme: schema.SchemeTime, Tiers: tiers}
				grains++
				if r.IntN(3) == 0 { // a routine refresh, which the ranking weighs first after warnings
					spec.Routine = schema.Routine{RecentDays: 1 + r.IntN(40)}
				}
			}
			for k := range r.IntN(4) {
				spec.Columns = append(spec.Columns, schema.Column{Name: fmt.Sprint("c", k), Type: types[r.IntN(len(types))], AvgLength: 10, Distinct: r.Int64N(1e9),
					Order: []schema.Order{"", schema.Sorted, schema.Clustered}[r.IntN(3)]})
			}
			if r.IntN(3) == 0 {
				scan := r.Float64() * 2e4
				spec.Budgets = schema.Budgets{ScanMs: &scan}
			}
			tables = append(tables, spec)
		}
		overhead, scan := 1+r.Float64()*3000, 1+r.Float64()*3e4
		m := &schema.Manifest{File: "f", Engine: schema.Engine{SegmentRows: 1 << uint(18+r.IntN(7)), Cores: 1 + r.IntN(32), SegmentOverheadMs: 1.5,
			ScanMBPerS: 200, Memory: r.Int64N(1 << 40), RefreshParallelism: r.IntN(8)},
			Budgets: schema.Budgets{ScanOverheadMs: &overhead, ScanMs: &scan}, Tables: tables}
		if trial%3 == 0 {
			m.Engine.Memory = 0 // no memory budget: a lean sweep reads no layout's bytes
		}
		lv := DefaultLevels
		for i := range tables {
			locked := r.IntN(4) == 0
			full := NewModel(m).Sweep(i, Settings{Levels: lv, FixedSegmentRows: locked})
			shared := NewModel(m) // a pruned sweep after another table's, caches warm
			shared.Sweep((i+1)%len(tables), Settings{Levels: lv, Prune: true})
			for _, pruned := range []*Sweep{NewModel(m).Sweep(i, Settings{Levels: lv, FixedSegmentRows: locked, Prune: true}), shared.Sweep(i, Settings{Levels: lv, FixedSegmentRows: locked, Prune: true})} {
				samePick(t, fmt.Sprintf("trial %d table %d", trial, i), full, pruned, m.Engine.SegmentRows)
			}
			warm := NewModel(m)
			warm.Sweep((i+1)%len(tables), Settings{Levels: lv, Prune: true, Lean: true})
			for _, lean := range []*Sweep{NewModel(m).Sweep(i, Settings{Levels: lv, FixedSegmentRows: locked, Prune: true, Lean: true}), warm.Sweep(i, Settings{Levels: lv, FixedSegmentRows: locked, Prune: true, Lean: true})} {
				if leanPick(t, fmt.Sprintf("trial %d table %d (lean)", trial, i), full, lean, m.Engine.SegmentRows) {
					stopped++
				}
				u, f, p, b := countUnfigured(lean)
				skipped, floored, partial, bounded = skipped+u, floored+f, partial+p, bounded+b
				for k := range lean.Candidates {
					if c := &lean.Candidates[k]; c.Unfigured && c.SegmentRows == m.Engine.SegmentRows {
						skippedToday++
					}
				}
			}
			// The months a pick holds for, from what its sweep found at the horizon, are
			// those a search month by month finds.
			if c, fits, ok := full.Pick(); ok && fits {
				md := NewModel(m)
				lean := md.Sweep(i, Settings{Levels: lv, FixedSegmentRows: locked, Prune: true, Lean: true})
				lc, _, _ := lean.Pick()
				want := md.HoldsFor(i, *c.Spec, c.SegmentRows, lv.Horizon())
				if got := md.CandidateHolds(i, lc, lv.Horizon()); got != want {
					t.Fatalf("trial %d table %d: the pick holds %d months by its sweep, %d by search", trial, i, got, want)
				}
				if want == lv.Horizon() && md.growth {
					held++
				}
			}
			// A pick-only sweep (Advise) stops at today's capacity when it may: the same pick.
			if only := NewModel(m).Sweep(i, Settings{Levels: lv, FixedSegmentRows: locked, Prune: true, PickOnly: true}); !samePicked(full, only) {
				t.Fatalf("trial %d table %d: the pick-only sweep picks %v, the full sweep %v", trial, i, pickOf(only), pickOf(full))
			}
		}
	}
	if grains == 0 {
		t.Fatal("no time-partitioned table tried")
	}
	if held == 0 {
		t.Fatal("no growing model's pick held through the horizon: the shortcut went untested")
	}
	if skipped == 0 || skippedToday == 0 || stopped == 0 || floored == 0 || partial == 0 || bounded == 0 {
		t.Fatalf("%d lean sweeps stopped at today's capacity, %d layouts left unfigured (%d at today's capacity), %d at a scan floor (%d from one column's bytes, %d too far by it to be the closest): the test shows too little of the pruning", stopped, skipped, skippedToday, floored, partial, bounded)
	}
}

// leanPick holds a lean sweep (Settings.Lean: check without a chart) to the full
// sweep's pick, closest layout and alternative: the same indexes, in the same order of
// candidates, the pick and closest figured in full with the same misses and warnings,
// every layout at today's capacity with the same fits and no more warnings (a horizon
// is skipped for a layout already outranked) or unfigured, outranked there, and no
// front; or,
// when it stopped at today's capacity (stopped), the same pick and today's layouts.
func leanPick(t *testing.T, name string, full, lean *Sweep, today int64) (stopped bool) {
	t.Helper()
	if len(lean.Candidates) < len(full.Candidates) {
		// Stopped at today's capacity: the same pick, and today's layouts as the full sweep's.
		var now []Candidate
		for _, c := range full.Candidates {
			if c.SegmentRows == today {
				now = append(now, c)
			}
		}
		if !samePicked(full, lean) || len(now) != len(lean.Candidates) {
			t.Fatalf("%s: stopped early with %d candidates (%d at today's capacity), pick %v, full %v", name, len(lean.Candidates), len(now), pickOf(lean), pickOf(full))
		}
		for k := range now {
			a, b := &now[k], &lean.Candidates[k]
			if a.Change != b.Change {
				t.Fatalf("%s: candidate %q at today's capacity differs", name, a.Change)
			}
			sameAtToday(t, name, full, a, b, today)
		}
		sameAlternative(t, name, full, lean, today)
		return true
	}
	if full.Recommended != lean.Recommended || full.Closest != lean.Closest || full.Today != lean.Today ||
		full.Largest != lean.Largest || len(full.Candidates) != len(lean.Candidates) {
		t.Fatalf("%s: pick %d/%d, closest %d/%d, today %d/%d, largest %d/%d, %d/%d candidates", name, full.Recommended, lean.Recommended,
			full.Closest, lean.Closest, full.Today, lean.Today, full.Largest, lean.Largest, len(full.Candidates), len(lean.Candidates))
	}
	for k := range full.Candidates {
		a, b := &full.Candidates[k], &lean.Candidates[k]
		if a.Change != b.Change || a.Layout != b.Layout || b.Front {
			t.Fatalf("%s: candidate %d %q differs:\n full %+v\n lean %+v", name, k, a.Change, a.Figures, b.Figures)
		}
		if b.SegmentRows == today {
			sameAtToday(t, name, full, a, b, today)
		}
		if k == full.Recommended || k == full.Closest {
			if b.Unfigured || a.Figures != b.Figures || !slices.Equal(a.Misses, b.Misses) || !slices.Equal(a.Warnings, b.Warnings) {
				t.Fatalf("%s: the pick's figures %+v %q, full %+v %q", name, b.Figures, b.Misses, a.Figures, a.Misses)
			}
		}
	}
	sameAlternative(t, name, full, lean, today)
	return false
}

// sameAtToday holds a lean sweep's layout b at today's capacity to the full sweep's a:
// the same fits and no more warnings, unless it was left unfigured, which only a layout
// that the full sweep's best at today's capacity outranks may be.
func sameAtToday(t *testing.T, name string, full *Sweep, a, b *Candidate, today int64) {
	t.Helper()
	if b.Unfigured {
		if best := full.BestAt(today, today); best == nil || !better(best, a, today, full.routineToday()) {
			t.Fatalf("%s: candidate %q at today's capacity left unfigured, but the best there does not outrank it", name, a.Change)
		}
		return
	}
	if a.Fits != b.Fits || len(b.Warnings) > len(a.Warnings) {
		t.Fatalf("%s: candidate %q at today's capacity: fits %v/%v, warns %q/%q", name, a.Change, a.Fits, b.Fits, a.Warnings, b.Warnings)
	}
}

// sameAlternative holds two sweeps to the same best layout at today's capacity and,
// when the first keeps today's layout, the same layout ending its excess segments.
func sameAlternative(t *testing.T, name string, a, b *Sweep, today int64) {
	t.Helper()
	same := func(x, y *Candidate) bool { return (x == nil) == (y == nil) && (x == nil || x.Change == y.Change) }
	if !same(a.BestAt(today, today), b.BestAt(today, today)) {
		t.Fatalf("%s: alternatives differ", name)
	}
	if c, fits, ok := a.Pick(); ok && fits && c.Today() && !same(a.EndingExcess(today), b.EndingExcess(today)) {
		t.Fatalf("%s: the layouts ending today's excess segments differ", name)
	}
}

// countUnfigured counts the layouts a lean sweep left unfigured, those whose scan it
// left at a floor above scan_ms, and of those the ones floored by one column's bytes
// and, when nothing fits, those that might be the closest layout by their floor but
// were left there, a layout figured in full being nearer (schedule).
func countUnfigured(sw *Sweep) (unfigured, floored, partial, bounded int) {
	for k := range sw.Candidates {
		if c := &sw.Candidates[k]; c.Unfigured {
			unfigured++
		} else if c.over {
			floored++
			if c.partial {
				partial++
			}
			if sw.Recommended < 0 && sw.Today >= 0 && !c.Locked {
				now := &sw.Candidates[sw.Today]
				if _, ok := nearer(c, now, Excess(now.missed)); ok {
					bounded++
				}
			}
		}
	}
	return unfigured, floored, partial, bounded
}

func samePick(t *testing.T, name string, full, pruned *Sweep, today int64) {
	t.Helper()
	if full.Recommended != pruned.Recommended || full.Closest != pruned.Closest || full.Today != pruned.Today ||
		full.Largest != pruned.Largest || len(full.Candidates) != len(pruned.Candidates) {
		t.Fatalf("%s: pick %d/%d, closest %d/%d, largest %d/%d, %d/%d candidates", name, full.Recommended, pruned.Recommended,
			full.Closest, pruned.Closest, full.Largest, pruned.Largest, len(full.Candidates), len(pruned.Candidates))
	}
	for k := range full.Candidates {
		a, b := &full.Candidates[k], &pruned.Candidates[k]
		if a.Change != b.Change || a.Fits != b.Fits || a.Front != b.Front || a.Layout != b.Layout || a.Peak != b.Peak ||
			a.Bytes != b.Bytes || a.Widest != b.Widest || !slices.Equal(a.Misses, b.Misses) || len(b.Warnings) > len(a.Warnings) {
			t.Fatalf("%s: candidate %d %q differs:\n full   %+v\n pruned %+v", name, k, a.Change, a.Figures, b.Figures)
		}
		if b.SegmentRows == today && !slices.Equal(a.Warnings, b.Warnings) {
			t.Fatalf("%s: candidate %d at today's capacity warns %q, full %q", name, k, b.Warnings, a.Warnings)
		}
		if (k == full.Recommended || k == full.Closest) && (a.WallMs != b.WallMs || !slices.Equal(a.Warnings, b.Warnings)) {
			t.Fatalf("%s: the pick's figures %+v, full %+v", name, b.Figures, a.Figures)
		}
	}
	sameAlternative(t, name, full, pruned, today)
}

// samePicked reports whether two sweeps, whose candidates may differ in number, pick the
// same layout (or the same closest one).
func samePicked(a, b *Sweep) bool { return pickOf(a) == pickOf(b) }

func pickOf(sw *Sweep) [3]any {
	c, fits, ok := sw.Pick()
	if !ok {
		return [3]any{}
	}
	return [3]any{c.Change, c.SegmentRows, fits}
}
