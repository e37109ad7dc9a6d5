package report

import (
	"encoding/xml"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// junitOut is a case's error, failure or skipped element.
type junitOut struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr"`
	Text    string `xml:",chardata"`
}

type junitTestCase struct {
	Name      string     `xml:"name,attr"`
	Classname string     `xml:"classname,attr"`
	Time      string     `xml:"time,attr"`
	Errors    []junitOut `xml:"error"`
	Failures  []junitOut `xml:"failure"`
	Skipped   []junitOut `xml:"skipped"`
	SystemOut string     `xml:"system-out"`
}

// outcome is the case's one outcome element by name, "" when it passed.
func (c junitTestCase) outcome() (string, junitOut) {
	switch {
	case len(c.Errors) > 0:
		return "error", c.Errors[0]
	case len(c.Failures) > 0:
		return "failure", c.Failures[0]
	case len(c.Skipped) > 0:
		return "skipped", c.Skipped[0]
	}
	return "", junitOut{}
}

// junitDoc is JUnit XML as test-report readers take it: testsuites > testsuite >
// testcase > error, failure or skipped, with the outcomes counted on the suites.
type junitDoc struct {
	XMLName  xml.Name `xml:"testsuites"`
	Tests    int      `xml:"tests,attr"`
	Failures int      `xml:"failures,attr"`
	Errors   int      `xml:"errors,attr"`
	Time     string   `xml:"time,attr"`
	Suites   []struct {
		Name     string          `xml:"name,attr"`
		File     string          `xml:"file,attr"`
		Tests    int             `xml:"tests,attr"`
		Failures int             `xml:"failures,attr"`
		Errors   int             `xml:"errors,attr"`
		Skipped  int             `xml:"skipped,attr"`
		Time     string          `xml:"time,attr"`
		Cases    []junitTestCase `xml:"testcase"`
	} `xml:"testsuite"`
}

func decodeJUnit(t *testing.T, out string) junitDoc {
	t.Helper()
	if !strings.HasPrefix(out, xml.Header) {
		t.Errorf("no XML declaration:\n%s", out)
	}
	var doc junitDoc
	if err := xml.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("JUnit XML does not parse: %v\n%s", err, out)
	}
	// The counts on every level agree with the cases under them, each case has one
	// outcome at most, and every time is the fixed "0".
	tests, failures, errs := 0, 0, 0
	for _, s := range doc.Suites {
		n := map[string]int{}
		for _, c := range s.Cases {
			if k := len(c.Errors) + len(c.Failures) + len(c.Skipped); k > 1 {
				t.Errorf("suite %s case %s: %d outcomes, want one at most", s.Name, c.Name, k)
			}
			kind, _ := c.outcome()
			n[kind]++
			if c.Time != "0" {
				t.Errorf("case %s: time %q", c.Name, c.Time)
			}
		}
		if s.Tests != len(s.Cases) || s.Failures != n["failure"] || s.Errors != n["error"] || s.Skipped != n["skipped"] || s.Time != "0" {
			t.Errorf("suite %s: tests %d failures %d errors %d skipped %d time %q, but cases %d, outcomes %v",
				s.Name, s.Tests, s.Failures, s.Errors, s.Skipped, s.Time, len(s.Cases), n)
		}
		tests += s.Tests
		failures += s.Failures
		errs += s.Errors
	}
	if doc.Tests != tests || doc.Failures != failures || doc.Errors != errs || doc.Time != "0" {
		t.Errorf("testsuites: tests %d failures %d errors %d time %q, suites add up to %d, %d and %d",
			doc.Tests, doc.Failures, doc.Errors, doc.Time, tests, failures, errs)
	}
	return doc
}

// caseOutcomes lists each case as "file name: outcome type".
func caseOutcomes(doc junitDoc) []string {
	var out []string
	for _, s := range doc.Suites {
		for _, c := range s.Cases {
			kind, o := c.outcome()
			out = append(out, strings.TrimSpace(s.Name+" "+c.Name+": "+kind+" "+o.Type))
		}
	}
	return out
}

