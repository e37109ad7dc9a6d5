package report

import (
	"bytes"
	"slices"
	"strings"
	"testing"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension"
	east "github.com/yuin/goldmark/extension/ast"
	"github.com/yuin/goldmark/text"
	"github.com/yuin/goldmark/util"

	"github.com/scangate/scangate/rules"
)

// mdParsed is a Markdown report read back with goldmark (CommonMark with the GFM
// table extension, as job summaries and pull-request comments render it).
type mdParsed struct {
	rows     [][]string // body rows of the table of tables, cell by cell
	items    []string   // top-level list items: one per finding
	headings []string
	charts   []string     // the bodies of the mermaid code blocks
	figures  [][][]string // the table under each chart, row by row (its header first)
}

func parseMarkdown(t *testing.T, out string) mdParsed {
	t.Helper()
	src := []byte(out)
	md := goldmark.New(goldmark.WithExtensions(extension.Table))
	if err := md.Convert(src, &bytes.Buffer{}); err != nil {
		t.Fatalf("goldmark: %v", err)
	}
	var p mdParsed
	tables := 0
	ast.Walk(md.Parser().Parse(text.NewReader(src)), func(n ast.Node, entering bool) (ast.WalkStatus, error) {
		if !entering {
			return ast.WalkContinue, nil
		}
		switch n.Kind() {
		case east.KindTable:
			tables++
			if tables > 1 {
				p.figures = append(p.figures, nil)
			}
		case east.KindTableHeader, east.KindTableRow:
			var cells []string
			for c := n.FirstChild(); c != nil; c = c.NextSibling() {
				cells = append(cells, mdText(c, src))
			}
			switch {
			case tables > 1:
				p.figures[len(p.figures)-1] = append(p.figures[len(p.figures)-1], cells)
			case n.Kind() == east.KindTableRow:
				p.rows = append(p.rows, cells)
			}
		case ast.KindListItem:
			if n.Parent().Parent().Kind() == ast.KindDocument {
				// The item's own paragraph, without its nested hint list.
				p.items = append(p.items, mdText(n.FirstChild(), src))
			}
		case ast.KindHeading:
			p.headings = append(p.headings, mdText(n, src))
		case ast.KindFencedCodeBlock:
			cb := n.(*ast.FencedCodeBlock)
			if string(cb.Language(src)) == "mermaid" {
				var b strings.Builder
				for i := 0; i < cb.Lines().Len(); i++ {
					seg := cb.Lines().At(i)
					b.Write(seg.Value(src))
				}
				p.charts = append(p.charts, b.String())
			}
		}
		return ast.WalkContinue, nil
	})
	if tables > 1+len(p.charts) {
		t.Errorf("%d tables for %d charts, want at most one and one per chart", tables, len(p.charts))
	}
	return p
}

// mdText is the text a reader sees in n: escapes resolved, code spans as written.
func mdText(n ast.Node, src []byte) string {
	var b strings.Builder
	ast.Walk(n, func(c ast.Node, entering bool) (ast.WalkStatus, error) {
		if !entering {
			return ast.WalkContinue, nil
		}
		switch x := c.(type) {
		case *ast.Text:
			v := x.Segment.Value(src)
			if x.Parent().Kind() != ast.KindCodeSpan { // backslash escapes are literal in code
				v = util.UnescapePunctuations(v)
			}
			b.Write(v)
			if x.SoftLineBreak() {
				b.WriteByte('\n')
			}
		case *ast.String:
			b.Write(x.Value)
		}
		return ast.WalkContinue, nil
	})
	return b.String()
}

// The table of tables has one row per analysed table with its layout figures against
// the budget, and one list item per finding.
func TestMarkdownTableRows(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	p := parseMarkdown(t, render(t, "markdown", r, false))
	want := [][]string{
		// file, table, partitions, segments, ideal, fill, fixed ms per scan, budget ms
		{"m.yaml", "events", "1", "1,000", "1,000", "100%", "1,500", "1,000"},
		{"m.yaml", "readings", "40", "40", "10", "25%", "60.0", "1,000"},
		{"m.yaml", "quiet", "1", "5", "5", "100%", "7.5", "1,000"},
		{"m.yaml", "waived", "1", "1,000", "1,000", "100%", "1,500", "1,000"},
	}
	if !slices.EqualFunc(p.rows, want, slices.Equal) {
		t.Errorf("rows:\n%q\nwant:\n%q", p.rows, want)
	}
	if want := []string{"scangate failed", "Fixed ms per scan by layout", "Errors (1)", "Warnings (1)", "Accepted debt (1)"}; !slices.Equal(p.headings, want) {
		t.Errorf("headings %q, want %q", p.headings, want)
	}
	if len(p.items) != len(r.Findings) {
		t.Errorf("%d list items for %d findings: %q", len(p.items), len(r.Findings), p.items)
	}

	// Without tables the figures have nowhere to come from: no table, no chart.
	p = parseMarkdown(t, render(t, "markdown", withoutTables(r), false))
	if len(p.rows) != 0 || len(p.charts) != 0 {
		t.Errorf("without tables: rows %q charts %d", p.rows, len(p.charts))
	}
}

