package main

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/owenrumney/go-sarif/v3/pkg/report/v210/sarif"
	"github.com/santhosh-tekuri/jsonschema/v6"
	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension"
	east "github.com/yuin/goldmark/extension/ast"
	"github.com/yuin/goldmark/text"

	"github.com/scangate/scangate/schema"
)

var formatFiles = map[string]string{
	"text": "demo.txt", "json": "demo.json", "sarif": "demo.sarif",
	"github": "demo.github", "markdown": "demo.md", "junit": "demo.xml",
}

// TestFormatsGolden pins every format's report on the demo; run with -update after a
// deliberate change and read the diff.
func TestFormatsGolden(t *testing.T) {
	for format, name := range formatFiles {
		t.Run(format, func(t *testing.T) {
			r := scangate(t, root(t), "", nil, "check", "--today", "2026-01-01", "--format", format, "testdata/demo")
			wantCode(t, r, 1)
			checkGolden(t, name, r.stdout)
		})
	}
}

// validateJSONReport checks a JSON report against the published schema/output.schema.json.
func validateJSONReport(t *testing.T, data []byte) {
	t.Helper()
	c := jsonschema.NewCompiler()
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(schema.OutputSchema()))
	if err != nil {
		t.Fatal(err)
	}
	if err := c.AddResource("output.schema.json", doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile("output.schema.json")
	if err != nil {
		t.Fatal(err)
	}
	inst, err := jsonschema.UnmarshalJSON(bytes.NewReader(data))
	if err != nil {
		t.Fatalf("report is not JSON: %v", err)
	}
	if err := sch.Validate(inst); err != nil {
		t.Errorf("JSON report breaks schema/output.schema.json: %v", err)
	}
}

// validateSARIF checks a SARIF log against the official OASIS SARIF 2.1.0 JSON schema
// (errata 01) that the go-sarif library ships, after checking that reading the log into
// the library's types loses nothing we wrote. Not strictly: the log leaves empty arrays
// out, which the library would write back as null; the independent validator test in
// internal/report checks the bytes.
func validateSARIF(t *testing.T, data []byte) {
	t.Helper()
	log, err := sarif.FromBytes(data)
	if err != nil {
		t.Fatalf("SARIF does not parse: %v", err)
	}
	if err := log.Validate(); err != nil {
		t.Errorf("SARIF breaks the SARIF 2.1.0 schema: %v", err)
	}
	var written, reread map[string]any
	if err := json.Unmarshal(data, &written); err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := log.Write(&b); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b.Bytes(), &reread); err != nil {
		t.Fatal(err)
	}
	if missing := missingKeys(written, reread, ""); len(missing) > 0 {
		t.Errorf("fields the SARIF types do not carry, so the schema check did not see them: %v", missing)
	}
}

func missingKeys(a, b any, path string) []string {
	var out []string
	switch x := a.(type) {
	case map[string]any:
		y, _ := b.(map[string]any)
		for k, v := range x {
			w, ok := y[k]
			if !ok {
				out = append(out, path+"/"+k)
				continue
			}
			out = append(out, missingKeys(v, w, path+"/"+k)...)
		}
	case []any:
		y, _ := b.([]any)
		for i, v := range x {
			if i >= len(y) {
				out = append(out, fmt.Sprintf("%s/%d", path, i))
				continue
			}
			out = append(out, missingKeys(v, y[i], fmt.Sprintf("%s/%d", path, i))...)
		}
	}
	return out
}

func TestMachineFormatsValidate(t *testing.T) {
	for _, args := range [][]string{
		{"testdata/demo"},
		{"testdata/demo", "testdata/bad/values.yaml"},
		{"testdata/rules/scan-time/quiet.yaml"},
	} {
		r := scangate(t, root(t), "", nil, append([]string{"check", "--format", "json"}, args...)...)
		validateJSONReport(t, []byte(r.stdout))
		r = scangate(t, root(t), "", nil, append([]string{"check", "--format", "sarif"}, args...)...)
		validateSARIF(t, []byte(r.stdout))
	}
}

