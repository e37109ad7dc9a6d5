package advisor

import (
	"fmt"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/schema"
)

// kinds is one block of tables, repeated to build a model of any size: growing and
// fixed, profiled and not, every partition scheme, one that wastes segments and one
// that grows past the scan-overhead budget. The memory limits are far above any peak,
// so every table is judged the same way whatever the model's size.
var kinds = []string{
	"{name: a%d, rows: 30M, growth_per_year: 0.3, partitions: {scheme: none}, columns: [{name: id, type: int64, order: sorted}, {name: v, type: float64, distinct: 5000}]}",
	"{name: b%d, rows: 45M, growth_per_year: 0.5, partitions: {scheme: even, count: 40}}",
	"{name: c%d, rows: 200M, growth_per_year: 0.2, partitions: {scheme: time, tiers: [{grain: day, keep: 60}, {grain: month, keep: 12}]}, columns: [{name: v, type: float64, distinct: 90000}]}",
	"{name: d%d, rows: 5M, partitions: {scheme: none}}",
	"{name: e%d, rows: 70M, partitions: {scheme: even, count: 7}, columns: [{name: s, type: string, avg_length: 12, distinct: 300}]}",
	"{name: f%d, growth_per_year: 0.1, partitions: {scheme: list, items: [{name: x, rows: 3M}, {name: y, rows: 9M}, {name: z, rows: 20M}]}}",
	"{name: g%d, rows: 350M, growth_per_year: 0.9, partitions: {scheme: none}}",
	"{name: h%d, rows: 90M, partitions: {scheme: time, tiers: [{grain: month, keep: 24}]}}",
}

func blocks(t *testing.T, k int) *schema.Manifest {
	var b strings.Builder
	b.WriteString("format: 1\nmodel: linear\nengine: {segment_rows: 1Mi, memory: 4PiB}\nbudgets: {scan_overhead_ms: 500, scan_ms: 4000, refresh_memory: 2PiB}\ntables:\n")
	for n := range k {
		for _, kind := range kinds {
			fmt.Fprintf(&b, "  - "+kind+"\n", n)
		}
	}
	m, err := schema.Load("linear.yaml", []byte(b.String()), schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// work is what check asks of the advisor for every table of a model of k blocks (the
// sweep behind hints, the two projections of budget-forecast, its forecast and the
// layout that holds), counted in tables expanded and laid out.
func work(t *testing.T, k int) int {
	m := blocks(t, k)
	md := NewModel(m)
	today := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	s := m.Engine.SegmentRows
	for i, spec := range m.Tables {
		sw := md.Sweep(i, Settings{})
		md.NewlyBroken(i, spec, s, ForecastMonths)
		if _, err := md.Forecast(i, spec, s, today, ForecastMonths); err != nil {
			t.Fatal(err)
		}
		md.Holds(sw, ForecastMonths)
	}
	return md.work
}

// The advisor's work is linear in tables: every block of tables added costs exactly
// as much as the one before. A figure of the whole model recomputed for each table
// (the refresh peak's sum, the tables another segment size pushes over their budgets,
// a month of the forecast) would make each block cost more than the last.
func TestWorkLinearInTables(t *testing.T) {
	w10, w20, w30 := work(t, 10), work(t, 20), work(t, 30)
	if w20-w10 != w30-w20 {
		t.Errorf("work for 80, 160, 240 tables: %d, %d, %d; the second 80 cost %d, the third %d (want equal)", w10, w20, w30, w20-w10, w30-w20)
	}
	if per := (w30 - w20) / (8 * 10); per > 400 {
		t.Errorf("%d layouts per table; expected a few hundred at most (candidates x capacities, 13 months)", per)
	}
	t.Logf("work: %d, %d, %d", w10, w20, w30)
}

// The refresh peak's sum is exact and rounded once (IEEE 754 round to nearest, ties to
// even): 2^53 + 1 + 1 summed in order rounds twice, to 2^53, but is 2^53 + 2 exactly.
func TestExactSumSwap(t *testing.T) {
	var s exactSum
	for _, x := range []float64{1 << 53, 1, 1, 7} {
		s.add(x)
	}
	if got := s.swap(7, 0); got != 1<<53+2 {
		t.Errorf("2^53 + 1 + 1 = %v, want %v", got, float64(1<<53+2))
	}
	if got := s.swap(1, 0.5); got != 1<<53+8 { // 2^53 + 8.5: the nearest float64 is 2^53 + 8
		t.Errorf("2^53 + 1 + 7 + 0.5 = %v, want %v", got, float64(1<<53+8))
	}
	if got := s.swap(1<<53, 0); got != 9 {
		t.Errorf("1 + 1 + 7 = %v, want 9", got)
	}
	s.add(math.Inf(1))
	if got := s.swap(1, 0); !math.IsInf(got, 1) {
		t.Errorf("a sum with +Inf is %v", got)
	}
}
