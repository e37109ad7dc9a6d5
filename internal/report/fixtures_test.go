package report

import (
	"bytes"
	"slices"
	"testing"
	"time"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// Shared documents for the per-format tests. Dates are fixed so waivers and forecasts
// judge the same on every day the tests run.

var fixtureToday = time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)

// fixtureManifest has one table per case the formats tell apart:
//   - events: 1M rows in segments of 1,000 = 1,500 ms against 1,000 ms: scan-overhead error
//   - readings: 40 even partitions of 250 rows, 30 excess segments: truncated-segments warning
//   - quiet: 5 segments, 7.5 ms: no finding
//   - waived: as events, with a live waiver: an accepted scan-overhead error
const fixtureManifest = `format: 1
model: cases
engine: {segment_rows: 1000}
budgets: {scan_overhead_ms: 1000}
tables:
  - name: events
    rows: 1M
    partitions: {scheme: none}
  - name: readings
    rows: 10000
    partitions: {scheme: even, count: 40}
  - name: quiet
    rows: 5000
    partitions: {scheme: none}
  - name: waived
    rows: 1M
    partitions: {scheme: none}
    waivers:
      - {rule: scan-overhead, reason: "bigger segments next quarter", expires: 2026-06-01}
`

// loadFixture loads a manifest as the loader would for a file called name.
func loadFixture(t *testing.T, name, src string) *schema.Manifest {
	t.Helper()
	m, err := schema.Load(name, []byte(src), schema.DefaultLimits)
	if err != nil {
		t.Fatalf("loading %s: %v", name, err)
	}
	return m
}

// analysedResult checks src as `scangate check` does, keeping the tables.
func analysedResult(t *testing.T, name, uri, src string, failOn rules.Severity) *Result {
	t.Helper()
	m := loadFixture(t, name, src)
	// Charted, as a run with a Markdown report checks: the sweeps mark their fronts.
	md, fs := rules.Check(m, rules.Config{Today: fixtureToday, Charts: true})
	files := []File{{Name: name, URI: uri, Model: m.Model, Analysed: len(md.Tables), Tables: analysis.ReportRows(md.Tables)}}
	return &Result{Version: "v0.0.0-test", FailOn: failOn, Files: files, Findings: fs, Summary: Summarize(files)}
}

// withoutFronts is r as a run whose sweeps were lean keeps it: no layout on a front.
func withoutFronts(r *Result) *Result {
	out := *r
	out.Files = make([]File, len(r.Files))
	for i, f := range r.Files {
		f.Tables = slices.Clone(f.Tables)
		for k := range f.Tables {
			if rr := f.Tables[k].Report; rr != nil && rr.Layouts != nil {
				brief := *rr
				l := *rr.Layouts
				l.Front = nil
				brief.Layouts = &l
				f.Tables[k].Report = &brief
			}
		}
		out.Files[i] = f
	}
	return &out
}

// withoutTables is r as a run that prints only findings keeps it.
func withoutTables(r *Result) *Result {
	out := *r
	out.Files = make([]File, len(r.Files))
	for i, f := range r.Files {
		f.Tables = nil
		out.Files[i] = f
	}
	return &out
}

