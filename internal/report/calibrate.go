package report

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/calibrate"
	"github.com/scangate/scangate/internal/escape"
)

// CalibrationText is the report of a calibration: constants, dropped terms, fit, worst
// residuals and the engine snippet. The file name is escaped and the page guarded
// (escape.Text, Log).
func CalibrationText(file string, r *calibrate.Result) string {
	file = escape.Text(file)
	var b strings.Builder
	p := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	p("calibrated from %d full scans in %s\n", r.N, file)
	p("model:  cpu_ms = f x segments + rho x rows + beta x bytes\n")
	p("noise:  %s\n", noiseWords(r.Noise))
	p("method: %s\n\n", calibrate.Method(r.Noise))

	p("  f     %s ms per segment%s\n", pm(r.Segment.Value, r.Segment.StdErr, 1), caveat(r.Segment))
	switch {
	case r.Row.Dropped:
		p("  rho   not fitted: %s\n", escape.Text(r.Row.Why))
	case r.Row.AtBound:
		p("  rho   0 ms per million rows (held at zero: the unconstrained fit is negative)\n")
	default:
		p("  rho   %s ms per million rows%s\n", pm(r.Row.Value, r.Row.StdErr, 1e6), caveat(r.Row))
	}
	p("  beta  %s ms per GB, a scan rate of %s MB/s per core%s\n", pm(r.Byte.Value, r.Byte.StdErr, 1e9), pm(r.ScanMBPerS, r.ScanMBPerSErr, 1), caveat(r.Byte))
	if c := r.PerScan; c != nil {
		p("  c     %s ms per scan, the per-scan constant in rho's place%s\n", pm(c.Value, c.StdErr, 1), caveat(*c))
	}
	p("\n")

	center := "uncentered: the model has no intercept"
	if r.PerScan != nil {
		center = "about the mean: the fit has a constant"
	}
	sd := sig(r.Sigma, 3) + " ms"
	if r.Noise == calibrate.Relative {
		sd = sig(100*r.Sigma, 3) + "% of the fitted time"
	}
	p("fit: R² %s (%s), residual sd %s, %d degrees of freedom\n", nines(r.R2), center, sd, r.DF)
	p("worst residuals (measured - fitted):\n")
	for _, w := range r.Worst {
		p("  %s:%d  measured %s ms, fitted %s ms, residual %s ms (%s%%)\n", file, w.Line, grouped(w.Measured), grouped(w.Fitted),
			signedGrouped(w.Measured-w.Fitted), signedPercent(w.Measured/w.Fitted-1))
	}
	if r.Cores > 0 {
		p("cores: %d in every scan", r.Cores)
		if r.Efficiency > 0 {
			p("; busy %s%% of the wall time (median of cpu_ms / (cores x wall_ms))", sig(100*r.Efficiency, 3))
		}
		p("\n")
	}

	p("\nPaste into the manifest's engine block:\n\n")
	p("  segment_overhead_ms: %s\n", sig(r.SegmentOverheadMs, 3))
	p("  scan_mb_per_s: %s\n", sig(r.ScanMBPerS, 3))
	if r.Cores > 0 {
		p("  cores: %d\n", r.Cores)
	}
	rho := "0 (held at zero)"
	switch {
	case r.Row.Dropped:
		rho = "not fitted"
	case !r.Row.AtBound:
		rho = pm(r.Row.Value, r.Row.StdErr, 1e6) + " ms per million rows"
	}
	p("  # calibrated from %d scans of %s: f %s ms, %s MB/s; per-row CPU rho %s (no engine key)\n",
		r.N, baseName(file), pm(r.Segment.Value, r.Segment.StdErr, 1), pm(r.ScanMBPerS, r.ScanMBPerSErr, 1), rho)
	return escape.Log(b.String())
}

func noiseWords(n calibrate.Noise) string {
	if n == calibrate.Absolute {
		return "absolute: every scan weighs the same, for timing noise of the same ms in every scan (--noise absolute)"
	}
	return "relative: each scan weighs 1/fitted², for timing noise that grows with the scan (the default; --noise absolute for equal weights)"
}

// signedPercent writes a fraction as a signed percentage to one decimal: +3.1.
func signedPercent(v float64) string {
	return fmt.Sprintf("%+.1f", 100*v)
}

// CalibrationJSONSchemaVersion is the version of the calibration JSON's shape
// (schema/calibration.schema.json). It changes only when a field is removed or changes
// meaning.
const CalibrationJSONSchemaVersion = 1

type calibrationJSON struct {
	SchemaVersion int                `json:"schema_version"`
	Tool          jsonTool           `json:"tool"`
	File          string             `json:"file"`
	Measurements  int                `json:"measurements"`
	Model         string             `json:"model"`
	Noise         string             `json:"noise"`
	Method        string             `json:"method"`
	F             *calibrationTerm   `json:"f"`
	Rho           *calibrationTerm   `json:"rho"`
	Beta          *calibrationTerm   `json:"beta"`
	C             *calibrationTerm   `json:"c"`
	Dropped       []calibrationDrop  `json:"dropped"`
	Fit           calibrationFit     `json:"fit"`
	Worst         []calibrationResid `json:"worst_residuals"`
	Engine        calibrationEngine  `json:"engine"`
	Efficiency    *float64           `json:"efficiency"`
}

type calibrationTerm struct {
	Estimate   float64  `json:"estimate"`
	StdErr     *float64 `json:"std_error"`
	Unit       string   `json:"unit"`
	HeldAtZero bool     `json:"held_at_zero"`
}

type calibrationDrop struct {
	Term   string `json:"term"`
	Reason string `json:"reason"`
}

