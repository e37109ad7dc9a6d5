package report

import (
	"fmt"
	"strings"
	"testing"
	"unicode/utf8"
)

// unwrap joins the plan's word-wrapped lines, so a sentence is found wherever it breaks.
func unwrap(s string) string { return strings.Join(strings.Fields(s), " ") }

// The plan names every planned table, in order, each with its sweep and the layout
// the sweep recommends and its snippet.
func TestPlanTextNamesTablesAndRecommendations(t *testing.T) {
	p := planDoc(t, "m.yaml", fixtureManifest)
	out := render(t, "text", p, false)
	sections := strings.Split(out, "\n\n== ")
	if len(sections) != len(p.Files[0].Plans) {
		t.Fatalf("%d sections for %d plans:\n%s", len(sections), len(p.Files[0].Plans), out)
	}
	want := map[string]string{
		"events":   "Recommended: raise engine.segment_rows from 1k to 1Mi.",
		"readings": "Recommended: use count: 10.",
		"quiet":    "Recommended: keep today's layout: it fits every budget.",
		"waived":   "Recommended: raise engine.segment_rows from 1k to 1Mi.",
	}
	for i, plan := range p.Files[0].Plans {
		sec := strings.TrimPrefix(sections[i], "== ")
		spec := plan.Spec
		if head := fmt.Sprintf("%s (m.yaml:%d:%d)\n", spec.Name, spec.Pos.Line, spec.Pos.Col); !strings.HasPrefix(sec, head) {
			t.Errorf("section %d starts %q, want %q", i, strings.SplitN(sec, "\n", 2)[0], head)
		}
		text := unwrap(sec)
		if !strings.Contains(text, want[spec.Name]) {
			t.Errorf("%s: no %q in\n%s", spec.Name, want[spec.Name], sec)
		}
		if n := fmt.Sprintf("What-if sweep: %d layouts", len(plan.Sweep.Candidates)); !strings.Contains(sec, n) {
			t.Errorf("%s: no %q", spec.Name, n)
		}
		// The recommendation is the sweep's pick; a change comes with its snippet.
		c, _, ok := plan.Sweep.Pick()
		if !ok {
			t.Fatalf("%s: the sweep picks nothing", spec.Name)
		}
		if !c.Today() && (!strings.Contains(text, c.Change) || !strings.Contains(sec, "     - name: "+spec.Name+"\n")) {
			t.Errorf("%s: the pick %q or its snippet is missing:\n%s", spec.Name, c.Change, sec)
		}
	}
	// The engine change comes with the engine snippet, the partition change without it.
	if !strings.Contains(sections[0], "   engine:\n     segment_rows: 1Mi\n") || strings.Contains(sections[1], "engine:") {
		t.Errorf("snippets:\n%s\n%s", sections[0], sections[1])
	}
}

// The plan is written for an 80-column terminal (a literal here: the constant is what
// is under test).
func TestPlanTextWidth(t *testing.T) {
	out := render(t, "text", planDoc(t, "m.yaml", fixtureManifest), false)
	for i, line := range strings.Split(out, "\n") {
		if n := utf8.RuneCountInString(line); n > 80 {
			t.Errorf("line %d has %d columns: %q", i+1, n, line)
		}
	}
}

// Only the planned tables are named (plan --table).
func TestPlanTextSubset(t *testing.T) {
	p := planDoc(t, "m.yaml", fixtureManifest)
	p.Files[0].Plans = p.Files[0].Plans[1:2]
	out := render(t, "text", p, false)
	if !strings.HasPrefix(out, "== readings (m.yaml:9:5)\n") || strings.Count(out, "\n== ") != 0 {
		t.Errorf("want only readings:\n%s", out)
	}
	for _, other := range []string{"events", "quiet", "waived"} {
		if strings.Contains(out, other) {
			t.Errorf("%s is named in the plan of readings", other)
		}
	}
}

// A growing table gets a forecast from the plan's date over its horizon.
func TestPlanTextForecast(t *testing.T) {
	src := strings.Replace(fixtureManifest, "rows: 5000\n", "rows: 5000\n    growth_per_year: 1.0\n", 1)
	p := planDoc(t, "m.yaml", src)
	p.Files[0].Plans = p.Files[0].Plans[2:3] // quiet, now doubling every year
	text := unwrap(render(t, "text", p, false))
	if !strings.Contains(text, "Forecast from 2026-01-01 for 24 months at 100% growth a year") || !strings.Contains(text, "through 2028-01") {
		t.Errorf("forecast:\n%s", text)
	}
}
