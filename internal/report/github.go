package report

import (
	"fmt"
	"io"
	"strings"

	"github.com/scangate/scangate/rules"
)

func init() {
	register(writers{traits: Traits{Name: "github", Kinds: CheckReport, StepSummary: true}, check: writeGitHub})
}

// writeGitHub writes one workflow command per finding, so the runner annotates the manifest
// line in the pull request: ::error, ::warning or ::notice with file, line, col and title.
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
		msg := f.Message
		for _, h := range f.Hints {
			msg += "\nhint: " + h
		}
		fmt.Fprintf(&b, "::%s %s::%s\n", cmd, strings.Join(props, ","), EscapeData(msg))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// EscapeData escapes a workflow command's message: %, CR and LF.
func EscapeData(s string) string {
	return strings.NewReplacer("%", "%25", "\r", "%0D", "\n", "%0A").Replace(s)
}

// EscapeProperty escapes a workflow command's property value: as data, plus : and ,.
func EscapeProperty(s string) string {
	return strings.NewReplacer("%", "%25", "\r", "%0D", "\n", "%0A", ":", "%3A", ",", "%2C").Replace(s)
}
