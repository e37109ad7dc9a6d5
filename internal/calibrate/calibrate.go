// Package calibrate fits the engine constants of scangate's scan-cost model to full
// scans measured on a team's own engine:
//
//	cpu_ms = f x segments + rho x rows + beta x bytes
//
// f is the fixed CPU per segment (engine.segment_overhead_ms), beta the CPU per encoded
// byte (engine.scan_mb_per_s = 1 / (beta x 1000)), rho a CPU cost per row that the
// manifest has no key for (it is reported so a team can see whether it matters). The
// fit is non-negative least squares (Lawson and Hanson's active-set method) whose
// steps are ordinary least-squares solves by QR, both from gonum. The package is pure:
// it parses, fits and returns numbers; the command prints them.
package calibrate

// go generate ./... rewrites testdata/calibration/measurements.csv, the synthetic example.
//go:generate go test . -run ^TestMeasurementsFile$ -update -count=1

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// Method names the fitting method, for output and docs.
const Method = "non-negative least squares (Lawson–Hanson active set), each step an ordinary least-squares solve by QR decomposition (gonum)"

// Constant is one fitted constant.
type Constant struct {
	Symbol  string // f, rho, beta
	Column  string // the CSV column it multiplies
	Unit    string // ms per segment, ms per row, ms per byte
	Value   float64
	StdErr  float64 // NaN when held at zero
	AtBound bool    // the unconstrained fit wants it below zero; held at 0
}

// Residual is one measurement's misfit.
type Residual struct {
	Line             int
	Measured, Fitted float64 // cpu_ms
}

// Result is a calibration.
type Result struct {
	N         int // measurements
	Segment   Constant
	Row       Constant
	Byte      Constant
	R2        float64 // uncentered: the model has no intercept
	Sigma     float64 // residual standard deviation, ms
	DF        int
	Worst     []Residual // the largest misfits, largest first (at most 3)
	Residuals []Residual // every measurement, in file order

	// The engine block, derived from the constants.
	SegmentOverheadMs float64 // f
	ScanMBPerS        float64 // 1 / (beta x 1000): beta is ms per byte, so 1/beta bytes per ms
	ScanMBPerSErr     float64 // first-order error: ScanMBPerS x StdErr(beta) / beta
	Cores             int     // the cores column when every row has the same value, else 0
	// Efficiency is the median of cpu_ms / (cores x wall_ms): how busy the cores were
	// during a scan; 0 without the wall_ms and cores columns.
	Efficiency float64
}

// Refusal is a calibration the measurements cannot support, with what to measure instead.
type Refusal struct {
	Msg string
}

func (r *Refusal) Error() string { return r.Msg }

// minMeasurements is the fewest rows that fit three constants and leave a degree of
// freedom for their errors.
const minMeasurements = 4

// Calibrate parses the CSV read from r (named file in errors) and fits it. Errors are
// *InputError (the CSV, with its line and column) or *Refusal (the data).
func Calibrate(file string, r io.Reader) (*Result, error) {
	ms, hasWall, hasCores, err := Parse(file, r)
	if err != nil {
		return nil, err
	}
	res, err := Fit(ms)
	if err != nil {
		return nil, err
	}
	if hasCores {
		res.Cores = sameCores(ms)
		if hasWall {
			res.Efficiency = efficiency(ms)
		}
	}
	return res, nil
}

// names of the constants, in the column order of the design.
var constants = [3]Constant{
	{Symbol: "f", Column: "segments", Unit: "ms per segment"},
	{Symbol: "rho", Column: "rows", Unit: "ms per row"},
	{Symbol: "beta", Column: "bytes", Unit: "ms per byte"},
}

