package adopt

import (
	"path/filepath"
	"strings"

	udiff "github.com/aymanbagabas/go-udiff"

	"github.com/scangate/scangate/internal/escape"
)

// Diff is the result as a unified diff of the manifest ("--- a/NAME", "+++ b/NAME", hunks
// with three lines of context), "" when nothing changes. Each line's text is escaped
// for a terminal; a CR ending a line is kept, so the diff still applies to a file with
// CR LF line breaks.
func (r *Result) Diff() string {
	if !r.Changed() {
		return ""
	}
	name := escape.Text(strings.TrimPrefix(r.File, "./"))
	from, to := "a/"+name, "b/"+name // as patch -p1 reads them
	if filepath.IsAbs(r.File) {
		from, to = name, name
	}
	d := udiff.Unified(from, to, string(r.Before), string(r.After))
	lines := strings.SplitAfter(d, "\n")
	for i, l := range lines {
		body := strings.TrimSuffix(l, "\n")
		nl := l[len(body):]
		cr := ""
		if strings.HasSuffix(body, "\r") {
			body, cr = body[:len(body)-1], "\r"
		}
		if i >= 2 { // the two header lines are escaped already
			body = escape.Text(body)
		}
		lines[i] = body + cr + nl
	}
	return escape.Log(strings.Join(lines, ""))
}
