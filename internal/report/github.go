package report

import (
	"fmt"
	"io"
	"strings"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

func init() {
	register(writers{traits: Traits{Name: "github", Kinds: CheckReport | DiffReport, StepSummary: true}, check: writeGitHub, diff: writeDiffGitHub})
}

// writeGitHub writes one workflow command per finding, so the runner annotates the manifest
// line in the pull request: ::error, ::warning or ::notice with file, line, col and title.
// Data cannot end the command's line or add one: every line break is percent-encoded,
// every other hidden rune made visible.
func writeGitHub(w io.Writer, r *Result, _ bool) error {
	out := &flusher{w: w}
	for _, f := range r.Findings {
		if f.Accepted() {
			continue // accepted debt is listed in the other reports, not annotated
		}
		command(&out.b, commandLevel(f.Severity), r.URI(f.File), f.Pos, "scangate "+f.Rule, findingLines(f, ""))
		out.flush()
	}
	return out.err
}

// commandLevel is the workflow command of a severity.
func commandLevel(s rules.Severity) string {
	return map[rules.Severity]string{rules.Error: "error", rules.Warning: "warning", rules.Note: "notice"}[s]
}

// findingLines is a finding's message, suffix and hints, one per line, each escaped
// (escape.Text) so only the lines the report adds survive as line breaks.
func findingLines(f rules.Finding, suffix string) string {
	msg := escape.Text(f.Message) + suffix
	for _, h := range f.Hints {
		msg += "\nhint: " + escape.Text(h)
	}
	return msg
}

// command writes one workflow command: "::LEVEL file=F,line=L,col=C,title=T::MSG". The
// line and column are left out when pos has no line (the whole file).
func command(b *strings.Builder, level, file string, pos schema.Pos, title, msg string) {
	props := []string{"file=" + EscapeProperty(file)}
	if pos.Line > 0 {
		props = append(props, fmt.Sprintf("line=%d", pos.Line), fmt.Sprintf("col=%d", pos.Col))
	}
	props = append(props, "title="+EscapeProperty(title))
	fmt.Fprintf(b, "::%s %s::%s\n", level, strings.Join(props, ","), EscapeData(msg))
}

// EscapeData escapes a workflow command's message (escape.CommandData).
func EscapeData(s string) string { return escape.CommandData(s) }

// EscapeProperty escapes a workflow command's property value (escape.CommandProperty).
func EscapeProperty(s string) string { return escape.CommandProperty(s) }
