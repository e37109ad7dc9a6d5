// Package report writes findings for people and for pipelines.
package report

import (
	"fmt"
	"io"
	"strings"

	"github.com/fatih/color"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
)

func init() {
	register(writers{
		traits: Traits{Name: "text", Kinds: CheckReport | DiffReport | PlanReport, Colours: true},
		check:  writeText,
		diff:   writeDiffText,
		plan: func(w io.Writer, p *Plan, _ bool) error {
			_, err := io.WriteString(w, escape.Log(planText(p)))
			return err
		},
	})
}

// writeText writes findings in the GNU style, "path:line:col: severity: message [rule]",
// each followed by indented hint lines, then one summary line. Colour is used only
// when asked for; the caller decides from the terminal, NO_COLOR and --no-color. Every
// string from the input is escaped (escape.Text), and the page is guarded for the CI
// runner that reads it (escape.Log).
func writeText(w io.Writer, r *Result, useColor bool) error {
	paint := painter(useColor)
	bold := paint(color.New(color.Bold))
	faint := paint(color.New(color.Faint))
	sev := severityPaint(paint)
	out := &flusher{w: w, guard: escape.Log}
	b := &out.b
	advised := map[[2]string]bool{} // tables whose recommendation is printed already, by file and name
	line := func(f rules.Finding, note string) {
		loc := escape.Text(f.File)
		if f.Pos.Line > 0 {
			loc = fmt.Sprintf("%s:%d:%d", loc, f.Pos.Line, f.Pos.Col)
		}
		fmt.Fprintf(b, "%s: %s: %s %s%s\n", bold(loc), sev[f.Severity](f.Severity.String()), escape.Text(f.Message), faint("["+escape.Text(f.Rule)+"]"), note)
		for i, h := range f.Hints {
			// A table's findings share one fix: its first finding carries it, the
			// others point to it.
			if i == 0 && f.Advice {
				k := [2]string{f.File, f.Table}
				if advised[k] {
					h = SeeAbove(f.Table)
				}
				advised[k] = true
			}
			fmt.Fprintf(b, "    hint: %s\n", escape.Text(h))
		}
		out.flush()
	}
	for _, f := range r.Findings {
		if f.Baselined {
			continue
		}
		note := ""
		if w := f.Waiver; w != nil {
			note = faint(fmt.Sprintf(" (waived until %s: %s)", w.Expires.Format("2006-01-02"), escape.Text(w.Reason)))
		}
		line(f, note)
	}
	if _, baselined := r.Accepted(); baselined > 0 {
		if r.Baseline.Hide {
			fmt.Fprintf(b, "%s of %s not listed (--hide-baselined); they do not fail the run\n", plural(baselined, "baselined finding"), escape.Text(r.Baseline.File))
		} else {
			fmt.Fprintf(b, "baselined in %s, not failing the run:\n", escape.Text(r.Baseline.File))
			for _, f := range r.Findings {
				if f.Baselined {
					line(f, "")
				}
			}
		}
	}
	if u := r.Baseline; u != nil && u.Escalated+u.Expired > 0 {
		fmt.Fprintf(b, "%s of %s no longer absorbed: %d escalated past the severity recorded, %d of expired entries; they count again (listed above)\n",
			plural(u.Escalated+u.Expired, "finding"), escape.Text(u.File), u.Escalated, u.Expired)
	}
	if r.Baseline != nil && r.Baseline.Fixed > 0 {
		fmt.Fprintf(b, "%s in %s no longer found (fixed); run `scangate baseline write` to drop them\n",
			plural(r.Baseline.Fixed, "baseline entry"), escape.Text(r.Baseline.File))
	}
	b.WriteString(SummaryLine(r))
	b.WriteByte('\n')
	out.flush()
	return out.err
}

// SeeAbove is the hint a table's later findings print in place of its recommendation,
// which its first finding carries.
func SeeAbove(table string) string {
	return "see the recommendation for table " + table + " above"
}

// painter returns a function that turns a colour into a formatter, or into plain text
// when colour is off.
func painter(useColor bool) func(*color.Color) func(a ...any) string {
	return func(c *color.Color) func(a ...any) string {
		if useColor {
			c.EnableColor()
		} else {
			c.DisableColor()
		}
		return c.SprintFunc()
	}
}

// severityPaint colours severities the same way in every text report.
func severityPaint(paint func(*color.Color) func(a ...any) string) map[rules.Severity]func(a ...any) string {
	return map[rules.Severity]func(a ...any) string{
		rules.Error:   paint(color.New(color.FgRed, color.Bold)),
		rules.Warning: paint(color.New(color.FgYellow, color.Bold)),
		rules.Note:    paint(color.New(color.FgCyan)),
	}
}

// SummaryLine is one line: what was checked and the findings by severity, accepted
// debt counted apart.
func SummaryLine(r *Result) string {
	n := r.Counts()
	s := r.Summary
	line := fmt.Sprintf("%s, %s: ", plural(s.Files, "file"), plural(s.Tables, "table"))
	if n[rules.Error]+n[rules.Warning]+n[rules.Note] == 0 {
		line += "no findings"
	} else {
		line += fmt.Sprintf("%s, %s, %s", plural(n[rules.Error], "error"), plural(n[rules.Warning], "warning"), plural(n[rules.Note], "note"))
	}
	if waived, baselined := r.Accepted(); waived+baselined > 0 {
		line += fmt.Sprintf(" (%d waived, %d baselined)", waived, baselined)
	}
	if s.Invalid > 0 {
		line += fmt.Sprintf("; %s could not be checked", plural(s.Invalid, "file"))
	}
	return line
}

func plural(n int, word string) string {
	if n == 1 {
		return fmt.Sprintf("1 %s", word)
	}
	if strings.HasSuffix(word, "y") {
		return fmt.Sprintf("%d %sies", n, strings.TrimSuffix(word, "y"))
	}
	return fmt.Sprintf("%d %ss", n, word)
}

// flusher hands a builder's text to w whenever asked, so a report is written as it is
// built rather than held whole; guard, when set, escapes each piece (pieces are whole
// lines, so a line-wise guard reads them as it would the page). The first error stops it.
type flusher struct {
	w     io.Writer
	b     strings.Builder
	guard func(string) string
	err   error
}

func (f *flusher) flush() {
	if f.err == nil && f.b.Len() > 0 {
		s := f.b.String()
		if f.guard != nil {
			s = f.guard(s)
		}
		_, f.err = io.WriteString(f.w, s)
	}
	f.b.Reset()
}
