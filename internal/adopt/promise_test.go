package adopt_test

import (
	"bytes"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"

	"github.com/scangate/scangate/internal/adopt"
	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/internal/run"
	"github.com/scangate/scangate/internal/yamledit"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// today fixes waivers and forecasts, as the golden reports do.
const today = "2026-01-01"

// manifest is one testdata manifest with the config check would use for it.
type manifest struct {
	file string
	data []byte
	proj run.Project
	cfg  rules.Config
	m    *schema.Manifest
}

// manifests are every manifest under testdata that loads.
func manifests(t *testing.T) []manifest {
	t.Helper()
	var out []manifest
	root := filepath.Join("..", "..", "testdata")
	err := filepath.WalkDir(root, func(p string, e os.DirEntry, err error) error {
		if err != nil || e.IsDir() {
			return err
		}
		if ext := filepath.Ext(p); ext != ".yaml" && ext != ".yml" && ext != ".json" {
			return nil
		}
		data, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		proj, err := run.LoadProject("", []string{p}, schema.DefaultLimits)
		if err != nil {
			return nil // a config under test elsewhere
		}
		cfg, err := proj.RulesConfig(today)
		if err != nil {
			return nil
		}
		m, err := schema.LoadWith(p, data, schema.Options{Limits: schema.DefaultLimits, Project: proj.Config})
		if err != nil {
			return nil // not a manifest, or one that must not load
		}
		out = append(out, manifest{p, data, proj, cfg, m})
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// layoutRules are the rules whose findings a candidate's figures speak for.
var layoutRules = []string{"scan-overhead", "scan-time", "truncated-segments", "partition-count", "budget-forecast", "refresh-memory"}

// remaining are the rules the candidate itself says would still fire: its warnings
// (advisor's warnings and the forecast's crossing) and the budgets it misses.
func remaining(c *advisor.Candidate) map[string]bool {
	out := map[string]bool{}
	for _, w := range append(append([]string(nil), c.Warnings...), c.Misses...) {
		switch {
		case strings.HasPrefix(w, "within "):
			out["budget-forecast"] = true
		case strings.HasPrefix(w, "scan overhead"):
			out["scan-overhead"] = true
		case strings.HasPrefix(w, "scan time"):
			out["scan-time"] = true
		case strings.HasSuffix(w, "excess segments"):
			out["truncated-segments"] = true
		case strings.HasSuffix(w, " partitions"):
			out["partition-count"] = true
		case strings.HasPrefix(w, "refresh peak"):
			out["refresh-memory"] = true
		default:
			out["other table"] = true // a miss of another table the new segment size breaks
		}
	}
	return out
}

// promiseLevel is the least severity a candidate's figures judge: the warning levels
// for one that fits (a note below them, such as a few excess segments, may stay), the
// budgets alone for the closest of those that miss.
func promiseLevel(fits bool) rules.Severity {
	if fits {
		return rules.Warning
	}
	return rules.Error
}

// promised are the layout findings of table (and the model's refresh finding) before the
// change that the candidate says it ends: a candidate that fits every budget ends every
// layout warning and error it does not still name; the closest of candidates that miss
// (no warnings worked out) promises only that the budgets it does not name stop failing.
func promised(before []rules.Finding, table string, fits bool, left map[string]bool) []rules.Finding {
	var out []rules.Finding
	for _, f := range before {
		if f.Table != table && !(f.Table == "" && f.Rule == "refresh-memory") {
			continue
		}
		if !slices.Contains(layoutRules, f.Rule) || left[f.Rule] {
			continue
		}
		if f.Severity < promiseLevel(fits) {
			continue
		}
		out = append(out, f)
	}
	return out
}

// TestAdoptEndsPromisedFindings adopts each recommendation in testdata alone, in a copy,
// checks the result as check does, and requires that every finding the recommendation
// promised to end is gone, and that the file is byte for byte the same outside the keys
// rewritten (the table's partitions and engine.segment_rows).
func TestAdoptEndsPromisedFindings(t *testing.T) {
	adopted, ended := 0, 0
	for _, mf := range manifests(t) {
		_, before := rules.Check(mf.m, mf.cfg)
		for _, tb := range analysis.Analyze(mf.m, mf.cfg.Levels()).Tables {
			r, ok := tb.Recommended()
			if !ok {
				continue
			}
			name := tb.Spec.Name
			res, err := adopt.File(mf.file, mf.data, adopt.Options{Limits: schema.DefaultLimits, Project: mf.proj.Config, Levels: mf.cfg.Levels(), Table: name})
			if err != nil {
				t.Errorf("%s %s: %v", mf.file, name, err)
				continue
			}
			if !res.Changed() {
				t.Errorf("%s %s: a recommendation (%s) left the file as it was", mf.file, name, r.Hint())
				continue
			}
			adopted++
			checkSpans(t, mf, res, name, r.Candidate.Engine)
			m2, err := schema.LoadWith(mf.file, res.After, schema.Options{Limits: schema.DefaultLimits, Project: mf.proj.Config})
			if err != nil {
				t.Fatalf("%s %s: the adopted manifest does not load: %v", mf.file, name, err)
			}
			_, after := rules.Check(m2, mf.cfg)
			ps := promised(before, name, r.Fits, remaining(r.Candidate))
			if len(ps) == 0 {
				t.Logf("%s %s: %q promises to end no finding of today's", mf.file, name, r.Hint())
			}
			for _, f := range ps {
				ended++
				for _, g := range after {
					if g.Rule == f.Rule && g.Table == f.Table && g.Severity >= promiseLevel(r.Fits) {
						t.Errorf("%s %s: adopting %q should end %s (%s) but check still says: %s", mf.file, name, r.Hint(), f.Rule, f.Message, g.Message)
					}
				}
			}
			noWorse(t, mf, tb, analysis.Analyze(m2, mf.cfg.Levels()), r.Hint())
			// The table reads as the candidate.
			for _, t2 := range m2.Tables {
				if t2.Name == name && advisor.Label(t2.Partitions) != r.Candidate.Label {
					t.Errorf("%s %s: partitions read %s, want %s", mf.file, name, advisor.Label(t2.Partitions), r.Candidate.Label)
				}
			}
			if m2.Engine.SegmentRows != r.Candidate.SegmentRows {
				t.Errorf("%s %s: segment_rows %d, want %d", mf.file, name, m2.Engine.SegmentRows, r.Candidate.SegmentRows)
			}
		}
	}
	t.Logf("%d recommendations adopted, %d findings they promised to end ended", adopted, ended)
	if adopted < 10 || ended < adopted*3/4 {
		t.Fatalf("%d recommendations and %d promised findings in testdata: the test has lost its reach", adopted, ended)
	}
}

// noWorse holds the recommendation to its rule: a budget the table (or the model's refresh)
// kept before the change is kept after it, and one it broke is broken by no more.
func noWorse(t *testing.T, mf manifest, before *analysis.Table, after *analysis.Model, hint string) {
	t.Helper()
	var tb *analysis.Table
	for _, a := range after.Tables {
		if a.Spec.Name == before.Spec.Name {
			tb = a
		}
	}
	if tb == nil {
		t.Fatalf("%s %s: the table is gone after adopting", mf.file, before.Spec.Name)
	}
	type figure struct {
		name          string
		limit         *float64
		before, after float64
	}
	figs := []figure{
		{"fixed ms per scan", before.Budgets.ScanOverheadMs, before.Layout.FixedMs, tb.Layout.FixedMs},
		{"scan wall ms", before.Budgets.ScanMs, before.Scan.WallMs, tb.Scan.WallMs},
	}
	if lim := before.Budgets.RefreshMemory; lim != nil {
		pb, pa := before.Model().RefreshPeaks().Full, after.RefreshPeaks().Full
		if pb != nil && pa != nil {
			l := float64(*lim)
			figs = append(figs, figure{"refresh peak", &l, *pb, *pa})
		}
	}
	for _, f := range figs {
		if f.limit == nil {
			continue
		}
		const slack = 1e-9 // rounding of the same sum in another order
		kept := f.before <= *f.limit*(1+slack)
		if kept && f.after > *f.limit*(1+slack) {
			t.Errorf("%s %s: adopting %q breaks the %s budget it kept: %g -> %g, limit %g", mf.file, before.Spec.Name, hint, f.name, f.before, f.after, *f.limit)
		}
		if !kept && f.after > f.before*(1+slack) {
			t.Errorf("%s %s: adopting %q makes the broken %s budget worse: %g -> %g, limit %g", mf.file, before.Spec.Name, hint, f.name, f.before, f.after, *f.limit)
		}
	}
}

// checkSpans holds the bytes outside the changes equal and every change inside the
// table's partitions (from its key to the next key of the table) or the engine block.
func checkSpans(t *testing.T, mf manifest, res *adopt.Result, table string, engine bool) {
	t.Helper()
	po, pn := 0, 0
	for _, c := range res.Changes {
		if !bytes.Equal(res.Before[po:c.Old[0]], res.After[pn:c.New[0]]) {
			t.Fatalf("%s %s: bytes outside the changes moved", mf.file, table)
		}
		po, pn = c.Old[1], c.New[1]
	}
	if !bytes.Equal(res.Before[po:], res.After[pn:]) {
		t.Fatalf("%s %s: bytes after the last change moved", mf.file, table)
	}
	doc, err := yamledit.Parse(mf.data, filepath.Ext(mf.file) == ".json")
	if err != nil {
		t.Fatal(err)
	}
	lines := lineOffsets(mf.data)
	allowed := [][2]int{region(doc, lines, []yamledit.Step{yamledit.Key("tables"), yamledit.Where(table, yamledit.Field("name", table))}, "partitions")}
	if engine {
		allowed = append(allowed, region(doc, lines, nil, "engine"))
	}
	for _, c := range res.Changes {
		in := false
		for _, a := range allowed {
			in = in || (c.Old[0] >= a[0] && c.Old[1] <= a[1])
		}
		if !in {
			t.Errorf("%s %s: a change at bytes %v lies outside the keys it may rewrite %v:\n%q", mf.file, table, c.Old, allowed, res.Before[c.Old[0]:c.Old[1]])
		}
	}
}

func lineOffsets(b []byte) []int {
	out := []int{0, 0}
	for i, c := range b {
		if c == '\n' {
			out = append(out, i+1)
		}
	}
	return append(out, len(b))
}

// region is the bytes from the line of key in the mapping at path to the line of the
// key after it (or the end of the mapping's item: the next table, the end of file).
func region(doc *yamledit.Doc, lines []int, path []yamledit.Step, key string) [2]int {
	m := doc.Root()
	if len(path) > 0 {
		m, _ = doc.Find(path...)
	}
	start, end := 0, lines[len(lines)-1]
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i].Value == key {
			start = lines[m.Content[i].Line]
			if i+2 < len(m.Content) {
				end = lines[m.Content[i+2].Line]
			} else if next := nextLine(doc, m); next > 0 {
				end = lines[next]
			}
			// A flow mapping's value may sit on its key's line: widen to the line's end.
			if end <= start {
				end = lines[m.Content[i].Line+1]
			}
		}
	}
	return [2]int{start, end}
}

// nextLine is the line of the item after mapping m in the tables sequence, 0 at the end.
func nextLine(doc *yamledit.Doc, m *yaml.Node) int {
	tables, _ := doc.Find(yamledit.Key("tables"))
	if tables == nil {
		return 0
	}
	for i, it := range tables.Content {
		if it == m && i+1 < len(tables.Content) {
			return tables.Content[i+1].Line
		}
	}
	return 0
}

// TestAdoptWholeFiles adopts every recommendation of each testdata manifest at once, as
// `scangate adopt FILE` does: the result loads, each table adopted reads as its
// candidate and its promised findings end, and adopting again changes nothing more
// than the recommendations left for a second run.
func TestAdoptWholeFiles(t *testing.T) {
	files := 0
	for _, mf := range manifests(t) {
		o := adopt.Options{Limits: schema.DefaultLimits, Project: mf.proj.Config, Levels: mf.cfg.Levels()}
		res, err := adopt.File(mf.file, mf.data, o)
		if err != nil {
			t.Errorf("%s: %v", mf.file, err)
			continue
		}
		if !res.Changed() {
			continue
		}
		files++
		m2, err := schema.LoadWith(mf.file, res.After, schema.Options{Limits: schema.DefaultLimits, Project: mf.proj.Config})
		if err != nil {
			t.Fatalf("%s: %v", mf.file, err)
		}
		_, after := rules.Check(m2, mf.cfg)
		for _, out := range res.Tables {
			if out.Candidate == nil {
				continue
			}
			for _, g := range after {
				c := out.Candidate
				if g.Table == out.Table && slices.Contains(layoutRules, g.Rule) && !remaining(c)[g.Rule] && g.Severity >= promiseLevel(out.Fits) {
					t.Errorf("%s %s: adopted %q, yet check says: %s", mf.file, out.Table, out.Hint, g.Message)
				}
			}
		}
		again, err := adopt.File(mf.file, res.After, o)
		if err != nil {
			t.Fatalf("%s, adopted again: %v", mf.file, err)
		}
		deferred := false
		for _, out := range res.Tables {
			deferred = deferred || (!out.Adopted && out.Hint != "")
		}
		if again.Changed() && !deferred {
			t.Errorf("%s: a second adopt changes it again:\n%s", mf.file, again.Diff())
		}
	}
	if files < 5 {
		t.Fatalf("only %d files changed: the test has lost its reach", files)
	}
}
