package layout

import (
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/scangate/scangate/schema"
)

func timeTable(rows int64, g float64, tiers ...schema.Tier) schema.Table {
	return schema.Table{Name: "t", Rows: rows, GrowthPerYear: g, Partitions: schema.Partitions{Scheme: schema.SchemeTime, Tiers: tiers}}
}

func sum(parts []Partition) int64 {
	var s int64
	for _, p := range parts {
		s += p.Rows
	}
	return s
}

func rowsOf(parts []Partition) []int64 {
	out := make([]int64, len(parts))
	for i, p := range parts {
		out[i] = p.Rows
	}
	return out
}

func TestExpandNoneAndList(t *testing.T) {
	// Spec: none is one partition "all".
	p, err := Expand(schema.Table{Rows: 400_000, Partitions: schema.Partitions{Scheme: schema.SchemeNone}})
	if err != nil || len(p) != 1 || p[0] != (Partition{label: "all", Tier: -1, Rows: 400_000}) {
		t.Fatalf("none: %+v %v", p, err)
	}
	// Spec: list keeps the items in order with their own rows; t.Rows is ignored.
	p, err = Expand(schema.Table{Rows: 1, Partitions: schema.Partitions{Scheme: schema.SchemeList,
		Items: []schema.Item{{Name: "2025", Rows: 70e6}, {Name: "2026", Rows: 80e6}}}})
	if err != nil || len(p) != 2 || p[0] != (Partition{label: "2025", Tier: -1, Rows: 70e6}) || p[1].Name() != "2026" || p[1].Rows != 80e6 {
		t.Fatalf("list: %+v %v", p, err)
	}
}

func TestExpandEven(t *testing.T) {
	// Spec: largest remainder, ties to the lower index: 10 = 4 + 3 + 3.
	p, err := Expand(schema.Table{Rows: 10, Partitions: schema.Partitions{Scheme: schema.SchemeEven, Count: 3}})
	if err != nil || len(p) != 3 || p[0].Rows != 4 || p[1].Rows != 3 || p[2].Rows != 3 || p[2].Name() != "part 3" || p[0].Tier != -1 {
		t.Fatalf("even 10/3: %+v %v", p, err)
	}
	// Spec: sums exactly, up to 10^15 rows.
	for _, c := range []struct {
		rows  int64
		count int
	}{{1e15, 7}, {1e15 + 3, 1_000_000}, {5, 8}, {0, 4}, {40e6, 8}} {
		p, err := Expand(schema.Table{Rows: c.rows, Partitions: schema.Partitions{Scheme: schema.SchemeEven, Count: c.count}})
		if err != nil || len(p) != c.count || sum(p) != c.rows {
			t.Fatalf("even %d/%d: len %d sum %d err %v", c.rows, c.count, len(p), sum(p), err)
		}
		if p[0].Rows-p[len(p)-1].Rows > 1 {
			t.Fatalf("even %d/%d: uneven %d..%d", c.rows, c.count, p[0].Rows, p[len(p)-1].Rows)
		}
	}
}

