package main

import (
	"encoding/xml"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

const demoTelemetry = "testdata/demo/meter-telemetry.yaml"

// planSection is what plan printed about one table: the recommendation joined into one
// line (the change, without the final period), the manifest snippet de-indented, and
// every other line.
type planSection struct {
	recommended string
	snippet     string
	lines       []string
}

// parsePlan splits plan's output by table.
func parsePlan(t *testing.T, out string) map[string]planSection {
	t.Helper()
	sections := map[string]planSection{}
	var name string
	var sec planSection
	inRec, inSnippet := false, false
	flush := func() {
		if name != "" {
			sections[name] = sec
		}
	}
	for _, line := range strings.Split(strings.TrimRight(out, "\n"), "\n") {
		if strings.HasPrefix(line, "== ") {
			flush()
			name = strings.Fields(line)[1]
			sec = planSection{}
			continue
		}
		switch {
		case strings.HasPrefix(line, "Recommended: ") && !strings.HasPrefix(line, "Recommended: keep today's") && !strings.HasPrefix(line, "Recommended: no"):
			inRec = true
			sec.recommended = strings.TrimPrefix(line, "Recommended: ")
		case inRec && strings.HasPrefix(line, "  ") && !strings.HasPrefix(line, "   "):
			sec.recommended += " " + strings.TrimSpace(line)
		default:
			inRec = false
		}
		if line == "   engine:" || line == "   tables:" {
			inSnippet = true
		}
		if inSnippet {
			if line == "" {
				inSnippet = false
			} else {
				sec.snippet += strings.TrimPrefix(line, "   ") + "\n"
				continue
			}
		}
		sec.lines = append(sec.lines, line)
	}
	flush()
	for n, s := range sections {
		s.recommended = strings.TrimSuffix(s.recommended, ".")
		sections[n] = s
	}
	return sections
}

// hintsOf returns the hint lines check printed under the finding of rule for table.
func hintsOf(out, table, rule string) []string {
	var hints []string
	in := false
	for _, line := range strings.Split(out, "\n") {
		switch {
		case strings.Contains(line, ": "+table+": ") && strings.HasSuffix(line, "["+rule+"]"):
			in = true
		case in && strings.HasPrefix(line, "    hint: "):
			hints = append(hints, strings.TrimPrefix(line, "    hint: "))
		default:
			in = false
		}
	}
	return hints
}

// The plan fits an 80-column terminal: no line is longer, but the snippet, which must
// stay exact.
func TestPlanFitsEightyColumns(t *testing.T) {
	files, _ := filepath.Glob(filepath.Join(root(t), "testdata", "demo", "*.yaml"))
	cases, _ := filepath.Glob(filepath.Join(root(t), "testdata", "rules", "*", "*.yaml"))
	if len(files) < 3 || len(cases) < 10 {
		t.Fatalf("found %d demo files and %d cases", len(files), len(cases))
	}
	for _, f := range append(files, cases...) {
		rel, _ := filepath.Rel(root(t), f)
		r := scangate(t, root(t), "", nil, "plan", filepath.ToSlash(rel), "--today", "2026-01-01")
		wantCode(t, r, 0)
		for name, sec := range parsePlan(t, r.stdout) {
			for _, line := range sec.lines {
				if n := len([]rune(line)); n > 80 {
					t.Errorf("%s, %s: %d runes: %q", rel, name, n, line)
				}
			}
		}
	}
}

// On the demo, plan recommends for meter_reads a layout with its numbers before and
// after and its snippet; check's hints name the same layout and effect; the snippet,
// put into the manifest, clears every error and warning of the table; and the forecast
// names the month a budget breaks.
func TestPlanDemoMeterReads(t *testing.T) {
	r := scangate(t, root(t), "", nil, "plan", demoTelemetry, "--today", "2026-01-01")
	wantCode(t, r, 0)
	sec, ok := parsePlan(t, r.stdout)["meter_reads"]
	if !ok || sec.recommended == "" || sec.snippet == "" {
		t.Fatalf("no recommendation for meter_reads:\n%s", r.stdout)
	}
	body := strings.Join(sec.lines, "\n")
	before := regexp.MustCompile(`segments +730 -> (\d[\d,]*)`).FindStringSubmatch(body)
	saved := regexp.MustCompile(`fixed CPU +1,095 -> [\d,.]+ ms per scan \((-[\d,.]+) ms\)`).FindStringSubmatch(body)
	parts := regexp.MustCompile(`partitions +730 -> (\d[\d,]*)`).FindStringSubmatch(body)
	if before == nil || saved == nil || parts == nil {
		t.Fatalf("no before/after numbers:\n%s", body)
	}
	// The forecast says until when the recommended layout holds, with its horizon (the
	// budget-forecast rule's 12 months, as check says it).
	if !regexp.MustCompile(`holds every budget through 2027-01 \(12-month horizon\)`).MatchString(body) {
		t.Errorf("the plan names no month the recommendation holds through:\n%s", body)
	}

	// check quotes the same recommendation, with the same numbers.
	c := scangate(t, root(t), "", nil, "check", demoTelemetry, "--today", "2026-01-01")
	wantCode(t, c, 1)
	want := sec.recommended + ": 730 -> " + parts[1] + " partitions, 730 -> " + before[1] + " segments, " + saved[1] + " ms per scan"
	// The table's first finding carries it, with the same horizon; the next points to it.
	if h := hintsOf(c.stdout, "meter_reads", "scan-overhead"); len(h) == 0 || h[0] != want+"; holds every budget through 2027-01 (12-month horizon)" {
		t.Errorf("scan-overhead hint %q, plan says %q", h, want)
	}
	if h := hintsOf(c.stdout, "meter_reads", "truncated-segments"); len(h) == 0 || h[0] != "see the recommendation for table meter_reads above" {
		t.Errorf("truncated-segments hint %q", h)
	}

	// The snippet in the manifest: the error and the warnings of truncation go away.
	src, err := os.ReadFile(filepath.Join(root(t), demoTelemetry))
	if err != nil {
		t.Fatal(err)
	}
	fixed := applySnippet(t, string(src), sec.snippet)
	path := filepath.Join(t.TempDir(), "fixed.yaml")
	if err := os.WriteFile(path, []byte(fixed), 0o644); err != nil {
		t.Fatal(err)
	}
	// 4.8G rows in 14 days + 24 months of 16Mi segments: 305 segments, 458 ms, 76% of the
	// 600 ms budget (under the 80% warning line): no error and no warning is left.
	after := scangate(t, root(t), "", nil, "check", "--fail-on", "warning", path, "--today", "2026-01-01")
	wantCode(t, after, 0)
	for _, line := range strings.Split(after.stdout, "\n") {
		if strings.Contains(line, "meter_reads") && (strings.Contains(line, ": error: ") || strings.Contains(line, ": warning: ")) {
			t.Errorf("the recommended layout still raises: %s", line)
		}
	}
}

// applySnippet puts a plan snippet into the demo manifest in place of meter_reads'
// partitions and, when it has one, the engine's segment size.
func applySnippet(t *testing.T, src, snippet string) string {
	t.Helper()
	if m := regexp.MustCompile(`(?m)^  segment_rows: \S+$`).FindString(snippet); m != "" {
		src = regexp.MustCompile(`(?m)^  segment_rows: \S+$`).ReplaceAllString(src, m)
	}
	i := strings.Index(snippet, "    partitions:\n")
	old := "    partitions:\n      scheme: time\n      tiers:\n        - {grain: day, keep: 730}\n"
	if i < 0 || !strings.Contains(src, old) {
		t.Fatalf("cannot splice the snippet:\n%s", snippet)
	}
	return strings.Replace(src, old, snippet[i:], 1)
}

// For every demo table, check's scan-overhead and truncated-segments hints lead with
// plan's recommendation whenever plan recommends a change.
func TestCheckAndPlanAgree(t *testing.T) {
	files, _ := filepath.Glob(filepath.Join(root(t), "testdata", "demo", "*.yaml"))
	agreed := 0
	for _, f := range files {
		rel, _ := filepath.Rel(root(t), f)
		rel = filepath.ToSlash(rel)
		p := scangate(t, root(t), "", nil, "plan", rel, "--today", "2026-01-01")
		c := scangate(t, root(t), "", nil, "check", rel, "--today", "2026-01-01")
		for name, sec := range parsePlan(t, p.stdout) {
			for _, rule := range []string{"scan-overhead", "truncated-segments"} {
				h := hintsOf(c.stdout, name, rule)
				if len(h) == 0 || sec.recommended == "" {
					continue
				}
				if !strings.HasPrefix(h[0], sec.recommended+": ") && h[0] != "see the recommendation for table "+name+" above" {
					t.Errorf("%s %s: check's hint %q, plan recommends %q", rel, name, h[0], sec.recommended)
				}
				agreed++
			}
		}
	}
	if agreed < 3 {
		t.Errorf("only %d findings compared", agreed)
	}
}

// --svg writes a well-formed SVG that carries the numbers as text, atomically (no
// temporary file left beside it).
func TestPlanSVG(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "charts", "plan.svg")
	r := scangate(t, root(t), "", nil, "plan", demoTelemetry, "--today", "2026-01-01", "--svg", out)
	wantCode(t, r, 0)
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	dec := xml.NewDecoder(f)
	var texts []string
	var rootName string
	depth, inText := 0, false
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("the SVG is not well-formed XML: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if depth == 0 {
				rootName = e.Name.Space + " " + e.Name.Local
			}
			depth++
			inText = e.Name.Local == "text"
			if inText {
				texts = append(texts, "")
			}
		case xml.EndElement:
			depth--
			inText = false
		case xml.CharData:
			if inText {
				texts[len(texts)-1] += string(e)
			}
		}
	}
	if rootName != "http://www.w3.org/2000/svg svg" {
		t.Errorf("root element %q", rootName)
	}
	all := strings.Join(texts, "\n")
	for _, want := range []string{"meter_reads", "meters", "730 partitions, 730 segments (ideal 573)", "today: 8Mi 730 day, 730 segments, 1,095 ms",
		"recommended: 16Mi", "Pareto front"} {
		if !strings.Contains(all, want) {
			t.Errorf("the SVG's text lacks %q:\n%s", want, all)
		}
	}
	entries, _ := os.ReadDir(filepath.Dir(out))
	if len(entries) != 1 {
		t.Errorf("want only plan.svg in %s, found %d entries", filepath.Dir(out), len(entries))
	}
}

