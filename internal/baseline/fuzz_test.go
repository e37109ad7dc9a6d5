package baseline

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/scangate/scangate/rules"
	"github.com/scangate/scangate/schema"
)

// FuzzLoadBaseline: any bytes give a baseline or a positioned error, never a panic; a
// baseline that loads applies to findings and reads back from its own bytes.
func FuzzLoadBaseline(f *testing.F) {
	files, _ := filepath.Glob(filepath.Join("..", "..", "testdata", "baselines", "*.json"))
	for _, p := range files {
		if data, err := os.ReadFile(p); err == nil {
			f.Add(data)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		b, err := Parse("b.json", data, schema.DefaultLimits)
		if err != nil {
			return
		}
		fs := []rules.Finding{{Rule: "scan-time", Severity: rules.Error, File: "models/a.yaml", Table: "orders", Subject: "scan", Message: "m"}}
		b.Apply(fs, func(s string) string { return s }, day(2027, 1, 1))
		if _, err := Parse("b.json", b.Marshal(), schema.DefaultLimits); err != nil {
			t.Errorf("a loaded baseline does not read back: %v\n%s", err, b.Marshal())
		}
	})
}
