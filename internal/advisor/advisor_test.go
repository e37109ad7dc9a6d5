package advisor

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/schema"
)

func load(t *testing.T, src string) *schema.Manifest {
	t.Helper()
	m, err := schema.Load("case.yaml", []byte(src), schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// find returns the candidate of the sweep at capacity s with the given label.
func find(t *testing.T, sw *Sweep, s int64, label string) *Candidate {
	t.Helper()
	for k := range sw.Candidates {
		if c := &sw.Candidates[k]; c.SegmentRows == s && c.Label == label {
			return c
		}
	}
	t.Fatalf("no candidate %q at %d", label, s)
	return nil
}

// Merging tiers keeps the span covered: 14 days + 23 months is 14 + 23 x 30.4375 =
// 714.06 days, 23.46 months, rounded up to 24 month periods (hand-computed; a month is
// 365.25/12 days, the Julian year the format uses).
func TestMergeTiersCoversSpan(t *testing.T) {
	tiers := []schema.Tier{{Grain: schema.Day, Keep: 14}, {Grain: schema.Month, Keep: 23}}
	got, next := MergeTiers(tiers, 0, schema.Month, 0)
	if len(got) != 1 || got[0].Grain != schema.Month || got[0].Keep != 24 || next != 2 {
		t.Fatalf("MergeTiers = %+v, %d; want 24 months, 2", got, next)
	}
	// A 14-day window of 730 days, then (730 - 14) / 30.4375 = 23.52 -> 24 months.
	got, _ = MergeTiers([]schema.Tier{{Grain: schema.Day, Keep: 730}}, 0, schema.Month, 14)
	if len(got) != 2 || got[0].Keep != 14 || got[1].Keep != 24 {
		t.Fatalf("window merge = %+v; want 14 days + 24 months", got)
	}
}

// An even table, worked by hand (segment counts are ceil(rows/S) per partition):
//
//	10,000 rows in 40 partitions of 250 rows. At S = 1,000: today 40 segments (60 ms at
//	1.5 ms each); the largest waste-free count below 40 is 10 (1,000 rows each, 10
//	segments, 15 ms); 40/10 = 4 partitions of 2,500 rows are 3 segments each, 12 (18 ms).
//	At S = 2,000: today 40; count 5 (2,000 rows each, 5 segments, 7.5 ms); count 4,
//	2 segments each, 8 (12 ms).
//
// No budgets: everything fits; only today's layout keeps a truncated-segments warning
// (excess 30 >= max(8, 40/10)). The recommendation keeps today's segment size and the
// most partitions: count 10. Without column profiles the front's memory axis is the
// segment size: the fewest ms at 1,000 (count 10, 15 ms) and at 2,000 (count 5, 7.5 ms).
func TestSweepEvenByHand(t *testing.T) {
	m := load(t, "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10000, partitions: {scheme: even, count: 40}}]\n")
	sw := NewModel(m).Sweep(0, Settings{Capacities: []int64{2000}})
	want := []struct {
		s          int64
		label      string
		segs       int64
		ms         float64
		front, rec bool
		warnings   int
	}{
		{1000, "even x40", 40, 60, false, false, 1},
		{1000, "even x10", 10, 15, true, true, 0},
		{1000, "even x4", 12, 18, false, false, 0},
		{2000, "even x40", 40, 60, false, false, 1},
		{2000, "even x5", 5, 7.5, true, false, 0},
		{2000, "even x4", 8, 12, false, false, 0},
	}
	if len(sw.Candidates) != len(want) {
		t.Fatalf("%d candidates, want %d", len(sw.Candidates), len(want))
	}
	for k, w := range want {
		c := &sw.Candidates[k]
		if c.SegmentRows != w.s || c.Label != w.label || c.Layout.Segments != w.segs || c.Layout.FixedMs != w.ms ||
			c.Front != w.front || (k == sw.Recommended) != w.rec || len(c.Warnings) != w.warnings || !c.Fits {
			t.Errorf("candidate %d: %d %q %d segs %v ms front %v rec %v warnings %v fits %v; want %+v",
				k, c.SegmentRows, c.Label, c.Layout.Segments, c.Layout.FixedMs, c.Front, k == sw.Recommended, c.Warnings, c.Fits, w)
		}
	}
	rec := &sw.Candidates[sw.Recommended]
	if got := rec.Change + ": " + Effect(&sw.Candidates[sw.Today], rec); got != "use count: 10: 40 -> 10 segments, -45.0 ms per scan" {
		t.Errorf("recommendation %q", got)
	}
	// A fixed segment size leaves the 2,000-row layouts out of the front and the choice.
	sw = NewModel(m).Sweep(0, Settings{Capacities: []int64{2000}, FixedSegmentRows: true})
	for _, c := range sw.Candidates {
		if c.SegmentRows == 2000 && (!c.Locked || c.Front) {
			t.Errorf("%q at 2,000 rows: locked %v front %v", c.Label, c.Locked, c.Front)
		}
	}
}

// A profiled table where memory decides, worked by hand: 4,000 rows in one partition,
// one column measured at 32,000 bytes (8 per row), refresh_parallelism 2, widest row 8
// bytes. Refresh peak (layout.RefreshPeak, DESIGN section 4) = 2 x 32,000 + 2 x S x 8:
// 80,000 bytes at S = 1,000, 96,000 at S = 2,000. Fixed ms: 4 x 1.5 = 6 and 2 x 1.5 = 3.
// A scan task is 1.5 ms + segment bytes / 200,000 bytes per ms: 1.54 ms at 1,000 rows
// (8,000 bytes), 1.58 at 2,000; with fewer tasks than cores the wall time is the
// longest task (Graham 1966, list scheduling).
func TestSweepMemoryByHand(t *testing.T) {
	src := func(mem string) string {
		return "format: 1\nmodel: m\nengine: {segment_rows: 1000, refresh_parallelism: 2, memory: " + mem + "}\n" +
			"budgets: {scan_overhead_ms: 5}\n" +
			"tables: [{name: t, rows: 4000, partitions: {scheme: none}, columns: [{name: c, type: int64, encoded_bytes: 32000}]}]\n"
	}
	sw := NewModel(load(t, src("90000"))).Sweep(0, Settings{Capacities: []int64{2000}})
	small, large := find(t, sw, 1000, "none"), find(t, sw, 2000, "none")
	for _, c := range []struct {
		c                *Candidate
		peak, ms, wallMs float64
	}{{small, 80000, 6, 1.54}, {large, 96000, 3, 1.58}} {
		if c.c.Peak != c.peak || c.c.Layout.FixedMs != c.ms || math.Abs(c.c.WallMs-c.wallMs) > 1e-9 {
			t.Errorf("S=%d: peak %v ms %v wall %v; want %v %v %v", c.c.SegmentRows, c.c.Peak, c.c.Layout.FixedMs, c.c.WallMs, c.peak, c.ms, c.wallMs)
		}
	}
	// 90,000 bytes of memory: 1,000 rows break the 5 ms budget, 2,000 the memory. Nothing
	// fits, and 2,000 rows would break the memory budget today's layout keeps: no
	// layout is closer than today's. Both are on the front.
	if sw.Recommended != -1 || sw.Closest != -1 || !small.Front || !large.Front {
		t.Fatalf("recommended %d closest %d front %v %v", sw.Recommended, sw.Closest, small.Front, large.Front)
	}
	if len(large.Misses) != 1 || !strings.Contains(large.Misses[0], "engine memory") {
		t.Errorf("misses %v", large.Misses)
	}
	// 100,000 bytes: 2,000 rows fit.
	sw = NewModel(load(t, src("100000"))).Sweep(0, Settings{Capacities: []int64{2000}})
	c, fits, ok := sw.Pick()
	if !ok || !fits || c.SegmentRows != 2000 || c.Change != "raise engine.segment_rows from 1k to 2k" {
		t.Fatalf("pick %+v fits %v ok %v", c, fits, ok)
	}
}

// Pareto dominance as defined in multi-objective optimisation (Deb 2001, Multi-Objective
// Optimization using Evolutionary Algorithms, section 2.4, from memory): p dominates q
// when it is no worse on both axes and better on one. The front is the set of points no
// other point dominates. Checked by brute force on random inputs with many ties.
func TestFrontProperties(t *testing.T) {
	r := rand.New(rand.NewPCG(2001, 4))
	for trial := range 2000 {
		n := r.IntN(40)
		pts := make([]Point, n)
		spread := 1 + r.IntN(12) // small ranges make ties common
		for i := range pts {
			pts[i] = Point{float64(r.IntN(spread)), float64(r.IntN(spread))}
			if r.IntN(4) == 0 {
				pts[i].X += r.Float64()
			}
		}
		on := Front(pts)
		for i, p := range pts {
			dominated := false
			for j, q := range pts {
				if i != j && q.Dominates(p) {
					dominated = true
				}
			}
			if on[i] == dominated {
				t.Fatalf("trial %d: point %v on front %v but dominated %v (points %v)", trial, p, on[i], dominated, pts)
			}
		}
		if n > 0 {
			any := false
			for _, o := range on {
				any = any || o
			}
			if !any {
				t.Fatalf("trial %d: a non-empty set has an empty front", trial)
			}
		}
	}
}

// The forecast's first crossing against the closed form: a one-partition table of R0
// rows growing by g a year holds R0 (1+g)^(t/12) rows in month t; the scan-overhead
// budget B allows floor(B/f) segments of S rows, so it breaks once (1+g)^(t/12) >
// floor(B/f) S / R0, t* = 12 ln(floor(B/f) S / R0) / ln(1+g). The month found must lie
// within one month of t* (whole months and whole rows round it).
func TestForecastClosedForm(t *testing.T) {
	r := rand.New(rand.NewPCG(12, 1))
	start := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	for range 200 {
		s := int64(1000 + r.IntN(100000))
		allowed := int64(10 + r.IntN(5000))
		budget := float64(allowed)*1.5 + 0.75 // floor(B / 1.5) = allowed
		g := 0.02 + r.Float64()*1.5
		r0 := int64(float64(allowed*s) * (0.3 + 0.69*r.Float64()))
		m := &schema.Manifest{File: "f", Engine: schema.Engine{SegmentRows: s, Cores: 8, SegmentOverheadMs: 1.5, ScanMBPerS: 200},
			Budgets: schema.Budgets{ScanOverheadMs: &budget},
			Tables:  []schema.Table{{Name: "t", Rows: r0, GrowthPerYear: g, Partitions: schema.Partitions{Scheme: schema.SchemeNone}}}}
		fc, err := NewModel(m).Forecast(0, m.Tables[0], s, start, 600)
		if err != nil {
			t.Fatal(err)
		}
		want := 12 * math.Log(float64(allowed*s)/float64(r0)) / math.Log1p(g)
		c := fc.Crossings[0]
		if c.Budget != "scan_overhead_ms" || c.Month < 0 || math.Abs(float64(c.Month)-want) > 1 {
			t.Fatalf("R0 %d g %.3f S %d allowed %d: crossed in month %d, closed form %.2f", r0, g, s, allowed, c.Month, want)
		}
		if !c.Date.Equal(AddMonths(start, c.Month)) || c.Value <= budget || fc.Months[c.Month-1].Layout.FixedMs > budget {
			t.Fatalf("crossing %+v is not the first month over %v", c, budget)
		}
	}
}

func TestAddMonths(t *testing.T) {
	// Gregorian calendar: February has 28 days in 2026 and 29 in 2028 (divisible by 4,
	// not by 100); a month past January 31 is the month's last day.
	for _, c := range []struct {
		from string
		n    int
		want string
	}{
		{"2026-01-31", 1, "2026-02-28"}, {"2028-01-31", 1, "2028-02-29"}, {"2026-01-15", 24, "2028-01-15"},
		{"2026-11-30", 3, "2027-02-28"}, {"2026-05-31", 1, "2026-06-30"}, {"2026-03-01", 0, "2026-03-01"},
	} {
		from, _ := time.Parse("2006-01-02", c.from)
		if got := AddMonths(from, c.n).Format("2006-01-02"); got != c.want {
			t.Errorf("AddMonths(%s, %d) = %s, want %s", c.from, c.n, got, c.want)
		}
	}
}

func TestGrow(t *testing.T) {
	// 1.21^(6/12) = 1.1 (a square root): 1,000,000 rows become 1,100,000; the listed
	// items and the measured size alike; shrinking by 19% for 6 months is x0.9.
	spec := schema.Table{Rows: 1_000_000, GrowthPerYear: 0.21, Columns: []schema.Column{{EncodedBytes: 500}},
		Partitions: schema.Partitions{Scheme: schema.SchemeList, Items: []schema.Item{{Name: "a", Rows: 600_000}, {Name: "b", Rows: 400_000}}}}
	g := Grow(spec, 6)
	if g.Rows != 1_100_000 || g.Partitions.Items[0].Rows != 660_000 || g.Partitions.Items[1].Rows != 440_000 || g.Columns[0].EncodedBytes != 550 {
		t.Errorf("Grow = %d rows, items %+v, %d bytes", g.Rows, g.Partitions.Items, g.Columns[0].EncodedBytes)
	}
	if spec.Partitions.Items[0].Rows != 600_000 || spec.Columns[0].EncodedBytes != 500 {
		t.Error("Grow changed its input")
	}
	spec.GrowthPerYear = -0.19
	if g := Grow(spec, 6); g.Rows != 900_000 {
		t.Errorf("shrinking: %d rows, want 900,000", g.Rows)
	}
	spec.Rows, spec.GrowthPerYear = schema.MaxCount, 100
	if g := Grow(spec, 120); g.Rows != schema.MaxCount {
		t.Errorf("growth past the limit: %d", g.Rows)
	}
}

// The snippet is exact: loaded back into a manifest, it gives the candidate's policy
// and segment size for every candidate of every scheme.
func TestSnippetRoundTrip(t *testing.T) {
	m := load(t, `format: 1
model: m
engine: {segment_rows: 8Mi}
tables:
  - {name: by_day, rows: 4.8G, growth_per_year: 0.12, partitions: {scheme: time, tiers: [{grain: day, keep: 730}]}}
  - {name: split, rows: 400M, partitions: {scheme: even, count: 48}}
  - name: "2024 lines"
    partitions: {scheme: list, items: [{name: "2024", rows: 88123457}, {name: "no", rows: 1M}, {name: "a: b", rows: 11M}]}
  - {name: small, rows: 10k, partitions: {scheme: even, count: 3}}
`)
	md := NewModel(m)
	for i := range m.Tables {
		sw := md.Sweep(i, Settings{})
		for _, c := range sw.Candidates {
			text := Snippet(&c)
			// The snippet shows what changes; the rows stay as the manifest has them.
			if c.Spec.RowsDeclared {
				text = strings.Replace(text, "    partitions:\n", fmt.Sprintf("    rows: %d\n    partitions:\n", c.Spec.Rows), 1)
			}
			if !c.Engine {
				text = "engine: {segment_rows: 8Mi}\n" + text
			}
			back, err := schema.Load("snippet.yaml", []byte("format: 1\nmodel: m\n"+text), schema.DefaultLimits)
			if err != nil {
				t.Fatalf("%s %q: the snippet does not load: %v\n%s", c.Spec.Name, c.Change, err, text)
			}
			got := back.Tables[0]
			if back.Engine.SegmentRows != c.SegmentRows || got.Name != c.Spec.Name || Label(got.Partitions) != c.Label ||
				!got.Partitions.SamePolicy(c.Spec.Partitions) {
				t.Errorf("%s %q: snippet gives %d rows per segment, %q %+v", c.Spec.Name, c.Change, back.Engine.SegmentRows, got.Name, got.Partitions)
			}
		}
	}
}

// Same manifest, same sweep, byte for byte in every figure and mark.
func TestSweepDeterministic(t *testing.T) {
	src := "format: 1\nmodel: m\nengine: {segment_rows: 8Mi, memory: 64GiB}\nbudgets: {scan_overhead_ms: 500}\n" +
		"tables: [{name: t, rows: 4.8G, growth_per_year: 0.12, partitions: {scheme: time, tiers: [{grain: day, keep: 730}]}, " +
		"columns: [{name: c, type: int64, distinct: 380k}]}]\n"
	a := NewModel(load(t, src)).Sweep(0, Settings{})
	b := NewModel(load(t, src)).Sweep(0, Settings{})
	if len(a.Candidates) != len(b.Candidates) || a.Recommended != b.Recommended {
		t.Fatal("two sweeps differ")
	}
	for k := range a.Candidates {
		x, y := a.Candidates[k], b.Candidates[k]
		if x.Change != y.Change || x.Peak != y.Peak || x.WallMs != y.WallMs || x.Front != y.Front || x.Layout != y.Layout {
			t.Fatalf("candidate %d differs: %+v / %+v", k, x, y)
		}
	}
}

// The refresh peak is the model's, so its budget is the strictest any table answers
// to: the same 80,000 and 96,000 bytes as above against a table's own 85,000 bytes.
func TestRefreshBudgetIsTheModels(t *testing.T) {
	m := load(t, "format: 1\nmodel: m\nengine: {segment_rows: 1000, refresh_parallelism: 2}\nbudgets: {refresh_memory: 1MB}\n"+
		"tables:\n"+
		"  - {name: t, rows: 4000, partitions: {scheme: none}, columns: [{name: c, type: int64, encoded_bytes: 32000}]}\n"+
		"  - {name: u, rows: 10, partitions: {scheme: none}, budgets: {refresh_memory: 85000}}\n")
	md := NewModel(m)
	if b := md.RefreshBudget(); b == nil || *b != 85000 {
		t.Fatalf("refresh budget %v, want 85,000", b)
	}
	sw := md.Sweep(0, Settings{Capacities: []int64{2000}})
	small, large := find(t, sw, 1000, "none"), find(t, sw, 2000, "none")
	if !small.Fits || large.Fits || len(large.Misses) != 1 || !strings.Contains(large.Misses[0], "refresh peak 93.8 KiB > budget 83 KiB") {
		t.Errorf("1,000 rows fits %v; 2,000 rows fits %v, misses %v", small.Fits, large.Fits, large.Misses)
	}
}

// Random tables of every scheme, up to the format's limits, sweep and forecast without
// a panic, with finite figures, and the recommendation, when there is one, fits.
func TestSweepRandomTables(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	start := time.Date(2026, 1, 31, 0, 0, 0, 0, time.UTC)
	types := []string{"int64", "float64", "decimal", "string", "bool", "date", "datetime"}
	for trial := range 60 {
		rows := 1 + r.Int64N(schema.MaxCount)
		if r.IntN(2) == 0 {
			rows = 1 + r.Int64N(1e9)
		}
		spec := schema.Table{Name: "t", Rows: rows, RowsDeclared: true, GrowthPerYear: []float64{0, 0.15, 3, -0.5}[r.IntN(4)]}
		switch r.IntN(4) {
		case 0:
			spec.Partitions = schema.Partitions{Scheme: schema.SchemeNone}
		case 1:
			spec.Partitions = schema.Partitions{Scheme: schema.SchemeEven, Count: 1 + r.IntN(600)}
		case 2:
			var tiers []schema.Tier
			for g := r.IntN(3); g < 5; g += 1 + r.IntN(3) {
				tiers = append(tiers, schema.Tier{Grain: schema.Grains[g], Keep: 1 + r.IntN(400)})
			}
			spec.Partitions = schema.Partitions{Scheme: schema.SchemeTime, Tiers: tiers}
		default:
			n := 1 + r.IntN(30)
			spec.Rows, spec.RowsDeclared = 0, false
			for k := range n {
				it := schema.Item{Name: fmt.Sprint(k), Rows: r.Int64N(schema.MaxCount / 30)}
				spec.Rows += it.Rows
				spec.Partitions.Items = append(spec.Partitions.Items, it)
			}
			spec.Partitions.Scheme = schema.SchemeList
		}
		for range r.IntN(3) {
			spec.Columns = append(spec.Columns, schema.Column{Name: "c", Type: types[r.IntN(len(types))], AvgLength: 10, Distinct: r.Int64N(1e9)})
		}
		overhead, scan := 1+r.Float64()*1000, 1+r.Float64()*1e5
		m := &schema.Manifest{File: "f", Engine: schema.Engine{SegmentRows: 1 + r.Int64N(1<<26), Cores: 1 + r.IntN(64), SegmentOverheadMs: 1.5,
			ScanMBPerS: 200, Memory: r.Int64N(1 << 40), RefreshParallelism: r.IntN(16)},
			Budgets: schema.Budgets{ScanOverheadMs: &overhead, ScanMs: &scan}, Tables: []schema.Table{spec}}
		md := NewModel(m)
		sw := md.Sweep(0, Settings{FixedSegmentRows: r.IntN(3) == 0})
		if sw.Today < 0 {
			t.Fatalf("trial %d: today's layout missing", trial)
		}
		for _, c := range sw.Candidates {
			for _, v := range []float64{c.Layout.FixedMs, c.WallMs, c.Peak, c.Bytes} {
				if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
					t.Fatalf("trial %d: %q has a figure %v", trial, c.Change, v)
				}
			}
		}
		if c, fits, ok := sw.Pick(); ok && fits && (!c.Fits || c.Locked) {
			t.Fatalf("trial %d: recommended %q does not fit or is locked", trial, c.Change)
		}
		fc, err := md.Forecast(0, spec, m.Engine.SegmentRows, start, 6)
		if err != nil || len(fc.Months) != 7 {
			t.Fatalf("trial %d: forecast %v, %v", trial, fc, err)
		}
	}
}

// Closeness is summed over every budget a layout breaks, each as the share by which it
// passes (hand-computed: 150 ms on 100 ms is 0.5 over, 3 GiB on 2 GiB 0.5 over: 1.0); a
// layout may be the closest only if it breaks no budget today's keeps and no broken
// figure gets worse.
func TestClosestOverEveryBudget(t *testing.T) {
	ms := []Miss{{Key: "scan_overhead_ms", Value: 150, Limit: 100}, {Key: "engine.memory", Value: 3 << 30, Limit: 2 << 30}}
	if e := Excess(ms); math.Abs(e-1) > 1e-12 {
		t.Errorf("excess %v, want 1", e)
	}
	today := []Miss{{Key: "scan_overhead_ms", Value: 600, Limit: 100}, {Key: "engine.memory", Value: 3 << 30, Limit: 2 << 30}}
	for _, c := range []struct {
		ms   []Miss
		want bool
	}{
		{ms, true}, // less scan overhead, the same memory
		{[]Miss{{Key: "scan_overhead_ms", Value: 150, Limit: 100}}, true},
		{[]Miss{{Key: "engine.memory", Value: 3<<30 + 1, Limit: 2 << 30}}, false},        // the broken memory worse
		{[]Miss{{Key: "scan_ms", Value: 2, Limit: 1}}, false},                            // breaks a budget today keeps
		{[]Miss{{Key: "table other", Text: "table other over its scan budgets"}}, false}, // another table pushed over
	} {
		if got := noWorse(c.ms, today); got != c.want {
			t.Errorf("noWorse(%+v) = %v, want %v", c.ms, got, c.want)
		}
	}
}