// The SARIF results carry what code scanning needs: rule index, level, a location
// relative to %SRCROOT% and a fingerprint that ignores the line.
func TestSARIFResults(t *testing.T) {
	r := scangate(t, root(t), "", nil, "check", "--format", "sarif", "testdata/demo")
	var log struct {
		Runs []struct {
			Tool struct {
				Driver struct{ Rules []struct{ ID string } }
			}
			Results []struct {
				RuleID              string
				RuleIndex           int
				Level               string
				PartialFingerprints map[string]string
				Locations           []struct {
					PhysicalLocation struct {
						ArtifactLocation struct {
							URI       string `json:"uri"`
							URIBaseID string `json:"uriBaseId"`
						}
						Region struct{ StartLine, StartColumn int }
					}
				}
			}
		}
	}
	if err := json.Unmarshal([]byte(r.stdout), &log); err != nil {
		t.Fatal(err)
	}
	run := log.Runs[0]
	if len(run.Results) == 0 {
		t.Fatal("no results")
	}
	for _, res := range run.Results {
		if run.Tool.Driver.Rules[res.RuleIndex].ID != res.RuleID {
			t.Errorf("ruleIndex %d does not point at %s", res.RuleIndex, res.RuleID)
		}
		loc := res.Locations[0].PhysicalLocation
		if loc.ArtifactLocation.URIBaseID != "%SRCROOT%" || !strings.HasPrefix(loc.ArtifactLocation.URI, "testdata/demo/") || loc.Region.StartLine < 1 {
			t.Errorf("location %+v", loc)
		}
		if len(res.PartialFingerprints[fingerprintKeyForTest]) != 32 {
			t.Errorf("fingerprint %v", res.PartialFingerprints)
		}
	}
}

const fingerprintKeyForTest = "scangateFinding/v1"

