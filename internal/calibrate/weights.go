package calibrate

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// Why 1/fitted² weights, and not a fit of log(cpu_ms): timing noise on a real engine is
// proportional, a few percent of the scan, so equal weights let the largest scans
// decide every constant and state errors that hold for none of them. Weighting each
// scan by 1/mu² (mu its expected time) makes every residual a relative one, keeps the
// model linear in f, rho and beta (so the non-negativity constraint and the QR steps
// stay), and is the quasi-likelihood fit of a variance proportional to mu² (McCullagh
// and Nelder, Generalized Linear Models, 1989, the gamma family with identity link),
// whose standard errors are sigma x sqrt(diag((XᵀWX)⁻¹)). A log-scale fit would need a
// nonlinear solver for the same model. mu is not known, so it is the fitted time of the
// step before (iteratively reweighted least squares), starting from the measured time;
// weighting by the measured time itself would favour scans whose noise was negative and
// bias every constant low by about sigma² (0.1% at 3% noise).

// maxReweights bounds the reweighting; a few steps suffice in practice.
const maxReweights = 100

// reweightTol is the relative change of every fitted time below which the weights are
// taken as settled.
const reweightTol = 1e-10

// solve fits y on the columns of x for the noise model: the fit in its own scale (ms
// for absolute noise, fractions of the fitted time for relative) and the fitted times.
func solve(x *mat.Dense, y []float64, noise Noise) (*LinearFit, []float64, error) {
	if noise == Absolute {
		fit, err := NonNegativeLeastSquares(x, y)
		if err != nil {
			return nil, nil, err
		}
		return fit, predict(x, fit.Coef), nil
	}
	mu := slices.Clone(y)
	var fit *LinearFit
	for range maxReweights {
		var err error
		if fit, err = NonNegativeLeastSquares(divideRows(x, y, mu)); err != nil {
			return nil, nil, err
		}
		next := predict(x, fit.Coef)
		settled := true
		for i := range next {
			if !(next[i] > 0) {
				next[i] = y[i] // a fitted 0 cannot weigh a scan: its measured time stands in
			}
			settled = settled && math.Abs(next[i]-mu[i]) <= reweightTol*mu[i]
		}
		mu = next
		if settled {
			break
		}
	}
	return fit, predict(x, fit.Coef), nil
}

// divideRows is the weighted problem: each row of x and y divided by mu, so its
// residual is relative to mu (a weight of 1/mu²).
func divideRows(x *mat.Dense, y, mu []float64) (*mat.Dense, []float64) {
	n, p := x.Dims()
	xw := mat.NewDense(n, p, nil)
	yw := make([]float64, n)
	for i := range n {
		for j := range p {
			xw.Set(i, j, x.At(i, j)/mu[i])
		}
		yw[i] = y[i] / mu[i]
	}
	return xw, yw
}

// predict is x times coef.
func predict(x *mat.Dense, coef []float64) []float64 {
	n, p := x.Dims()
	out := make([]float64, n)
	for i := range n {
		for j := range p {
			out[i] += x.At(i, j) * coef[j]
		}
	}
	return out
}