func TestPlanFixedSegmentRows(t *testing.T) {
	r := scangate(t, root(t), "", nil, "plan", demoTelemetry, "--today", "2026-01-01", "--table", "meter_reads", "--fixed-segment-rows")
	wantCode(t, r, 0)
	sec := parsePlan(t, r.stdout)["meter_reads"]
	body := strings.Join(sec.lines, "\n")
	// At 8Mi rows, 4.8G rows need 573 segments, 860 ms: no partition change fits 500 ms.
	if !strings.Contains(body, "No layout in the sweep fits every budget. Closest:") || strings.Contains(sec.snippet, "engine:") ||
		!regexp.MustCompile(`(?m)^ +#  16Mi `).MatchString(body) {
		t.Errorf("a fixed segment size should mark the other sizes and keep the engine:\n%s", r.stdout)
	}
}

func TestPlanUsage(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"plan", "testdata/bad"}, "break the manifest schema; fix the errors above and plan again"},
		{[]string{"plan", "testdata/demo", "--table", "nope"}, `--table "nope": no manifest given has such a table`},
		{[]string{"plan", "testdata/demo", "--svg", "a.svg", "--format", "svg=a.svg"}, "a.svg"},
		{[]string{"plan", "missing.yaml"}, "cannot read missing.yaml"},
		{[]string{"plan", demoTelemetry, "--table", "nope"}, `--table "nope": testdata/demo/meter-telemetry.yaml has no such table; it has meter_reads, meters, districts`},
		{[]string{"plan", demoTelemetry, "--segment-rows", "8Mi,lots"}, `--segment-rows "8Mi,lots": "lots" is not a quantity`},
		{[]string{"plan", demoTelemetry, "--segment-rows", "0"}, "a segment holds at least 1 row"},
		{[]string{"plan", demoTelemetry, "--today", "2026-13-01"}, `--today "2026-13-01": write the date as YYYY-MM-DD`},
		{[]string{"plan", demoTelemetry, "--horizon", "0"}, "--horizon 0: give a number of months from 1 to 600"},
		{[]string{"plan", "testdata/bad/values.yaml"}, "testdata/bad/values.yaml:2:9: error: /format: must be 1 [schema]"},
	} {
		r := scangate(t, root(t), "", nil, c.args...)
		if r.code != 2 || !strings.Contains(r.stderr, c.want) || strings.Contains(r.stderr, "panic") {
			t.Errorf("scangate %s: exit %d, stderr %q; want 2 and %q", strings.Join(c.args, " "), r.code, r.stderr, c.want)
		}
	}
	// Standard input, and the same bytes twice.
	src, _ := os.ReadFile(filepath.Join(root(t), demoTelemetry))
	a := scangate(t, root(t), string(src), nil, "plan", "-", "--today", "2026-01-01")
	b := scangate(t, root(t), string(src), nil, "plan", "-", "--today", "2026-01-01")
	wantCode(t, a, 0)
	if a.stdout != b.stdout || !strings.Contains(a.stdout, "== meter_reads (<stdin>:19:5)") {
		t.Errorf("plan from stdin is not stable or not named <stdin>:\n%s", a.stdout)
	}
}

