package rules

import (
	"math"
	"testing"

	"github.com/scangate/scangate/internal/analysis"
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
// count 5 is the largest waste-free count below 8. Three excess segments are a note:
// today's layout fits every budget, so it is kept, and the note's second line names
// count 5 as an alternative.
func TestEvenAlternativeFindsWasteFreeCount(t *testing.T) {
	m := load(t, "format: 1\nmodel: m\nengine: {segment_rows: 8Mi}\ntables: [{name: t, rows: 40M, partitions: {scheme: even, count: 8}}]\n")
	fs := Run(m, Config{})
	if len(fs) != 1 || fs[0].Rule != TruncatedSegments.ID || len(fs[0].Hints) != 2 {
		t.Fatalf("findings %+v", fs)
	}
	if h := fs[0].Hints; h[0] != "the recommendation keeps today's layout: it fits every budget" ||
		h[1] != "alternative, not the recommendation, ending most of the excess: use count: 5: 8 -> 5 segments, -4.5 ms per scan" {
		t.Errorf("hints %q", h)
	}
}

// The fixed budget of 1,000 ms at 1.5 ms per segment allows 666 segments; 1M rows at
// 1,000 rows per segment need 1,000: no partition change fits, so the recommendation is
// the smallest capacity tried that does, 1Mi rows (one segment, 1.5 ms).
func TestRecommendationPrefersSmallestCapacity(t *testing.T) {
	m := load(t, "format: 1\nmodel: m\nengine: {segment_rows: 1000}\nbudgets: {scan_overhead_ms: 1000}\ntables: [{name: t, rows: 1M, partitions: {scheme: none}}]\n")
	tb := analysis.Analyze(m, Config{}.Levels()).Tables[0]
	r, ok := tb.Recommended()
	if !ok || !r.Fits || r.Candidate.SegmentRows != 1<<20 || r.Candidate.Layout.FixedMs != 1.5 {
		t.Fatalf("recommendation %q (ok %v)", r.Hint(), ok)
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
