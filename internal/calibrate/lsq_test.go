package calibrate

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func design(rows [][]float64) *mat.Dense {
	x := mat.NewDense(len(rows), len(rows[0]), nil)
	for i, r := range rows {
		x.SetRow(i, r)
	}
	return x
}

func relClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Abs(want)
}

// NIST Statistical Reference Datasets, linear regression, "Norris" (Norris, J., NIST,
// calibration of ozone monitors; lower difficulty; 36 observations), fitted with an
// intercept column: y = B0 + B1 x. The certified values (15 significant digits, checked
// against the published dataset page) are B0 = -0.262323073774029 (standard deviation
// 0.232818234301152), B1 = 1.00211681802045 (0.429796848199937E-03), residual standard
// deviation 0.884796396144373, R² 0.999993745883712.
var norrisY = []float64{0.1, 338.8, 118.1, 888.0, 9.2, 228.1, 668.5, 998.5, 449.1, 778.9, 559.2, 0.3, 0.1, 778.1, 668.8, 339.3, 448.9, 10.8, 557.7, 228.3, 998.0, 888.8, 119.6, 0.3, 0.6, 557.6, 339.3, 888.0, 998.5, 778.9, 10.2, 117.6, 228.9, 668.4, 449.2, 0.2}
var norrisX = []float64{0.2, 337.4, 118.2, 884.6, 10.1, 226.5, 666.3, 996.3, 448.6, 777.0, 558.2, 0.4, 0.6, 775.5, 666.9, 338.0, 447.5, 11.6, 556.0, 228.1, 995.8, 887.6, 120.2, 0.3, 0.3, 556.8, 339.1, 887.2, 999.0, 779.0, 11.1, 118.3, 229.2, 669.1, 448.9, 0.5}

func TestNorrisCertified(t *testing.T) {
	rows := make([][]float64, len(norrisX))
	for i, x := range norrisX {
		rows[i] = []float64{1, x}
	}
	// B0 is negative: the certified fit is the unconstrained one.
	fit, err := OrdinaryLeastSquares(design(rows), norrisY)
	if err != nil {
		t.Fatal(err)
	}
	{
		name := "OrdinaryLeastSquares"
		t.Logf("Norris: B0 %.15g (%.15g), B1 %.15g (%.15g), sd %.15g, R² %.15g", fit.Coef[0], fit.StdErr[0], fit.Coef[1], fit.StdErr[1], fit.Sigma, fit.R2)
		// Source: NIST StRD Norris certified values; agreement to 1e-9 relative (the
		// dataset is of lower difficulty: a QR solve in float64 keeps ~12 digits).
		for _, c := range []struct {
			what      string
			got, want float64
		}{
			{"B0", fit.Coef[0], -0.262323073774029},
			{"B1", fit.Coef[1], 1.00211681802045},
			{"sd(B0)", fit.StdErr[0], 0.232818234301152},
			{"sd(B1)", fit.StdErr[1], 0.429796848199937e-03},
			{"residual sd", fit.Sigma, 0.884796396144373},
			{"R²", fit.R2, 0.999993745883712},
		} {
			if !relClose(c.got, c.want, 1e-9) {
				t.Errorf("%s Norris %s = %.15g, certified %.15g", name, c.what, c.got, c.want)
			}
		}
		if !fit.Centered || fit.DF != 34 {
			t.Errorf("Norris: centered %v, df %d; want an intercept fit with 34 degrees of freedom", fit.Centered, fit.DF)
		}
	}
}

// NIST StRD linear regression "NoInt1" (Eberhardt, K., NIST; line through the origin,
// 11 generated observations, y = 130..140 at x = 60..70): certified B1 =
// 2.07438016528926 (standard deviation 0.165289256198347E-01), residual standard
// deviation 3.56753034006338, R² 0.999365492298663, the uncentered R² of a fit without
// intercept, as the calibration's model is. NonNegativeLeastSquares must agree: the
// certified slope is positive, so the constraint is inactive.
func TestNoInt1Certified(t *testing.T) {
	var rows [][]float64
	var y []float64
	for x := 60.0; x <= 70; x++ {
		rows = append(rows, []float64{x})
		y = append(y, x+70)
	}
	for name, solve := range map[string]func(*mat.Dense, []float64) (*LinearFit, error){
		"OrdinaryLeastSquares": OrdinaryLeastSquares, "NonNegativeLeastSquares": NonNegativeLeastSquares,
	} {
		fit, err := solve(design(rows), y)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		for _, c := range []struct {
			what      string
			got, want float64
		}{
			{"B1", fit.Coef[0], 2.07438016528926},
			{"sd(B1)", fit.StdErr[0], 0.165289256198347e-01},
			{"residual sd", fit.Sigma, 3.56753034006338},
			{"R²", fit.R2, 0.999365492298663},
		} {
			if !relClose(c.got, c.want, 1e-9) {
				t.Errorf("%s NoInt1 %s = %.15g, certified %.15g", name, c.what, c.got, c.want)
			}
		}
		if fit.Centered {
			t.Errorf("%s: a fit through the origin must report the uncentered R²", name)
		}
	}
}

