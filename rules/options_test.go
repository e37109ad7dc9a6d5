package rules

import (
	"math"
	"testing"

	"github.com/scangate/scangate/internal/units"

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
	tb := Analyze(m, Config{})[0]
	o, ok := tb.bestTrim()
	if !ok || o.Spec.Partitions.Count != 5 || o.Layout.Segments != 5 {
		t.Fatalf("bestTrim = %+v (ok %v); want count 5 with 5 segments", o.Change, ok)
	}
	if e := tb.effect(o); e != "8 -> 5 segments, -4.5 ms per scan" {
		t.Errorf("effect = %q", e)
	}
}

// The fixed budget of 1,000 ms at 1.5 ms per segment allows 666 segments; 1M rows at
// 1,000 rows per segment need 1,000; doubling the segment size gives 500 (750 ms), the
// smallest change that fits.
func TestBestFitPrefersSmallestChange(t *testing.T) {
	m := load(t, "format: 1\nmodel: m\nengine: {segment_rows: 1000}\nbudgets: {scan_overhead_ms: 1000}\ntables: [{name: t, rows: 1M, partitions: {scheme: none}}]\n")
	tb := Analyze(m, Config{})[0]
	o, fits, ok := bestFit(tb, func(o Option) float64 { return o.Layout.FixedMs }, 1000, tb.Layout.FixedMs)
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
	for _, tb := range Analyze(m, Config{}) {
		if tb.Layout.Segments <= 0 || tb.Layout.Segments < tb.Layout.Ideal {
			t.Errorf("%s: segments %d, ideal %d", tb.Spec.Name, tb.Layout.Segments, tb.Layout.Ideal)
		}
	}
}

// Hand-checked formatting of the figures messages carry.
func TestFormat(t *testing.T) {
	for _, c := range []struct{ got, want string }{
		{units.Count(8 << 20), "8Mi"}, {units.Count(7_200_000_000), "7.2G"}, {units.Count(400_000), "400k"},
		{units.Count(1_460_000), "1.46M"}, {units.Count(999), "999"}, {units.Num(1460), "1,460"}, {units.Num(-909), "-909"},
		{units.Ms(1.5), "1.5"}, {units.Ms(1319.4), "1,319"}, {units.Pct(0.876), "88%"}, {units.Pct(0.0007), "0.1%"},
		{units.Size(1 << 30), "1 GiB"}, {units.Size(1536), "1.5 KiB"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}

// An option whose figure equals today's up to floating-point rounding is no
// improvement: bestFit must not offer it as the closest change.
func TestBestFitIgnoresRoundingNoise(t *testing.T) {
	today := 62161.0
	tb := &Table{optDone: true, options: []Option{
		{Change: "noise", Scan: layout.Scan{WallMs: today * (1 - 1e-13)}},
	}}
	wall := func(o Option) float64 { return o.Scan.WallMs }
	if _, _, ok := bestFit(tb, wall, 1000, today); ok {
		t.Error("a change that moves the scan time by rounding noise was offered")
	}
	tb.options = append(tb.options, Option{Change: "real", Scan: layout.Scan{WallMs: today - 1}})
	if o, fits, ok := bestFit(tb, wall, 1000, today); !ok || fits || o.Change != "real" {
		t.Errorf("got %q fits=%v ok=%v, want the real improvement as the closest", o.Change, fits, ok)
	}
}
