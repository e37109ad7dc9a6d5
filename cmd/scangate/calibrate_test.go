package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// scangate calibrate as a user runs it: the shipped demo, a broken CSV, a degenerate one.
func TestCalibrate(t *testing.T) {
	r := scangate(t, root(t), "", nil, "calibrate", "testdata/calibration/measurements.csv")
	wantCode(t, r, 0)
	for _, s := range []string{
		"calibrated from 48 full scans in testdata/calibration/measurements.csv",
		"non-negative least squares (Lawson–Hanson active set)",
		"  f     1.3", "ms per segment", "  rho   ", "  beta  ", "MB/s per core",
		"fit: R² 0.99", "worst residuals",
		"testdata/calibration/measurements.csv:",
		"\n  segment_overhead_ms: 1.34\n  scan_mb_per_s: 185\n  cores: 8\n",
		"per-row CPU rho",
	} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("calibrate output lacks %q:\n%s", s, r.stdout)
		}
	}
	// Same input, same bytes.
	if again := scangate(t, root(t), "", nil, "calibrate", "testdata/calibration/measurements.csv"); again.stdout != r.stdout {
		t.Error("two runs printed different reports")
	}
	// Standard input.
	data, err := os.ReadFile(filepath.Join(root(t), "testdata/calibration/measurements.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if r := scangate(t, t.TempDir(), string(data), nil, "calibrate", "-"); r.code != 0 || !strings.Contains(r.stdout, "<stdin>:") {
		t.Errorf("calibrate - : exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}

	dir := t.TempDir()
	files := map[string]string{
		"broken.csv": "segments,rows,bytes,cpu_ms\n10,1000,8000,12.5\n12,1000,8000,abc\n",
		"same.csv":   "segments,rows,bytes,cpu_ms\n730,100000,800000,1200\n730,200000,1600000,1300\n730,300000,2500000,1450\n730,400000,3000000,1500\n730,500000,4100000,1650\n",
		"prop.csv":   "segments,rows,bytes,cpu_ms\n1,8388608,8000000,100\n2,16777216,17000000,190\n3,25165824,24000000,290\n5,41943040,41000000,480\n",
	}
	for name, body := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"calibrate", "broken.csv"}, `scangate: broken.csv:3:14: cpu_ms "abc" is not a number`},
		{[]string{"calibrate", "same.csv"}, "cannot calibrate from same.csv: every measurement has segments = 730"},
		{[]string{"calibrate", "prop.csv"}, "cannot tell apart the costs of segments (f) and rows (rho)"},
		{[]string{"calibrate", "missing.csv"}, "cannot read missing.csv"},
		{[]string{"calibrate"}, "accepts 1 arg"},
	} {
		r := scangate(t, dir, "", nil, c.args...)
		if r.code != 2 || !strings.Contains(r.stderr, c.want) || r.stdout != "" {
			t.Errorf("scangate %s: exit %d, stderr %q; want exit 2 and %q", strings.Join(c.args, " "), r.code, r.stderr, c.want)
		}
	}
}
