package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/scangate/scangate/internal/units"

	"github.com/scangate/scangate/internal/calibrate"
	"github.com/scangate/scangate/internal/escape"
)

// CalibrationText is the report of a calibration: constants, fit, worst residuals and
// the engine snippet. The file name is escaped and the page guarded (escape.Text, Log).
func CalibrationText(file string, r *calibrate.Result) string {
	file = escape.Text(file)
	var b strings.Builder
	p := func(format string, a ...any) { fmt.Fprintf(&b, format, a...) }
	p("calibrated from %d full scans in %s\n", r.N, file)
	p("model:  cpu_ms = f x segments + rho x rows + beta x bytes\n")
	p("method: %s\n\n", calibrate.Method)

	p("  f     %s ms per segment%s\n", pm(r.Segment.Value, r.Segment.StdErr, 1), caveat(r.Segment))
	if r.Row.AtBound {
		p("  rho   0 ms per million rows (held at zero: the unconstrained fit is negative)\n")
	} else {
		p("  rho   %s ms per million rows%s\n", pm(r.Row.Value, r.Row.StdErr, 1e6), caveat(r.Row))
	}
	p("  beta  %s ms per GB, a scan rate of %s MB/s per core%s\n\n", pm(r.Byte.Value, r.Byte.StdErr, 1e9), pm(r.ScanMBPerS, r.ScanMBPerSErr, 1), caveat(r.Byte))

	p("fit: R² %s (uncentered: the model has no intercept), residual sd %s ms, %d degrees of freedom\n",
		nines(r.R2), sig(r.Sigma, 3), r.DF)
	p("worst residuals (measured - fitted):\n")
	for _, w := range r.Worst {
		p("  %s:%d  measured %s ms, fitted %s ms, residual %s ms\n", file, w.Line, grouped(w.Measured), grouped(w.Fitted), signedGrouped(w.Measured-w.Fitted))
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
	if !r.Row.AtBound {
		rho = pm(r.Row.Value, r.Row.StdErr, 1e6)
	}
	p("  # calibrated from %d scans of %s: f %s ms, %s MB/s; per-row CPU rho %s ms per million rows (no engine key)\n",
		r.N, baseName(file), pm(r.Segment.Value, r.Segment.StdErr, 1), pm(r.ScanMBPerS, r.ScanMBPerSErr, 1), rho)
	return escape.Log(b.String())
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
