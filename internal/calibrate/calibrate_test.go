package calibrate

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
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
	res, err := Calibrate(measurementsPath, f, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// The generator's invented constants (gen_test.go), recovered within about two
	// standard errors. The file is one draw of the noise: each constant is held to 2.5
	// standard errors (98.8% of draws land there); TestRelativeCoverage checks that
	// 2 standard errors hold at least 90% of draws.
	for _, c := range []struct {
		got   Constant
		truth float64
	}{{res.Segment, demoTruth.f}, {res.Row, demoTruth.rho}, {res.Byte, demoTruth.beta}} {
		t.Logf("%s = %.6g ± %.2g (truth %.6g)", c.got.Symbol, c.got.Value, c.got.StdErr, c.truth)
		if !within(c.got, c.truth, 2.5) {
			t.Errorf("%s = %.6g ± %.2g, more than 2.5 standard errors from %.6g", c.got.Symbol, c.got.Value, c.got.StdErr, c.truth)
		}
	}
	// The residual standard deviation estimates the noise's (2% of the scan); with 45
	// degrees of freedom it lies within ±25% of it with probability above 99% (chi-square).
	if res.Noise != Relative || res.Sigma < 0.015 || res.Sigma > 0.025 || res.DF != 45 || res.N != 48 || res.PerScan != nil {
		t.Errorf("%s noise, sigma %.4f with %d degrees of freedom from %d rows, per-scan %v; want relative, about 0.02, 45, 48, none",
			res.Noise, res.Sigma, res.DF, res.N, res.PerScan)
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
	// Worst in the fit's scale: relative misfits.
	rel := func(r Residual) float64 { return math.Abs(r.Measured/r.Fitted - 1) }
	for i, w := range res.Worst {
		for _, r := range res.Residuals {
			if rel(r) > rel(w) && !contains(res.Worst[:i+1], r.Line) {
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

// coverage fits sets synthetic sets made by gen and counts, per term (f, rho, beta), the
// fits whose estimate lies within 2 stated standard errors of the truth, the rms of
// (estimate - truth) / standard error, and the fits that held the term at zero.
func coverage(t *testing.T, sets int, opt Options, gen func(seed uint64) ([]Measurement, truth)) (hits, atZero [3]int, rmsZ [3]float64) {
	t.Helper()
	for seed := range uint64(sets) {
		ms, tr := gen(seed)
		res, err := Fit(ms, opt)
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		for j, c := range []struct {
			got   Constant
			truth float64
		}{{res.Segment, tr.f}, {res.Row, tr.rho}, {res.Byte, tr.beta}} {
			if c.got.Dropped {
				continue
			}
			if c.got.AtBound {
				atZero[j]++
			}
			if within(c.got, c.truth, 2) {
				hits[j]++
			}
			if z := (c.got.Value - c.truth) / c.got.StdErr; !math.IsNaN(z) {
				rmsZ[j] += z * z
			}
		}
	}
	for j := range rmsZ {
		rmsZ[j] = math.Sqrt(rmsZ[j] / float64(sets))
	}
	return hits, atZero, rmsZ
}

// Absolute noise: over many synthetic sets with fresh additive noise, a constant lies
// within 2 standard errors of the truth about 95% of the time (for normal errors; t
// with ~40 degrees of freedom gives 94.8%). 300 sets: the share has a standard
// deviation of 1.3 points, so 0.90–0.99 fails only if the errors are wrong.
func TestStandardErrorCoverage(t *testing.T) {
	tr := truth{f: 1.5, rho: 0.5e-6, beta: 1 / 200_000.0, sigma: 60, cores: 8, efficiency: 0.9}
	const sets = 300
	hits, _, _ := coverage(t, sets, Options{Noise: Absolute}, func(seed uint64) ([]Measurement, truth) {
		ms, _ := synthetic(tr, 1000+seed, 40)
		return ms, tr
	})
	for j, h := range hits {
		if share := float64(h) / sets; share < 0.90 || share > 0.99 {
			t.Errorf("%s within 2 standard errors in %.1f%% of %d sets, want about 95%%", []string{"f", "rho", "beta"}[j], 100*share, sets)
		}
	}
}

// Relative noise, the default: timing noise of 1–3% of the scan (the level drawn per
// set), 150 seeded sets of 40 scans, true values known. The stated standard errors hold:
// the truth lies within 2 of them in at least 90% of the sets for each term (95% is
// expected; with 150 sets the share's standard deviation is 1.8 points, so 90% fails
// only if the errors are wrong), and the rms of the standard scores is near 1. rho is
// truly 0.05 ms per million rows and must be measured, not held at zero.
func TestRelativeCoverage(t *testing.T) {
	const sets = 150
	gen := func(seed uint64) ([]Measurement, truth) {
		rng := rand.New(rand.NewPCG(seed, 15))
		tr := truth{f: 1.5, rho: 0.05e-6, beta: 1 / 200_000.0, rel: 0.01 + 0.02*rng.Float64()}
		ms, _ := synthetic(tr, 5000+seed, 40)
		return ms, tr
	}
	hits, atZero, rmsZ := coverage(t, sets, Options{}, gen)
	for j, name := range []string{"f", "rho", "beta"} {
		t.Logf("relative fit: %s within 2 standard errors in %d/%d sets, rms z %.2f, held at zero %d", name, hits[j], sets, rmsZ[j], atZero[j])
		if hits[j] < sets*90/100 || rmsZ[j] < 0.8 || rmsZ[j] > 1.25 || atZero[j] > 0 {
			t.Errorf("%s: within 2 standard errors in %d/%d sets (want at least 90%%), rms z %.2f (want about 1), held at zero in %d (want 0)",
				name, hits[j], sets, rmsZ[j], atZero[j])
		}
	}
	// The same sets fitted with equal weights: the errors it states do not hold for
	// proportional noise. Logged to show why relative is the default.
	hits, atZero, rmsZ = coverage(t, sets, Options{Noise: Absolute}, gen)
	t.Logf("equal weights on the same sets: within 2 standard errors f %d, rho %d, beta %d of %d; rms z %.2f, %.2f, %.2f; rho held at zero %d",
		hits[0], hits[1], hits[2], sets, rmsZ[0], rmsZ[1], rmsZ[2], atZero[1])
}

// The classic experiment: one table at two segment sizes, several columns each, so every
// scan reads the same rows. rho cannot be told from a fixed cost per scan there: it is
// dropped, the per-scan constant c takes its place (c = rho x rows, the truth having no
// other per-scan cost), and f and beta keep honest errors. 150 seeded sets, 1–3% noise.
func TestClassicExperiment(t *testing.T) {
	const rows = 2_400_000_000
	tr := truth{f: 1.5, rho: 0.05e-6, beta: 1 / 200_000.0, rel: 0.02}
	ms := classic(tr, 1, []int64{1 << 20, 8 << 20})
	res, err := Fit(ms, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Row.Dropped || !strings.Contains(res.Row.Why, "every scan read the same 2,400,000,000 rows") || res.PerScan == nil || res.DF != len(ms)-3 {
		t.Fatalf("rho dropped %v (%q), per-scan %v, df %d; want rho dropped for the same rows, c fitted, %d degrees of freedom",
			res.Row.Dropped, res.Row.Why, res.PerScan, res.DF, len(ms)-3)
	}
	const sets = 150
	var hits [3]int
	for seed := range uint64(sets) {
		tr.rel = 0.01 + 0.02*rand.New(rand.NewPCG(seed, 16)).Float64()
		res, err := Fit(classic(tr, 100+seed, []int64{1 << 20, 8 << 20}), Options{})
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		for j, c := range []struct {
			got   Constant
			truth float64
		}{{res.Segment, tr.f}, {*res.PerScan, tr.rho * rows}, {res.Byte, tr.beta}} {
			if within(c.got, c.truth, 2) {
				hits[j]++
			}
		}
	}
	for j, name := range []string{"f", "c", "beta"} {
		t.Logf("classic experiment: %s within 2 standard errors in %d/%d sets", name, hits[j], sets)
		if hits[j] < sets*90/100 {
			t.Errorf("classic experiment: %s within 2 standard errors in %d/%d sets, want at least 90%%", name, hits[j], sets)
		}
	}
	// Three segment sizes are the same experiment.
	if res, err := Fit(classic(tr, 7, []int64{1 << 20, 4 << 20, 16 << 20}), Options{}); err != nil || !res.Row.Dropped || res.PerScan == nil {
		t.Errorf("three sizes: %v, %+v", err, res)
	}
}

func TestDroppedTerms(t *testing.T) {
	base, _ := synthetic(demoTruth, 11, 20)
	// The edited scans are timed again from the demo's constants, with 2% noise.
	rng := rand.New(rand.NewPCG(11, 12))
	edit := func(f func(m *Measurement)) []Measurement {
		out := make([]Measurement, len(base))
		copy(out, base)
		for i := range out {
			m := &out[i]
			f(m)
			mu := demoTruth.f*m.Segments + demoTruth.rho*m.Rows + demoTruth.beta*m.Bytes
			m.CPUMs = mu * (1 + 0.02*rng.NormFloat64())
		}
		return out
	}
	for _, c := range []struct {
		name     string
		ms       []Measurement
		why      string
		perScan  bool
		absorber string
	}{
		// Full segments of one capacity: rows = 8Mi x segments, so f absorbs rho x 8Mi.
		{"rows follow segments", edit(func(m *Measurement) { m.Rows = m.Segments * (8 << 20) }), "every scan read 8,388,608 rows per segment", false, "f includes it (rho x 8,388,608)"},
		// Every column as wide as every other: bytes = 8 x rows.
		{"bytes follow rows", edit(func(m *Measurement) { m.Bytes = 8 * m.Rows }), "every scan read 8 bytes per row", false, "beta includes it (rho / 8 per byte)"},
		{"same rows", edit(func(m *Measurement) { m.Rows = 1e9 }), "every scan read the same 1,000,000,000 rows", true, "fitted as c, the per-scan constant"},
		{"no rows", edit(func(m *Measurement) { m.Rows = 0 }), "every measurement has rows = 0", false, ""},
	} {
		res, err := Fit(c.ms, Options{})
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if !res.Row.Dropped || !strings.Contains(res.Row.Why, c.why) || !strings.Contains(res.Row.Why, c.absorber) || (res.PerScan != nil) != c.perScan {
			t.Errorf("%s: rho dropped %v, why %q, per-scan %v; want %q, %q, per-scan %v", c.name, res.Row.Dropped, res.Row.Why, res.PerScan != nil, c.why, c.absorber, c.perScan)
		}
		if !math.IsNaN(res.Row.StdErr) || res.Row.Value != 0 || res.Segment.Dropped || res.Byte.Dropped {
			t.Errorf("%s: %+v %+v %+v", c.name, res.Segment, res.Row, res.Byte)
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
		{"same segments", edit(func(m *Measurement, _ int) { m.Segments = 730 }), "every measurement has segments = 730, so the cost per segment (f) cannot be told apart from a fixed cost per scan"},
		{"same bytes", edit(func(m *Measurement, _ int) { m.Bytes = 5e9 }), "every measurement has bytes = 5000000000, so the cost per byte (beta) cannot be told apart from a fixed cost per scan"},
		{"no bytes", edit(func(m *Measurement, _ int) { m.Bytes = 0 }), "every measurement has bytes = 0"},
		// Bytes that vary 1000x, but together with segments: 3 MB read per segment.
		{"bytes follow segments", edit(func(m *Measurement, _ int) { m.Bytes = 3e6 * m.Segments }),
			"bytes moved together with segments: every scan read 3000000 bytes per segment, so the CPU per byte (beta) cannot be told apart from the CPU per segment (f)"},
		// Nearly together (within 1%), and the times such that the unconstrained fit puts
		// a small negative cost on bytes: the refusal says why, not that CPU does not grow.
		{"bytes nearly follow segments", edit(func(m *Measurement, i int) {
			m.Bytes = math.Round(3e6 * m.Segments * (1 + 0.01*math.Sin(float64(i))))
			m.CPUMs = 2*m.Segments - 1e-9*(m.Bytes-3e6*m.Segments)
		}), "bytes moved almost together with segments across the measurements"},
		// CPU that falls as bytes grow: no positive cost per byte.
		{"no byte cost", edit(func(m *Measurement, _ int) { m.CPUMs = 1.5*m.Segments + 1e12/m.Bytes }), "the fit wants beta, the cost per byte, at zero or below"},
		{"zero time", edit(func(m *Measurement, i int) {
			if i == 3 {
				m.CPUMs = 0
			}
		}), "has cpu_ms 0: the relative-error fit needs every time above 0"},
	} {
		_, err := Fit(c.ms, Options{})
		var r *Refusal
		if !errors.As(err, &r) || !strings.Contains(r.Msg, c.want) {
			t.Errorf("%s: got %v, want a refusal containing %q", c.name, err, c.want)
		}
	}
	// Absolute noise takes a zero time.
	zero := edit(func(m *Measurement, i int) {
		if i == 3 {
			m.CPUMs = 0
		}
	})
	if _, err := Fit(zero, Options{Noise: Absolute}); err != nil {
		t.Errorf("absolute noise with a zero time: %v", err)
	}
	// Through Calibrate, a zero time under relative noise is an input error at its cell.
	_, err := Calibrate("m.csv", strings.NewReader("rows,segments,bytes,cpu_ms\n100,1,1000,5\n200,2,3000,0\n"), Options{})
	var ie *InputError
	if !errors.As(err, &ie) || ie.Line != 3 || ie.Col != 12 || !strings.Contains(ie.Msg, "--noise absolute") {
		t.Errorf("zero time: %v, want m.csv:3:12 naming --noise absolute", err)
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
	res, err := Fit(ms, Options{Noise: Absolute})
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
