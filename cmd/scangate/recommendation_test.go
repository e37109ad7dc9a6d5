package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// manifestsUnder lists every manifest under testdata that loads (a file holding
// "format:"), leaving out the invalid ones of testdata/bad and the generated outputs.
func manifestsUnder(t *testing.T) []string {
	t.Helper()
	var out []string
	base := filepath.Join(root(t), "testdata")
	filepath.WalkDir(base, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(base, p)
		if d.IsDir() {
			switch rel {
			case "bad", "golden", "baselines", "calibration":
				return filepath.SkipDir
			}
			return nil
		}
		if ext := filepath.Ext(p); ext != ".yaml" && ext != ".yml" && ext != ".json" {
			return nil
		}
		if data, err := os.ReadFile(p); err == nil && bytes.Contains(data, []byte("format:")) {
			out = append(out, p)
		}
		return nil
	})
	if len(out) < 30 {
		t.Fatalf("only %d manifests found under %s", len(out), base)
	}
	return out
}

// tableKey names a table within a run: file, name and line.
type tableKey struct {
	name string
	line int
}

// For every manifest under testdata, check's JSON and plan's JSON carry the same
// recommendation, byte for byte, for every table; and check's text never shows two
// different first hints for one table: the first finding of a table carries the
// recommendation, every later one points to it.
func TestOneRecommendationPerTable(t *testing.T) {
	seeAbove := regexp.MustCompile(`^see the recommendation for table (.*) above$`)
	withRec := 0
	for _, path := range manifestsUnder(t) {
		rel, _ := filepath.Rel(root(t), path)
		t.Run(rel, func(t *testing.T) {
			c := scangate(t, root(t), "", nil, "check", rel, "--format", "json", "--today", "2026-01-15", "--fail-on", "never")
			if c.code == 2 {
				t.Skipf("not a valid manifest here: %s", c.stderr)
			}
			wantCode(t, c, 0)
			var check struct {
				Files []struct {
					Tables []struct {
						Name           string
						Line           int
						Recommendation json.RawMessage
					}
				}
			}
			if err := json.Unmarshal([]byte(c.stdout), &check); err != nil {
				t.Fatal(err)
			}
			p := scangate(t, root(t), "", nil, "plan", rel, "--format", "json", "--today", "2026-01-15")
			wantCode(t, p, 0)
			var plan struct {
				Files []struct {
					Tables []struct {
						Name           string
						Line           int
						Problem        string
						Recommendation json.RawMessage
					}
				}
			}
			if err := json.Unmarshal([]byte(p.stdout), &plan); err != nil {
				t.Fatal(err)
			}
			planned := map[tableKey]string{}
			for _, f := range plan.Files {
				for _, tb := range f.Tables {
					if tb.Problem == "" {
						planned[tableKey{tb.Name, tb.Line}] = string(tb.Recommendation)
					}
				}
			}
			recs := map[string]string{} // by table name: the hint check's JSON words
			for _, f := range check.Files {
				for _, tb := range f.Tables {
					got, ok := planned[tableKey{tb.Name, tb.Line}]
					if !ok {
						t.Errorf("table %s (line %d) is in check's JSON but not in plan's", tb.Name, tb.Line)
						continue
					}
					if got != string(tb.Recommendation) {
						t.Errorf("table %s: check recommends\n%s\nplan recommends\n%s", tb.Name, tb.Recommendation, got)
					}
					var r *struct{ Hint string }
					json.Unmarshal(tb.Recommendation, &r)
					if r != nil {
						recs[tb.Name] = r.Hint
						withRec++
					}
				}
			}
			// The text: one first hint per table, the first one printed; the rest point to it.
			txt := scangate(t, root(t), "", nil, "check", rel, "--today", "2026-01-15", "--fail-on", "never", "--no-color")
			first := map[string]string{}
			var table string
			hintNo := 0
			for _, line := range strings.Split(txt.stdout, "\n") {
				if !strings.HasPrefix(line, "    hint: ") {
					table, hintNo = "", 0
					if m := regexp.MustCompile(`^[^ ]+:\d+:\d+: \w+: ([^:]+): `).FindStringSubmatch(line); m != nil {
						table = m[1]
					}
					continue
				}
				hintNo++
				h := strings.TrimPrefix(line, "    hint: ")
				if hintNo != 1 || table == "" {
					continue
				}
				if m := seeAbove.FindStringSubmatch(h); m != nil {
					if m[1] != table {
						t.Errorf("a finding of %s points to table %s", table, m[1])
					}
					if _, ok := first[table]; !ok {
						t.Errorf("%s points above before any finding of its table carries the recommendation", table)
					}
					continue
				}
				if prev, ok := first[table]; ok && prev != h && isAdvice(h, recs[table]) {
					t.Errorf("table %s shows two first hints:\n%s\n%s", table, prev, h)
				}
				if _, ok := first[table]; !ok && isAdvice(h, recs[table]) {
					first[table] = h
				}
				if rec, ok := recs[table]; ok && isAdvice(h, rec) && h != rec {
					t.Errorf("table %s: text hint %q is not the JSON's recommendation %q", table, h, rec)
				}
			}
		})
	}
	if withRec == 0 {
		t.Error("no table under testdata has a recommendation: the test proves nothing")
	}
}

// isAdvice tells a table's shared first hint (its recommendation, or why today's layout
// is kept) from a rule's own first line, which is about something else (a row count,
// a waiver, a look-alike name).
func isAdvice(h, rec string) bool {
	return (rec != "" && h == rec) || strings.HasPrefix(h, "the recommendation keeps") ||
		strings.HasPrefix(h, "no layout tried") || strings.Contains(h, " -> ") && strings.Contains(h, " segments, ")
}
