package run

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
	"unicode"
	"unicode/utf8"

	"github.com/scangate/scangate/internal/escape"
	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// checkEscaped fails when data reached a report raw: invalid UTF-8, a hidden rune other
// than the line break, the "##[" command form, or a line that starts a workflow command
// (only the github format writes those, one per finding).
func checkEscaped(t *testing.T, format, out string) {
	t.Helper()
	if !utf8.ValidString(out) || strings.Contains(out, "##[") {
		t.Fatalf("%s report: invalid UTF-8 or ##[ in %q", format, out)
	}
	for _, r := range out {
		if r != '\n' && escape.Hidden(r) {
			t.Fatalf("%s report holds the raw rune %U", format, r)
		}
	}
	for _, line := range strings.Split(out, "\n") {
		if strings.HasPrefix(strings.TrimLeftFunc(line, unicode.IsSpace), "::") &&
			!(format == "github" && workflowCommand.MatchString(line)) {
			t.Fatalf("%s report: a line starts a workflow command: %q", format, line)
		}
	}
}

// workflowCommand is the one form the github format writes.
var workflowCommand = regexp.MustCompile(`^::(error|warning|notice) file=[^:]*::`)

// FuzzRun drives the whole run on arbitrary bytes: load, analysis, every rule, then
// every check format. It must never panic, every number a finding carries must be
// finite, and the machine-readable reports must stay well-formed.
func FuzzRun(f *testing.F) {
	for _, glob := range []string{"../../testdata/demo/*.yaml", "../../testdata/rules/*/*.yaml", "../../testdata/bad/*.yaml"} {
		paths, _ := filepath.Glob(glob)
		for _, p := range paths {
			if data, err := os.ReadFile(p); err == nil {
				f.Add(data)
			}
		}
	}
	cfg := rules.Config{Today: time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC)}
	// Small limits keep one execution quick; the arithmetic is the same at any size.
	limits := schema.DefaultLimits
	limits.MaxFileBytes = 64 << 10
	limits.MaxRunPartitions = 20_000
	f.Fuzz(func(t *testing.T, data []byte) {
		files, findings := Check([]Input{{name: "fuzz.yaml", data: data}}, cfg, nil, limits, true)
		for _, fd := range findings {
			for k, v := range fd.Numbers {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("%s: %s = %v", fd.Rule, k, v)
				}
			}
		}
		res := &report.Result{Version: "fuzz", FailOn: rules.Error, Files: files, Findings: findings, Summary: report.Summarize(files)}
		for _, name := range report.Names(report.CheckReport) {
			format, _ := report.Lookup(name, report.CheckReport)
			var b bytes.Buffer
			if err := format.Render(&b, res, false); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			if (name == "json" || name == "sarif") && !json.Valid(b.Bytes()) {
				t.Fatalf("%s report is not valid JSON", name)
			}
			checkEscaped(t, name, b.String())
		}
	})
}
