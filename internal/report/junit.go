package report

import (
	"encoding/xml"
	"fmt"
	"io"
	"strings"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
)

func init() {
	register(writers{traits: Traits{Name: "junit", Kinds: CheckReport, NeedsTables: true}, check: writeJUnit})
}

// junitTime is every suite's and case's time. A check is not a timed test, and a measured
// wall time would make two runs on the same input differ; "0" keeps the report
// byte-identical and still gives readers that sum times a number.
const junitTime = "0"

// The element and attribute names follow the common JUnit XSD (junit-10.xsd): a testcase
// takes no file or line, so a table's place goes in its system-out.
type junitSuites struct {
	XMLName  xml.Name     `xml:"testsuites"`
	Name     string       `xml:"name,attr"`
	Tests    int          `xml:"tests,attr"`
	Failures int          `xml:"failures,attr"`
	Errors   int          `xml:"errors,attr"`
	Time     string       `xml:"time,attr"`
	Suites   []junitSuite `xml:"testsuite"`
}

type junitSuite struct {
	Name     string      `xml:"name,attr"`
	Tests    int         `xml:"tests,attr"`
	Failures int         `xml:"failures,attr"`
	Errors   int         `xml:"errors,attr"`
	Skipped  int         `xml:"skipped,attr"`
	Time     string      `xml:"time,attr"`
	File     string      `xml:"file,attr"`
	Cases    []junitCase `xml:"testcase"`
}

type junitCase struct {
	Name      string        `xml:"name,attr"`
	Classname string        `xml:"classname,attr"`
	Time      string        `xml:"time,attr"`
	Error     *junitOutcome `xml:"error"`
	Failure   *junitOutcome `xml:"failure"`
	Skipped   *junitOutcome `xml:"skipped"`
	SystemOut string        `xml:"system-out,omitempty"`
}

// junitOutcome is the one error, failure or skipped element of a case.
type junitOutcome struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr"`
	Text    string `xml:",chardata"`
}

// writeJUnit writes JUnit XML with a test suite per manifest and a test case per table.
// A case has at most one outcome: an error when it holds schema problems (an unreadable
// or invalid manifest is one case, "schema"), else a failure when a finding fails the run,
// else skipped when its findings are all waived or baselined. The outcome's message is
// its most severe finding; its text lists all of them. Findings about a whole model are
// one case, "model NAME". Every string from the input is escaped (escape.Text) before
// the encoder sees it: XML 1.0 has no way to write most control characters, even as
// references.
func writeJUnit(w io.Writer, r *Result, _ bool) error {
	doc := junitSuites{Name: "scangate", Time: junitTime}
	byFile := map[string][]rules.Finding{} // reported findings, in report order
	for _, x := range r.Findings {
		if r.Fails(x) || x.Accepted() {
			byFile[x.File] = append(byFile[x.File], x)
		}
	}
	for _, f := range r.Files {
		suite := junitSuiteOf(r, f, byFile[f.Name])
		doc.Tests += suite.Tests
		doc.Failures += suite.Failures
		doc.Errors += suite.Errors
		doc.Suites = append(doc.Suites, suite)
	}
	if _, err := io.WriteString(w, xml.Header); err != nil {
		return err
	}
	enc := xml.NewEncoder(w)
	enc.Indent("", "  ")
	if err := enc.Encode(doc); err != nil {
		return err
	}
	_, err := io.WriteString(w, "\n")
	return err
}