// Fit fits cpu_ms = f x segments + rho x rows + beta x bytes to the measurements.
func Fit(ms []Measurement) (*Result, error) {
	if len(ms) < minMeasurements {
		return nil, &Refusal{fmt.Sprintf("only %d %s: fitting 3 constants (f, rho, beta) and their errors needs at least %d full scans (a dozen or more, of different tables and layouts, gives useful errors)",
			len(ms), plural(len(ms), "measurement", "measurements"), minMeasurements)}
	}
	cols := [3]func(Measurement) float64{
		func(m Measurement) float64 { return m.Segments },
		func(m Measurement) float64 { return m.Rows },
		func(m Measurement) float64 { return m.Bytes },
	}
	advice := [3]string{
		"measure scans of tables with different segment counts (other partition layouts or segment sizes)",
		"measure scans of tables with different row counts",
		"measure scans of columns of different encoded sizes",
	}
	// A column that never varies only adds a constant, which the model cannot tell
	// apart from the other terms (or from a fixed cost per scan it does not have).
	for j, get := range cols {
		first := get(ms[0])
		same := true
		for _, m := range ms[1:] {
			same = same && get(m) == first
		}
		if same {
			return nil, &Refusal{fmt.Sprintf("every measurement has %s = %s, so the cost per %s (%s) cannot be told apart from a fixed cost per scan; %s",
				constants[j].Column, trim(first), strings.TrimSuffix(constants[j].Column, "s"), constants[j].Symbol, advice[j])}
		}
	}
	x := mat.NewDense(len(ms), 3, nil)
	y := make([]float64, len(ms))
	for i, m := range ms {
		for j, get := range cols {
			x.Set(i, j, get(m))
		}
		y[i] = m.CPUMs
	}
	fit, err := NonNegativeLeastSquares(x, y)
	if re := (*RankError)(nil); errors.As(err, &re) {
		var names []string
		for _, j := range re.Columns {
			names = append(names, fmt.Sprintf("%s (%s)", constants[j].Column, constants[j].Symbol))
		}
		return nil, &Refusal{fmt.Sprintf("the measurements cannot tell apart the costs of %s: across the measurements these columns move together (condition number %.3g), so any mix of their constants fits as well; add scans where they vary independently, e.g. the same rows at another segment size (segments against rows) or columns of other widths (bytes against rows)",
			strings.Join(names, " and "), re.Cond)}
	}
	if err != nil {
		return nil, err
	}
	res := &Result{N: len(ms), R2: fit.R2, Sigma: fit.Sigma, DF: fit.DF}
	cs := constants
	for j := range cs {
		cs[j].Value, cs[j].StdErr, cs[j].AtBound = fit.Coef[j], fit.StdErr[j], fit.AtBound[j]
	}
	res.Segment, res.Row, res.Byte = cs[0], cs[1], cs[2]
	for _, c := range []Constant{res.Segment, res.Byte} {
		if c.AtBound || !(c.Value > 0) {
			return nil, &Refusal{fmt.Sprintf("the fit wants %s, the cost per %s, at zero or below: the measurements do not show CPU growing with %s, so no engine value can be derived; check the %s column, and measure scans that differ in it more widely",
				c.Symbol, strings.TrimSuffix(c.Column, "s"), c.Column, c.Column)}
		}
	}
	res.SegmentOverheadMs = res.Segment.Value
	res.ScanMBPerS = 1 / (res.Byte.Value * 1000)
	res.ScanMBPerSErr = res.ScanMBPerS * res.Byte.StdErr / res.Byte.Value
	for i, m := range ms {
		res.Residuals = append(res.Residuals, Residual{Line: m.Line, Measured: m.CPUMs, Fitted: m.CPUMs - fit.Residuals[i]})
	}
	worst := slices.Clone(res.Residuals)
	sort.SliceStable(worst, func(a, b int) bool {
		return math.Abs(worst[a].Measured-worst[a].Fitted) > math.Abs(worst[b].Measured-worst[b].Fitted)
	})
	res.Worst = worst[:min(3, len(worst))]
	return res, nil
}

func sameCores(ms []Measurement) int {
	for _, m := range ms[1:] {
		if m.Cores != ms[0].Cores {
			return 0
		}
	}
	return int(ms[0].Cores)
}

func efficiency(ms []Measurement) float64 {
	var e []float64
	for _, m := range ms {
		if m.Cores > 0 && m.WallMs > 0 {
			e = append(e, m.CPUMs/(m.Cores*m.WallMs))
		}
	}
	if len(e) == 0 {
		return 0
	}
	slices.Sort(e)
	if len(e)%2 == 1 {
		return e[len(e)/2]
	}
	return (e[len(e)/2-1] + e[len(e)/2]) / 2
}

func trim(v float64) string {
	return strings.TrimSuffix(strings.TrimRight(fmt.Sprintf("%.6f", v), "0"), ".")
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
