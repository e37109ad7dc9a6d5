package rules

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/scangate/scangate/internal/advisor"
	"github.com/scangate/scangate/internal/analysis"
	"github.com/scangate/scangate/schema"
)

func loadFile(t *testing.T, path string) *schema.Manifest {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	m, err := schema.Load(path, data, schema.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

const routineCost = "each routine refresh then rebuilds"

// The daily-loaded 3G-row table (testdata/loads, arithmetic in each file's
// header): when only a merge of the reloaded days fits, its hint says what each routine
// refresh then costs; when a layout that keeps them fits, it is the advice; without a
// declared routine refresh the advice may merge every day.
func TestRoutineAdvice(t *testing.T) {
	for _, c := range []struct {
		file, first string
	}{
		{"merge-costs.yaml", "turn 730 day partitions into 2 year partitions: 730 -> 2 partitions, 730 -> 180 segments, -825 ms per scan; " +
			"each routine refresh then rebuilds 365 days in 1 partition instead of 3 days in 3: 1.5G rows instead of 12.3M, +24.9 min"},
		{"window-kept.yaml", "keep day partitions for 14 days, then merge into quarters (14 day partitions + 8 quarter partitions): 730 -> 22 partitions, 730 -> 190 segments, -810 ms per scan"},
		{"no-routine.yaml", "turn 730 day partitions into 24 month partitions: 730 -> 24 partitions, 730 -> 192 segments, -807 ms per scan"},
	} {
		fs := Run(loadFile(t, filepath.Join("../testdata/loads", c.file)), Config{Today: time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)})
		if len(fs) == 0 {
			t.Fatalf("%s: no findings", c.file)
		}
		for _, f := range fs {
			if len(f.Hints) == 0 || f.Hints[0] != c.first {
				t.Errorf("%s %s: first hint %q, want %q", c.file, f.Rule, f.Hints, c.first)
			}
			for _, h := range f.Hints[1:] {
				if c.file == "window-kept.yaml" && strings.Contains(h, routineCost) {
					t.Errorf("%s %s: a hint merges the reloaded days although a layout that keeps them fits: %q", c.file, f.Rule, h)
				}
			}
		}
	}
}

// No hint and no recommendation makes the routine refresh rebuild more rows without
// saying so, on every manifest of testdata/loads: checked against the layouts' own
// figures, not the wording.
func TestRoutineCostAlwaysSaid(t *testing.T) {
	files, _ := filepath.Glob("../testdata/loads/*.yaml")
	if len(files) < 3 {
		t.Fatalf("only %d files", len(files))
	}
	for _, f := range files {
		md := analysis.Analyze(loadFile(t, f), advisor.DefaultLevels)
		for _, tb := range md.Tables {
			sw := tb.Sweep()
			for k := range sw.Candidates {
				c := &sw.Candidates[k]
				today := &sw.Candidates[sw.Today]
				if more := c.RoutineExtra(today) > 0; more != strings.Contains(advisor.Effect(today, c), routineCost) {
					t.Errorf("%s %s: candidate %q: extra %d rows, effect %q", f, tb.Spec.Name, c.Change, c.RoutineExtra(today), advisor.Effect(today, c))
				}
			}
		}
	}
}
