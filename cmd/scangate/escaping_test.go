package main

import (
	"bytes"
	"encoding/xml"
	"html"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/extension"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/report"
)

// hostileTables are the table names of testdata/hostile/before/names.yaml, as loaded.
var hostileTables = []string{"x\n::error::inj", "lines\x00|`<script>alert(1)</script>`|[link](javascript:x)"}

// output is one stream or file a run wrote, and the medium it is in.
type output struct {
	name, medium, text string
}

// hostileRun runs scangate in a CI job (GITHUB_ACTIONS, a step summary) and returns
// what it wrote: stdout in the medium given, stderr as text, the step summary as
// Markdown and any files named in files (path -> medium).
func hostileRun(t *testing.T, dir, medium string, files map[string]string, args ...string) []output {
	t.Helper()
	summary := filepath.Join(t.TempDir(), "summary.md")
	r := scangate(t, dir, "", []string{"GITHUB_ACTIONS=true", "GITHUB_STEP_SUMMARY=" + summary}, args...)
	if r.code < 0 || r.code > 2 || strings.Contains(r.stderr, "internal error") {
		t.Fatalf("%v: exit %d\n%s%s", args, r.code, r.stdout, r.stderr)
	}
	label := strings.Join(args, " ")
	outs := []output{{label + " (stdout)", medium, r.stdout}, {label + " (stderr)", "text", r.stderr}}
	if b, err := os.ReadFile(summary); err == nil {
		outs = append(outs, output{label + " (step summary)", "markdown", string(b)})
	}
	for path, m := range files {
		b, err := os.ReadFile(filepath.Join(dir, path))
		if err != nil {
			t.Fatalf("%v: %v", args, err)
		}
		outs = append(outs, output{label + " (" + path + ")", m, string(b)})
	}
	return outs
}

// command is a workflow command as the github format writes it: the command, its
// properties (no raw : or , inside a value) and the message.
var command = regexp.MustCompile(`^::(error|warning|notice) file=[^:,]*(,line=[0-9]+,col=[0-9]+)?,title=[^:,]*::[^\r]*$`)