// A case per table: a failure where a finding fails the run (at --fail-on warning
// that is events' error and readings' warning), skipped where the finding is waived.
func TestJUnitCasesAndFailures(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Warning)
	doc := decodeJUnit(t, render(t, "junit", r, false))
	if doc.Tests != 4 || doc.Failures != 2 || doc.Errors != 0 || len(doc.Suites) != 1 ||
		doc.Suites[0].Name != "conf/m.yaml" || doc.Suites[0].File != "conf/m.yaml" || doc.Suites[0].Skipped != 1 {
		t.Errorf("tests %d failures %d errors %d suites %d", doc.Tests, doc.Failures, doc.Errors, len(doc.Suites))
	}
	want := []string{
		"conf/m.yaml events: failure scan-overhead (error)",
		"conf/m.yaml readings: failure truncated-segments (warning)",
		"conf/m.yaml quiet:",
		"conf/m.yaml waived: skipped scan-overhead (error)",
	}
	if got := caseOutcomes(doc); !slices.Equal(got, want) {
		t.Errorf("cases:\n%q\nwant:\n%q", got, want)
	}
	c := doc.Suites[0].Cases[0]
	if c.Classname != "cases" || c.SystemOut != "conf/m.yaml:6:5" || c.Failures[0].Message != r.Findings[0].Message ||
		!strings.HasPrefix(c.Failures[0].Text, "conf/m.yaml:6:5: error: "+r.Findings[0].Message+" [scan-overhead]\nhint: ") {
		t.Errorf("events case: %+v", c)
	}

	// At the default level, error, only events fails.
	r.FailOn = rules.Error
	if doc := decodeJUnit(t, render(t, "junit", r, false)); doc.Tests != 4 || doc.Failures != 1 {
		t.Errorf("at error: tests %d failures %d", doc.Tests, doc.Failures)
	}
	// With --fail-on never, nothing but schema problems fails; the waiver still shows.
	r.FailOn = 0
	if doc := decodeJUnit(t, render(t, "junit", r, false)); doc.Tests != 4 || doc.Failures != 0 || doc.Suites[0].Skipped != 1 {
		t.Errorf("never: tests %d failures %d skipped %d", doc.Tests, doc.Failures, doc.Suites[0].Skipped)
	}
}

// An invalid file is one case, schema, with one error naming its first problem and
// listing all; a finding about the model as a whole is a case of its own.
func TestJUnitSchemaAndModelCases(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, 0)
	r.Files = append(r.Files, File{Name: "broken.yaml", URI: "conf/broken.yaml", Invalid: true})
	r.Findings = append(r.Findings,
		rules.Finding{Rule: "refresh-memory", Severity: rules.Error, File: "m.yaml", Pos: r.Files[0].Tables[0].Pos, Message: "the refresh needs 9 GiB"},
		rules.Finding{Rule: "schema", Severity: rules.Error, File: "broken.yaml", Pos: schema.Pos{Line: 2, Col: 1}, Message: "model: required"},
		rules.Finding{Rule: "schema", Severity: rules.Error, File: "broken.yaml", Pos: schema.Pos{Line: 3, Col: 1}, Message: "tables: required"},
	)
	r.Summary = Summarize(r.Files)
	r.FailOn = rules.Error
	doc := decodeJUnit(t, render(t, "junit", r, false))
	want := []string{
		"conf/m.yaml model cases: failure refresh-memory (error)",
		"conf/m.yaml events: failure scan-overhead (error)",
		"conf/m.yaml readings:",
		"conf/m.yaml quiet:",
		"conf/m.yaml waived: skipped scan-overhead (error)",
		"conf/broken.yaml schema: error schema (error)",
	}
	if got := caseOutcomes(doc); !slices.Equal(got, want) {
		t.Errorf("cases:\n%q\nwant:\n%q", got, want)
	}
	if doc.Tests != 6 || doc.Failures != 2 || doc.Errors != 1 {
		t.Errorf("tests %d failures %d errors %d, want 6, 2 and 1", doc.Tests, doc.Failures, doc.Errors)
	}
	e := doc.Suites[1].Cases[0].Errors[0]
	if e.Message != "model: required" || e.Text != "conf/broken.yaml:2:1: error: model: required [schema]\nconf/broken.yaml:3:1: error: tables: required [schema]" {
		t.Errorf("schema error: %+v", e)
	}
	// Schema problems are errors even when nothing else can fail.
	r.FailOn = 0
	if doc := decodeJUnit(t, render(t, "junit", r, false)); doc.Failures != 0 || doc.Errors != 1 {
		t.Errorf("never: %d failures %d errors, want the schema case alone", doc.Failures, doc.Errors)
	}
}