// Dates come only from --today: the same crossing, three months on, is named three
// months later.
func TestForecastDatesFollowToday(t *testing.T) {
	c := "testdata/rules/budget-forecast/scan-overhead.yaml"
	for today, month := range map[string]string{"2026-01-01": "2026-12", "2026-04-30": "2027-03"} {
		r := scangate(t, root(t), "", nil, "check", c, "--today", today)
		if !strings.Contains(r.stdout, "crosses the 1,500 ms scan-overhead budget in "+month) {
			t.Errorf("--today %s: want the crossing in %s:\n%s", today, month, r.stdout)
		}
		p := scangate(t, root(t), "", nil, "plan", c, "--today", today)
		if !strings.Contains(p.stdout, month+" (1,524 ms)") {
			t.Errorf("plan --today %s: want the crossing in %s:\n%s", today, month, p.stdout)
		}
	}
}

// The README's example of plan is the program's own output, lines left out as "...".
func TestREADMEPlanExample(t *testing.T) {
	data, err := os.ReadFile(filepath.Join(root(t), "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	i := strings.Index(text, "$ scangate plan ")
	if i < 0 {
		t.Fatal("README.md has no plan example")
	}
	block := text[i:]
	block = block[:strings.Index(block, "```")]
	lines := strings.Split(strings.TrimRight(block, "\n"), "\n")
	args := strings.Fields(strings.TrimPrefix(lines[0], "$ scangate "))
	r := scangate(t, root(t), "", nil, args...)
	wantCode(t, r, 0)
	out := "\n" + r.stdout
	shown := 0
	for _, line := range lines[1:] {
		if strings.TrimSpace(line) == "..." {
			continue
		}
		if !strings.Contains(out, "\n"+line+"\n") {
			t.Errorf("README line not in the output: %q", line)
		}
		shown++
	}
	if shown < 20 {
		t.Errorf("only %d lines of the example checked", shown)
	}
}

// Each limit is written in its figure's unit. The unit was guessed from the size: a scan
// budget of 2,000,000 ms (above 1 MiB as a number) printed as 1.91 MiB, and a refresh
// budget under 1 MiB printed in ms.
func TestPlanLimitUnits(t *testing.T) {
	dir := repo(t, map[string]string{"m.yaml": `format: 1
model: m
engine: {segment_rows: 1Mi}
budgets: {scan_overhead_ms: 2000000, scan_ms: 5000000, refresh_memory: 1000}
tables:
  - name: t
    rows: 10M
    partitions: {scheme: none}
    columns:
      - {name: a, type: int64, distinct: 10M}
`})
	r := scangate(t, dir, "", nil, "plan", "--today", "2026-01-01", "m.yaml")
	wantCode(t, r, 0)
	for _, want := range []string{`(?m)^   fixed CPU .* budget 2,000,000 ms `, `(?m)^   scan wall, a .* budget 5,000,000 ms `, `(?m)^ +budget 1000 B `} {
		if !regexp.MustCompile(want).MatchString(r.stdout) {
			t.Errorf("plan lacks %s:\n%s", want, r.stdout)
		}
	}
}

// plan reads the project config as check does: in a directory made by `scangate init`,
// where the manifest's engine comes from a profile, check and plan both run, plan
// quotes the config's budget, and --config names the file explicitly.
func TestPlanReadsTheProjectConfig(t *testing.T) {
	dir := repo(t, nil)
	wantCode(t, scangate(t, dir, "", nil, "init"), 0)
	wantCode(t, scangate(t, dir, "", nil, "check", "model.yaml"), 0)
	r := scangate(t, dir, "", nil, "plan", "model.yaml")
	wantCode(t, r, 0)
	// The starter manifest's own budget is 500 ms; its engine comes only from the config.
	if !strings.Contains(r.stdout, "budget 500 ms") || !strings.Contains(r.stdout, "segments of 8Mi rows") {
		t.Errorf("plan does not show the config's engine and the budget:\n%s", r.stdout)
	}
	elsewhere := t.TempDir()
	r = scangate(t, elsewhere, "", nil, "plan", "--config", filepath.Join(dir, ".scangate.yaml"), filepath.Join(dir, "model.yaml"))
	wantCode(t, r, 0)
	r = scangate(t, elsewhere, "", nil, "plan", "--config", filepath.Join(dir, "missing.yaml"), filepath.Join(dir, "model.yaml"))
	if r.code != 2 || !strings.Contains(r.stderr, "missing.yaml") {
		t.Errorf("a missing --config: exit %d, %q", r.code, r.stderr)
	}
}
