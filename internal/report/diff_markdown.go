package report

import (
	"fmt"
	"io"
	"strings"

	"github.com/scangate/scangate/internal/change"
	"github.com/scangate/scangate/internal/escape"
)

// writeDiffMarkdown writes the change for a pull-request comment: a verdict line, the gate,
// a table of the changed tables and model totals (before → after, delta), the new
// findings with their hints, the worsened ones (with their hints) and the improved
// ones with what moved, and the resolved ones. A failed gate names only the limits
// crossed.
func writeDiffMarkdown(w io.Writer, r *DiffResult, _ bool) error {
	d := r.Diff
	var b strings.Builder
	status := "passed"
	if r.Failed() {
		status = "failed"
	}
	fmt.Fprintf(&b, "### scangate diff %s\n\n", status)
	fmt.Fprintf(&b, "**%s**\n\n", mdEscape(upperFirst(d.Verdict())))
	fmt.Fprintf(&b, "Base %s, head %s: %s.\n\n", escape.InlineCode(d.Base), escape.InlineCode(d.Head), mdEscape(r.diffSummary()))
	if len(d.Invalid) > 0 {
		fmt.Fprintf(&b, "%s.\n\n", mdEscape(upperFirst(invalidWords(d))))
		for _, inv := range d.Invalid {
			for _, f := range inv.Findings {
				fmt.Fprintf(&b, "- %s **%s**: %s\n", escape.InlineCode(change.Location(f)), mdEscape(f.Rule), mdEscape(f.Message))
			}
		}
		b.WriteString("\n")
		_, err := io.WriteString(w, b.String())
		return err
	}
	if files := fileLines(d); len(files) > 0 {
		for _, l := range files {
			fmt.Fprintf(&b, "- %s\n", mdEscape(l))
		}
		b.WriteString("\n")
	}
	if len(r.Breaches) > 0 {
		crossed := r.crossed()
		for i := range crossed {
			crossed[i] = code(crossed[i])
		}
		fmt.Fprintf(&b, "The gate failed (%s):\n\n", strings.Join(crossed, ", "))
		for _, br := range r.Breaches {
			fmt.Fprintf(&b, "- %s\n", mdEscape(br.Message))
		}
		b.WriteString("\n")
	} else {
		fmt.Fprintf(&b, "The gate passed (%s).\n\n", r.gateWords(code))
	}
	if len(r.changedTables()) > 0 {
		b.WriteString("| model | table | change | partitions | segments | fill | fixed ms per scan | scan wall ms |\n")
		b.WriteString("|---|---|---|--:|--:|--:|--:|--:|\n")
		for _, m := range d.Models {
			if m.Status == change.Unchanged {
				continue
			}
			for t := range m.TableChanges() {
				if t.Status == change.Unchanged {
					continue
				}
				fmt.Fprintf(&b, "| %s | %s | %s |", code(m.Name), code(t.Name), t.Status)
				for _, x := range tableMetrics(t) {
					fmt.Fprintf(&b, " %s |", cell(x))
				}
				b.WriteString("\n")
			}
			tm := totalMetrics(m)
			fmt.Fprintf(&b, "| %s | **total** | %s | %s | %s | %s | %s | %s |\n",
				code(m.Name), m.Status, cell(tm[1]), cell(tm[2]), none, cell(tm[3]), none)
		}
		b.WriteString("\n")
		// The refresh peak is the model's, so it gets a line of its own under the table.
		for _, m := range d.Models {
			if x, ok := refreshMetric(m); ok && m.Status != change.Unchanged {
				fmt.Fprintf(&b, "Refresh peak of %s: %s.\n\n", escape.InlineCode(m.Name), cell(x))
			}
		}
	}
	section := func(title string, fs []change.FindingChange, hints bool, suffix func(change.FindingChange) string) {
		if len(fs) == 0 {
			return
		}
		fmt.Fprintf(&b, "#### %s (%d)\n\n", title, len(fs))
		for _, fc := range fs {
			f := fc.Finding
			fmt.Fprintf(&b, "- %s **%s** (%s%s): %s\n", escape.InlineCode(change.Location(f)), mdEscape(f.Rule), f.Severity, suffix(fc), mdEscape(f.Message))
			if hints {
				for _, h := range f.Hints {
					fmt.Fprintf(&b, "  - hint: %s\n", mdEscape(h))
				}
			}
		}
		b.WriteString("\n")
	}
	nothing := func(change.FindingChange) string { return "" }
	section("New findings", d.Introduced, true, nothing)
	moved := func(f change.FindingChange) string { return ", " + mdEscape(f.Moved()) }
	section("Worsened findings", d.Worsened, true, moved)
	section("Improved findings", d.Improved, false, moved)
	section("Resolved findings", d.Resolved, false, nothing)
	_, err := io.WriteString(w, b.String())
	return err
}

// cell writes a figure as "before → after (delta)", the value alone when it did not
// change, and "– → after" or "before → –" for an added or removed table.
func cell(x metric) string {
	if x.before == x.after && (x.delta == "0" || x.delta == "0 pp" || x.delta == none) {
		return x.before
	}
	s := x.before + " → " + x.after
	if x.delta != none {
		s += " (" + x.delta + ")"
	}
	return s
}

// upperFirst capitalises the first letter of a sentence.
func upperFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}