// Moving a table ten lines down and editing elsewhere keeps every fingerprint.
func TestFingerprintsIgnoreLineMoves(t *testing.T) {
	src, err := os.ReadFile(filepath.Join(root(t), "testdata/demo/meter-telemetry.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	os.Mkdir(filepath.Join(dir, ".git"), 0o755) // the repository root for relative paths
	write := func(body string) map[string]bool {
		if err := os.WriteFile(filepath.Join(dir, "m.yaml"), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		r := scangate(t, dir, "", nil, "check", "--format", "json", "m.yaml")
		var doc struct {
			Findings []struct{ Fingerprint string }
		}
		if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
			t.Fatal(err)
		}
		set := map[string]bool{}
		for _, f := range doc.Findings {
			set[f.Fingerprint] = true
		}
		return set
	}
	before := write(string(src))
	moved := strings.Replace(string(src), "tables:\n", "tables:\n"+strings.Repeat("  # padding\n", 10), 1)
	moved = strings.Replace(moved, "cores: 8", "cores: 8    # reformatted", 1)
	after := write(moved)
	if len(before) == 0 || fmt.Sprint(before) != fmt.Sprint(after) {
		t.Errorf("fingerprints changed when lines moved:\n%v\n%v", before, after)
	}
}

func TestGitHubEscaping(t *testing.T) {
	for _, c := range []struct{ in, data, prop string }{
		{"50% done", "50%25 done", "50%25 done"},
		{"a\r\nb", "a%0D%0Ab", "a%0D%0Ab"},
		{"x: y, z", "x: y, z", "x%3A y%2C z"},
		{"%0A literal", "%250A literal", "%250A literal"},
	} {
		// Expected values follow the workflow-command escaping rules of the runner:
		// data escapes % CR LF; property values also escape : and , (documented format).
		if got := escapeDataForTest(c.in); got != c.data {
			t.Errorf("data %q: got %q, want %q", c.in, got, c.data)
		}
		if got := escapePropertyForTest(c.in); got != c.prop {
			t.Errorf("property %q: got %q, want %q", c.in, got, c.prop)
		}
	}
	summary := filepath.Join(t.TempDir(), "summary.md")
	os.WriteFile(summary, []byte("earlier step\n"), 0o644)
	r := scangate(t, root(t), "", []string{"GITHUB_ACTIONS=true", "GITHUB_STEP_SUMMARY=" + summary}, "check", "testdata/demo")
	wantCode(t, r, 1)
	if !strings.Contains(r.stdout, "\n::error file=testdata/demo/meter-telemetry.yaml,line=19,col=5,title=scangate scan-overhead::") ||
		!strings.Contains(r.stdout, "3 files, 8 tables") {
		t.Errorf("in a GitHub Actions job the default is text plus annotations:\n%s", r.stdout)
	}
	got, _ := os.ReadFile(summary)
	if !strings.HasPrefix(string(got), "earlier step\n### scangate failed") {
		t.Errorf("the job summary should be appended to:\n%s", got)
	}
}

// The Markdown summary renders as intended: a table of tables and one list item per
// finding, parsed with goldmark (a CommonMark parser with the GFM table extension).
func TestMarkdownRenders(t *testing.T) {
	r := scangate(t, root(t), "", nil, "check", "--format", "markdown", "testdata/demo")
	src := []byte(r.stdout)
	doc := goldmark.New(goldmark.WithExtensions(extension.Table)).Parser().Parse(text.NewReader(src))
	var tables, rows, items, headings, charts int
	ast.Walk(doc, func(n ast.Node, entering bool) (ast.WalkStatus, error) {
		if !entering {
			return ast.WalkContinue, nil
		}
		switch n.Kind() {
		case east.KindTable:
			tables++
		case east.KindTableRow:
			rows++
		case ast.KindListItem:
			if n.Parent().Parent().Kind() == ast.KindDocument {
				items++
			}
		case ast.KindHeading:
			headings++
		case ast.KindFencedCodeBlock:
			if string(n.(*ast.FencedCodeBlock).Language(src)) == "mermaid" {
				charts++
			}
		}
		return ast.WalkContinue, nil
	})
	// Charts for the three tables with a segment finding: billing_lines, meter_reads and
	// hydrant_inspections, each with a table of its 3, 4 and 3 bars; headings: the
	// verdict, the charts, three severities.
	if tables != 4 || rows != 8+10 || items != 6 || headings != 5 || charts != 3 {
		t.Errorf("tables %d (want 1 and 3 under charts), rows %d (want 8 tables and 10 bars), top-level items %d (want 6 findings), headings %d (want 5), charts %d (want 3)\n%s", tables, rows, items, headings, charts, src)
	}
}

func TestJUnitParses(t *testing.T) {
	r := scangate(t, root(t), "", nil, "check", "--format", "junit", "--fail-on", "warning", "testdata/demo", "testdata/bad/values.yaml")
	wantCode(t, r, 2)
	var doc struct {
		Tests    int `xml:"tests,attr"`
		Failures int `xml:"failures,attr"`
		Errors   int `xml:"errors,attr"`
		Suites   []struct {
			Name  string `xml:"name,attr"`
			Cases []struct {
				Name     string `xml:"name,attr"`
				Failures []struct {
					Type string `xml:"type,attr"`
				} `xml:"failure"`
			} `xml:"testcase"`
		} `xml:"testsuite"`
	}
	if err := xml.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatalf("JUnit XML does not parse: %v", err)
	}
	// 8 tables + 1 schema case; failing cases at --fail-on warning: meter_reads and
	// hydrant_inspections; the broken file is an error.
	if len(doc.Suites) != 4 || doc.Tests != 9 || doc.Failures != 2 || doc.Errors != 1 {
		t.Errorf("suites %d tests %d failures %d errors %d", len(doc.Suites), doc.Tests, doc.Failures, doc.Errors)
	}
}

// Reports to files are written whole or not at all, into directories made on demand.
func TestFileOutputs(t *testing.T) {
	dir := t.TempDir()
	sarifPath := filepath.Join(dir, "out", "deep", "scangate.sarif")
	r := scangate(t, root(t), "", nil, "check", "--format", "text", "--format", "sarif="+sarifPath, "testdata/demo")
	wantCode(t, r, 1)
	if !strings.Contains(r.stdout, "[scan-overhead]") {
		t.Error("text should still go to stdout")
	}
	data, err := os.ReadFile(sarifPath)
	if err != nil {
		t.Fatal(err)
	}
	validateSARIF(t, data)
	r = scangate(t, root(t), "", nil, "check", "--format", "json", "--output", filepath.Join(dir, "r.json"), "testdata/demo")
	wantCode(t, r, 1)
	data, err = os.ReadFile(filepath.Join(dir, "r.json"))
	if err != nil || r.stdout != "" {
		t.Fatalf("--output should take the report from stdout: %v, stdout %q", err, r.stdout)
	}
	validateJSONReport(t, data)

	// A target that cannot be written: nothing half-written, the old file intact, exit 2.
	locked := filepath.Join(dir, "locked")
	os.Mkdir(locked, 0o755)
	old := filepath.Join(locked, "r.json")
	os.WriteFile(old, []byte("previous report"), 0o644)
	os.Chmod(locked, 0o555)
	defer os.Chmod(locked, 0o755)
	r = scangate(t, root(t), "", nil, "check", "--format", "json="+old, "testdata/demo")
	if os.Geteuid() != 0 { // root ignores directory permissions
		wantCode(t, r, 2)
	}
	if got, _ := os.ReadFile(old); os.Geteuid() != 0 && string(got) != "previous report" {
		t.Errorf("the old report was changed: %q", got)
	}
	entries, _ := os.ReadDir(locked)
	for _, e := range entries {
		if strings.HasSuffix(e.Name(), ".tmp") {
			t.Errorf("temporary file left behind: %s", e.Name())
		}
	}
	for _, bad := range [][]string{
		{"--format", "pdf"}, {"--format", "json="}, {"--format", "json=a", "--format", "sarif=a"},
		{"--format", "json", "--format", "text", "--output", filepath.Join(dir, "x")},
	} {
		r := scangate(t, root(t), "", nil, append(append([]string{"check"}, bad...), "testdata/demo")...)
		if r.code != 2 || r.stderr == "" {
			t.Errorf("%v: exit %d, stderr %q", bad, r.code, r.stderr)
		}
	}
}

// Fifty manifests, one of them broken, checked twice and with one worker: the same
// bytes every time, in every format, and the broken file does not stop the others.
func TestManyFilesDeterministic(t *testing.T) {
	dir := t.TempDir()
	os.Mkdir(filepath.Join(dir, ".git"), 0o755)
	demo, _ := filepath.Glob(filepath.Join(root(t), "testdata/demo/*.yaml"))
	for i := 0; i < 50; i++ {
		src, _ := os.ReadFile(demo[i%len(demo)])
		body := strings.Replace(string(src), "model: ", fmt.Sprintf("model: copy-%02d-", i), 1)
		if i == 17 {
			body = strings.Replace(body, "format: 1", "format: 7", 1)
		}
		os.WriteFile(filepath.Join(dir, fmt.Sprintf("m%02d.yaml", i)), []byte(body), 0o644)
	}
	for format := range formatFiles {
		a := scangate(t, dir, "", nil, "check", "--format", format, ".")
		b := scangate(t, dir, "", []string{"GOMAXPROCS=1"}, "check", "--format", format, ".")
		wantCode(t, a, 2)
		if a.stdout != b.stdout {
			t.Errorf("%s: output differs between runs", format)
		}
		// 17 copies of billing (2 tables), 16 of meter-telemetry (3) and 16 good copies
		// of network-assets (3): 34 + 48 + 48 = 130 tables.
		if format == "text" && !strings.Contains(a.stdout, "50 files, 130 tables") {
			t.Errorf("want the 49 good files checked:\n%s", a.stdout[max(0, len(a.stdout)-300):])
		}
	}
}
