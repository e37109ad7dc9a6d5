// Package calibrate fits the engine constants of scangate's scan-cost model to full
// scans measured on a team's own engine:
//
//	cpu_ms = f x segments + rho x rows + beta x bytes
//
// f is the fixed CPU per segment (engine.segment_overhead_ms), beta the CPU per encoded
// byte (engine.scan_mb_per_s = 1 / (beta x 1000)), rho a CPU cost per row that the
// manifest has no key for (it is reported so a team can see whether it matters).
//
// Before fitting, the design is checked term by term for what the measurements can
// identify (identify.go): a term whose column the other columns, or a constant, explain
// is dropped and the report says what absorbs it. The classic experiment (one table at
// two segment sizes, several columns each) has the same rows in every scan, so rho x rows
// is a constant there: rho is dropped and a per-scan constant takes its place, which
// leaves f and beta free of it.
//
// The fit is non-negative least squares (Lawson and Hanson's active-set method) whose
// steps are ordinary least-squares solves by QR, both from gonum. By default it is
// weighted for relative noise (timing noise that grows with the scan): iteratively
// reweighted least squares with weights 1/fitted², the quasi-likelihood fit of a
// variance proportional to the mean squared. The package is pure: it parses, fits and
// returns numbers; the command prints them.
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

// Noise says how the timing noise of a scan scales with it; it sets the fit's weights.
type Noise string

const (
	// Relative noise grows with the scan (a 10 s scan varies by about as many percent as
	// a 100 ms one): iteratively reweighted least squares, weights 1/fitted². The default.
	Relative Noise = "relative"
	// Absolute noise is the same number of milliseconds for every scan: equal weights.
	Absolute Noise = "absolute"
)

// ParseNoise reads a --noise value.
func ParseNoise(s string) (Noise, error) {
	switch Noise(s) {
	case Relative, Absolute:
		return Noise(s), nil
	}
	return "", fmt.Errorf("unknown noise model %q; use relative (timing noise grows with the scan, the default) or absolute (the same ms for every scan)", s)
}

// Method names the fitting method, for output and docs.
func Method(n Noise) string {
	const nnls = "non-negative least squares (Lawson–Hanson active set), each step an ordinary least-squares solve by QR decomposition (gonum)"
	if n == Absolute {
		return nnls + ", equal weights (absolute noise)"
	}
	return nnls + ", iteratively reweighted by 1/fitted² (relative noise)"
}

// Options are the choices of a fit.
type Options struct {
	Noise Noise // "" is Relative
}

// Constant is one fitted constant.
type Constant struct {
	Symbol  string // f, rho, beta, c
	Column  string // the CSV column it multiplies ("" for the per-scan constant)
	Unit    string // ms per segment, ms per row, ms per byte, ms per scan
	Value   float64
	StdErr  float64 // NaN when held at zero or dropped
	AtBound bool    // the unconstrained fit wants it below zero; held at 0
	Dropped bool    // the measurements cannot identify it: not fitted, Value 0
	Why     string  // for a dropped term: why, and which fitted terms absorb it
}

// Residual is one measurement's misfit.
type Residual struct {
	Line             int
	Measured, Fitted float64 // cpu_ms
}