// The QR fit matches two independent solves to 1e-9 relative: the normal equations
// XᵀX b = Xᵀy by a Cholesky factorisation, and the pseudo-inverse from a singular value
// decomposition (both gonum).
func TestIndependentSolves(t *testing.T) {
	ms, _ := synthetic(demoTruth, 7, 40)
	x := mat.NewDense(len(ms), 3, nil)
	y := make([]float64, len(ms))
	for i, m := range ms {
		x.SetRow(i, []float64{m.Segments, m.Rows, m.Bytes})
		y[i] = m.CPUMs
	}
	fit, err := OrdinaryLeastSquares(x, y)
	if err != nil {
		t.Fatal(err)
	}
	// Scale the columns to unit length so the normal equations stay well conditioned;
	// unscale the solution afterwards.
	xs := scaledColumns(x, []int{0, 1, 2})
	norms := columnNorms(x)
	var xtx mat.SymDense
	xtx.SymOuterK(1, xs.T())
	var xty mat.VecDense
	xty.MulVec(xs.T(), mat.NewVecDense(len(y), y))
	var chol mat.Cholesky
	if !chol.Factorize(&xtx) {
		t.Fatal("XᵀX is not positive definite")
	}
	var b mat.VecDense
	if err := chol.SolveVecTo(&b, &xty); err != nil {
		t.Fatal(err)
	}
	var svd mat.SVD
	if !svd.Factorize(xs, mat.SVDThin) {
		t.Fatal("SVD failed")
	}
	var bs mat.Dense
	svd.SolveTo(&bs, mat.NewDense(len(y), 1, y), 3)
	for j := range 3 {
		if !relClose(fit.Coef[j], b.AtVec(j)/norms[j], 1e-9) {
			t.Errorf("coefficient %d: QR %.15g, Cholesky of the normal equations %.15g", j, fit.Coef[j], b.AtVec(j)/norms[j])
		}
		if !relClose(fit.Coef[j], bs.At(j, 0)/norms[j], 1e-9) {
			t.Errorf("coefficient %d: QR %.15g, SVD %.15g", j, fit.Coef[j], bs.At(j, 0)/norms[j])
		}
	}
	// Standard errors: sigma² (XᵀX)⁻¹ from the Cholesky factor.
	var inv mat.SymDense
	if err := chol.InverseTo(&inv); err != nil {
		t.Fatal(err)
	}
	for j := range 3 {
		if se := fit.Sigma * math.Sqrt(inv.At(j, j)) / norms[j]; !relClose(fit.StdErr[j], se, 1e-9) {
			t.Errorf("standard error %d: QR %.15g, Cholesky %.15g", j, fit.StdErr[j], se)
		}
	}
}

// Lawson and Hanson (1974, theorem 23.4): the non-negative solution is the unconstrained
// least-squares solution on some subset of the columns, non-negative there, with the
// gradient Xᵀ(y - Xb) <= 0 on the other columns. With 3 columns every subset can be
// tried: the brute force is an independent reference.
func TestNonNegativeAgainstSubsets(t *testing.T) {
	r := rand.New(rand.NewPCG(1974, 23))
	for trial := range 300 {
		n := 6 + r.IntN(10)
		x := mat.NewDense(n, 3, nil)
		y := make([]float64, n)
		truth := []float64{r.NormFloat64(), r.NormFloat64(), r.NormFloat64()}
		for i := range n {
			for j := range 3 {
				x.Set(i, j, r.Float64()*math.Pow(10, float64(3*j)))
			}
			for j := range 3 {
				y[i] += truth[j] * x.At(i, j)
			}
			y[i] += r.NormFloat64() * 10
		}
		fit, err := NonNegativeLeastSquares(x, y)
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		best := math.Inf(1)
		for mask := range 8 {
			free := []bool{mask&1 != 0, mask&2 != 0, mask&4 != 0}
			coef, _, err := solveSubset(x, y, free)
			if err != nil {
				t.Fatal(err)
			}
			ok := true
			for j := range 3 {
				ok = ok && coef[j] >= 0
			}
			if !ok {
				continue
			}
			rss := 0.0
			for _, e := range residuals(x, y, coef) {
				rss += e * e
			}
			best = min(best, rss)
		}
		if !relClose(fit.RSS, best, 1e-9) {
			t.Errorf("trial %d: active set RSS %.12g, best non-negative subset %.12g", trial, fit.RSS, best)
		}
		for j := range 3 {
			if fit.Coef[j] < 0 || fit.AtBound[j] != (fit.Coef[j] == 0) {
				t.Errorf("trial %d: coefficient %d = %v, at bound %v", trial, j, fit.Coef[j], fit.AtBound[j])
			}
		}
	}
}

