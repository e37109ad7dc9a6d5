package report

import (
	"bytes"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// The text layout is the GNU convention "file:line:col: severity: message", hints
// indented below, then one summary line.
func TestTextLayout(t *testing.T) {
	fs := []rules.Finding{
		{Rule: "scan-overhead", Severity: rules.Error, File: "m.yaml", Pos: schema.Pos{Line: 8, Col: 5}, Message: "t: too slow", Hints: []string{"do less: 2 -> 1 segments"}},
		{Rule: "schema", Severity: rules.Error, File: "broken.yaml", Message: "cannot read the file: permission denied"},
		{Rule: "truncated-segments", Severity: rules.Note, File: "m.yaml", Pos: schema.Pos{Line: 9, Col: 5}, Message: "t: 1 excess segment"},
	}
	var b bytes.Buffer
	if err := writeText(&b, &Result{Findings: fs, Summary: Summary{Files: 2, Invalid: 1, Tables: 1}}, false); err != nil {
		t.Fatal(err)
	}
	want := `m.yaml:8:5: error: t: too slow [scan-overhead]
    hint: do less: 2 -> 1 segments
broken.yaml: error: cannot read the file: permission denied [schema]
m.yaml:9:5: note: t: 1 excess segment [truncated-segments]
2 files, 1 table: 2 errors, 0 warnings, 1 note; 1 file could not be checked
`
	if b.String() != want {
		t.Errorf("got:\n%s\nwant:\n%s", b.String(), want)
	}
	b.Reset()
	writeText(&b, &Result{Summary: Summary{Files: 1, Tables: 3}}, true)
	if b.String() != "1 file, 3 tables: no findings\n" {
		t.Errorf("clean run: %q", b.String())
	}
}
