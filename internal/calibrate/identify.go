package calibrate

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/scangate/scangate/internal/units"
)

// The columns of the design, in the order they are tested for identifiability: the two
// terms the engine block needs first, then a constant (a fixed cost per scan, which the
// model has no term for but the data may not rule out), then rho, the term a manifest
// has no key for and the first to give up.
const (
	tSeg = iota
	tBytes
	tConst
	tRows
)

// term is one column of the design.
type term struct {
	sym, col, unit, unitWord string
	get                      func(Measurement) float64
}

var terms = [4]term{
	tSeg:   {"f", "segments", "ms per segment", "segment", func(m Measurement) float64 { return m.Segments }},
	tBytes: {"beta", "bytes", "ms per byte", "byte", func(m Measurement) float64 { return m.Bytes }},
	tConst: {"c", "", "ms per scan", "scan", func(Measurement) float64 { return 1 }},
	tRows:  {"rho", "rows", "ms per row", "row", func(m Measurement) float64 { return m.Rows }},
}

func (t term) constant() Constant {
	return Constant{Symbol: t.sym, Column: t.col, Unit: t.unit, StdErr: math.NaN()}
}

// what names the term in a sentence: "segments (f)", "a fixed cost per scan".
func (t term) what() string {
	if t.col == "" {
		return "a fixed cost per scan"
	}
	return t.col + " (" + t.sym + ")"
}

// identTol is the independent share below which a column counts as a combination of
// the columns before it: less than a millionth of it is its own, below the precision
// any scan is measured with, so its constant is not determined by the data.
const identTol = 1e-6

// designOf is the n x 4 design, one column per term.
func designOf(ms []Measurement) *mat.Dense {
	x := mat.NewDense(len(ms), len(terms), nil)
	for i, m := range ms {
		for j, t := range terms {
			x.Set(i, j, t.get(m))
		}
	}
	return x
}

// decision is what the fit estimates: the columns fitted, in order, and the terms
// dropped with the reason.
type decision struct {
	fit     []int
	dropped map[int]string
}

// decide tests each column, in term order, against the columns kept before it: a QR
// least-squares projection (gonum) of the unit-length column on them leaves its
// independent share. Above identTol the column is kept; below, it is a combination of
// the kept columns whose coefficients are not negligible, and the data cannot tell its
// constant from theirs. rho is then dropped (they absorb it, and a constant absorbing it
// is fitted as the per-scan term); f or beta so tied is a refusal, since the engine
// block needs both. The constant column itself is never fitted unless it absorbs rho:
// the model has no per-scan cost, it only must not be confused with one.
func decide(ms []Measurement, x *mat.Dense) (decision, error) {
	d := decision{dropped: map[int]string{}}
	var kept []int
	absorbOnConst := false
	for j := range terms {
		share, coef := independentShare(x, nil, j, kept)
		if share >= identTol {
			kept = append(kept, j)
			continue
		}
		var on []int
		for k, c := range coef {
			if math.Abs(c) > identTol {
				on = append(on, kept[k])
			}
		}
		switch j {
		case tBytes:
			return d, &Refusal{bytesTied(ms, on)}
		case tConst:
			return d, &Refusal{constTied(ms, on)}
		case tRows:
			d.dropped[tRows] = rowsTied(ms, on)
			absorbOnConst = slices.Contains(on, tConst)
		}
	}
	for _, j := range kept {
		if j != tConst || absorbOnConst {
			d.fit = append(d.fit, j)
		}
	}
	if absorbOnConst && !slices.Contains(d.fit, tConst) {
		d.fit = append(d.fit, tConst)
	}
	return d, nil
}

// bytesTied is the refusal for a bytes column the segments column explains.
func bytesTied(ms []Measurement, on []int) string {
	if len(on) == 0 {
		return fmt.Sprintf("every measurement has bytes = %s, so there is no cost per byte (beta) to measure; check the bytes column (the encoded bytes each scan read)", trim(ms[0].Bytes))
	}
	return fmt.Sprintf("bytes moved together with segments: every scan read %s bytes per segment, so the CPU per byte (beta) cannot be told apart from the CPU per segment (f), and any split of the time between them fits equally well; %s",
		trim(ratio(ms, tBytes, tSeg)), separateAdvice)
}