// Result is a calibration.
type Result struct {
	N       int // measurements
	Noise   Noise
	Segment Constant
	Row     Constant
	Byte    Constant
	// PerScan is c, a fixed cost per scan, fitted only when a dropped term is one: when
	// every scan read the same rows, rho x rows is c. nil otherwise.
	PerScan *Constant
	R2      float64 // on the ms scale; uncentered unless PerScan is fitted
	// Sigma is the residual standard deviation in the fit's scale: ms (absolute noise)
	// or a fraction of the fitted time (relative noise).
	Sigma     float64
	DF        int
	Worst     []Residual // the largest misfits in the fit's scale, largest first (at most 3)
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
func Calibrate(file string, r io.Reader, opt Options) (*Result, error) {
	ms, hasWall, hasCores, err := Parse(file, r)
	if err != nil {
		return nil, err
	}
	if opt.noise() == Relative {
		for _, m := range ms {
			if !(m.CPUMs > 0) {
				return nil, &InputError{File: file, Line: m.Line, Col: m.CPUCol,
					Msg: "cpu_ms is 0: the relative-error fit weighs each scan by 1/time², so every time must be above 0; remove the row, or fit with --noise absolute"}
			}
		}
	}
	res, err := Fit(ms, opt)
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

func (o Options) noise() Noise {
	if o.Noise == "" {
		return Relative
	}
	return o.Noise
}

// Fit fits cpu_ms = f x segments + rho x rows + beta x bytes to the measurements,
// dropping the terms they cannot identify.
func Fit(ms []Measurement, opt Options) (*Result, error) {
	noise := opt.noise()
	if len(ms) < minMeasurements {
		return nil, &Refusal{fmt.Sprintf("only %d %s: fitting 3 constants (f, rho, beta) and their errors needs at least %d full scans (a dozen or more, of different tables and layouts, gives useful errors)",
			len(ms), plural(len(ms), "measurement", "measurements"), minMeasurements)}
	}
	if noise == Relative {
		for _, m := range ms {
			if !(m.CPUMs > 0) {
				return nil, &Refusal{fmt.Sprintf("line %d has cpu_ms 0: the relative-error fit needs every time above 0; remove the row, or fit with --noise absolute", m.Line)}
			}
		}
	}
	x := designOf(ms)
	d, err := decide(ms, x)
	if err != nil {
		return nil, err
	}
	y := make([]float64, len(ms))
	for i, m := range ms {
		y[i] = m.CPUMs
	}
	sub := columnsOf(x, d.fit)
	fit, fitted, err := solve(sub, y, noise)
	if re := (*RankError)(nil); errors.As(err, &re) {
		var names []string
		for _, k := range re.Columns {
			names = append(names, terms[d.fit[k]].what())
		}
		return nil, &Refusal{fmt.Sprintf("the measurements cannot tell apart the costs of %s: the weighted design is singular (condition number %.3g); add scans where they vary independently", strings.Join(names, " and "), re.Cond)}
	}
	if err != nil {
		return nil, err
	}
	res := &Result{N: len(ms), Noise: noise, Sigma: fit.Sigma, DF: fit.DF}
	cs := map[int]*Constant{}
	for k := range terms {
		c := terms[k].constant()
		cs[k] = &c
	}
	for k, j := range d.fit {
		c := cs[j]
		c.Value, c.StdErr, c.AtBound = fit.Coef[k], fit.StdErr[k], fit.AtBound[k]
	}
	for j, why := range d.dropped {
		c := cs[j]
		c.Dropped, c.Why, c.StdErr = true, why, math.NaN()
	}
	res.Segment, res.Row, res.Byte = *cs[tSeg], *cs[tRows], *cs[tBytes]
	if slices.Contains(d.fit, tConst) {
		res.PerScan = cs[tConst]
	}
	// f and beta make the engine block: both must be above zero.
	for _, j := range []int{tSeg, tBytes} {
		if c := cs[j]; c.AtBound || !(c.Value > 0) {
			return nil, atZero(x, d.fit, j, y, fitted, noise)
		}
	}
	res.SegmentOverheadMs = res.Segment.Value
	res.ScanMBPerS = 1 / (res.Byte.Value * 1000)
	res.ScanMBPerSErr = res.ScanMBPerS * res.Byte.StdErr / res.Byte.Value
	res.R2 = rSquared(y, fitted, res.PerScan != nil)
	for i, m := range ms {
		res.Residuals = append(res.Residuals, Residual{Line: m.Line, Measured: m.CPUMs, Fitted: fitted[i]})
	}
	scale := func(r Residual) float64 {
		e := r.Measured - r.Fitted
		if noise == Relative {
			e /= r.Fitted
		}
		return math.Abs(e)
	}
	worst := slices.Clone(res.Residuals)
	sort.SliceStable(worst, func(a, b int) bool { return scale(worst[a]) > scale(worst[b]) })
	res.Worst = worst[:min(3, len(worst))]
	return res, nil
}

// atZero is the refusal for f or beta held at zero: when the term's column moves
// almost together with another, say so, since the data then cannot split the time
// between them; otherwise the measurements do not show the cost at all.
func atZero(x *mat.Dense, fit []int, j int, y, fitted []float64, noise Noise) error {
	t := terms[j]
	w := make([]float64, len(y))
	for i := range w {
		w[i] = 1
		if noise == Relative {
			w[i] = 1 / math.Max(fitted[i], y[i]*1e-6)
		}
	}
	var others []int
	for _, k := range fit {
		if k != j {
			others = append(others, k)
		}
	}
	share, coef := independentShare(x, w, j, others)
	if share < collinearShare && len(others) > 0 {
		best := 0
		for k := range coef {
			if math.Abs(coef[k]) > math.Abs(coef[best]) {
				best = k
			}
		}
		with := terms[others[best]]
		tied := fmt.Sprintf("%s moved almost together with %s across the measurements", t.col, with.col)
		if with.col == "" {
			tied = fmt.Sprintf("%s hardly varied across the measurements", t.col)
		}
		return &Refusal{fmt.Sprintf("the fit puts %s, the cost per %s, at zero: %s (only %.2g%% of the %s column is independent of the other terms), so the data cannot tell the CPU per %s from the CPU per %s and gave the time to %s; %s",
			t.sym, t.unitWord, tied, 100*share, t.col, t.unitWord, with.unitWord, with.sym, separateAdvice)}
	}
	return &Refusal{fmt.Sprintf("the fit wants %s, the cost per %s, at zero or below: the measurements do not show CPU growing with %s, so no engine value can be derived; check the %s column, and measure scans that differ in it more widely",
		t.sym, t.unitWord, t.col, t.col)}
}

// separateAdvice says how to measure segments and bytes apart.
const separateAdvice = "measure the same table at another segment size (segments change, bytes hardly) and columns of other widths (bytes change, segments do not)"

// collinearShare is the independent share below which a column counts as moving
// together with the others in a refusal's wording: its variance inflation is above 100.
const collinearShare = 0.1

// rSquared is 1 - RSS/TSS on the ms scale, about the mean when the fit has a constant
// and about zero (uncentered, the convention of a fit through the origin) otherwise.
func rSquared(y, fitted []float64, centered bool) float64 {
	mean := 0.0
	if centered {
		for _, v := range y {
			mean += v
		}
		mean /= float64(len(y))
	}
	var rss, tss float64
	for i, v := range y {
		rss += (v - fitted[i]) * (v - fitted[i])
		tss += (v - mean) * (v - mean)
	}
	if !(tss > 0) {
		return math.NaN()
	}
	return 1 - rss/tss
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
