package rules

import (
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/internal/advisor"
)

// The advisor ranks layouts by the warnings the rules would raise; its default levels
// must be the rules' defaults, and a project's settings must reach it.
func TestAdvisorLevelsMatchRules(t *testing.T) {
	lv := Config{}.Levels()
	lv.Today = time.Time{} // the run's date, not a level
	if lv != advisor.DefaultLevels {
		t.Errorf("the advisor's default levels %+v differ from the rules' %+v", advisor.DefaultLevels, (Config{}).Levels())
	}
	cfg := Config{Rules: map[string]RuleConfig{scanOverheadID: {Params: map[string]float64{"warn_share": 0.9}}}}
	if cfg.Levels().OverheadWarnShare != 0.9 {
		t.Error("a project's warn_share does not reach the advisor")
	}
}

// The scan-overhead and truncated-segments hints lead with the sweep's recommendation:
// 10,000 rows in 40 even partitions at 1,000 rows per segment (see the advisor's
// TestSweepEvenByHand): count 10 at today's segment size, 40 -> 10 segments, 60 -> 15 ms.
func TestHintsQuoteTheRecommendation(t *testing.T) {
	m := load(t, "format: 1\nmodel: m\nengine: {segment_rows: 1000}\nbudgets: {scan_overhead_ms: 50}\n"+
		"tables: [{name: t, rows: 10000, partitions: {scheme: even, count: 40}}]\n")
	fs := Run(m, Config{Today: time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)})
	if len(fs) != 2 {
		t.Fatalf("want scan-overhead and truncated-segments, got %+v", fs)
	}
	for _, f := range fs {
		if len(f.Hints) == 0 || f.Hints[0] != "use count: 10: 40 -> 10 partitions, 40 -> 10 segments, -45.0 ms per scan" {
			t.Errorf("%s: hints %q", f.Rule, f.Hints)
		}
	}
	// The engine change the recommendation makes is followed by the partition change
	// alone, marked as an alternative: at 1,000 rows count 10 fits the 18 ms budget but
	// warns (15 ms, 83%); at 1Mi rows one partition is one segment, 1.5 ms.
	m = load(t, "format: 1\nmodel: m\nengine: {segment_rows: 1000}\nbudgets: {scan_overhead_ms: 18}\n"+
		"tables: [{name: t, rows: 10000, partitions: {scheme: even, count: 40}}]\n")
	for _, f := range Run(m, Config{}) {
		if f.Rule != TruncatedSegments.ID {
			continue
		}
		if len(f.Hints) != 2 || !strings.Contains(f.Hints[0], "raise engine.segment_rows from 1k to 1Mi") ||
			!strings.HasPrefix(f.Hints[1], "alternative if engine.segment_rows must stay 1k: use count: 10: 40 -> 10 segments") {
			t.Errorf("hints %q", f.Hints)
		}
	}
}
