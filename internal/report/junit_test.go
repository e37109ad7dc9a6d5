package report

import (
	"encoding/xml"
	"slices"
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
)

// junitDoc is JUnit XML as test-report readers take it: testsuites > testsuite >
// testcase > failure, with tests and failures counted on the suites.
type junitDoc struct {
	XMLName  xml.Name `xml:"testsuites"`
	Tests    int      `xml:"tests,attr"`
	Failures int      `xml:"failures,attr"`
	Suites   []struct {
		Name     string `xml:"name,attr"`
		Tests    int    `xml:"tests,attr"`
		Failures int    `xml:"failures,attr"`
		Cases    []struct {
			Name      string `xml:"name,attr"`
			Classname string `xml:"classname,attr"`
			File      string `xml:"file,attr"`
			Line      int    `xml:"line,attr"`
			Failures  []struct {
				Message string `xml:"message,attr"`
				Type    string `xml:"type,attr"`
				Text    string `xml:",chardata"`
			} `xml:"failure"`
		} `xml:"testcase"`
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
	// The counts on every level agree with the cases under them.
	tests, failures := 0, 0
	for _, s := range doc.Suites {
		failed := 0
		for _, c := range s.Cases {
			if len(c.Failures) > 0 {
				failed++
			}
		}
		if s.Tests != len(s.Cases) || s.Failures != failed {
			t.Errorf("suite %s: tests %d failures %d, but %d cases of which %d fail", s.Name, s.Tests, s.Failures, len(s.Cases), failed)
		}
		tests += s.Tests
		failures += s.Failures
	}
	if doc.Tests != tests || doc.Failures != failures {
		t.Errorf("testsuites: tests %d failures %d, suites add up to %d and %d", doc.Tests, doc.Failures, tests, failures)
	}
	return doc
}

// caseFailures lists each case as "name: failure types".
func caseFailures(doc junitDoc) []string {
	var out []string
	for _, s := range doc.Suites {
		for _, c := range s.Cases {
			var types []string
			for _, f := range c.Failures {
				types = append(types, f.Type)
			}
			out = append(out, s.Name+" "+c.Name+": "+strings.Join(types, ", "))
		}
	}
	return out
}

// A case per table and a failure per finding that fails the run: at --fail-on warning
// that is events' error and readings' warning; the waived error is accepted debt.
func TestJUnitCasesAndFailures(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Warning)
	doc := decodeJUnit(t, render(t, "junit", r, false))
	if doc.Tests != 4 || doc.Failures != 2 || len(doc.Suites) != 1 || doc.Suites[0].Name != "conf/m.yaml" {
		t.Errorf("tests %d failures %d suites %d", doc.Tests, doc.Failures, len(doc.Suites))
	}
	want := []string{
		"conf/m.yaml events: scan-overhead (error)",
		"conf/m.yaml readings: truncated-segments (warning)",
		"conf/m.yaml quiet: ",
		"conf/m.yaml waived: ",
	}
	if got := caseFailures(doc); !slices.Equal(got, want) {
		t.Errorf("cases:\n%q\nwant:\n%q", got, want)
	}
	c := doc.Suites[0].Cases[0]
	if c.Classname != "cases" || c.File != "conf/m.yaml" || c.Line != 6 || c.Failures[0].Message != r.Findings[0].Message ||
		!strings.HasPrefix(c.Failures[0].Text, "m.yaml:6:5: error: "+r.Findings[0].Message+"\nhint: ") {
		t.Errorf("events case: %+v", c)
	}

	// At the default level, error, only events fails.
	r.FailOn = rules.Error
	if doc := decodeJUnit(t, render(t, "junit", r, false)); doc.Tests != 4 || doc.Failures != 1 {
		t.Errorf("at error: tests %d failures %d", doc.Tests, doc.Failures)
	}
	// With --fail-on never, nothing but schema problems fails.
	r.FailOn = 0
	if doc := decodeJUnit(t, render(t, "junit", r, false)); doc.Tests != 4 || doc.Failures != 0 {
		t.Errorf("never: tests %d failures %d", doc.Tests, doc.Failures)
	}
}

// An invalid file is one case, schema, failing once per problem; a finding about the
// model as a whole is a case of its own.
func TestJUnitSchemaAndModelCases(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, 0)
	r.Files = append(r.Files, File{Name: "broken.yaml", URI: "conf/broken.yaml", Invalid: true})
	r.Findings = append(r.Findings,
		rules.Finding{Rule: "refresh-memory", Severity: rules.Error, File: "m.yaml", Pos: r.Files[0].Tables[0].Spec.Pos, Message: "the refresh needs 9 GiB"},
		rules.Finding{Rule: "schema", Severity: rules.Error, File: "broken.yaml", Message: "model: required"},
		rules.Finding{Rule: "schema", Severity: rules.Error, File: "broken.yaml", Message: "tables: required"},
	)
	r.Summary = Summarize(r.Files)
	r.FailOn = rules.Error
	doc := decodeJUnit(t, render(t, "junit", r, false))
	want := []string{
		"conf/m.yaml model cases: refresh-memory (error)",
		"conf/m.yaml events: scan-overhead (error)",
		"conf/m.yaml readings: ",
		"conf/m.yaml quiet: ",
		"conf/m.yaml waived: ",
		"conf/broken.yaml schema: schema (error), schema (error)",
	}
	if got := caseFailures(doc); !slices.Equal(got, want) {
		t.Errorf("cases:\n%q\nwant:\n%q", got, want)
	}
	if doc.Tests != 6 || doc.Failures != 3 {
		t.Errorf("tests %d failures %d, want 6 and 3", doc.Tests, doc.Failures)
	}
	// Schema problems fail even when nothing else can.
	r.FailOn = 0
	if doc := decodeJUnit(t, render(t, "junit", r, false)); doc.Failures != 1 {
		t.Errorf("never: %d failures, want the schema case", doc.Failures)
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
