package layout

import (
	"math"
	"testing"

	"github.com/scangate/scangate/schema"
)

func daily(rows int64, days int, tiers ...schema.Tier) schema.Table {
	if len(tiers) == 0 {
		tiers = []schema.Tier{{Grain: schema.Day, Keep: days}}
	}
	return schema.Table{Name: "t", Rows: rows, Partitions: schema.Partitions{Scheme: schema.SchemeTime, Tiers: tiers},
		Routine: schema.Routine{RecentDays: 3}}
}

func TestRebuiltTimeWindow(t *testing.T) {
	// 3G rows over 730 days: 3,000,000,000 = 730 x 4,109,589 + 30, so by largest
	// remainder the 30 newest days hold 4,109,590 rows (DESIGN section 3, worked by hand).
	today := daily(3_000_000_000, 730)
	parts, err := Expand(today)
	if err != nil {
		t.Fatal(err)
	}
	w := WindowOf(today, parts)
	if w.Whole || w.Span48 != 3*48 {
		t.Fatalf("window = %+v, want 3 days", w)
	}
	got := w.Rebuilt(today, parts, 8, 1e6)
	// 3 partitions of 4,109,590 rows on 8 workers: one each, 4.10959 s.
	if got.Partitions != 3 || got.Rows != 12_328_770 || got.Days != 3 || math.Abs(got.Seconds-4.10959) > 1e-9 {
		t.Errorf("today: %+v, want 3 partitions, 12,328,770 rows, 3 days, 4.10959 s", got)
	}
	cases := []struct {
		name  string
		tiers []schema.Tier
		parts int
		rows  int64
		days  float64
	}{
		// Two years of 365.25 days hold 1.5G rows each: the routine refresh rebuilds the
		// newest year, 1,500 s at a million rows a second.
		{"2 year", []schema.Tier{{Grain: schema.Year, Keep: 2}}, 1, 1_500_000_000, 365.25},
		// Eight quarters of 365.25/4 = 91.3125 days, 375M rows each.
		{"8 quarter", []schema.Tier{{Grain: schema.Quarter, Keep: 8}}, 1, 375_000_000, 91.3125},
		// A 14-day window in front keeps the 3 days in day partitions: as today.
		{"14 day + 24 month", []schema.Tier{{Grain: schema.Day, Keep: 14}, {Grain: schema.Month, Keep: 24}}, 3, -1, 3},
		// Two days then weeks: 2 day partitions + the newest week (7 days) cover the 3 days: 3 partitions, 9 days.
		{"2 day + 104 week", []schema.Tier{{Grain: schema.Day, Keep: 2}, {Grain: schema.Week, Keep: 104}}, 3, -1, 9},
	}
	for _, c := range cases {
		spec := daily(3_000_000_000, 0, c.tiers...)
		ps, err := Expand(spec)
		if err != nil {
			t.Fatal(err)
		}
		b := w.Rebuilt(spec, ps, 8, 1e6)
		if b.Partitions != c.parts || (c.rows >= 0 && b.Rows != c.rows) || math.Abs(b.Days-c.days) > 1e-9 {
			t.Errorf("%s: %+v, want %d partitions, %d rows, %v days", c.name, b, c.parts, c.rows, c.days)
		}
		if c.rows >= 0 && math.Abs(b.Seconds-float64(c.rows)/1e6) > 1e-6 {
			t.Errorf("%s: %v s, want %v", c.name, b.Seconds, float64(c.rows)/1e6)
		}
	}
	// A single partition rebuilds everything.
	one := today
	one.Partitions = schema.Partitions{Scheme: schema.SchemeNone}
	ps, _ := Expand(one)
	if b := w.Rebuilt(one, ps, 8, 1e6); b.Partitions != 1 || b.Rows != 3_000_000_000 {
		t.Errorf("none: %+v", b)
	}
	// A window longer than the table reaches every partition.
	long := today
	long.Routine.RecentDays = 1000
	if b := WindowOf(long, parts).Rebuilt(long, parts, 8, 1e6); b.Partitions != 730 || b.Rows != 3_000_000_000 {
		t.Errorf("1,000 days of 730: %+v", b)
	}
}

