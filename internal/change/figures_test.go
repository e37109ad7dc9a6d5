package change

import (
	"testing"

	"github.com/scangate/scangate/rules"
)

// orders holds 10,000 rows in n even partitions over segments of 1,000 rows (see
// manifest): each partition takes ceil(10,000/n / 1,000) segments, where one partition
// would take 10; the excess is what truncated-segments counts. Each case is worked out
// beside it.
func TestFindingStates(t *testing.T) {
	even := func(n string) string {
		return "  - name: orders\n    rows: 10k\n    partitions: {scheme: even, count: " + n + "}\n"
	}
	cmp := func(o Options, before, after string) *Diff {
		return CompareWith(side(t, "base", []string{"m.yaml"}, manifest("sales", "1.5", even(before))),
			side(t, "head", []string{"m.yaml"}, manifest("sales", "1.5", even(after))), o)
	}
	def := Options{FigureThreshold: DefaultFigureThreshold}
	// 20 partitions of 500 rows: 20 segments where 10 would do, 10 excess (a warning:
	// at least max(8, 20/10)). 40 partitions of 250 rows: 40 segments, 30 excess, still a
	// warning (below the error level). Same severity, 10 -> 30 excess segments: +200%,
	// beyond 10%, so worsened; the other way round improved.
	d := cmp(def, "20", "40")
	if len(d.Worsened) != 1 || len(d.Unchanged)+len(d.Improved)+len(d.Introduced)+len(d.Resolved) != 0 {
		t.Fatalf("20 -> 40: worsened %q unchanged %q improved %q", rulesOf(d.Worsened), rulesOf(d.Unchanged), rulesOf(d.Improved))
	}
	w := d.Worsened[0]
	if w.Figure != "excess_segments" || w.Before != 10 || w.After != 30 || w.Was != w.Finding.Severity {
		t.Errorf("worsened %s %v -> %v (was %s, now %s)", w.Figure, w.Before, w.After, w.Was, w.Finding.Severity)
	}
	d = cmp(def, "40", "20")
	if len(d.Improved) != 1 || len(d.Worsened)+len(d.Unchanged) != 0 || d.Improved[0].Before != 30 || d.Improved[0].After != 10 {
		t.Fatalf("40 -> 20: improved %q worsened %q unchanged %q", rulesOf(d.Improved), rulesOf(d.Worsened), rulesOf(d.Unchanged))
	}
	// The gate counts a finding as new only when its severity rose, not its figure.
	if b := (Gate{FailOnNew: rules.Warning}).Check(cmp(def, "20", "40")); len(b) != 0 {
		t.Errorf("a figure that moved at the same severity is not new: %+v", b)
	}
	// At a threshold of 200% the same move (exactly +200%) is unchanged; at 199% worsened.
	if d := cmp(Options{FigureThreshold: 2}, "20", "40"); len(d.Unchanged) != 1 {
		t.Errorf("at exactly the threshold: unchanged %q worsened %q", rulesOf(d.Unchanged), rulesOf(d.Worsened))
	}
	if d := cmp(Options{FigureThreshold: 1.99}, "20", "40"); len(d.Worsened) != 1 {
		t.Errorf("beyond the threshold: worsened %q", rulesOf(d.Worsened))
	}
	// 20 -> 21 partitions: 21 segments where 10 would do, 11 excess: +10%, exactly the
	// default threshold, unchanged.
	if d := cmp(def, "20", "21"); len(d.Unchanged) != 1 || d.Unchanged[0].Before != 10 || d.Unchanged[0].After != 11 {
		t.Errorf("20 -> 21: unchanged %q worsened %q", rulesOf(d.Unchanged), rulesOf(d.Worsened))
	}
	// A severity that fell is improved whatever the figure: 20 partitions (warning) -> 4
	// (12 segments, 2 excess: a note).
	if d := cmp(def, "20", "4"); len(d.Improved) != 1 || !d.Improved[0].Eased() {
		t.Errorf("20 -> 4: improved %q", rulesOf(d.Improved))
	}
}

// The judge on figures alone, including a base of 0 and findings without a figure.
func TestJudge(t *testing.T) {
	for _, c := range []struct {
		f    FindingChange
		want int
	}{
		{FindingChange{Was: rules.Warning, Finding: rules.Finding{Severity: rules.Error}}, 1},
		{FindingChange{Was: rules.Error, Finding: rules.Finding{Severity: rules.Warning}, Figure: "x", Before: 1, After: 100}, -1},
		{FindingChange{Was: rules.Warning, Finding: rules.Finding{Severity: rules.Warning}}, 0},
		{FindingChange{Was: rules.Warning, Finding: rules.Finding{Severity: rules.Warning}, Figure: "x", Before: 0, After: 1}, 1},
		{FindingChange{Was: rules.Warning, Finding: rules.Finding{Severity: rules.Warning}, Figure: "x", Before: 0, After: 0}, 0},
		// The case: 47 -> 197 excess segments, +319%.
		{FindingChange{Was: rules.Warning, Finding: rules.Finding{Severity: rules.Warning}, Figure: "excess_segments", Before: 47, After: 197}, 1},
		{FindingChange{Was: rules.Warning, Finding: rules.Finding{Severity: rules.Warning}, Figure: "fixed_ms", Before: 100, After: 109.9}, 0},
		{FindingChange{Was: rules.Warning, Finding: rules.Finding{Severity: rules.Warning}, Figure: "fixed_ms", Before: 100, After: 89}, -1},
	} {
		if got := judge(c.f, DefaultFigureThreshold); got != c.want {
			t.Errorf("%+v: %d, want %d", c.f, got, c.want)
		}
	}
}