type calibrationFit struct {
	RSquared         *float64 `json:"r_squared"`
	Centered         bool     `json:"r_squared_centered"`
	ResidualSD       *float64 `json:"residual_sd"`
	ResidualSDUnit   string   `json:"residual_sd_unit"`
	DegreesOfFreedom int      `json:"degrees_of_freedom"`
}

type calibrationResid struct {
	Line       int     `json:"line"`
	MeasuredMs float64 `json:"measured_ms"`
	FittedMs   float64 `json:"fitted_ms"`
}

type calibrationEngine struct {
	SegmentOverheadMs float64  `json:"segment_overhead_ms"`
	ScanMBPerS        float64  `json:"scan_mb_per_s"`
	ScanMBPerSErr     *float64 `json:"scan_mb_per_s_std_error"`
	Cores             *int     `json:"cores"`
}

// CalibrationJSON writes a calibration as JSON (schema/calibration.schema.json): each
// term as {"estimate", "std_error"} in the model's units (ms per segment, row, byte),
// null for a term the measurements cannot identify, which "dropped" lists with the
// reason.
func CalibrationJSON(w io.Writer, file, version string, r *calibrate.Result) error {
	doc := calibrationJSON{
		SchemaVersion: CalibrationJSONSchemaVersion,
		Tool:          jsonTool{Name: "scangate", Version: version},
		File:          file,
		Measurements:  r.N,
		Model:         "cpu_ms = f x segments + rho x rows + beta x bytes",
		Noise:         string(r.Noise),
		Method:        calibrate.Method(r.Noise),
		Dropped:       []calibrationDrop{},
		Fit: calibrationFit{
			RSquared: finite(r.R2), Centered: r.PerScan != nil, ResidualSD: finite(r.Sigma),
			ResidualSDUnit: "ms", DegreesOfFreedom: r.DF,
		},
		Worst: []calibrationResid{},
		Engine: calibrationEngine{
			SegmentOverheadMs: r.SegmentOverheadMs, ScanMBPerS: r.ScanMBPerS, ScanMBPerSErr: finite(r.ScanMBPerSErr),
		},
	}
	if r.Noise == calibrate.Relative {
		doc.Fit.ResidualSDUnit = "fraction of the fitted time"
	}
	term := func(c calibrate.Constant) *calibrationTerm {
		if c.Dropped {
			doc.Dropped = append(doc.Dropped, calibrationDrop{Term: c.Symbol, Reason: c.Why})
			return nil
		}
		return &calibrationTerm{Estimate: c.Value, StdErr: finite(c.StdErr), Unit: c.Unit, HeldAtZero: c.AtBound}
	}
	doc.F, doc.Rho, doc.Beta = term(r.Segment), term(r.Row), term(r.Byte)
	if r.PerScan != nil {
		doc.C = term(*r.PerScan)
	}
	for _, x := range r.Worst {
		doc.Worst = append(doc.Worst, calibrationResid{Line: x.Line, MeasuredMs: x.Measured, FittedMs: x.Fitted})
	}
	if r.Cores > 0 {
		doc.Engine.Cores = &r.Cores
	}
	if r.Efficiency > 0 {
		doc.Efficiency = &r.Efficiency
	}
	return encodeJSON(w, doc)
}

// finite is v, or nil (JSON null) for NaN and infinities, which JSON cannot hold.
func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// nines writes a fraction close to 1 with enough decimals to show how close: 0.99999998.
func nines(v float64) string {
	dec := 4
	for dec < 12 && v < 1 && strconv.FormatFloat(v, 'f', dec, 64) == strconv.FormatFloat(1, 'f', dec, 64) {
		dec++
	}
	return strconv.FormatFloat(v, 'f', dec, 64)
}

// caveat flags a constant the data barely see.
func caveat(c calibrate.Constant) string {
	if !c.AtBound && math.Abs(c.Value) < 2*c.StdErr {
		return "  (within 2 standard errors of zero: the measurements barely show it)"
	}
	return ""
}

// pm writes value ± error in unit x scale, the error to 2 significant digits and the
// value to the same decimal place.
func pm(v, se, scale float64) string {
	v, se = v*scale, se*scale
	if math.IsNaN(se) || se <= 0 {
		return sig(v, 4)
	}
	dec := max(0, 1-units.Int(math.Floor(math.Log10(se))))
	// An error far below the value (exact data) shows the value to 6 significant digits.
	if v != 0 {
		dec = min(dec, max(0, 5-units.Int(math.Floor(math.Log10(math.Abs(v))))))
	}
	dec = min(dec, 12)
	return strconv.FormatFloat(v, 'f', dec, 64) + " ± " + strconv.FormatFloat(se, 'f', dec, 64)
}

// sig writes v to n significant digits without an exponent.
func sig(v float64, n int) string {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'f', 0, 64)
	}
	dec := max(0, n-1-units.Int(math.Floor(math.Log10(math.Abs(v)))))
	return strconv.FormatFloat(v, 'f', dec, 64)
}

// grouped writes milliseconds with one decimal and thousands separators: 16,527.7.
func grouped(v float64) string {
	s := strconv.FormatFloat(math.Abs(v), 'f', 1, 64)
	whole, frac, _ := strings.Cut(s, ".")
	for i := len(whole) - 3; i > 0; i -= 3 {
		whole = whole[:i] + "," + whole[i:]
	}
	if v < 0 {
		whole = "-" + whole
	}
	return whole + "." + frac
}

// signedGrouped is grouped with its sign: +12.5, -3.0.
func signedGrouped(v float64) string {
	if v >= 0 {
		return "+" + grouped(v)
	}
	return grouped(v)
}

func baseName(path string) string {
	if i := strings.LastIndexAny(path, `/\`); i >= 0 {
		return path[i+1:]
	}
	return path
}