// TestHostileNamesInEveryOutput runs check in every format, diff in every format and
// plan (text and SVG) on manifests whose names, reasons, keys and values hold line
// breaks with workflow commands, terminal escapes (ESC[2J, ESC]0;title BEL), NUL, a
// right-to-left override, and Markdown and HTML markup; and on a file whose path does.
func TestHostileNamesInEveryOutput(t *testing.T) {
	dir := root(t)
	var outs []output
	for _, f := range report.Names(report.CheckReport) {
		outs = append(outs, hostileRun(t, dir, f, nil, "check", "--format", f, "testdata/hostile/before", "testdata/hostile/schema.yaml")...)
	}
	outs = append(outs, hostileRun(t, dir, "text+github", nil, "check", "testdata/hostile/before")...) // the CI default
	for _, f := range report.Names(report.DiffReport) {
		outs = append(outs, hostileRun(t, dir, f, nil, "diff", "--max-added-ms", "1", "--format", f, "testdata/hostile/before", "testdata/hostile/after")...)
		outs = append(outs, hostileRun(t, dir, f, nil, "diff", "--format", f, "testdata/hostile/schema.yaml", "testdata/hostile/after/names.yaml")...)
	}
	outs = append(outs, hostileRun(t, dir, "text+github", nil, "diff", "--max-added-ms", "1", "testdata/hostile/before", "testdata/hostile/after")...) // the CI default
	tmp := t.TempDir()
	svg := filepath.Join(tmp, "plan.svg")
	outs = append(outs, hostileRun(t, dir, "text", nil, "plan", "--svg", svg, "testdata/hostile/before/names.yaml")...)
	b, _ := os.ReadFile(svg)
	outs = append(outs, output{"plan svg", "svg", string(b)})
	outs = append(outs, hostileRun(t, dir, "text", nil, "plan", "testdata/hostile/schema.yaml")...)

	// A path that holds the same, in a walk, in a baseline and in errors about files.
	evil := "::error::p\x1b[2J\u202e##[add-mask]x.yaml"
	data, err := os.ReadFile(filepath.Join(dir, "testdata/hostile/before/names.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(tmp, evil), data, 0o644)
	for _, f := range []string{"text", "github", "markdown", "junit", "json", "sarif"} {
		outs = append(outs, hostileRun(t, tmp, f, nil, "check", "--format", f, ".")...)
	}
	// A baseline never records a path check --baseline would refuse: the write is
	// refused, and its message is escaped like any other.
	outs = append(outs, hostileRun(t, tmp, "text", nil, "baseline", "write", "-o", "base.json", ".")...)
	outs = append(outs, hostileRun(t, tmp, "text", nil, "check", "--baseline", evil, ".")...)
	outs = append(outs, hostileRun(t, tmp, "text", nil, "check", "missing\n::error::file\x1b]0;t\a.yaml")...)
	outs = append(outs, hostileRun(t, tmp, "text", nil, "plan", "--table", "none", evil)...)
	outs = append(outs, hostileRun(t, tmp, "text", nil, "diff", evil, "missing\n::warning::x")...)

	for _, o := range outs {
		checkInert(t, o)
		switch o.medium {
		case "junit", "svg":
			checkXML(t, o)
		case "markdown":
			checkMarkdown(t, o)
		}
	}
	if len(outs) < 40 {
		t.Errorf("only %d outputs were checked", len(outs))
	}
}

// checkInert: valid UTF-8, no hidden rune but the line break, no "##[", and no line a CI
// runner reads as a command except the github format's own annotations.
func checkInert(t *testing.T, o output) {
	t.Helper()
	if !utf8.ValidString(o.text) {
		t.Errorf("%s: not UTF-8", o.name)
	}
	for i, r := range o.text {
		if r != '\n' && escape.Hidden(r) {
			t.Errorf("%s: raw %U at byte %d: %q", o.name, r, i, around(o.text, i))
			break
		}
	}
	if i := strings.Index(o.text, "##["); i >= 0 {
		t.Errorf("%s: raw ##[ at byte %d: %q", o.name, i, around(o.text, i))
	}
	for n, line := range strings.Split(o.text, "\n") {
		if !strings.HasPrefix(strings.TrimLeftFunc(line, unicode.IsSpace), "::") {
			continue
		}
		if !strings.Contains(o.medium, "github") || !command.MatchString(line) {
			t.Errorf("%s: line %d is a workflow command: %q", o.name, n+1, line)
		}
	}
}

func around(s string, i int) string { return s[max(0, i-30):min(len(s), i+30)] }

// checkXML parses the whole document (XML 1.0 well-formedness, as encoding/xml checks it).
func checkXML(t *testing.T, o output) {
	t.Helper()
	d := xml.NewDecoder(strings.NewReader(o.text))
	for {
		if _, err := d.Token(); err == io.EOF {
			break
		} else if err != nil {
			t.Errorf("%s: not XML: %v", o.name, err)
			return
		}
	}
	if o.medium == "svg" {
		for _, name := range hostileTables {
			if !strings.Contains(o.text, ">"+escape.XML(name)+"</text>") {
				t.Errorf("%s: no title %q", o.name, escape.XML(name))
			}
		}
	}
}

// checkMarkdown parses with goldmark (CommonMark with the GFM table extension): every
// table row has as many cells as its header (counted from unescaped pipes, since a
// parser drops extra cells), the hostile table names render as code, and no HTML,
// link or image comes from the data.
func checkMarkdown(t *testing.T, o output) {
	t.Helper()
	var out bytes.Buffer
	if err := goldmark.New(goldmark.WithExtensions(extension.GFM)).Convert([]byte(o.text), &out); err != nil {
		t.Fatalf("%s: %v", o.name, err)
	}
	rendered := out.String()
	for _, bad := range []string{"raw HTML omitted", "<script", "<a href", "<img", "<b>"} {
		if strings.Contains(rendered, bad) {
			t.Errorf("%s: renders %q:\n%s", o.name, bad, rendered)
		}
	}
	header := -1
	rows := 0 // of the table of tables; the tables under charts are checked for their cells only
	tables := false
	for _, line := range strings.Split(o.text, "\n") {
		if !strings.HasPrefix(line, "|") {
			header = -1
			continue
		}
		cells := pipes(line) - 1
		switch {
		case header < 0:
			header = cells
			tables = strings.HasPrefix(line, "| file | table |")
		case cells != header:
			t.Errorf("%s: a row with %d cells under a header of %d: %q", o.name, cells, header, line)
		case tables:
			rows++
		}
	}
	if strings.Contains(o.text, "| file | table |") {
		if rows != len(hostileTables)+1 { // the separator row, then one row per table
			t.Errorf("%s: %d rows, want a separator and %d tables:\n%s", o.name, rows, len(hostileTables), o.text)
		}
		for _, name := range hostileTables {
			if want := "<td><code>" + html.EscapeString(escape.Text(name)) + "</code></td>"; !strings.Contains(rendered, want) {
				t.Errorf("%s: no cell %s in\n%s", o.name, want, rendered)
			}
		}
	}
}

// pipes counts the | of a table row that end a cell: not escaped by a backslash.
func pipes(line string) int {
	n := 0
	for i := 0; i < len(line); i++ {
		switch line[i] {
		case '\\':
			i++
		case '|':
			n++
		}
	}
	return n
}
