package report

import (
	"strings"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// One workflow command per finding that is not accepted debt, "::CMD PROPS::MESSAGE",
// the command by severity, the location repository-relative.
func TestGitHubOneCommandPerUnacceptedFinding(t *testing.T) {
	out := render(t, "github", handResult(), false)
	want := "::error file=conf/m.yaml,line=6,col=5,title=scangate scan-overhead::events: 1,500 ms of fixed CPU%0Ahint: raise engine.segment_rows\n" +
		"::warning file=conf/m.yaml,line=9,col=5,title=scangate truncated-segments::readings: 30 excess segments\n" +
		"::notice file=conf/m.yaml,line=12,col=5,title=scangate needless-partitioning::quiet: partitions buy nothing\n" +
		"::error file=conf/broken.yaml,title=scangate schema::cannot read the file: permission denied\n"
	if out != want {
		t.Errorf("got:\n%s\nwant:\n%s", out, want)
	}
	if out := render(t, "github", &Result{Summary: Summary{Files: 1}}, false); out != "" {
		t.Errorf("a clean run annotates nothing: %q", out)
	}
}

// A message escapes %, so data cannot forge an escape; a line break inside the data is
// shown as a visible \r\n (internal/escape), and the hint lines the report itself adds
// are encoded as %0A: one command per finding. Property values also escape : and ,
// which would end the value.
func TestGitHubEscapesMessagesAndProperties(t *testing.T) {
	r := &Result{
		Files: []File{{Name: "x.yaml", URI: "dir:a,b/100%.yaml"}},
		Findings: []rules.Finding{{Rule: "scan-time", Severity: rules.Warning, File: "x.yaml", Pos: schema.Pos{Line: 3, Col: 7},
			Message: "t: 95% of the budget\r\nsecond line", Hints: []string{"a, b: c"}}},
	}
	out := render(t, "github", r, false)
	want := "::warning file=dir%3Aa%2Cb/100%25.yaml,line=3,col=7,title=scangate scan-time::t: 95%25 of the budget\\r\\nsecond line%0Ahint: a, b: c\n"
	if out != want {
		t.Errorf("got:\n%q\nwant:\n%q", out, want)
	}
	if strings.Count(out, "\n") != 1 || strings.Contains(out, "\r") {
		t.Errorf("one command, one line: %q", out)
	}
}

// unescapeCommand reverses the workflow-command escapes: every one starts with %, so
// one left-to-right pass decodes them.
var unescapeCommand = strings.NewReplacer("%25", "%", "%0D", "\r", "%0A", "\n", "%3A", ":", "%2C", ",")

func TestGitHubEscapeFunctions(t *testing.T) {
	for _, c := range []struct{ in, data, prop string }{
		{"plain", "plain", "plain"},
		{"50% done", "50%25 done", "50%25 done"},
		{"a\r\nb", "a%0D%0Ab", "a%0D%0Ab"},
		{"x: y, z", "x: y, z", "x%3A y%2C z"},
		{"%0A literal", "%250A literal", "%250A literal"}, // % first, or this would decode to LF
		{"%3A%2C", "%253A%252C", "%253A%252C"},
	} {
		if got := EscapeData(c.in); got != c.data {
			t.Errorf("EscapeData(%q) = %q, want %q", c.in, got, c.data)
		}
		if got := EscapeProperty(c.in); got != c.prop {
			t.Errorf("EscapeProperty(%q) = %q, want %q", c.in, got, c.prop)
		}
		if back := unescapeCommand.Replace(EscapeData(c.in)); back != c.in {
			t.Errorf("EscapeData(%q) decodes to %q", c.in, back)
		}
		if back := unescapeCommand.Replace(EscapeProperty(c.in)); back != c.in {
			t.Errorf("EscapeProperty(%q) decodes to %q", c.in, back)
		}
		if strings.ContainsAny(EscapeData(c.in), "\r\n") || strings.ContainsAny(EscapeProperty(c.in), "\r\n:,") {
			t.Errorf("%q: a character that ends the command or the value is left", c.in)
		}
	}
}

// Commands for a real run: every line is a command the runner reads, one per
// unaccepted finding, none for the waived one.
func TestGitHubAnalysed(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	lines := strings.Split(strings.TrimSuffix(render(t, "github", r, false), "\n"), "\n")
	unaccepted := 0
	for _, f := range r.Findings {
		if !f.Accepted() {
			unaccepted++
		}
	}
	if len(lines) != unaccepted || unaccepted != 2 {
		t.Fatalf("%d commands for %d unaccepted findings:\n%s", len(lines), unaccepted, strings.Join(lines, "\n"))
	}
	for i, prefix := range []string{"::error file=conf/m.yaml,line=6,col=5,", "::warning file=conf/m.yaml,line=11,col=5,"} {
		if !strings.HasPrefix(lines[i], prefix) {
			t.Errorf("line %d: %q, want it to start %q", i, lines[i], prefix)
		}
	}
	if strings.Contains(strings.Join(lines, "\n"), "waived") {
		t.Errorf("the waived finding is annotated:\n%s", strings.Join(lines, "\n"))
	}
}
