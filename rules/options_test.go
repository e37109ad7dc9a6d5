package rules

import (
	"math"
	"testing"

	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/layout"
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

// 40M rows in 8 even partitions of 5M with 8Mi-row segments: 8 segments; 5 partitions of
// 8M rows are 5 segments = ceil(40M / 8,388,608) = 5, the ideal (hand-computed), so
// count 5 is the largest waste-free count below 8.
func TestEvenOptionFindsWasteFreeCount(t *testing.T) {
	m := load(t, "format: 1\nmodel: m\nengine: {segment_rows: 8Mi}\ntables: [{name: t, rows: 40M, partitions: {scheme: even, count: 8}}]\n")
	tb := analysis.Analyze(m, Config{}.Levels()).Tables[0]
	o, ok := bestTrim(tb)
	if !ok || o.Spec.Partitions.Count != 5 || o.Layout.Segments != 5 {
		t.Fatalf("bestTrim = %+v (ok %v); want count 5 with 5 segments", o.Change, ok)
	}
	if e := tb.Effect(o); e != "8 -> 5 segments, -4.5 ms per scan" {
		t.Errorf("effect = %q", e)
	}
}

// The fixed budget of 1,000 ms at 1.5 ms per segment allows 666 segments; 1M rows at
// 1,000 rows per segment need 1,000; doubling the segment size gives 500 (750 ms), the
// smallest change that fits.
func TestBestFitPrefersSmallestChange(t *testing.T) {
	m := load(t, "format: 1\nmodel: m\nengine: {segment_rows: 1000}\nbudgets: {scan_overhead_ms: 1000}\ntables: [{name: t, rows: 1M, partitions: {scheme: none}}]\n")
	tb := analysis.Analyze(m, Config{}.Levels()).Tables[0]
	o, fits, ok := bestFit(tb.Options(), func(o analysis.Option) float64 { return o.Layout.FixedMs }, 1000, tb.Layout.FixedMs)
	if !ok || !fits || o.SegmentRows != 2000 || o.Layout.FixedMs != 750 {
		t.Fatalf("bestFit = %q fits %v ok %v, %v ms", o.Change, fits, ok, o.Layout.FixedMs)
	}
}

// Tables at the 10^15-row limit run through every rule without overflow: every number a
// finding carries is finite and segments stay positive.
func TestLimitSizedTables(t *testing.T) {
	m := load(t, `format: 1
model: m
engine: {segment_rows: 1}
budgets: {scan_overhead_ms: 1, scan_ms: 1}
tables:
  - name: t
    rows: 1000T
    growth_per_year: 0.5
    partitions: {scheme: time, tiers: [{grain: day, keep: 6000}, {grain: year, keep: 3}]}
    columns: [{name: c, type: string, avg_length: 100}]
  - name: l
    rows: 1000T
    partitions: {scheme: list, items: [{name: a, rows: 500T}, {name: b, rows: 500T}]}
`)
	fs := Run(m, Config{})
	if len(fs) == 0 {
		t.Fatal("want findings")
	}
	for _, f := range fs {
		for k, v := range f.Numbers {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				t.Errorf("%s: %s = %v", f.Rule, k, v)
			}
		}
	}
	for _, tb := range analysis.Analyze(m, Config{}.Levels()).Tables {
		if tb.Layout.Segments <= 0 || tb.Layout.Segments < tb.Layout.Ideal {
			t.Errorf("%s: segments %d, ideal %d", tb.Spec.Name, tb.Layout.Segments, tb.Layout.Ideal)
		}
	}
}

// An option whose figure equals today's up to floating-point rounding is no
// improvement: bestFit must not offer it as the closest change.
func TestBestFitIgnoresRoundingNoise(t *testing.T) {
	today := 62161.0
	opts := []analysis.Option{
		{Change: "noise", Scan: layout.Scan{WallMs: today * (1 - 1e-13)}},
	}
	wall := func(o analysis.Option) float64 { return o.Scan.WallMs }
	if _, _, ok := bestFit(opts, wall, 1000, today); ok {
		t.Error("a change that moves the scan time by rounding noise was offered")
	}
	opts = append(opts, analysis.Option{Change: "real", Scan: layout.Scan{WallMs: today - 1}})
	if o, fits, ok := bestFit(opts, wall, 1000, today); !ok || fits || o.Change != "real" {
		t.Errorf("got %q fits=%v ok=%v, want the real improvement as the closest", o.Change, fits, ok)
	}
}
