package calibrate

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// LinearFit is a least-squares fit of y on the columns of a design matrix.
type LinearFit struct {
	Coef      []float64
	StdErr    []float64 // NaN for a coefficient held at its bound
	AtBound   []bool    // held at zero by the non-negativity constraint
	Residuals []float64 // y - fitted, in the order of the rows
	RSS       float64   // residual sum of squares
	DF        int       // rows - free coefficients
	Sigma     float64   // residual standard deviation, sqrt(RSS/DF)
	R2        float64
	// Centered is true when the design has a constant column (an intercept): R² is then
	// taken about the mean of y; without one, about zero (uncentered), the convention of
	// fits through the origin.
	Centered bool
}

// RankError reports columns of a design that the data cannot tell apart: together they
// are (nearly) a linear combination of each other, or a column never varies.
type RankError struct {
	Columns []int   // the columns involved, by index
	Cond    float64 // condition number of the column-scaled design
}

func (e *RankError) Error() string {
	return fmt.Sprintf("columns %v are linearly dependent (condition number %.3g)", e.Columns, e.Cond)
}

// rankTol is the smallest singular value, relative to the largest, of the column-scaled
// design that counts as full rank: below it the columns are dependent to within the
// precision measurements are written with.
const rankTol = 1e-9

// OrdinaryLeastSquares fits y on the columns of x by a QR decomposition (gonum's
// mat.QR) of the column-scaled design, with standard errors sigma * sqrt(diag((XᵀX)⁻¹))
// from the triangular factor.
func OrdinaryLeastSquares(x *mat.Dense, y []float64) (*LinearFit, error) {
	_, p := x.Dims()
	free := make([]bool, p)
	for j := range free {
		free[j] = true
	}
	if err := checkRank(x, free); err != nil {
		return nil, err
	}
	coef, se, err := solveSubset(x, y, free)
	if err != nil {
		return nil, err
	}
	return finish(x, y, coef, se, free), nil
}

// NonNegativeLeastSquares fits y on the columns of x with every coefficient >= 0 by the
// active-set method of Lawson and Hanson (1974, "Solving Least Squares Problems",
// chapter 23, algorithm NNLS); each step solves the unconstrained problem on the free
// columns with OrdinaryLeastSquares' QR. Standard errors are those of the final
// unconstrained fit on the free columns; a coefficient held at zero has none.
func NonNegativeLeastSquares(x *mat.Dense, y []float64) (*LinearFit, error) {
	n, p := x.Dims()
	all := make([]bool, p)
	for j := range all {
		all[j] = true
	}
	if err := checkRank(x, all); err != nil {
		return nil, err
	}
	scale := columnNorms(x)
	coef := make([]float64, p)
	free := make([]bool, p) // Lawson and Hanson's set P; the rest is Z
	yNorm := 0.0
	for _, v := range y {
		yNorm += v * v
	}
	tol := 1e-12 * math.Sqrt(yNorm)
	for iter := 0; iter < 10*p+10; iter++ {
		// w = Xᵀ(y - Xx), in units of the scaled columns.
		res := residuals(x, y, coef)
		best, bestW := -1, tol
		for j := range p {
			if free[j] {
				continue
			}
			w := 0.0
			for i := range n {
				w += x.At(i, j) * res[i]
			}
			if w /= scale[j]; w > bestW {
				best, bestW = j, w
			}
		}
		if best < 0 {
			break // Kuhn–Tucker conditions hold: done
		}
		free[best] = true
		for inner := 0; inner < 10*p+10; inner++ {
			z, _, err := solveSubset(x, y, free)
			if err != nil {
				return nil, err
			}
			feasible := true
			alpha := math.Inf(1)
			for j := range p {
				if free[j] && z[j] <= 0 {
					feasible = false
					if a := coef[j] / (coef[j] - z[j]); a < alpha {
						alpha = a
					}
				}
			}
			if feasible {
				copy(coef, z)
				break
			}
			for j := range p {
				if free[j] {
					coef[j] += alpha * (z[j] - coef[j])
					if coef[j] <= 1e-15*math.Abs(z[j]) || coef[j] <= 0 {
						coef[j], free[j] = 0, false
					}
				}
			}
		}
	}
	// The final coefficients and their errors from one clean solve on the free set.
	coef, se, err := solveSubset(x, y, free)
	if err != nil {
		return nil, err
	}
	return finish(x, y, coef, se, free), nil
}

// checkRank refuses a design whose free columns, scaled to unit length, have a
// singular value below rankTol of the largest (gonum's SVD); the right singular vector
// of the smallest names the columns involved.
func checkRank(x *mat.Dense, free []bool) error {
	n, _ := x.Dims()
	cols := indexes(free)
	if len(cols) == 0 {
		return nil
	}
	if n < len(cols) {
		return &RankError{Columns: cols, Cond: math.Inf(1)}
	}
	xs := scaledColumns(x, cols)
	var svd mat.SVD
	if !svd.Factorize(xs, mat.SVDThin) {
		return errors.New("the singular value decomposition did not converge")
	}
	s := svd.Values(nil)
	if s[len(s)-1] > rankTol*s[0] {
		return nil
	}
	var v mat.Dense
	svd.VTo(&v)
	var involved []int
	last := len(s) - 1
	for k, j := range cols {
		if math.Abs(v.At(k, last)) > 0.1 {
			involved = append(involved, j)
		}
	}
	cond := math.Inf(1)
	if s[last] > 0 {
		cond = s[0] / s[last]
	}
	return &RankError{Columns: involved, Cond: cond}
}