// Waived and baselined findings are skipped cases that say why: the waiver's expiry and
// reason, or the baseline file. A failing case keeps its accepted findings in its text.
func TestJUnitSkipped(t *testing.T) {
	r := waivedAndBaselined(t)
	doc := decodeJUnit(t, render(t, "junit", r, false))
	cases := doc.Suites[0].Cases
	want := []string{
		"conf/m.yaml events: failure scan-overhead (error)",
		"conf/m.yaml readings: skipped truncated-segments (warning)",
		"conf/m.yaml quiet:",
		"conf/m.yaml waived: skipped scan-overhead (error)",
	}
	if got := caseOutcomes(doc); !slices.Equal(got, want) {
		t.Errorf("cases:\n%q\nwant:\n%q", got, want)
	}
	if doc.Suites[0].Skipped != 2 || doc.Failures != 1 {
		t.Errorf("skipped %d failures %d, want 2 and 1", doc.Suites[0].Skipped, doc.Failures)
	}
	if s := cases[1].Skipped[0]; s.Message != "truncated-segments recorded in the baseline scangate-baseline.json" ||
		!strings.Contains(s.Text, "[truncated-segments] (recorded in the baseline scangate-baseline.json)\nhint: ") {
		t.Errorf("baselined: %+v", s)
	}
	if s := cases[3].Skipped[0]; s.Message != "scan-overhead waived until 2026-06-01: bigger segments next quarter" {
		t.Errorf("waived: %+v", s)
	}
	// events: its error fails; the baselined note on the same table rides in the text.
	f := cases[0].Failures[0]
	if f.Message != r.Findings[0].Message || !strings.Contains(f.Text, "\nconf/m.yaml:6:5: note: events: an accepted note [needless-partitioning] (recorded in the baseline scangate-baseline.json)") {
		t.Errorf("events failure: %+v", f)
	}
}

// One failure per case whatever the number of findings: the message is the most
// severe, though a warning comes first in report order; the text lists both.
func TestJUnitMostSevereFirst(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Warning)
	pos := r.Files[0].Tables[0].Pos
	early := rules.Finding{Rule: "truncated-segments", Severity: rules.Warning, File: "m.yaml", Table: "events",
		Pos: schema.Pos{Line: pos.Line, Col: 1}, Message: "events: a warning first"}
	r.Findings = append([]rules.Finding{early}, r.Findings...)
	doc := decodeJUnit(t, render(t, "junit", r, false))
	c := doc.Suites[0].Cases[0]
	if len(c.Failures) != 1 || c.Failures[0].Type != "scan-overhead (error)" || c.Failures[0].Message != r.Findings[1].Message ||
		!strings.HasPrefix(c.Failures[0].Text, "conf/m.yaml:6:1: warning: events: a warning first [truncated-segments]\nconf/m.yaml:6:5: error: ") {
		t.Errorf("events case: %+v", c)
	}
}

// Names and messages with XML's special characters survive the round trip.
func TestJUnitEscaping(t *testing.T) {
	src := strings.Replace(fixtureManifest, "name: events", `name: "ev<&>\"ents"`, 1)
	r := analysedResult(t, "m.yaml", "conf/m.yaml", src, rules.Error)
	r.Findings[0].Message = `a < b & "c" ]]> d`
	doc := decodeJUnit(t, render(t, "junit", r, false))
	c := doc.Suites[0].Cases[0]
	if c.Name != `ev<&>"ents` || len(c.Failures) != 1 || c.Failures[0].Message != `a < b & "c" ]]> d` {
		t.Errorf("case %+v", c)
	}
}

