package report

import (
	"regexp"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/scangate/scangate/rules"
)

// chartParts reads an xychart's series back: its x labels, y-axis top, bars and line.
type chartParts struct {
	labels    []string
	yFrom     string
	yTop      float64
	bars      []float64
	line      []float64
	hasLine   bool
	hasYRange bool
}

var (
	quoted = regexp.MustCompile(`"([^"]*)"`)
	yRange = regexp.MustCompile(`^y-axis "[^"]*" (\S+) --> (\S+)$`)
)

func parseChart(t *testing.T, c string) chartParts {
	t.Helper()
	var p chartParts
	numbers := func(s string) []float64 {
		var out []float64
		for _, f := range strings.Split(strings.Trim(s, "[]"), ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
			if err != nil {
				t.Fatalf("series %q: %v", s, err)
			}
			out = append(out, v)
		}
		return out
	}
	for _, l := range strings.Split(c, "\n") {
		l = strings.TrimSpace(l)
		switch {
		case strings.HasPrefix(l, "x-axis "):
			for _, m := range quoted.FindAllStringSubmatch(l, -1) {
				p.labels = append(p.labels, m[1])
			}
		case strings.HasPrefix(l, "y-axis "):
			if m := yRange.FindStringSubmatch(l); m != nil {
				p.hasYRange, p.yFrom = true, m[1]
				p.yTop, _ = strconv.ParseFloat(m[2], 64)
			}
		case strings.HasPrefix(l, "bar "):
			p.bars = numbers(strings.TrimPrefix(l, "bar "))
		case strings.HasPrefix(l, "line "):
			p.hasLine, p.line = true, numbers(strings.TrimPrefix(l, "line "))
		}
	}
	return p
}

// Each chart reads without a guess: its y axis starts at 0 and reaches every bar and
// the budget, each x label is short and carries its bar's value, the budget is a line
// across every bar, and the table under it carries the same figures with the layouts
// in full.
func TestMarkdownChartReadable(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	p := parseMarkdown(t, render(t, "markdown", r, false))
	if len(p.charts) != 2 || len(p.figures) != 2 {
		t.Fatalf("%d charts, %d tables under them", len(p.charts), len(p.figures))
	}
	for i, c := range p.charts {
		ch := parseChart(t, c)
		if !ch.hasYRange || ch.yFrom != "0" {
			t.Errorf("chart %d: y axis does not start at 0:\n%s", i, c)
		}
		if len(ch.labels) != len(ch.bars) || len(ch.bars) < 2 {
			t.Fatalf("chart %d: %d labels for %d bars", i, len(ch.labels), len(ch.bars))
		}
		if !ch.hasLine || len(ch.line) != len(ch.bars) {
			t.Errorf("chart %d: budget line %v for %d bars", i, ch.line, len(ch.bars))
		}
		for _, v := range ch.line {
			if v != 1000 { // the fixture's scan_overhead_ms
				t.Errorf("chart %d: budget line %v, want 1000 across", i, ch.line)
			}
		}
		rows := p.figures[i]
		if want := []string{"bar", "layout", "fixed ms per scan", "of the budget"}; strings.Join(rows[0], "|") != strings.Join(want, "|") {
			t.Errorf("chart %d: table header %q, want %q", i, rows[0], want)
		}
		if len(rows)-1 != len(ch.bars) {
			t.Fatalf("chart %d: %d table rows for %d bars", i, len(rows)-1, len(ch.bars))
		}
		for k, label := range ch.labels {
			if ch.bars[k] > ch.yTop || 1000 > ch.yTop {
				t.Errorf("chart %d: y axis top %v under bar %v or the budget", i, ch.yTop, ch.bars[k])
			}
			// Short: the longest, "today 1,500 ms", is 14 runes.
			if n := utf8.RuneCountInString(label); n > 16 {
				t.Errorf("chart %d: x label %q is %d runes", i, label, n)
			}
			row := rows[k+1]
			if want := row[0] + " " + row[2] + " ms"; label != want {
				t.Errorf("chart %d: x label %q, table row %q", i, label, row)
			}
			ms, err := strconv.ParseFloat(strings.ReplaceAll(row[2], ",", ""), 64)
			if err != nil || ms-ch.bars[k] > 0.05 || ch.bars[k]-ms > 0.05 {
				t.Errorf("chart %d: bar %v, table %q", i, ch.bars[k], row)
			}
			if !strings.Contains(row[1], " @") {
				t.Errorf("chart %d: layout %q without its segment size", i, row[1])
			}
		}
	}
	// events: today 1,000 segments x 1.5 ms = 150% of the budget; the recommendation 1.5 ms.
	if got := p.figures[0][1]; strings.Join(got, "|") != "today|none @1k|1,500|150%" {
		t.Errorf("events today: %q", got)
	}
	if got := p.figures[0][2]; strings.Join(got, "|") != "rec.|none @1Mi|1.5|0.1%" {
		t.Errorf("events recommended: %q", got)
	}
}

// Without a scan-overhead budget there is no budget line and no share column; the
// axis still starts at 0.
func TestMarkdownChartWithoutBudget(t *testing.T) {
	src := strings.Replace(fixtureManifest, "budgets: {scan_overhead_ms: 1000}\n", "", 1)
	if src == fixtureManifest {
		t.Fatal("fixture: budgets not removed")
	}
	r := analysedResult(t, "m.yaml", "conf/m.yaml", src, rules.Error)
	p := parseMarkdown(t, render(t, "markdown", r, false))
	if len(p.charts) != 1 || len(p.figures) != 1 { // readings' truncated segments
		t.Fatalf("%d charts, %d tables", len(p.charts), len(p.figures))
	}
	ch := parseChart(t, p.charts[0])
	if ch.hasLine || ch.yFrom != "0" || strings.Contains(p.charts[0], "budget") {
		t.Errorf("chart without a budget:\n%s", p.charts[0])
	}
	if got := strings.Join(p.figures[0][0], "|"); got != "bar|layout|fixed ms per scan" {
		t.Errorf("table header %q", got)
	}
}

// The y axis ends at a round number at or above the tallest figure.
func TestNiceCeil(t *testing.T) {
	for _, c := range []struct{ in, want float64 }{
		{1, 1}, {1.05, 1.2}, {81.9, 100}, {315, 400}, {1149.75, 1200}, {2100, 2500}, {0, 1}, {-3, 1},
	} {
		if got := niceCeil(c.in); got < c.in || (got-c.want)/c.want > 1e-9 || (c.want-got)/c.want > 1e-9 {
			t.Errorf("niceCeil(%v) = %v, want %v", c.in, got, c.want)
		}
	}
}