func TestExpandTimeExact(t *testing.T) {
	// Spec: 365 day periods of 365,000 rows are 1,000 each; only the newest is open.
	p, err := Expand(timeTable(365_000, 0, schema.Tier{Grain: schema.Day, Keep: 365}))
	if err != nil || len(p) != 365 {
		t.Fatalf("%d partitions, %v", len(p), err)
	}
	for i, x := range p {
		if x.Rows != 1000 || x.Open != (i == 0) || x.Tier != 0 {
			t.Fatalf("partition %d: %+v", i, x)
		}
	}
	if p[0].Name() != "day 1" || p[364].Name() != "day 365" {
		t.Errorf("names %q %q", p[0].Name(), p[364].Name())
	}

	// Lengths in 1/48 day: 2 days (48 each) and a week (336), 432 in all.
	// Rows 10: day 10*48/432 = 1.11, week 10*336/432 = 7.78; floors 1+1+7 = 9; the one
	// row left goes to the largest remainder, the week: 1, 1, 8.
	p, _ = Expand(timeTable(10, 0, schema.Tier{Grain: schema.Day, Keep: 2}, schema.Tier{Grain: schema.Week, Keep: 1}))
	if got := rowsOf(p); got[0] != 1 || got[1] != 1 || got[2] != 8 {
		t.Errorf("10 rows over 2 days + 1 week: %v, want [1 1 8]", got)
	}
	if p[2].Name() != "week 1" || p[2].Tier != 1 || p[2].Open {
		t.Errorf("week partition: %+v", p[2])
	}
	// Rows 5: day 240/432 = 0.56 each, week 1680/432 = 3.89; floors 0+0+3; 2 rows left:
	// the week (remainder 384/432) then day 1 (240/432, tied with day 2, lower index wins).
	p, _ = Expand(timeTable(5, 0, schema.Tier{Grain: schema.Day, Keep: 2}, schema.Tier{Grain: schema.Week, Keep: 1}))
	if got := rowsOf(p); got[0] != 1 || got[1] != 0 || got[2] != 4 {
		t.Errorf("5 rows over 2 days + 1 week: %v, want [1 0 4]", got)
	}
	// A month is 365.25/12 days, exactly 1461/48: 12 months of 1461 rows... per 48ths:
	// 12 months + 1 year = 12*1461 + 17532 = 35064; rows 35064 → 1461 each month, 17532 the year.
	p, _ = Expand(timeTable(35064, 0, schema.Tier{Grain: schema.Month, Keep: 12}, schema.Tier{Grain: schema.Year, Keep: 1}))
	if got := rowsOf(p); got[0] != 1461 || got[11] != 1461 || got[12] != 17532 || p[11].Name() != "month 12" || p[12].Name() != "year 1" {
		t.Errorf("months and a year: %v", got)
	}
	// Spec: sums exactly up to 10^15 rows (128-bit quotas).
	for _, rows := range []int64{1e15, 1e15 - 1, 999_999_999_999_989, 7, 0} {
		p, err := Expand(timeTable(rows, 0, schema.Tier{Grain: schema.Day, Keep: 14}, schema.Tier{Grain: schema.Month, Keep: 23},
			schema.Tier{Grain: schema.Quarter, Keep: 5}, schema.Tier{Grain: schema.Year, Keep: 3}))
		if err != nil || sum(p) != rows {
			t.Errorf("rows %d: sum %d err %v", rows, sum(p), err)
		}
	}
}

func TestExpandTimeGrowth(t *testing.T) {
	for _, c := range []struct {
		rows  int64
		g     float64
		tiers []schema.Tier
	}{
		{7_200_000_000, 0.15, []schema.Tier{{Grain: schema.Day, Keep: 14}, {Grain: schema.Month, Keep: 23}}},
		{1e15, 0.15, []schema.Tier{{Grain: schema.Day, Keep: 400_000}, {Grain: schema.Week, Keep: 600_000}}},
		{1e15, 100, []schema.Tier{{Grain: schema.Day, Keep: 1000}, {Grain: schema.Year, Keep: 100}}},
		{1e15, -0.99, []schema.Tier{{Grain: schema.Year, Keep: 100_000}}}, // (1+g)^(-age) = 100^age: overflows without log weights
		{3, 0.5, []schema.Tier{{Grain: schema.Day, Keep: 1000}}},
		{0, 0.5, []schema.Tier{{Grain: schema.Day, Keep: 10}}},
	} {
		p, err := Expand(timeTable(c.rows, c.g, c.tiers...))
		if err != nil || sum(p) != c.rows {
			t.Fatalf("rows %d g %v: sum %d err %v", c.rows, c.g, sum(p), err)
		}
		for i, x := range p {
			if x.Rows < 0 || x.Open != (i == 0) {
				t.Fatalf("rows %d g %v: partition %d %+v", c.rows, c.g, i, x)
			}
		}
	}
	// With growth, older periods of one grain hold fewer rows (within one row of rounding),
	// and the year-old day holds about 1/1.15 of the newest.
	p, _ := Expand(timeTable(365e6, 0.15, schema.Tier{Grain: schema.Day, Keep: 731}))
	for i := 1; i < len(p); i++ {
		if p[i].Rows > p[i-1].Rows+1 {
			t.Fatalf("day %d holds %d, more than day %d (%d)", i+1, p[i].Rows, i, p[i-1].Rows)
		}
	}
	if r := float64(p[365].Rows) / float64(p[0].Rows); math.Abs(r-1/1.15) > 1e-4 {
		t.Errorf("a year older: ratio %v, want %v", r, 1/1.15)
	}
}

