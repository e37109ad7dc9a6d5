package run

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/scangate/scangate/internal/report"
	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

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
	limits.MaxRunPartitions = 200_000
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
		}
	})
}
