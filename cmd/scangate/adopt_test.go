package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/report"
)

// repo makes a throwaway repository (a .git directory marks its root) with the files.
func repo(t *testing.T, files map[string]string) string {
	t.Helper()
	dir := t.TempDir()
	os.Mkdir(filepath.Join(dir, ".git"), 0o755)
	for name, body := range files {
		p := filepath.Join(dir, name)
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

type jsonDoc struct {
	Summary struct {
		Errors, Warnings, Notes, Waived, Baselined int
		BaselineFixed                              *int `json:"baseline_fixed"`
	}
	Files []struct {
		Tables []struct {
			Name            string
			SegmentRows     int64   `json:"segment_rows"`
			Segments        int64   `json:"segments"`
			FixedOverheadMs float64 `json:"fixed_overhead_ms"`
			Budget          float64 `json:"scan_overhead_budget_ms"`
		}
	}
	Findings []struct {
		Rule, Severity string
		Fails          bool
	}
}

func parseJSON(t *testing.T, r result) jsonDoc {
	t.Helper()
	var d jsonDoc
	if err := json.Unmarshal([]byte(r.stdout), &d); err != nil {
		t.Fatalf("%v\n%s%s", err, r.stdout, r.stderr)
	}
	return d
}

const profileConfig = `engines:
  shared-east: {segment_rows: 1000, cores: 4, segment_overhead_ms: 2}
budgets: {scan_overhead_ms: 5000}
`

// Engine fields resolve manifest first, then the profile, then the defaults; budgets
// resolve table, then manifest, then project config.
func TestProfileResolution(t *testing.T) {
	dir := repo(t, map[string]string{
		".scangate.yaml": profileConfig,
		"models/a.yaml": `format: 1
model: a
engine: {profile: shared-east, segment_overhead_ms: 0.5}
tables:
  - {name: from_profile, rows: 100k, partitions: {scheme: none}}
  - {name: own_budget, rows: 100k, partitions: {scheme: none}, budgets: {scan_overhead_ms: 40}}
`,
		"models/b.yaml": `format: 1
model: b
engine: {profile: shared-east}
budgets: {scan_overhead_ms: 150}
tables:
  - {name: manifest_budget, rows: 100k, partitions: {scheme: none}}
`,
	})
	d := parseJSON(t, scangate(t, filepath.Join(dir, "models"), "", nil, "check", "--format", "json"))
	// 100k rows / 1,000 rows per segment (profile) = 100 segments.
	// a: 100 x 0.5 ms (the manifest overrides the profile's 2 ms) = 50 ms; budget 5,000 from
	// the project, 40 from the table's own (so an error there).
	// b: 100 x 2 ms (the profile's) = 200 ms against the manifest's 150 ms budget.
	want := map[string][2]float64{"from_profile": {50, 5000}, "own_budget": {50, 40}, "manifest_budget": {200, 150}}
	n := 0
	for _, f := range d.Files {
		for _, tb := range f.Tables {
			w := want[tb.Name]
			if tb.SegmentRows != 1000 || tb.Segments != 100 || tb.FixedOverheadMs != w[0] || tb.Budget != w[1] {
				t.Errorf("%s: %+v, want fixed %v ms against %v", tb.Name, tb, w[0], w[1])
			}
			n++
		}
	}
	if n != 3 || d.Summary.Errors != 2 {
		t.Errorf("tables %d, errors %d (want 3 tables, 2 over budget)", n, d.Summary.Errors)
	}

	// An unknown profile, and a profile without any config, are positioned errors.
	dir = repo(t, map[string]string{".scangate.yaml": profileConfig, "m.yaml": "format: 1\nmodel: m\nengine: {profile: west}\ntables: [{name: t, rows: 1, partitions: {scheme: none}}]\n"})
	r := scangate(t, dir, "", nil, "check", "m.yaml")
	wantCode(t, r, 2)
	if !strings.Contains(r.stdout, `m.yaml:3:19: error: /engine/profile: unknown engine profile "west"; .scangate.yaml defines: shared-east`) {
		t.Errorf("unknown profile:\n%s", r.stdout)
	}
	os.Remove(filepath.Join(dir, ".scangate.yaml"))
	r = scangate(t, dir, "", nil, "check", "m.yaml")
	wantCode(t, r, 2)
	if !strings.Contains(r.stdout, "needs a project config") {
		t.Errorf("profile without config:\n%s", r.stdout)
	}
}

// Severity overrides regrade a rule's findings, off silences it, thresholds move it.
func TestRuleSettings(t *testing.T) {
	manifest := `format: 1
model: m
engine: {segment_rows: 1000}
budgets: {scan_overhead_ms: 100}
tables:
  - name: t
    rows: 119500
    partitions: {scheme: time, tiers: [{grain: day, keep: 120}]}
`
	// 120 days of ~996 rows: 120 segments, 180 ms against 100 ms: a scan-overhead error;
	// the ideal is 120 segments, so no truncation; 120 partitions is under the 5,000 limit.
	base := parseJSON(t, scangate(t, repo(t, map[string]string{"m.yaml": manifest}), "", nil, "check", "--format", "json", "m.yaml"))
	if base.Summary.Errors != 1 || base.Summary.Warnings != 0 {
		t.Fatalf("without config: %+v", base.Summary)
	}
	dir := repo(t, map[string]string{"m.yaml": manifest, ".scangate.yaml": `rules:
  scan-overhead: {severity: warning}
  partition-count: {limit: 100}
`})
	r := scangate(t, dir, "", nil, "check", "--format", "json", "m.yaml")
	wantCode(t, r, 0) // the error is now a warning, below the default --fail-on error
	d := parseJSON(t, r)
	rulesSeen := map[string]string{}
	for _, f := range d.Findings {
		rulesSeen[f.Rule] = f.Severity
	}
	if rulesSeen["scan-overhead"] != "warning" || rulesSeen["partition-count"] != "warning" {
		t.Errorf("overrides not applied: %v", rulesSeen)
	}
	// The ends of the horizon's range are taken.
	for _, h := range []string{"1", "240"} {
		dir := repo(t, map[string]string{"m.yaml": manifest, ".scangate.yaml": "rules:\n  budget-forecast: {horizon_months: " + h + "}\n"})
		wantCode(t, scangate(t, dir, "", nil, "check", "m.yaml"), 1)
	}
	dir = repo(t, map[string]string{"m.yaml": manifest, ".scangate.yaml": "rules:\n  scan-overhead: {severity: off}\n"})
	r = scangate(t, dir, "", nil, "check", "m.yaml")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "no findings") {
		t.Errorf("off should silence the rule:\n%s", r.stdout)
	}
	for _, c := range []struct{ cfg, want string }{
		{"rules:\n  scan-overhead: {severity: loud}\n", `.scangate.yaml:2:29: error: /rules/scan-overhead/severity: loud is not one of error, warning, note, off [config]`},
		{"rules:\n  scan-overhead: {limit: 3}\n", `.scangate.yaml:2:19: error: /rules/scan-overhead/limit: unknown key "limit"`},
		{"rules:\n  made-up: {severity: off}\n", `.scangate.yaml:2:3: error: /rules/made-up: unknown key "made-up"`},
		{"engines:\n  x: {segment_rows: 8Xi}\n", `.scangate.yaml:2:21: error: /engines/x/segment_rows: "8Xi" is not a count`},
		// A horizon of 100,000,000 months once ran for minutes; -5, 0.5 and 1e300 were taken
		// silently. Each is refused at the value, with the rule, the setting and the range.
		{"rules:\n  budget-forecast: {horizon_months: 1e9}\n", `.scangate.yaml:2:37: error: /rules/budget-forecast/horizon_months: 1e9 is out of range: horizon_months of rule budget-forecast is a whole number from 1 to 240 [config]`},
		{"rules:\n  budget-forecast: {horizon_months: 100000000}\n", `.scangate.yaml:2:37: error: /rules/budget-forecast/horizon_months: 100000000 is out of range: horizon_months of rule budget-forecast is a whole number from 1 to 240 [config]`},
		{"rules:\n  budget-forecast: {horizon_months: -5}\n", `.scangate.yaml:2:37: error: /rules/budget-forecast/horizon_months: -5 is out of range: horizon_months of rule budget-forecast is a whole number from 1 to 240 [config]`},
		{"rules:\n  budget-forecast: {horizon_months: 0.5}\n", `.scangate.yaml:2:37: error: /rules/budget-forecast/horizon_months: 0.5 is out of range: horizon_months of rule budget-forecast is a whole number from 1 to 240 [config]`},
		{"rules:\n  budget-forecast:\n    horizon_months: 1e300\n", `.scangate.yaml:3:21: error: /rules/budget-forecast/horizon_months: 1e300 is out of range: horizon_months of rule budget-forecast is a whole number from 1 to 240 [config]`},
		{"rules:\n  budget-forecast: {horizon_months: \"12\"}\n", `.scangate.yaml:2:37: error: /rules/budget-forecast/horizon_months: "12" is out of range: horizon_months of rule budget-forecast is a whole number from 1 to 240 [config]`},
		{"rules:\n  scan-overhead: {warn_share: 0}\n", `.scangate.yaml:2:31: error: /rules/scan-overhead/warn_share: 0 is out of range: warn_share of rule scan-overhead is a number above 0 and at most 1 [config]`},
		{"rules:\n  row-count-mismatch: {tolerance: 2}\n", `/rules/row-count-mismatch/tolerance: 2 is out of range: tolerance of rule row-count-mismatch is a number above 0 and at most 1 [config]`},
		{"rules:\n  partition-count: {limit: 0}\n", `/rules/partition-count/limit: 0 is out of range: limit of rule partition-count is a whole number from 1 to 1,000,000 [config]`},
		{"rules:\n  truncated-segments: {warn_min: 1.5}\n", `/rules/truncated-segments/warn_min: 1.5 is out of range: warn_min of rule truncated-segments is a whole number from 1 to 1,000,000 [config]`},
	} {
		dir := repo(t, map[string]string{"m.yaml": manifest, ".scangate.yaml": c.cfg})
		r := scangate(t, dir, "", nil, "check", "m.yaml")
		if r.code != 2 || !strings.Contains(r.stderr, c.want) {
			t.Errorf("config %q: exit %d, stderr:\n%s\nwant %s", c.cfg, r.code, r.stderr, c.want)
		}
	}
}

// A waived finding does not fail the run through its expiry day; the day after, it
// fails again and expired-waiver points at the waiver.
func TestWaiverExpiryExitCodes(t *testing.T) {
	dir := repo(t, map[string]string{"m.yaml": `format: 1
model: m
engine: {segment_rows: 1000}
budgets: {scan_overhead_ms: 100}
tables:
  - name: t
    rows: 1M
    partitions: {scheme: none}
    waivers: [{rule: scan-overhead, reason: "engine upgrade pending", expires: 2027-03-31}]
`})
	r := scangate(t, dir, "", nil, "check", "--today", "2027-03-31", "m.yaml")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "(waived until 2027-03-31: engine upgrade pending)") || !strings.Contains(r.stdout, "(1 waived, 0 baselined)") {
		t.Errorf("waived finding should be listed:\n%s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "check", "--today", "2027-04-01", "m.yaml")
	wantCode(t, r, 1)
	if !strings.Contains(r.stdout, "m.yaml:9:15: warning: t: waiver for scan-overhead expired on 2027-03-31, 1 day ago") {
		t.Errorf("expired waiver should be reported:\n%s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "check", "--format", "sarif", "--today", "2027-03-31", "m.yaml")
	if !strings.Contains(r.stdout, `"kind": "inSource"`) || !strings.Contains(r.stdout, `"justification": "engine upgrade pending (waived until 2027-03-31)"`) {
		t.Errorf("SARIF should carry the suppression")
	}
	validateSARIF(t, []byte(r.stdout))
}

// A baseline accepts today's findings; moving a table and reformatting keeps them
// accepted; fixing one is reported; a new one fails.
func TestBaseline(t *testing.T) {
	src, err := os.ReadFile(filepath.Join(root(t), "testdata/demo/meter-telemetry.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	dir := repo(t, map[string]string{"models/meters.yaml": string(src)})
	r := scangate(t, dir, "", nil, "baseline", "write", "models")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "to .scangate-baseline.json") {
		t.Errorf("baseline write: %s", r.stdout)
	}
	r = scangate(t, dir, "", nil, "check", "--baseline", ".scangate-baseline.json", "models")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "baselined in .scangate-baseline.json, not failing the run:") {
		t.Errorf("baselined findings should be listed apart:\n%s", r.stdout)
	}

	// Ten lines of comments above the tables and a reformatted engine block.
	moved := strings.Replace(string(src), "tables:\n", "tables:\n"+strings.Repeat("  # moved\n", 10), 1)
	moved = strings.Replace(moved, "  cores: 8\n", "  cores:   8     # reformatted\n", 1)
	os.WriteFile(filepath.Join(dir, "models/meters.yaml"), []byte(moved), 0o644)
	r = scangate(t, dir, "", nil, "check", "--format", "json", "--baseline", ".scangate-baseline.json", "models")
	wantCode(t, r, 0)
	d := parseJSON(t, r)
	if d.Summary.Baselined != 2 || d.Summary.Errors+d.Summary.Warnings+d.Summary.Notes != 0 || *d.Summary.BaselineFixed != 0 {
		t.Errorf("after moving lines: %+v", d.Summary)
	}

	// Fix meter_reads (one partition, a budget it fits): both of its entries are gone.
	fixed := strings.Replace(moved, "scheme: time\n      tiers:\n        - {grain: day, keep: 730}", "scheme: none", 1)
	fixed = strings.Replace(fixed, "scan_overhead_ms: 600", "scan_overhead_ms: 5000", 1)
	os.WriteFile(filepath.Join(dir, "models/meters.yaml"), []byte(fixed), 0o644)
	r = scangate(t, dir, "", nil, "check", "--format", "json", "--baseline", ".scangate-baseline.json", "models")
	d = parseJSON(t, r)
	if *d.Summary.BaselineFixed != 2 {
		t.Errorf("fixed entries: %+v\n%s", d.Summary, r.stdout)
	}
	r = scangate(t, dir, "", nil, "check", "--baseline", ".scangate-baseline.json", "models")
	if !strings.Contains(r.stdout, "2 baseline entries in .scangate-baseline.json no longer found (fixed)") {
		t.Errorf("text should say how many entries are fixed:\n%s", r.stdout)
	}

	os.WriteFile(filepath.Join(dir, "bad.json"), []byte("{\"schema_version\": 1,\n \"entries\": [}\n"), 0o644)
	r = scangate(t, dir, "", nil, "check", "--baseline", "bad.json", "models")
	wantCode(t, r, 2)
	if !strings.Contains(r.stderr, "bad.json:2:14: error: invalid JSON") {
		t.Errorf("a broken baseline should name line and column: %s", r.stderr)
	}
}

func TestInitAndSchemas(t *testing.T) {
	dir := repo(t, nil)
	r := scangate(t, dir, "", nil, "init")
	wantCode(t, r, 0)
	before, _ := os.ReadFile(filepath.Join(dir, "model.yaml"))
	os.WriteFile(filepath.Join(dir, "model.yaml"), []byte("mine"), 0o644)
	r = scangate(t, dir, "", nil, "init")
	wantCode(t, r, 2)
	if got, _ := os.ReadFile(filepath.Join(dir, "model.yaml")); string(got) != "mine" || !strings.Contains(r.stderr, "--force") {
		t.Errorf("init must not clobber: %q, %s", got, r.stderr)
	}
	wantCode(t, scangate(t, dir, "", nil, "init", "--force"), 0)
	if got, _ := os.ReadFile(filepath.Join(dir, "model.yaml")); string(got) != string(before) {
		t.Error("init --force should rewrite the starter")
	}
	// The starter files are valid and clean as written.
	r = scangate(t, dir, "", nil, "check", "--fail-on", "warning", "model.yaml")
	if r.code != 0 || !strings.HasPrefix(string(before), "# yaml-language-server: $schema=") {
		t.Errorf("the starter manifest should pass: exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	for _, name := range []string{"manifest", "config", "output"} {
		r := scangate(t, dir, "", nil, "schema", name)
		var v map[string]any
		if r.code != 0 || json.Unmarshal([]byte(r.stdout), &v) != nil || v["$schema"] == nil {
			t.Errorf("schema %s: exit %d", name, r.code)
		}
	}
	r = scangate(t, dir, "", nil, "explain", "truncated-segments")
	for _, s := range []string{"Why it matters", "How it is computed", "Raises it", "Fixed", "warn_share"} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("explain lacks %q", s)
		}
	}
	wantCode(t, scangate(t, dir, "", nil, "explain", "nope"), 2)
	r = scangate(t, dir, "", nil, "rules")
	if !strings.Contains(r.stdout, "truncated-segments") || !strings.Contains(r.stdout, "unused-waiver") {
		t.Errorf("rules: %s", r.stdout)
	}
}

// docs/rules.md is generated from the registry; SARIF help carries the same text.
func TestGeneratedRulesDoc(t *testing.T) {
	path := filepath.Join(root(t), "docs", "rules.md")
	want := report.RulesMarkdown()
	if *update {
		os.MkdirAll(filepath.Dir(path), 0o755)
		if err := os.WriteFile(path, []byte(want), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	got, err := os.ReadFile(path)
	if err != nil || string(got) != want {
		t.Errorf("docs/rules.md is out of date; run go generate ./...")
	}
}

// Include and exclude globs of the config shape the directory walk.
func TestIncludeExclude(t *testing.T) {
	m := "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10, partitions: {scheme: none}}]\n"
	dir := repo(t, map[string]string{
		".scangate.yaml":            "include: [\"models/**/*.yaml\"]\nexclude: [\"**/drafts/**\"]\n",
		"models/a.yaml":             m,
		"models/sales/b.yaml":       m,
		"models/drafts/c.yaml":      "format: 9\n",
		"elsewhere/d.yaml":          "format: 9\n",
		"models/sales/not-yaml.yml": m,
	})
	r := scangate(t, dir, "", nil, "check", ".")
	wantCode(t, r, 0)
	if !strings.Contains(r.stdout, "2 files, 2 tables") {
		t.Errorf("want a.yaml and sales/b.yaml only:\n%s", r.stdout)
	}
	// A file named on the command line is checked whatever the globs say.
	r = scangate(t, dir, "", nil, "check", "elsewhere/d.yaml")
	wantCode(t, r, 2)
}