// handResult is built by hand: one finding of every kind a report treats apart.
// Line numbers are those of fixtureManifest, so it reads like a real run.
func handResult() *Result {
	waiver := &schema.Waiver{Rule: "scan-overhead", Reason: "bigger segments next quarter",
		Expires: time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC), Pos: schema.Pos{Line: 19, Col: 9}}
	fs := []rules.Finding{
		{Rule: "scan-overhead", Severity: rules.Error, File: "m.yaml", Pos: schema.Pos{Line: 6, Col: 5}, Table: "events",
			Subject: "fixed", Message: "events: 1,500 ms of fixed CPU", Hints: []string{"raise engine.segment_rows"},
			Numbers: map[string]float64{"fixed_ms": 1500, "budget_ms": 1000, "segments": 1000}},
		{Rule: "truncated-segments", Severity: rules.Warning, File: "m.yaml", Pos: schema.Pos{Line: 9, Col: 5}, Table: "readings",
			Subject: "excess", Message: "readings: 30 excess segments", Numbers: map[string]float64{"excess_segments": 30}},
		{Rule: "needless-partitioning", Severity: rules.Note, File: "m.yaml", Pos: schema.Pos{Line: 12, Col: 5}, Table: "quiet",
			Subject: "partitions", Message: "quiet: partitions buy nothing"},
		{Rule: "scan-overhead", Severity: rules.Error, File: "m.yaml", Pos: schema.Pos{Line: 15, Col: 5}, Table: "waived",
			Subject: "fixed", Message: "waived: 1,500 ms of fixed CPU", Waiver: waiver},
		{Rule: "truncated-segments", Severity: rules.Warning, File: "m.yaml", Pos: schema.Pos{Line: 15, Col: 5}, Table: "waived",
			Subject: "excess", Message: "waived: 2 excess segments", Baselined: true},
		{Rule: "schema", Severity: rules.Error, File: "broken.yaml", Subject: "read", Message: "cannot read the file: permission denied"},
	}
	files := []File{
		{Name: "m.yaml", URI: "conf/m.yaml", Model: "cases", Analysed: 4},
		{Name: "broken.yaml", URI: "conf/broken.yaml", Invalid: true},
	}
	return &Result{Version: "v0.0.0-test", FailOn: rules.Error, Files: files, Findings: fs,
		Summary: Summarize(files), Baseline: &BaselineUse{File: "scangate-baseline.json", Fixed: 2}}
}

// planDoc plans every table of src as `scangate plan` does without flags.
func planDoc(t *testing.T, name, src string) *Plan {
	t.Helper()
	m := loadFixture(t, name, src)
	idx := make([]int, len(m.Tables))
	for i := range idx {
		idx[i] = i
	}
	return planFixture(m, idx)
}

// diffDoc compares fixtureManifest with a head that splits quiet into 20 partitions,
// as `scangate diff` does, with a gate that the change breaks.
func diffDoc(t *testing.T) *DiffResult {
	t.Helper()
	side := func(label, src string) change.Side {
		m := loadFixture(t, label+":m.yaml", src)
		md, fs := rules.Check(m, rules.Config{Today: fixtureToday})
		return change.Side{Label: label, Findings: fs, Files: []change.File{
			{Name: label + ":m.yaml", Key: "m.yaml", Model: m.Model, Tables: analysis.Rows(md.Tables)}}}
	}
	head := bytes.Replace([]byte(fixtureManifest), []byte("rows: 5000\n    partitions: {scheme: none}"),
		[]byte("rows: 5000\n    partitions: {scheme: even, count: 20}"), 1)
	if bytes.Equal(head, []byte(fixtureManifest)) {
		t.Fatal("the head manifest did not change")
	}
	limit := 1.0
	d := change.Compare(side("base", fixtureManifest), side("head", string(head)))
	return NewDiffResult("v0.0.0-test", d, change.Gate{MaxAddedMs: &limit, FailOnNew: rules.Warning})
}

// render writes doc in the format called name, failing the test on an error.
func render(t *testing.T, name string, doc Doc, color bool) string {
	t.Helper()
	f, ok := Lookup(name, doc.Kind())
	if !ok {
		t.Fatalf("no %s format renders %s reports", name, doc.Kind())
	}
	var b bytes.Buffer
	if err := f.Render(&b, doc, color); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return b.String()
}

// planFixture plans the tables idx of m as `scangate plan --horizon 24 --today` the
// fixture's date does.
func planFixture(m *schema.Manifest, idx []int) *Plan {
	lv := advisor.DefaultLevels
	lv.Today, lv.HorizonMonths = fixtureToday, 24
	plans := analysis.Analyze(m, lv).Plans(idx, advisor.Settings{Levels: lv}, 24)
	return &Plan{Files: []PlanFile{{Manifest: m, URI: m.File, Plans: plans}}, Today: fixtureToday, Horizon: 24}
}
