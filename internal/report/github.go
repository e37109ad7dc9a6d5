package report

import (
	"fmt"
	"io"
	"strings"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/rules"
)

func init() {
	register(writers{traits: Traits{Name: "github", Kinds: CheckReport, StepSummary: true}, check: writeGitHub})
}

// writeGitHub writes one workflow command per finding, so the runner annotates the manifest
// line in the pull request: ::error, ::warning or ::notice with file, line, col and title.
// Data cannot end the command's line or add one: every line break is percent-encoded,
// every other hidden rune made visible.
func writeGitHub(w io.Writer, r *Result, _ bool) error {
	var b strings.Builder
	for _, f := range r.Findings {
		if f.Accepted() {
			continue // accepted debt is listed in the other reports, not annotated
		}
		cmd := map[rules.Severity]string{rules.Error: "error", rules.Warning: "warning", rules.Note: "notice"}[f.Severity]
		props := []string{"file=" + EscapeProperty(r.URI(f.File))}
		if f.Pos.Line > 0 {
			props = append(props, fmt.Sprintf("line=%d", f.Pos.Line), fmt.Sprintf("col=%d", f.Pos.Col))
		}
		props = append(props, "title="+EscapeProperty("scangate "+f.Rule))
		msg := escape.Text(f.Message)
		for _, h := range f.Hints {
			msg += "\nhint: " + escape.Text(h)
		}
		fmt.Fprintf(&b, "::%s %s::%s\n", cmd, strings.Join(props, ","), EscapeData(msg))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// EscapeData escapes a workflow command's message (escape.CommandData).
func EscapeData(s string) string { return escape.CommandData(s) }

// EscapeProperty escapes a workflow command's property value (escape.CommandProperty).
func EscapeProperty(s string) string { return escape.CommandProperty(s) }