// A chart is drawn only for a table with a scan-overhead or truncated-segments finding
// that is not waived: here events and readings, not quiet (no finding) nor waived.
func TestMarkdownChartsOnlyForUnwaivedSegmentFindings(t *testing.T) {
	r := analysedResult(t, "m.yaml", "conf/m.yaml", fixtureManifest, rules.Error)
	p := parseMarkdown(t, render(t, "markdown", r, false))
	if got := chartTables(p.charts); !slices.Equal(got, []string{"events", "readings"}) {
		t.Errorf("charts for %q, want events and readings", got)
	}
	for _, c := range p.charts {
		if !strings.HasPrefix(c, "xychart-beta\n") || !strings.Contains(c, "\"today ") || !strings.Contains(c, "bar [") {
			t.Errorf("chart:\n%s", c)
		}
	}
	// events: today 1,000 segments x 1.5 ms; the recommendation, 1Mi rows, is 1 segment.
	if !strings.Contains(p.charts[0], "bar [1500, 1.5]") {
		t.Errorf("events chart:\n%s", p.charts[0])
	}

	// The same table without its waiver gets a chart.
	unwaived := strings.Replace(fixtureManifest, "    waivers:\n      - {rule: scan-overhead, reason: \"bigger segments next quarter\", expires: 2026-06-01}\n", "", 1)
	if unwaived == fixtureManifest {
		t.Fatal("fixture: the waiver was not removed")
	}
	r = analysedResult(t, "m.yaml", "conf/m.yaml", unwaived, rules.Error)
	if got := chartTables(parseMarkdown(t, render(t, "markdown", r, false)).charts); !slices.Equal(got, []string{"events", "readings", "waived"}) {
		t.Errorf("without the waiver: charts for %q", got)
	}

	// A finding of another rule draws none: only segment findings are charted.
	for i := range r.Findings {
		r.Findings[i].Rule = "partition-count"
	}
	if p := parseMarkdown(t, render(t, "markdown", r, false)); len(p.charts) != 0 || len(p.headings) != 3 {
		t.Errorf("other rules: %d charts, headings %q", len(p.charts), p.headings)
	}
}

// chartTables names the table each chart is titled with.
func chartTables(charts []string) []string {
	var out []string
	for _, c := range charts {
		_, rest, _ := strings.Cut(c, "title \"")
		name, _, _ := strings.Cut(rest, ": fixed ms per scan")
		out = append(out, name)
	}
	return out
}

// Text from the manifest reaches the reader as written: markup characters in messages
// are escaped, and a pipe in a table cell does not split it.
func TestMarkdownEscaping(t *testing.T) {
	src := strings.Replace(fixtureManifest, "name: quiet", "name: 'qu|i`et'", 1)
	r := analysedResult(t, "m.yaml", "conf/m.yaml", src, rules.Error)
	msg := "events: *bold* _x_ [l](y) <b> #1 |p| `tick` \\ end"
	r.Findings[0].Message = msg
	p := parseMarkdown(t, render(t, "markdown", r, false))
	if len(p.rows) != 4 || len(p.rows[2]) != 8 || p.rows[2][1] != "qu|i`et" {
		t.Errorf("row of qu|i`et: %q", p.rows)
	}
	if want := "m.yaml:6:5 error scan-overhead: " + msg; len(p.items) == 0 || p.items[0] != want {
		t.Errorf("item:\n%q\nwant:\n%q", p.items, want)
	}
}

// A clean run says so and lists nothing.
func TestMarkdownPassed(t *testing.T) {
	r := &Result{FailOn: rules.Error, Summary: Summary{Files: 1}}
	p := parseMarkdown(t, render(t, "markdown", r, false))
	if !slices.Equal(p.headings, []string{"scangate passed"}) || len(p.items) != 0 || len(p.rows) != 0 {
		t.Errorf("clean run: %+v", p)
	}
}
