package schema_test

import (
	"errors"
	"strings"
	"testing"

	"github.com/scangate/scangate/schema"
)

// The project config's engine profiles and budgets take the manifest's types and
// ranges: each value the manifest refuses, the config refuses with the same words.
func TestConfigNumbersCheckedLikeManifest(t *testing.T) {
	values := []string{"0", "-1", "0.5", "1e300", "1e-320", `"x"`, "5000", "2EiB", "true"}
	engine := []string{"segment_rows", "cores", "segment_overhead_ms", "scan_mb_per_s", "memory", "refresh_parallelism"}
	budgets := []string{"scan_overhead_ms", "scan_ms", "refresh_memory"}
	refused := 0
	for _, v := range values {
		for _, f := range engine {
			set := "segment_rows: 1Mi, " + f + ": " + v
			if f == "segment_rows" {
				set = f + ": " + v
			}
			manifest := "format: 1\nmodel: m\nengine: {" + set + "}\ntables: [{name: t, rows: 1M, partitions: {scheme: none}}]\n"
			config := "engines:\n  x: {" + set + "}\n"
			refused += compareRefusals(t, "engine."+f+": "+v, manifest, config)
		}
		for _, f := range budgets {
			manifest := "format: 1\nmodel: m\nengine: {segment_rows: 1Mi}\nbudgets: {" + f + ": " + v + "}\ntables: [{name: t, rows: 1M, partitions: {scheme: none}}]\n"
			config := "budgets: {" + f + ": " + v + "}\n"
			refused += compareRefusals(t, "budgets."+f+": "+v, manifest, config)
		}
	}
	if refused < 40 {
		t.Errorf("only %d of the cases were refused; the test no longer probes the ranges", refused)
	}
}

// compareRefusals loads both documents and fails unless both are taken or both refused
// with the same messages; it returns 1 when refused.
func compareRefusals(t *testing.T, what, manifest, config string) int {
	t.Helper()
	_, merr := schema.Load("m.yaml", []byte(manifest), schema.DefaultLimits)
	_, cerr := schema.LoadConfig(".scangate.yaml", []byte(config), schema.DefaultLimits)
	mm, cm := messages(t, merr), messages(t, cerr)
	if mm != cm {
		t.Errorf("%s: the manifest says %q, the config %q", what, mm, cm)
	}
	if cerr == nil {
		return 0
	}
	return 1
}

func messages(t *testing.T, err error) string {
	t.Helper()
	if err == nil {
		return ""
	}
	var se *schema.Error
	if !errors.As(err, &se) {
		t.Fatalf("not a positioned error: %v", err)
	}
	var out []string
	for _, p := range se.Problems {
		if p.Pos.Line == 0 {
			t.Errorf("%s: no position", p.Message)
		}
		out = append(out, p.Message)
	}
	return strings.Join(out, "; ")
}

// A glob that can never match is refused where it is written, not left to show as "no
// manifest found"; ** and the wildcards of path.Match are accepted.
func TestConfigGlobsChecked(t *testing.T) {
	good := "include: [\"models/**/*.yaml\", \"m?/[a-c]*.yml\"]\nexclude: [\"**/drafts/**\"]\n"
	if _, err := schema.LoadConfig(".scangate.yaml", []byte(good), schema.DefaultLimits); err != nil {
		t.Fatalf("well-formed globs refused: %v", err)
	}
	bad := "include:\n  - \"models/[ab/*.yaml\"\nexclude: [\"ok/**\", \"x\\\\\"]\n"
	_, err := schema.LoadConfig(".scangate.yaml", []byte(bad), schema.DefaultLimits)
	var se *schema.Error
	if !errors.As(err, &se) || len(se.Problems) != 2 {
		t.Fatalf("want two problems, got %v", err)
	}
	for i, want := range []struct {
		line, col int
		text      string
	}{{2, 5, `glob "models/[ab/*.yaml": "[ab" is not a valid pattern`}, {3, 20, `glob "x\\": "x\\" is not a valid pattern`}} {
		p := se.Problems[i]
		if p.Pos.Line != want.line || p.Pos.Col != want.col || !strings.Contains(p.Text(), want.text) {
			t.Errorf("problem %d: %d:%d %q; want %d:%d containing %q", i, p.Pos.Line, p.Pos.Col, p.Text(), want.line, want.col, want.text)
		}
	}
}
