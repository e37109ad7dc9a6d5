package report

import (
	"fmt"
	"io"
	"strings"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/units"
	"github.com/scangate/scangate/rules"
)

func init() {
	register(writers{
		traits: Traits{Name: "markdown", Kinds: CheckReport | DiffReport, NeedsTables: true, Charts: true},
		check:  writeMarkdown,
		diff:   writeDiffMarkdown,
	})
}

// writeMarkdown writes a summary for a job page or a pull-request comment: a verdict line, a
// table of tables with their layout against the budget, then the findings grouped by
// severity with their hints. Input strings are inline text (mdEscape) or code spans
// (code), so none can break the table or become markup.
func writeMarkdown(w io.Writer, r *Result, _ bool) error {
	out := &flusher{w: w}
	b := &out.b
	n := r.Counts()
	verdict := "passed"
	if r.Failed() {
		verdict = "failed"
	}
	fmt.Fprintf(b, "### scangate %s\n\n", verdict)
	fmt.Fprintf(b, "%s (the gate fails at %s).\n\n", mdEscape(SummaryLine(r)), failOnName(r.FailOn))
	if r.Summary.Tables > 0 {
		b.WriteString("| file | table | partitions | segments | ideal | fill | fixed ms per scan | budget ms |\n")
		b.WriteString("|---|---|--:|--:|--:|--:|--:|--:|\n")
		for _, f := range r.Files {
			for _, t := range f.Tables {
				l := t.Layout
				budget := "–"
				if b := rowReport(t).ScanOverheadBudgetMs; b != nil {
					budget = units.Ms(*b)
				}
				fmt.Fprintf(b, "| %s | %s | %s | %s | %s | %s | %s | %s |\n",
					code(f.Name), code(t.Name), units.Num(int64(l.Partitions)), units.Num(l.Segments),
					units.Num(rowReport(t).Ideal), units.Pct(l.Fill), units.Ms(l.FixedMs), budget)
				out.flush()
			}
		}
		b.WriteString("\n")
	}
	charts(b, r)
	out.flush()
	for _, sev := range []rules.Severity{rules.Error, rules.Warning, rules.Note} {
		if n[sev] == 0 {
			continue
		}
		fmt.Fprintf(b, "#### %s (%d)\n\n", map[rules.Severity]string{rules.Error: "Errors", rules.Warning: "Warnings", rules.Note: "Notes"}[sev], n[sev])
		for _, f := range r.Findings {
			if f.Severity == sev && !f.Accepted() {
				mdFinding(b, f, "")
				out.flush()
			}
		}
		b.WriteString("\n")
	}
	if waived, baselined := r.Accepted(); waived+baselined > 0 {
		fmt.Fprintf(b, "#### Accepted debt (%d)\n\n", waived+baselined)
		for _, f := range r.Findings {
			switch {
			case f.Waiver != nil:
				mdFinding(b, f, fmt.Sprintf(" (waived until %s: %s)", f.Waiver.Expires.Format("2006-01-02"), mdEscape(f.Waiver.Reason)))
			case f.Baselined:
				mdFinding(b, f, " (baselined)")
			}
			out.flush()
		}
		b.WriteString("\n")
	}
	out.flush()
	return out.err
}

func mdFinding(b *strings.Builder, f rules.Finding, note string) {
	loc := f.File
	if f.Pos.Line > 0 {
		loc = fmt.Sprintf("%s:%d:%d", f.File, f.Pos.Line, f.Pos.Col)
	}
	fmt.Fprintf(b, "- %s **%s** %s: %s%s\n", escape.InlineCode(loc), f.Severity, mdEscape(f.Rule), mdEscape(f.Message), note)
	for _, h := range f.Hints {
		fmt.Fprintf(b, "  - hint: %s\n", mdEscape(h))
	}
}

// mdEscape and code are the Markdown escapes every Markdown report uses.
var (
	mdEscape = escape.Markdown
	code     = escape.Code
)
