package report

import (
	"encoding/xml"
	"fmt"
	"io"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
)

func init() {
	register(writers{traits: Traits{Name: "junit", Kinds: CheckReport, NeedsTables: true}, check: writeJUnit})
}

type junitSuites struct {
	XMLName  xml.Name     `xml:"testsuites"`
	Name     string       `xml:"name,attr"`
	Tests    int          `xml:"tests,attr"`
	Failures int          `xml:"failures,attr"`
	Suites   []junitSuite `xml:"testsuite"`
}

type junitSuite struct {
	Name     string      `xml:"name,attr"`
	Tests    int         `xml:"tests,attr"`
	Failures int         `xml:"failures,attr"`
	Cases    []junitCase `xml:"testcase"`
}

type junitCase struct {
	Name      string         `xml:"name,attr"`
	Classname string         `xml:"classname,attr"`
	File      string         `xml:"file,attr,omitempty"`
	Line      int            `xml:"line,attr,omitempty"`
	Failures  []junitFailure `xml:"failure"`
}

type junitFailure struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr"`
	Text    string `xml:",chardata"`
}

// writeJUnit writes JUnit XML with a test suite per manifest, a test case per table, and a
// failure per finding at or above the failing level. An invalid manifest is one case,
// "schema", with a failure per problem; findings about a whole model are one case,
// "model NAME". Every string from the input is escaped (escape.Text) before the encoder
// sees it: XML 1.0 has no way to write most control characters, even as references.
func writeJUnit(w io.Writer, r *Result, _ bool) error {
	doc := junitSuites{Name: "scangate"}
	byFile := map[string][]rules.Finding{} // failing findings, in report order
	for _, x := range r.Findings {
		if r.Fails(x) {
			byFile[x.File] = append(byFile[x.File], x)
		}
	}
	for _, f := range r.Files {
		uri, model := escape.Text(f.URI), escape.Text(f.Model)
		suite := junitSuite{Name: uri}
		byTable := map[string][]rules.Finding{}
		var fileLevel []rules.Finding
		for _, x := range byFile[f.Name] {
			if x.Table == "" {
				fileLevel = append(fileLevel, x)
			} else {
				byTable[x.Table] = append(byTable[x.Table], x)
			}
		}
		switch {
		case f.Invalid:
			suite.Cases = append(suite.Cases, junitCase{Name: "schema", Classname: uri, File: uri, Failures: failures(fileLevel)})
		case len(fileLevel) > 0:
			// Findings about the model as a whole (refresh memory) belong to no table.
			suite.Cases = append(suite.Cases, junitCase{Name: "model " + model, Classname: model, File: uri, Failures: failures(fileLevel)})
		}
		for _, t := range f.Tables {
			suite.Cases = append(suite.Cases, junitCase{
				Name: escape.Text(t.Spec.Name), Classname: model, File: uri, Line: t.Spec.Pos.Line,
				Failures: failures(byTable[t.Spec.Name]),
			})
		}
		for _, c := range suite.Cases {
			suite.Tests++
			if len(c.Failures) > 0 {
				suite.Failures++
			}
		}
		doc.Tests += suite.Tests
		doc.Failures += suite.Failures
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

func failures(fs []rules.Finding) []junitFailure {
	var out []junitFailure
	for _, f := range fs {
		msg := escape.Text(f.Message)
		text := fmt.Sprintf("%s:%d:%d: %s: %s", escape.Text(f.File), f.Pos.Line, f.Pos.Col, f.Severity, msg)
		for _, h := range f.Hints {
			text += "\nhint: " + escape.Text(h)
		}
		out = append(out, junitFailure{Message: msg, Type: escape.Text(f.Rule) + " (" + f.Severity.String() + ")", Text: text})
	}
	return out
}