// solveSubset solves the least-squares problem on the free columns by QR of the
// column-scaled design; the other coefficients are 0. It also returns the standard
// errors sigma * sqrt(diag((XᵀX)⁻¹)) = sigma * row norms of R⁻¹, NaN where not free.
func solveSubset(x *mat.Dense, y []float64, free []bool) (coef, se []float64, err error) {
	n, p := x.Dims()
	cols := indexes(free)
	coef, se = make([]float64, p), make([]float64, p)
	for j := range se {
		se[j] = math.NaN()
	}
	if len(cols) == 0 {
		return coef, se, nil
	}
	xs := scaledColumns(x, cols)
	scale := columnNorms(x)
	var qr mat.QR
	qr.Factorize(xs)
	var sol mat.Dense
	if err := qr.SolveTo(&sol, false, mat.NewDense(n, 1, append([]float64(nil), y...))); err != nil {
		return nil, nil, fmt.Errorf("least-squares solve: %w", err)
	}
	for k, j := range cols {
		coef[j] = sol.At(k, 0) / scale[j]
	}
	// (XᵀX)⁻¹ = R⁻¹R⁻ᵀ for the scaled columns.
	k := len(cols)
	var r mat.Dense
	qr.RTo(&r)
	upper := mat.NewTriDense(k, mat.Upper, nil)
	for i := range k {
		for j := i; j < k; j++ {
			upper.SetTri(i, j, r.At(i, j))
		}
	}
	var rinv mat.TriDense
	if err := rinv.InverseTri(upper); err != nil {
		return nil, nil, fmt.Errorf("inverting the triangular factor: %w", err)
	}
	rss := 0.0
	for _, e := range residuals(x, y, coef) {
		rss += e * e
	}
	df := n - k
	sigma := math.NaN()
	if df > 0 {
		sigma = math.Sqrt(rss / float64(df))
	}
	for a, j := range cols {
		row := 0.0
		for b := range k {
			v := rinv.At(a, b)
			row += v * v
		}
		se[j] = sigma * math.Sqrt(row) / scale[j]
	}
	return coef, se, nil
}

// finish fills in the residuals and the summary statistics of a fit.
func finish(x *mat.Dense, y, coef, se []float64, free []bool) *LinearFit {
	n, p := x.Dims()
	f := &LinearFit{Coef: coef, StdErr: se, AtBound: make([]bool, p), Residuals: residuals(x, y, coef)}
	k := 0
	for j := range p {
		f.AtBound[j] = !free[j]
		if free[j] {
			k++
		}
	}
	for _, e := range f.Residuals {
		f.RSS += e * e
	}
	f.DF = n - k
	f.Sigma = math.NaN()
	if f.DF > 0 {
		f.Sigma = math.Sqrt(f.RSS / float64(f.DF))
	}
	for j := range p {
		f.Centered = f.Centered || constantColumn(x, j)
	}
	mean := 0.0
	if f.Centered {
		for _, v := range y {
			mean += v
		}
		mean /= float64(n)
	}
	tss := 0.0
	for _, v := range y {
		tss += (v - mean) * (v - mean)
	}
	f.R2 = math.NaN()
	if tss > 0 {
		f.R2 = 1 - f.RSS/tss
	}
	return f
}

func residuals(x *mat.Dense, y, coef []float64) []float64 {
	n, p := x.Dims()
	out := make([]float64, n)
	for i := range n {
		fit := 0.0
		for j := range p {
			fit += x.At(i, j) * coef[j]
		}
		out[i] = y[i] - fit
	}
	return out
}

// columnNorms are the Euclidean lengths of x's columns (1 for an all-zero column).
func columnNorms(x *mat.Dense) []float64 {
	_, p := x.Dims()
	out := make([]float64, p)
	for j := range p {
		out[j] = mat.Norm(x.ColView(j), 2)
		if out[j] == 0 {
			out[j] = 1
		}
	}
	return out
}

// scaledColumns copies the listed columns of x, each scaled to unit length, so one
// column in bytes and one in segments weigh alike in the decompositions.
func scaledColumns(x *mat.Dense, cols []int) *mat.Dense {
	n, _ := x.Dims()
	norms := columnNorms(x)
	out := mat.NewDense(n, len(cols), nil)
	for k, j := range cols {
		for i := range n {
			out.Set(i, k, x.At(i, j)/norms[j])
		}
	}
	return out
}

func constantColumn(x *mat.Dense, j int) bool {
	n, _ := x.Dims()
	first := x.At(0, j)
	if first == 0 {
		return false
	}
	for i := 1; i < n; i++ {
		if x.At(i, j) != first {
			return false
		}
	}
	return true
}

func indexes(set []bool) []int {
	var out []int
	for j, in := range set {
		if in {
			out = append(out, j)
		}
	}
	return out
}