// junitSuiteOf builds one file's suite from its reported findings.
func junitSuiteOf(r *Result, f File, fs []rules.Finding) junitSuite {
	uri, model := escape.Text(f.URI), escape.Text(f.Model)
	suite := junitSuite{Name: uri, File: uri, Time: junitTime}
	byTable := map[string][]rules.Finding{}
	var fileLevel []rules.Finding
	for _, x := range fs {
		if x.Table == "" {
			fileLevel = append(fileLevel, x)
		} else {
			byTable[x.Table] = append(byTable[x.Table], x)
		}
	}
	switch {
	case f.Invalid:
		suite.Cases = append(suite.Cases, junitCaseOf(r, "schema", uri, fileLevel))
	case len(fileLevel) > 0:
		// Findings about the model as a whole (refresh memory) belong to no table.
		suite.Cases = append(suite.Cases, junitCaseOf(r, "model "+model, model, fileLevel))
	}
	for _, t := range f.Tables {
		c := junitCaseOf(r, escape.Text(t.Name), model, byTable[t.Name])
		c.SystemOut = fmt.Sprintf("%s:%d:%d", uri, t.Pos.Line, t.Pos.Col)
		suite.Cases = append(suite.Cases, c)
	}
	for _, c := range suite.Cases {
		suite.Tests++
		switch {
		case c.Error != nil:
			suite.Errors++
		case c.Failure != nil:
			suite.Failures++
		case c.Skipped != nil:
			suite.Skipped++
		}
	}
	return suite
}

// junitCaseOf is one case and its single outcome, if any, from its reported findings.
func junitCaseOf(r *Result, name, classname string, fs []rules.Finding) junitCase {
	c := junitCase{Name: name, Classname: classname, Time: junitTime}
	if len(fs) == 0 {
		return c
	}
	var problems, failing []rules.Finding
	for _, x := range fs {
		switch {
		case x.Rule == rules.Schema.ID:
			problems = append(problems, x)
		case r.Fails(x):
			failing = append(failing, x)
		}
	}
	text := junitText(r, fs)
	switch {
	case len(problems) > 0:
		c.Error = junitOutcomeOf(mostSevere(problems), "", text)
	case len(failing) > 0:
		c.Failure = junitOutcomeOf(mostSevere(failing), "", text)
	default:
		top := mostSevere(fs)
		c.Skipped = junitOutcomeOf(top, escape.Text(top.Rule)+" "+acceptedBecause(r, top), text)
	}
	return c
}

// mostSevere is the first finding of the highest severity: the message names what
// matters most, and ties keep report order.
func mostSevere(fs []rules.Finding) rules.Finding {
	top := fs[0]
	for _, x := range fs[1:] {
		if x.Severity > top.Severity {
			top = x
		}
	}
	return top
}

func junitOutcomeOf(top rules.Finding, message, text string) *junitOutcome {
	if message == "" {
		message = escape.Text(top.Message)
	}
	return &junitOutcome{Message: message, Type: escape.Text(top.Rule) + " (" + top.Severity.String() + ")", Text: text}
}

// junitText lists a case's findings, one "path:line:col: severity: message [rule]" line
// each with its hints, and why an accepted one does not fail.
func junitText(r *Result, fs []rules.Finding) string {
	var b strings.Builder
	for i, x := range fs {
		if i > 0 {
			b.WriteString("\n")
		}
		fmt.Fprintf(&b, "%s:%d:%d: %s: %s [%s]", escape.Text(r.URI(x.File)), x.Pos.Line, x.Pos.Col,
			x.Severity, escape.Text(x.Message), escape.Text(x.Rule))
		if x.Accepted() {
			b.WriteString(" (" + acceptedBecause(r, x) + ")")
		}
		for _, h := range x.Hints {
			b.WriteString("\nhint: " + escape.Text(h))
		}
	}
	return b.String()
}

// acceptedBecause says why an accepted finding does not fail: the waiver's expiry and
// reason, or the baseline file.
func acceptedBecause(r *Result, x rules.Finding) string {
	switch {
	case x.Waiver != nil:
		return fmt.Sprintf("waived until %s: %s", x.Waiver.Expires.Format("2006-01-02"), escape.Text(x.Waiver.Reason))
	case r.Baseline != nil:
		return "recorded in the baseline " + escape.Text(r.Baseline.File)
	default:
		return "recorded in the baseline"
	}
}
