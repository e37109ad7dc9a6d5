package calibrate

import (
	"errors"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/scangate/scangate/internal/layout"
	"github.com/scangate/scangate/schema"
)

// within reports whether the fitted constant lies within k standard errors of the truth.
func within(c Constant, truth, k float64) bool {
	return !c.AtBound && math.Abs(c.Value-truth) <= k*c.StdErr
}

func TestRecoversDemoConstants(t *testing.T) {
	f, err := os.Open(measurementsPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	res, err := Calibrate(measurementsPath, f)
	if err != nil {
		t.Fatal(err)
	}
	// The generator's invented constants (gen_test.go), recovered within about two
	// standard errors. The file is one draw of the noise: each constant is held to 2.5
	// standard errors (98.8% of draws land there); TestStandardErrorCoverage checks that
	// 2 standard errors hold 95% of draws.
	for _, c := range []struct {
		got   Constant
		truth float64
	}{{res.Segment, demoTruth.f}, {res.Row, demoTruth.rho}, {res.Byte, demoTruth.beta}} {
		t.Logf("%s = %.6g ± %.2g (truth %.6g)", c.got.Symbol, c.got.Value, c.got.StdErr, c.truth)
		if !within(c.got, c.truth, 2.5) {
			t.Errorf("%s = %.6g ± %.2g, more than 2.5 standard errors from %.6g", c.got.Symbol, c.got.Value, c.got.StdErr, c.truth)
		}
	}
	// The residual standard deviation estimates the noise's (40 ms); with 45 degrees of
	// freedom it lies within ±25% of it with probability above 99% (chi-square).
	if res.Sigma < 30 || res.Sigma > 50 || res.DF != 45 || res.N != 48 {
		t.Errorf("sigma %.1f ms with %d degrees of freedom from %d rows, want about 40 ms, 45, 48", res.Sigma, res.DF, res.N)
	}
	if res.Cores != 8 || math.Abs(res.Efficiency-demoTruth.efficiency) > 0.03 {
		t.Errorf("cores %d, efficiency %.3f; want 8 and about %.2f", res.Cores, res.Efficiency, demoTruth.efficiency)
	}
	// The engine values follow from the constants: scan_mb_per_s = 1/(beta x 1000).
	if !relClose(res.ScanMBPerS, 1/(res.Byte.Value*1000), 1e-12) || res.SegmentOverheadMs != res.Segment.Value {
		t.Errorf("engine values %v ms, %v MB/s do not follow from f and beta", res.SegmentOverheadMs, res.ScanMBPerS)
	}
	if len(res.Worst) != 3 {
		t.Fatalf("want the 3 worst residuals, got %d", len(res.Worst))
	}
	for i, w := range res.Worst {
		for _, r := range res.Residuals {
			if math.Abs(r.Measured-r.Fitted) > math.Abs(w.Measured-w.Fitted) && !contains(res.Worst[:i+1], r.Line) {
				t.Errorf("line %d misfits more than worst #%d (line %d)", r.Line, i+1, w.Line)
			}
		}
		if w.Line < 6 {
			t.Errorf("worst residual on line %d, which is a comment or the header", w.Line)
		}
	}
}

func contains(rs []Residual, line int) bool {
	for _, r := range rs {
		if r.Line == line {
			return true
		}
	}
	return false
}

// The standard errors mean what they say: over many synthetic sets with fresh noise,
// a constant lies within 2 standard errors of the truth about 95% of the time (for
// normal errors; t with ~40 degrees of freedom gives 94.8%). 300 sets: the share has a
// standard deviation of 1.3 points, so 0.90–0.99 fails only if the errors are wrong.
func TestStandardErrorCoverage(t *testing.T) {
	tr := truth{f: 1.5, rho: 0.5e-6, beta: 1 / 200_000.0, sigma: 60, cores: 8, efficiency: 0.9}
	const sets = 300
	hits := [3]int{}
	for seed := range uint64(sets) {
		ms, _ := synthetic(tr, 1000+seed, 40)
		res, err := Fit(ms)
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		for j, c := range []struct {
			got   Constant
			truth float64
		}{{res.Segment, tr.f}, {res.Row, tr.rho}, {res.Byte, tr.beta}} {
			if within(c.got, c.truth, 2) {
				hits[j]++
			}
		}
	}
	for j, h := range hits {
		if share := float64(h) / sets; share < 0.90 || share > 0.99 {
			t.Errorf("%s within 2 standard errors in %.1f%% of %d sets, want about 95%%", constants[j].Symbol, 100*share, sets)
		}
	}
}

func TestRefusals(t *testing.T) {
	base, _ := synthetic(demoTruth, 11, 20)
	edit := func(f func(m *Measurement, i int)) []Measurement {
		out := make([]Measurement, len(base))
		copy(out, base)
		for i := range out {
			f(&out[i], i)
		}
		return out
	}
	for _, c := range []struct {
		name string
		ms   []Measurement
		want string
	}{
		{"three rows", base[:3], "only 3 measurements: fitting 3 constants"},
		{"same segments", edit(func(m *Measurement, _ int) { m.Segments = 730 }), "every measurement has segments = 730"},
		{"same rows", edit(func(m *Measurement, _ int) { m.Rows = 1e9 }), "every measurement has rows = 1000000000"},
		// Full segments of one capacity: rows = 8Mi x segments, so the two move together.
		{"rows follow segments", edit(func(m *Measurement, _ int) { m.Rows = m.Segments * (8 << 20) }), "cannot tell apart the costs of segments (f) and rows (rho)"},
		// Every column as wide as every other: bytes = 8 x rows.
		{"bytes follow rows", edit(func(m *Measurement, _ int) { m.Bytes = 8 * m.Rows }), "cannot tell apart the costs of rows (rho) and bytes (beta)"},
		// CPU that falls as bytes grow: no positive cost per byte.
		{"no byte cost", edit(func(m *Measurement, _ int) { m.CPUMs = 1.5*m.Segments + 1e12/m.Bytes }), "the fit wants beta, the cost per byte, at zero or below"},
	} {
		_, err := Fit(c.ms)
		var r *Refusal
		if !errors.As(err, &r) || !strings.Contains(r.Msg, c.want) {
			t.Errorf("%s: got %v, want a refusal containing %q", c.name, err, c.want)
		}
	}
}

func TestCSVErrors(t *testing.T) {
	const head = "segments,rows,bytes,cpu_ms\n"
	for _, c := range []struct {
		name, csv string
		line, col int
		want      string
	}{
		{"empty", "", 1, 1, "the file is empty"},
		{"missing column", "segments,rows,cpu_ms\n1,2,3\n", 1, 1, "lacks the column bytes"},
		{"duplicate column", "segments,rows,bytes,cpu_ms,rows\n", 1, 28, `column "rows" appears twice`},
		{"not a number", head + "10,1000,8000,12.5\n10,1000,8000,abc\n", 3, 14, `cpu_ms "abc" is not a number`},
		{"quoted decimal comma", head + "10,1000,8000,\"12,5\"\n", 2, 14, "dot as the decimal mark"},
		{"negative", head + "10,-1000,8000,12\n", 2, 4, `rows "-1000" must not be negative`},
		{"fractional segments", head + "10.5,1000,8000,12\n", 2, 1, "must be a whole number"},
		{"zero segments", head + "0,1000,8000,12\n", 2, 1, "must be greater than 0"},
		{"empty value", head + "10,1000,,12\n", 2, 9, "bytes \"\" is empty"},
		{"short row", head + "10,1000,8000\n", 2, 1, "this row has 3 fields, the header 4"},
		{"decimal comma", head + "10,1000,8000,12,5\n", 2, 1, "a decimal comma splits a value in two"},
		{"bad quote", head + "10,1000,8\"000,12\n", 2, 10, "bare \""},
		{"comment then error", "# measured 2026-01-05\n" + head + "10,1000,8000,x\n", 3, 14, `cpu_ms "x"`},
	} {
		_, _, _, err := Parse("m.csv", strings.NewReader(c.csv))
		var ie *InputError
		if !errors.As(err, &ie) {
			t.Errorf("%s: got %v, want an input error", c.name, err)
			continue
		}
		if ie.Line != c.line || ie.Col != c.col || !strings.Contains(ie.Msg, c.want) || !strings.HasPrefix(ie.Error(), fmt.Sprintf("m.csv:%d:%d: ", c.line, c.col)) {
			t.Errorf("%s: %v, want m.csv:%d:%d: ...%s...", c.name, err, c.line, c.col, c.want)
		}
	}
	// Extra columns are ignored, columns come in any order, names in any case.
	ms, wall, cores, err := Parse("m.csv", strings.NewReader("label,CPU_MS,bytes,rows,segments,cores\nx,12.5,8000,1000,10,8\n"))
	if err != nil || len(ms) != 1 || ms[0].CPUMs != 12.5 || ms[0].Segments != 10 || ms[0].Cores != 8 || wall || !cores || ms[0].Line != 2 {
		t.Errorf("got %+v wall %v cores %v %v", ms, wall, cores, err)
	}
}

// The facts of the trade in DESIGN.md section 5b (common practice, no published source)
// hold for the model fitted to a matching synthetic set: scans made from the format's
// default constants (1.5 ms per segment, 200 MB/s per core, a small per-row cost), then
// the fitted f, rho and beta priced through the layout package as the checks price them.
func TestPracticeFacts(t *testing.T) {
	tr := truth{f: 1.5, rho: 0.01e-6, beta: 1 / 200_000.0, sigma: 30, cores: 8, efficiency: 0.9}
	ms, _ := synthetic(tr, 5, 60)
	res, err := Fit(ms)
	if err != nil {
		t.Fatal(err)
	}
	// Common practice: the fixed overhead per segment per scan is about 1–2 ms of CPU.
	if res.SegmentOverheadMs < 1 || res.SegmentOverheadMs > 2 {
		t.Errorf("fitted overhead %.3f ms per segment, want 1–2 ms", res.SegmentOverheadMs)
	}
	engine := func(s int64) schema.Engine {
		return schema.Engine{SegmentRows: s, Cores: 8, SegmentOverheadMs: res.SegmentOverheadMs, ScanMBPerS: res.ScanMBPerS}
	}
	// cpu is the fitted model of a full scan: the layout's CPU (segments x f + bytes x
	// beta) plus the per-row term the manifest has no key for.
	cpu := func(rows int64, c schema.Column, s int64) (float64, layout.Scan) {
		parts, err := layout.Expand(schema.Table{Rows: rows, Partitions: schema.Partitions{Scheme: schema.SchemeNone}})
		if err != nil {
			t.Fatal(err)
		}
		sc := layout.ScanColumn(c, rows, parts, engine(s))
		return sc.CPUMs + res.Row.Value*float64(rows), sc
	}
	// Common practice: 8 times larger segments cut the full-scan CPU of a highly
	// compressed column several times over (never more than the 8x fewer segments).
	for _, c := range []schema.Column{
		{Type: "int64", Distinct: 10, Order: schema.Sorted},
		{Type: "bool", Order: schema.Clustered, RunLength: 32},
	} {
		small, _ := cpu(4_000_000_000, c, 1<<20)
		large, _ := cpu(4_000_000_000, c, 1<<23)
		if r := small / large; r < 3 || r > 8 {
			t.Errorf("%+v: CPU %.0f -> %.0f ms, cut x%.2f, want several times (3..8)", c, small, large, r)
		}
	}
	// Common practice: a large, poorly compressed column gains about a fifth to a quarter.
	small, _ := cpu(4_000_000_000, schema.Column{Type: "float64", Distinct: 100_000}, 1<<20)
	large, _ := cpu(4_000_000_000, schema.Column{Type: "float64", Distinct: 100_000}, 1<<23)
	if cut := 1 - large/small; cut < 0.20 || cut > 0.30 {
		t.Errorf("poorly compressed column: CPU %.0f -> %.0f ms, %.1f%% less, want 20–30%%", small, large, 100*cut)
	}
	// Common practice: a table of only tens of segments gains a few ms at most.
	_, a := cpu(30<<20, schema.Column{Type: "bool"}, 1<<20)
	_, b := cpu(30<<20, schema.Column{Type: "bool"}, 1<<23)
	if gain := a.WallMs - b.WallMs; gain > 5 {
		t.Errorf("30 segments: wall %.1f -> %.1f ms, a gain of %.1f ms, want a few ms at most", a.WallMs, b.WallMs, gain)
	}
}