// The same input gives the same bytes.
func TestJUnitDeterministic(t *testing.T) {
	a := render(t, "junit", waivedAndBaselined(t), false)
	if b := render(t, "junit", waivedAndBaselined(t), false); a != b {
		t.Errorf("two renderings differ:\n%s\n%s", a, b)
	}
}

// waivedAndBaselined is the fixture at --fail-on warning with a baseline that holds
// readings' warning and a note on events, beside waived's waiver.
func waivedAndBaselined(t *testing.T) *Result {
	t.Helper()
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Warning)
	for i := range r.Findings {
		if r.Findings[i].Table == "readings" {
			r.Findings[i].Baselined = true
		}
	}
	note := rules.Finding{Rule: "needless-partitioning", Severity: rules.Note, File: "m.yaml", Table: "events",
		Pos: r.Files[0].Tables[0].Pos, Message: "events: an accepted note", Baselined: true}
	r.Findings = slices.Insert(r.Findings, 1, note)
	r.Baseline = &BaselineUse{File: "scangate-baseline.json"}
	return r
}

// TestJUnitValidatesAgainstXSD runs ../shared/validators/junit-validate (xmllint against
// junit-10.xsd, the common JUnit schema) on the demo's golden report, a run with waived
// and baselined findings, a run with an invalid manifest and one that cannot be read.
// It skips when xmllint or the validator is missing, except under CI=true.
func TestJUnitValidatesAgainstXSD(t *testing.T) {
	root, err := filepath.Abs(filepath.Join("..", ".."))
	if err != nil {
		t.Fatal(err)
	}
	validator := filepath.Join(root, "..", "shared", "validators", "junit-validate")
	if _, err := exec.LookPath("xmllint"); err != nil {
		missingValidator(t, "xmllint is not installed (apt-get install libxml2-utils)")
	}
	if _, err := os.Stat(validator); err != nil {
		missingValidator(t, err.Error())
	}

	golden, err := os.ReadFile(filepath.Join(root, "testdata", "golden", "demo.xml"))
	if err != nil {
		t.Fatal(err)
	}
	bad := "testdata/bad/every-problem.yaml"
	src, err := os.ReadFile(filepath.Join(root, bad))
	if err != nil {
		t.Fatal(err)
	}
	var se *schema.Error
	if _, err := schema.Load(bad, src, schema.DefaultLimits); !errors.As(err, &se) {
		t.Fatalf("%s loads: %v", bad, err)
	}
	invalid := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	invalid.Files = append(invalid.Files, File{Name: bad, URI: bad, Invalid: true})
	invalid.Findings = append(invalid.Findings, rules.SchemaFindings(se)...)
	invalid.Summary = Summarize(invalid.Files)

	dir := t.TempDir()
	reports := map[string]string{
		"demo.xml":       string(golden),
		"accepted.xml":   render(t, "junit", waivedAndBaselined(t), false),
		"invalid.xml":    render(t, "junit", invalid, false),
		"unreadable.xml": render(t, "junit", handResult(), false),
	}
	var paths []string
	for _, name := range []string{"demo.xml", "accepted.xml", "invalid.xml", "unreadable.xml"} {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(reports[name]), 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	if doc := decodeJUnit(t, reports["invalid.xml"]); doc.Errors != 1 || len(se.Problems) < 2 {
		t.Errorf("invalid run: %d errors for %d problems, want one error case", doc.Errors, len(se.Problems))
	}
	out, err := exec.Command(validator, paths...).CombinedOutput()
	if err != nil {
		t.Errorf("junit-validate: %v\n%s", err, out)
	}
	for _, p := range paths {
		if !strings.Contains(string(out), p+" validates") {
			t.Errorf("%s does not validate:\n%s", filepath.Base(p), out)
		}
	}
}

// missingValidator skips, or fails under CI=true, where the validator must run. The
// repository copy TestAddingARule tests in has no ../shared beside it: it skips there,
// as the checkout's own run has validated.
func missingValidator(t *testing.T, why string) {
	t.Helper()
	if os.Getenv("CI") == "true" && os.Getenv("SCANGATE_RULE_COPY") == "" {
		t.Fatalf("CI=true but the JUnit validator cannot run: %s", why)
	}
	t.Skip(why)
}