func TestRebuiltRowsWindow(t *testing.T) {
	list := func(rows ...int64) schema.Table {
		s := schema.Table{Partitions: schema.Partitions{Scheme: schema.SchemeList}, Routine: schema.Routine{RecentPartitions: 2}}
		for _, r := range rows {
			s.Partitions.Items = append(s.Partitions.Items, schema.Item{Name: "x", Rows: r})
			s.Rows += r
		}
		return s
	}
	today := list(10, 20, 30, 40)
	parts, _ := Expand(today)
	w := WindowOf(today, parts)
	if w.Rows != 70 {
		t.Fatalf("window = %+v, want the last 2 partitions' 70 rows", w)
	}
	for _, c := range []struct {
		spec        schema.Table
		parts       int
		rows, first int64
	}{
		{today, 2, 70, 2},
		{list(30, 70), 1, 70, 1},     // the last two merged: one partition of the same rows
		{list(10, 50, 40), 2, 90, 1}, // 30 merged with 20: 40 + 50 = 90 rows
		{list(100), 1, 100, 0},       // one partition: everything
	} {
		ps, _ := Expand(c.spec)
		b := w.Rebuilt(c.spec, ps, 4, 10)
		if b.Partitions != c.parts || b.Rows != c.rows || int64(b.First) != c.first || b.Days != 0 {
			t.Errorf("%v: %+v, want %d partitions from %d, %d rows", c.spec.Partitions.Items, b, c.parts, c.first, c.rows)
		}
	}
	// recent_partitions of every partition or more, or none declared: the whole table.
	for _, n := range []int{0, 4, 9} {
		s := today
		s.Routine.RecentPartitions = n
		if w := WindowOf(s, parts); !w.Whole {
			t.Errorf("recent_partitions %d: %+v, want the whole table", n, w)
		}
	}
}

func TestRefreshSeconds(t *testing.T) {
	p := func(rows ...int64) []Partition {
		var out []Partition
		for _, r := range rows {
			out = append(out, Partition{Rows: r})
		}
		return out
	}
	// List scheduling (Graham 1966) of 3, 3, 2, 2, 2 s on 2 workers, each task to the
	// worker that frees first: 3 | 3, then 3+2 | 3+2, then 5+2: makespan 7.
	if got := RefreshSeconds(p(3, 3, 2, 2, 2), 2, 1); got != 7 {
		t.Errorf("makespan = %v, want 7", got)
	}
	// 1,000 equal partitions of 1M rows at 1M rows/s on 8 workers: ceil(1000/8) = 125 s.
	var many []Partition
	for range 1000 {
		many = append(many, Partition{Rows: 1_000_000})
	}
	if got := RefreshSeconds(many, 8, 1e6); got != 125 {
		t.Errorf("1,000 x 1 s on 8 = %v, want 125", got)
	}
	if RefreshSeconds(many, 8, 0) != 0 || RefreshSeconds(nil, 8, 1) != 0 || RefreshSeconds(many, 8, math.NaN()) != 0 {
		t.Error("no rate or no partitions: 0")
	}
}

func TestRebuildPeak(t *testing.T) {
	// A routine refresh keeps the model online and builds the new copy of what it
	// rebuilds beside it: 10 GiB + 1 GiB + 2 x 8,388,608 rows x 30 bytes
	// = 10,737,418,240 + 1,073,741,824 + 503,316,480 = 12,314,476,544 bytes (by hand).
	if got := RebuildPeak(10<<30, 1<<30, 2, 8<<20, 30); got != 12_314_476_544 {
		t.Errorf("RebuildPeak = %.0f, want 12,314,476,544", got)
	}
	// The full refresh is the case that rebuilds the whole model.
	if RebuildPeak(10<<30, 10<<30, 4, 8<<20, 30) != RefreshPeak(10<<30, 4, 8<<20, 30) {
		t.Error("a full rebuild should equal RefreshPeak")
	}
}

// RefreshSeconds schedules as Schedule does: the same partitions as task groups give the
// same makespan, with runs long enough to take the bulk path.
func TestRefreshSecondsAgreesWithSchedule(t *testing.T) {
	var parts []Partition
	var groups []TaskGroup
	for i, n := range []int{3, 200, 1, 50, 7} {
		rows := int64(1000 * (i + 1))
		for range n {
			parts = append(parts, Partition{Rows: rows})
		}
		groups = append(groups, TaskGroup{Count: int64(n), Ms: float64(rows) / 250})
	}
	for _, workers := range []int{1, 3, 8, 100} {
		want, _ := Schedule(groups, workers)
		if got := RefreshSeconds(parts, workers, 250); math.Abs(got-want) > 1e-9*want {
			t.Errorf("%d workers: %v s, Schedule says %v", workers, got, want)
		}
	}
}
