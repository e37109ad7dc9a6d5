package run

import (
	"bytes"
	"os"
	"path/filepath"
	"slices"
	"testing"
	"time"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// writeFiles makes a directory holding files (name -> content), all at its top.
func writeFiles(t *testing.T, files map[string]string) string {
	t.Helper()
	dir := t.TempDir()
	for name, body := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

// Workers finish loading in any order; the budget still decides as if the inputs were
// spent one after another in input order.
func TestRunBudgetSpendsInInputOrder(t *testing.T) {
	sizes := []int64{5, 1, 7, 2, 9, 3, 3, 8, 1, 4, 6, 2, 5, 7, 1, 9}
	var want []bool
	spent := int64(0)
	for _, n := range sizes {
		ok := spent+n <= 20
		if ok {
			spent += n
		}
		want = append(want, ok)
	}
	for round := range 20 {
		b := newRunBudget(20)
		got := make([]bool, len(sizes))
		parallel(len(sizes), func(i int) {
			time.Sleep(time.Duration((i*7+round)%5) * time.Millisecond) // finish out of order
			got[i] = b.spend(i, sizes[i])
		})
		if !slices.Equal(got, want) {
			t.Fatalf("round %d: refused %v, want %v", round, got, want)
		}
	}
}

// Files found on disk are read when checked, not all at collection: Collect keeps only
// their paths, and a file's bytes are read again when asked for.
func TestInputsAreReadWhenChecked(t *testing.T) {
	good := "format: 1\nmodel: m\nengine: {segment_rows: 1000}\ntables: [{name: t, rows: 10, partitions: {scheme: none}}]\n"
	dir := writeFiles(t, map[string]string{"a.yaml": good, "notes.yaml": "title: not a manifest\n"})
	ins, err := Collect([]string{dir, filepath.Join(dir, "a.yaml")}, nil, 1<<20, nil)
	if err != nil || len(ins) != 2 {
		t.Fatalf("Collect: %d inputs, %v", len(ins), err)
	}
	for _, in := range ins {
		if in.data != nil || in.path == "" {
			t.Errorf("%s: bytes kept at collection (%d bytes, path %q)", in.name, len(in.data), in.path)
		}
		if data, err := in.bytes(); err != nil || string(data) != good {
			t.Errorf("%s: read %q, %v", in.name, data, err)
		}
	}
	if len(OnlyManifests(ins)) != 2 {
		t.Error("OnlyManifests dropped a manifest it had to read first")
	}
}

func TestGlobMatch(t *testing.T) {
	for _, c := range []struct {
		pattern, name string
		want          bool
	}{
		{"models/**/*.yaml", "models/a.yaml", true},
		{"models/**/*.yaml", "models/x/y/a.yaml", true},
		{"models/**/*.yaml", "other/a.yaml", false},
		{"**/drafts/**", "models/drafts/c.yaml", true},
		{"**/drafts/**", "drafts/c.yaml", true},
		{"*.yaml", "sub/a.yaml", false},
		{"**", "any/thing", true},
	} {
		if got := globMatch(c.pattern, c.name); got != c.want {
			t.Errorf("globMatch(%q, %q) = %v", c.pattern, c.name, got)
		}
	}
}

// check drops the analysed tables unless a report prints them (NeedsTables). Every
// format whose output changes without the tables must say it needs them, or a report
// would quietly lose its per-table figures.
func TestNeedsTablesCoversEveryFormatThatReadsThem(t *testing.T) {
	paths, _ := filepath.Glob("../../testdata/demo/*.yaml")
	inputs, err := Collect(paths, nil, schema.DefaultLimits.MaxFileBytes, nil)
	if err != nil {
		t.Fatal(err)
	}
	cfg, _ := PlainConfig("2026-01-01")
	result := func(keep bool) *report.Result {
		files, findings := Check(slices.Clone(inputs), cfg, nil, schema.DefaultLimits, keep)
		return &report.Result{Version: "test", FailOn: rules.Error, Files: files, Findings: findings, Summary: report.Summarize(files)}
	}
	kept, dropped := result(true), result(false)
	if kept.Summary != dropped.Summary {
		t.Errorf("summary changed when tables are dropped: %+v vs %+v", kept.Summary, dropped.Summary)
	}
	t.Setenv("GITHUB_STEP_SUMMARY", "")
	for _, name := range report.Names(report.CheckReport) {
		format, _ := report.Lookup(name, report.CheckReport)
		render := func(r *report.Result) string {
			var b bytes.Buffer
			if err := format.Render(&b, r, false); err != nil {
				t.Fatal(err)
			}
			return b.String()
		}
		differs := render(kept) != render(dropped)
		if prints := NeedsTables([]Destination{{Format: format}}); differs && !prints {
			t.Errorf("%s prints per-table figures but does not say it needs the tables", name)
		} else if !differs && prints {
			t.Errorf("%s prints the same without tables; it keeps them for nothing", name)
		}
	}
	github, _ := report.Lookup("github", report.CheckReport)
	t.Setenv("GITHUB_STEP_SUMMARY", filepath.Join(t.TempDir(), "summary.md"))
	if !NeedsTables([]Destination{{Format: github}}) {
		t.Error("the job summary is Markdown with per-table figures: github must keep the tables when it is written")
	}
}