func TestExpandMaxPartitions(t *testing.T) {
	huge := []schema.Table{
		timeTable(1e9, 0, schema.Tier{Grain: schema.Day, Keep: math.MaxInt}),
		timeTable(1e9, 0, schema.Tier{Grain: schema.Day, Keep: math.MaxInt}, schema.Tier{Grain: schema.Month, Keep: math.MaxInt}), // the sum overflows an int
		timeTable(1e9, 0.1, schema.Tier{Grain: schema.Day, Keep: 600_000}, schema.Tier{Grain: schema.Week, Keep: 400_001}),
		{Name: "t", Rows: 1e9, Partitions: schema.Partitions{Scheme: schema.SchemeEven, Count: math.MaxInt}},
		{Name: "t", Rows: 1e9, Partitions: schema.Partitions{Scheme: schema.SchemeEven, Count: MaxPartitions + 1}},
	}
	for i, tb := range huge {
		_, err := Expand(tb)
		if err == nil || !strings.Contains(err.Error(), "limit of 1000000") {
			t.Errorf("case %d: error %v, want one naming the limit", i, err)
		}
		// Spec: checked before allocating — only the error itself allocates.
		if a := testing.AllocsPerRun(5, func() { Expand(tb) }); a > 10 {
			t.Errorf("case %d: %v allocations for a rejected table", i, a)
		}
	}
	if _, err := Expand(huge[2]); err == nil || !strings.Contains(err.Error(), "1000001 partitions") {
		t.Errorf("error does not name the count: %v", err)
	}
	// Exactly the limit is fine.
	if p, err := Expand(timeTable(1e9, 0, schema.Tier{Grain: schema.Day, Keep: MaxPartitions})); err != nil || len(p) != MaxPartitions {
		t.Errorf("at the limit: %d %v", len(p), err)
	}
}

func TestExpandRejects(t *testing.T) {
	for i, tb := range []schema.Table{
		{Rows: -1, Partitions: schema.Partitions{Scheme: schema.SchemeNone}},
		{Rows: 1, Partitions: schema.Partitions{Scheme: "hourly"}},
		{Rows: 1, Partitions: schema.Partitions{Scheme: schema.SchemeEven}},
		{Rows: 1, Partitions: schema.Partitions{Scheme: schema.SchemeList}},
		timeTable(1, 0),
		timeTable(1, 0, schema.Tier{Grain: "fortnight", Keep: 3}),
		timeTable(1, 0, schema.Tier{Grain: schema.Day, Keep: 0}),
		timeTable(1, -1, schema.Tier{Grain: schema.Day, Keep: 3}),
		timeTable(1, math.NaN(), schema.Tier{Grain: schema.Day, Keep: 3}),
	} {
		if _, err := Expand(tb); err == nil {
			t.Errorf("case %d: no error", i)
		}
	}
}