// constTied is the refusal for a design in which a fixed cost per scan is a
// combination of the segments and bytes columns: one of them never varies.
func constTied(ms []Measurement, on []int) string {
	advice := map[int]string{
		tSeg:   "measure scans of tables with different segment counts (other partition layouts or segment sizes)",
		tBytes: "measure scans of columns of different encoded sizes",
	}
	if len(on) == 1 {
		t := terms[on[0]]
		return fmt.Sprintf("every measurement has %s = %s, so the cost per %s (%s) cannot be told apart from a fixed cost per scan; %s",
			t.col, trim(t.get(ms[0])), t.unitWord, t.sym, advice[on[0]])
	}
	return "segments and bytes lie on one straight line across the measurements (a fixed mix of them is the same in every scan), so f, beta and a fixed cost per scan cannot be told apart; " + separateAdvice
}

// rowsTied says why rho is dropped and what absorbs it.
func rowsTied(ms []Measurement, on []int) string {
	const measure = "; to measure rho, add scans of tables with other row counts"
	switch {
	case len(on) == 0:
		return "every measurement has rows = 0: there is no cost per row to measure"
	case slices.Equal(on, []int{tConst}):
		return fmt.Sprintf("every scan read the same %s rows, so a cost per row is a fixed cost per scan here: it is fitted as c, the per-scan constant (rho x %s plus any fixed cost per scan), and f and beta are measured free of it%s",
			group(ms[0].Rows), group(ms[0].Rows), measure)
	case slices.Equal(on, []int{tSeg}):
		k := ratio(ms, tRows, tSeg)
		return fmt.Sprintf("every scan read %s rows per segment, so a cost per row cannot be told apart from the cost per segment: f includes it (rho x %s)%s",
			group(k), group(k), measure)
	case slices.Equal(on, []int{tBytes}):
		k := ratio(ms, tBytes, tRows)
		return fmt.Sprintf("every scan read %s bytes per row, so a cost per row cannot be told apart from the cost per byte: beta includes it (rho / %s per byte)%s",
			trim(k), trim(k), measure)
	}
	var names []string
	for _, j := range on {
		names = append(names, terms[j].what())
	}
	return fmt.Sprintf("rows is the same mix of %s in every scan, so a cost per row cannot be told apart from theirs, and they absorb it%s", strings.Join(names, " and "), measure)
}

// ratio is sum(a) / sum(b) over the measurements: the factor of a proportionality.
func ratio(ms []Measurement, a, b int) float64 {
	var sa, sb float64
	for _, m := range ms {
		sa += terms[a].get(m)
		sb += terms[b].get(m)
	}
	return sa / sb
}

// independentShare is the part of column j of x (rows scaled by w, nil for equal
// weights) that the columns on do not explain: the norm of the least-squares residual
// of the unit-length column on the unit-length others (QR, gonum), in [0, 1], with the
// projection's coefficients. A zero column has share 0.
func independentShare(x *mat.Dense, w []float64, j int, on []int) (float64, []float64) {
	n, _ := x.Dims()
	col := func(k int) *mat.VecDense {
		v := mat.NewVecDense(n, nil)
		for i := range n {
			wi := 1.0
			if w != nil {
				wi = w[i]
			}
			v.SetVec(i, x.At(i, k)*wi)
		}
		if norm := mat.Norm(v, 2); norm > 0 {
			v.ScaleVec(1/norm, v)
		}
		return v
	}
	b := col(j)
	coef := make([]float64, len(on))
	if mat.Norm(b, 2) == 0 {
		return 0, coef
	}
	if len(on) == 0 {
		return 1, coef
	}
	a := mat.NewDense(n, len(on), nil)
	for k, c := range on {
		a.SetCol(k, col(c).RawVector().Data)
	}
	var qr mat.QR
	qr.Factorize(a)
	var sol mat.VecDense
	if err := qr.SolveVecTo(&sol, false, b); err != nil {
		return 0, coef // the kept columns are independent, so this does not happen
	}
	var fit mat.VecDense
	fit.MulVec(a, &sol)
	fit.SubVec(b, &fit)
	for k := range coef {
		coef[k] = sol.AtVec(k)
	}
	return mat.Norm(&fit, 2), coef
}

// columnsOf copies the listed columns of x.
func columnsOf(x *mat.Dense, cols []int) *mat.Dense {
	n, _ := x.Dims()
	out := mat.NewDense(n, len(cols), nil)
	for k, j := range cols {
		for i := range n {
			out.Set(i, k, x.At(i, j))
		}
	}
	return out
}

// group writes a count with thousands separators: 240,000,000.
func group(v float64) string { return units.Num(units.Int64(math.Round(v))) }
