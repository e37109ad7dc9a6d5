package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"github.com/scangate/scangate/schema"
)

// scangate calibrate as a user runs it: the shipped demo, a broken CSV, a degenerate one.
func TestCalibrate(t *testing.T) {
	r := scangate(t, root(t), "", nil, "calibrate", "testdata/calibration/measurements.csv")
	wantCode(t, r, 0)
	for _, s := range []string{
		"calibrated from 48 full scans in testdata/calibration/measurements.csv",
		"noise:  relative: each scan weighs 1/fitted²",
		"non-negative least squares (Lawson–Hanson active set)",
		"  f     1.3", "ms per segment", "  rho   ", "  beta  ", "MB/s per core",
		"fit: R² 0.99", "% of the fitted time", "worst residuals",
		"testdata/calibration/measurements.csv:",
		"\n  segment_overhead_ms: 1.37\n  scan_mb_per_s: 186\n  cores: 8\n",
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
		// rows = 8Mi x segments: rho is absorbed by f.
		"prop.csv": "segments,rows,bytes,cpu_ms\n1,8388608,8000000,41.92\n2,16777216,40000000,203.84\n3,25165824,10000000,55.76\n5,41943040,90000000,459.6\n",
		// bytes = 1000 x segments: beta and f cannot be told apart.
		"tied.csv": "segments,rows,bytes,cpu_ms\n1,1000,1000,3\n10,5000,10000,25\n100,20000,100000,240\n1000,90000,1000000,2600\n",
		"zero.csv": "segments,rows,bytes,cpu_ms\n1,1000,1000,3\n10,5000,20000,0\n",
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
		{[]string{"calibrate", "tied.csv"}, "cannot calibrate from tied.csv: bytes moved together with segments: every scan read 1000 bytes per segment, so the CPU per byte (beta) cannot be told apart from the CPU per segment (f)"},
		{[]string{"calibrate", "zero.csv"}, "zero.csv:3:15: cpu_ms is 0: the relative-error fit weighs each scan by 1/time²"},
		{[]string{"calibrate", "--noise", "loud", "prop.csv"}, `unknown noise model "loud"; use relative`},
		{[]string{"calibrate", "--format", "xml", "prop.csv"}, `unknown --format "xml"; use text or json`},
		{[]string{"calibrate", "missing.csv"}, "cannot read missing.csv"},
		{[]string{"calibrate"}, "accepts 1 arg"},
	} {
		r := scangate(t, dir, "", nil, c.args...)
		if r.code != 2 || !strings.Contains(r.stderr, c.want) || r.stdout != "" {
			t.Errorf("scangate %s: exit %d, stderr %q; want exit 2 and %q", strings.Join(c.args, " "), r.code, r.stderr, c.want)
		}
	}
	// A dropped term is fitted around and said, not refused.
	r = scangate(t, dir, "", nil, "calibrate", "prop.csv")
	// Times from f = 1.5 ms, 200 MB/s and rho = 0.05 ms per million rows: f absorbs 0.42 ms.
	if r.code != 0 || !strings.Contains(r.stdout, "  rho   not fitted: every scan read 8,388,608 rows per segment, so a cost per row cannot be told apart from the cost per segment: f includes it") ||
		!strings.Contains(r.stdout, "segment_overhead_ms: 1.92\n") {
		t.Errorf("calibrate prop.csv: exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
}

// The classic experiment: one table at two segment sizes, several columns each, every
// scan reading the same rows. calibrate fits f and beta, puts a per-scan constant in
// rho's place and says so, in text and JSON.
func TestCalibrateClassic(t *testing.T) {
	dir := t.TempDir()
	// 2.4G rows in 24 partitions at 1Mi and 8Mi rows per segment; times made from
	// f = 1.5 ms, 200 MB/s and rho = 0.05 ms per million rows (120 ms a scan), exact.
	csv := "scan,segments,rows,bytes,cpu_ms\n"
	for _, sc := range []struct {
		segs  int
		bytes []float64
	}{{2304, []float64{3e8, 1.2e9, 4.8e9, 9.6e9}}, {288, []float64{2.7e8, 1.15e9, 4.75e9, 9.6e9}}} {
		for _, b := range sc.bytes {
			csv += fmt.Sprintf("x,%d,2400000000,%.0f,%.3f\n", sc.segs, b, 1.5*float64(sc.segs)+b/200_000+120)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, "classic.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	r := scangate(t, dir, "", nil, "calibrate", "classic.csv")
	wantCode(t, r, 0)
	for _, s := range []string{
		"  rho   not fitted: every scan read the same 2,400,000,000 rows, so a cost per row is a fixed cost per scan here",
		"  c     120", "ms per scan, the per-scan constant in rho's place",
		"(about the mean: the fit has a constant)",
		"segment_overhead_ms: 1.50\n", "scan_mb_per_s: 200\n",
		"per-row CPU rho not fitted",
	} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("classic experiment output lacks %q:\n%s", s, r.stdout)
		}
	}
	r = scangate(t, dir, "", nil, "calibrate", "--format", "json", "classic.csv")
	wantCode(t, r, 0)
	var doc struct {
		F, Rho, Beta, C *struct {
			Estimate float64
			StdError *float64 `json:"std_error"`
		}
		Dropped []struct{ Term, Reason string }
	}
	calibrationJSON(t, r.stdout, &doc)
	if doc.F == nil || doc.Beta == nil || doc.C == nil || doc.Rho != nil || len(doc.Dropped) != 1 || doc.Dropped[0].Term != "rho" ||
		math.Abs(doc.F.Estimate-1.5) > 1e-6 || math.Abs(doc.Beta.Estimate*200_000-1) > 1e-6 || math.Abs(doc.C.Estimate-120) > 1e-3 {
		t.Errorf("classic JSON: %s", r.stdout)
	}
	if !strings.Contains(r.stdout, `"rho": null`) {
		t.Errorf("a dropped term is not null:\n%s", r.stdout)
	}
}

// --format json on the demo: valid under schema/calibration.schema.json (which scangate
// schema calibration prints), every term with its estimate and standard error.
func TestCalibrateJSON(t *testing.T) {
	r := scangate(t, root(t), "", nil, "calibrate", "--format", "json", "testdata/calibration/measurements.csv")
	wantCode(t, r, 0)
	var doc struct {
		F, Rho, Beta *struct {
			Estimate float64
			StdError float64 `json:"std_error"`
			Unit     string
		}
		C      *struct{}
		Noise  string
		Engine struct {
			SegmentOverheadMs float64 `json:"segment_overhead_ms"`
			ScanMBPerS        float64 `json:"scan_mb_per_s"`
			Cores             int
		}
	}
	calibrationJSON(t, r.stdout, &doc)
	if doc.F == nil || doc.Rho == nil || doc.Beta == nil || doc.C != nil || doc.Noise != "relative" ||
		doc.F.Unit != "ms per segment" || doc.Rho.Unit != "ms per row" || doc.Beta.Unit != "ms per byte" ||
		!(doc.F.StdError > 0) || !(doc.Beta.StdError > 0) || doc.Engine.Cores != 8 ||
		math.Abs(doc.Engine.SegmentOverheadMs-doc.F.Estimate) > 0 || math.Abs(doc.Engine.ScanMBPerS*doc.Beta.Estimate*1000-1) > 1e-12 {
		t.Errorf("calibrate JSON:\n%s", r.stdout)
	}
	// The text and the JSON quote one fit: the snippet's 3 significant digits of f.
	text := scangate(t, root(t), "", nil, "calibrate", "testdata/calibration/measurements.csv")
	if want := fmt.Sprintf("segment_overhead_ms: %.3g\n", doc.F.Estimate); !strings.Contains(text.stdout, want) {
		t.Errorf("text lacks %q", want)
	}
	sch := scangate(t, root(t), "", nil, "schema", "calibration")
	file, err := os.ReadFile(filepath.Join(root(t), "schema", "calibration.schema.json"))
	if err != nil || sch.code != 0 || sch.stdout != string(file) {
		t.Errorf("scangate schema calibration: exit %d, want schema/calibration.schema.json", sch.code)
	}
	// Absolute noise: the sd is in ms.
	r = scangate(t, root(t), "", nil, "calibrate", "--format", "json", "--noise", "absolute", "testdata/calibration/measurements.csv")
	wantCode(t, r, 0)
	var abs struct {
		Noise string
		Fit   struct {
			Unit string `json:"residual_sd_unit"`
		}
	}
	calibrationJSON(t, r.stdout, &abs)
	if abs.Noise != "absolute" || abs.Fit.Unit != "ms" {
		t.Errorf("--noise absolute: %s", r.stdout)
	}
}

// calibrationJSON checks a calibration document against its schema and decodes it.
func calibrationJSON(t *testing.T, out string, v any) {
	t.Helper()
	inst, err := jsonschema.UnmarshalJSON(strings.NewReader(out))
	if err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	if err := embeddedSchema(t, "calibration").Validate(inst); err != nil {
		t.Errorf("calibration JSON breaks schema/calibration.schema.json: %v\n%s", err, out)
	}
	if err := json.Unmarshal([]byte(out), v); err != nil {
		t.Fatal(err)
	}
}

// embeddedSchema compiles the embedded schema called name (schema.Named).
func embeddedSchema(t *testing.T, name string) *jsonschema.Schema {
	t.Helper()
	data, err := schema.Named(name)
	if err != nil {
		t.Fatal(err)
	}
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource(name+".schema.json", doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile(name + ".schema.json")
	if err != nil {
		t.Fatal(err)
	}
	return sch
}