func BenchmarkExpandTime(b *testing.B) {
	for _, g := range []float64{0, 0.15} {
		tb := timeTable(1e15, g, schema.Tier{Grain: schema.Day, Keep: MaxPartitions})
		b.Run("growth="+strconv.FormatFloat(g, 'g', -1, 64), func(b *testing.B) {
			for b.Loop() {
				if _, err := Expand(tb); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func TestFixup(t *testing.T) {
	// Float quotas can miss the total either way; fixup must land on it exactly,
	// never below zero, adding to the largest remainders and taking from the smallest.
	for _, c := range []struct {
		floors []int64
		rems   []float64
		rows   int64
		want   []int64
	}{
		{[]int64{1, 1, 1}, []float64{0.2, 0.9, 0.5}, 5, []int64{1, 2, 2}},           // 2 short: the two largest remainders
		{[]int64{1, 1, 1}, []float64{0.5, 0.5, 0.5}, 4, []int64{2, 1, 1}},           // tie: the lower index
		{[]int64{0, 0}, []float64{0.1, 0.2}, 5, []int64{2, 3}},                      // short by more than n: whole rounds first
		{[]int64{3, 3, 3}, []float64{0.2, 0.9, 0.5}, 8, []int64{2, 3, 3}},           // 1 over: the smallest remainder
		{[]int64{3, 3, 3}, []float64{0.5, 0.5, 0.5}, 8, []int64{3, 3, 2}},           // tie: the higher index gives (mirror)
		{[]int64{0, 5, 0}, []float64{0, 0, 0}, 2, []int64{0, 2, 0}},                 // never below zero
		{[]int64{math.MaxInt64, math.MaxInt64}, []float64{0, 0}, 10, []int64{5, 5}}, // the sum overflows an int64
	} {
		f := slices.Clone(c.floors)
		fixup(f, c.rems, c.rows)
		if !slices.Equal(f, c.want) {
			t.Errorf("fixup(%v, %v, %d) = %v, want %v", c.floors, c.rems, c.rows, f, c.want)
		}
	}
}

// Names are built on demand from a prefix and a place: they must be right on both sides
// of every power of ten.
func TestPartitionNames(t *testing.T) {
	// Every numbered partition is named prefix + its 1-based place, across digit counts.
	for _, n := range []int{1, 9, 10, 11, 99, 100, 101, 1000, 100_001} {
		p, err := Expand(schema.Table{Name: "t", Rows: int64(n), Partitions: schema.Partitions{Scheme: schema.SchemeEven, Count: n}})
		if err != nil || len(p) != n {
			t.Fatalf("even %d: %d partitions, %v", n, len(p), err)
		}
		for i := range p {
			if want := "part " + strconv.Itoa(i+1); p[i].Name() != want {
				t.Fatalf("even %d: partition %d is %q, want %q", n, i, p[i].Name(), want)
			}
		}
	}
}

// A period's age is taken at its midpoint (README, "How the numbers are computed"): with
// a day and then a year at growth 99 (x100 a year), the day is 0.5 days old and the year
// 1 + 365.25/2 days, so the year holds 365.25 x 100^-(183.125 - 0.5)/365.25 times the
// day's rows. Ages taken at a period's newer end (0 and 1 day) would give about 10 times
// more; at its older end, about 10 times less.
func TestExpandTimeMidpointAge(t *testing.T) {
	p, err := Expand(timeTable(1e15, 99, schema.Tier{Grain: schema.Day, Keep: 1}, schema.Tier{Grain: schema.Year, Keep: 1}))
	if err != nil {
		t.Fatal(err)
	}
	want := 365.25 * math.Pow(100, -(1+365.25/2-0.5)/365.25)
	if got := float64(p[1].Rows) / float64(p[0].Rows); math.Abs(got/want-1) > 1e-9 {
		t.Errorf("year / day rows = %.12g, want %.12g (ages at the midpoints)", got, want)
	}
	// Weighted by period length alone, no growth: the year is 365.25 days.
	p, err = Expand(timeTable(1e15, 0, schema.Tier{Grain: schema.Day, Keep: 1}, schema.Tier{Grain: schema.Year, Keep: 1}))
	if got := float64(p[1].Rows) / float64(p[0].Rows); err != nil || math.Abs(got/365.25-1) > 1e-9 {
		t.Errorf("no growth: year / day rows = %.12g, want 365.25 (%v)", got, err)
	}
}

// nth is the k-th value of the sorted list (slices.Sort's order, NaN first), on random,
// sorted, reversed and tie-heavy lists, at every rank.
func TestNthIsTheSortedRank(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	for trial := range 400 {
		n := 1 + r.IntN(90)
		xs := make([]float64, n)
		for i := range xs {
			switch trial % 4 {
			case 0:
				xs[i] = r.Float64()
			case 1:
				xs[i] = float64(i) / float64(n)
			case 2:
				xs[i] = float64(n-i) / float64(n)
			default:
				xs[i] = float64(r.IntN(3)) / 4 // many ties
			}
		}
		if trial%25 == 0 {
			xs[r.IntN(n)] = math.NaN()
		}
		sorted := slices.Clone(xs)
		slices.Sort(sorted)
		for k := range n {
			got, want := nth(slices.Clone(xs), k), sorted[k]
			if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
				t.Fatalf("trial %d: nth(%v, %d) = %v, want %v", trial, xs, k, got, want)
			}
		}
	}
}