func TestRankDeficient(t *testing.T) {
	// Column 2 is 3 x column 0: the design cannot tell their coefficients apart.
	rows := [][]float64{{1, 5, 3}, {2, 1, 6}, {3, 4, 9}, {4, 2, 12}, {5, 7, 15}}
	y := []float64{1, 2, 3, 4, 5}
	for _, solve := range []func(*mat.Dense, []float64) (*LinearFit, error){OrdinaryLeastSquares, NonNegativeLeastSquares} {
		_, err := solve(design(rows), y)
		var re *RankError
		ok := errors.As(err, &re)
		if !ok || len(re.Columns) != 2 || re.Columns[0] != 0 || re.Columns[1] != 2 {
			t.Errorf("want a rank error naming columns 0 and 2, got %v", err)
		}
	}
}

// The relative-error fit checked against the quasi-likelihood it claims to solve
// (McCullagh and Nelder, Generalized Linear Models, 1989: the gamma family with identity
// link), by formulas independent of the reweighting loop: its coefficients satisfy the
// score equations sum(x_ij (y_i - mu_i) / mu_i²) = 0, mu = Xb, and minimise the gamma
// deviance sum((y-mu)/mu - log(y/mu)) (any small step in any coefficient raises it); the
// weighted least-squares solve at the final weights by a Cholesky factorisation of the
// normal equations (gonum) gives the same coefficients; and the standard errors are
// phi (XᵀWX)⁻¹ with W = 1/mu² and the Pearson phi = sum(((y-mu)/mu)²)/(n-p).
func TestRelativeFitIndependent(t *testing.T) {
	for seed := range uint64(5) {
		tr := truth{f: 1.5, rho: 0.05e-6, beta: 1 / 200_000.0, rel: 0.03}
		ms, _ := synthetic(tr, 77+seed, 40)
		x := columnsOf(designOf(ms), []int{tSeg, tBytes, tRows})
		y := make([]float64, len(ms))
		for i, m := range ms {
			y[i] = m.CPUMs
		}
		fit, mu, err := solve(x, y, Relative)
		if err != nil {
			t.Fatal(err)
		}
		n, p := x.Dims()
		deviance := func(b []float64) float64 {
			d := 0.0
			for i, m := range predict(x, b) {
				d += (y[i]-m)/m - math.Log(y[i]/m)
			}
			return d
		}
		at := deviance(fit.Coef)
		for j := range p {
			score, scale := 0.0, 0.0
			for i := range n {
				score += x.At(i, j) * (y[i] - mu[i]) / (mu[i] * mu[i])
				scale += math.Abs(x.At(i, j) * y[i] / (mu[i] * mu[i]))
			}
			if math.Abs(score) > 1e-9*scale {
				t.Errorf("seed %d: score equation %d is %.3g, not 0 (scale %.3g)", seed, j, score, scale)
			}
			for _, step := range []float64{-1e-4, 1e-4} {
				b := slices.Clone(fit.Coef)
				b[j] *= 1 + step
				if deviance(b) <= at {
					t.Errorf("seed %d: moving coefficient %d by %+g lowers the deviance", seed, j, step)
				}
			}
		}
		// Normal equations XᵀWX b = XᵀWy at the final weights, by Cholesky, on unit columns.
		xs := mat.NewDense(n, p, nil)
		ys := make([]float64, n)
		phi := 0.0
		for i := range n {
			for j := range p {
				xs.Set(i, j, x.At(i, j)/mu[i])
			}
			ys[i] = y[i] / mu[i]
			phi += (y[i] - mu[i]) * (y[i] - mu[i]) / (mu[i] * mu[i])
		}
		phi /= float64(n - p)
		norms := columnNorms(xs)
		xu := scaledColumns(xs, []int{0, 1, 2})
		var xtwx mat.SymDense
		xtwx.SymOuterK(1, xu.T())
		var xtwy mat.VecDense
		xtwy.MulVec(xu.T(), mat.NewVecDense(n, ys))
		var chol mat.Cholesky
		if !chol.Factorize(&xtwx) {
			t.Fatal("XᵀWX is not positive definite")
		}
		var b mat.VecDense
		if err := chol.SolveVecTo(&b, &xtwy); err != nil {
			t.Fatal(err)
		}
		var inv mat.SymDense
		if err := chol.InverseTo(&inv); err != nil {
			t.Fatal(err)
		}
		for j := range p {
			// The weights are settled to 1e-10, so the two solves agree to about that.
			if want := b.AtVec(j) / norms[j]; !relClose(fit.Coef[j], want, 1e-8) {
				t.Errorf("seed %d coefficient %d: reweighted %.12g, Cholesky %.12g", seed, j, fit.Coef[j], want)
			}
			if se := math.Sqrt(phi*inv.At(j, j)) / norms[j]; !relClose(fit.StdErr[j], se, 1e-6) {
				t.Errorf("seed %d standard error %d: reweighted %.12g, quasi-likelihood %.12g", seed, j, fit.StdErr[j], se)
			}
		}
	}
}
