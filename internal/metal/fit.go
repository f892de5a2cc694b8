package metal

import (
	"errors"
	"fmt"
	"math"
)

// Fit is an ordinary least-squares fit y = Coef[0] + Σ Coef[j]·x_j.
type Fit struct {
	Coef      []float64 // intercept first, then one slope per regressor
	N         int       // points used
	R2        float64   // coefficient of determination 1 − SS_res/SS_tot
	RMS       float64   // root-mean-square residual √(SS_res/N)
	MaxAbs    float64   // largest absolute residual
	Residuals []float64 // y − ŷ, one per point
}

// ErrSingular is returned when the regressors do not determine the fit
// (a constant or collinear column).
var ErrSingular = errors.New("metal: regressors are constant or collinear")

// LeastSquares fits y on the regressors xs by ordinary least squares: the
// normal equations of the centred data, solved by Gaussian elimination with
// partial pivoting. It needs more points than coefficients.
func LeastSquares(y []float64, xs ...[]float64) (Fit, error) {
	n, p := len(y), len(xs)
	for j, x := range xs {
		if len(x) != n {
			return Fit{}, fmt.Errorf("metal: regressor %d has %d values, y has %d", j+1, len(x), n)
		}
	}
	if n < p+2 {
		return Fit{}, fmt.Errorf("metal: %d points are too few to fit %d coefficients with a residual", n, p+1)
	}
	my := mean(y)
	mx := make([]float64, p)
	for j, x := range xs {
		mx[j] = mean(x)
	}
	// a·β = b, a = XcᵀXc, b = Xcᵀyc (centred).
	a := make([][]float64, p)
	b := make([]float64, p)
	for j := range p {
		a[j] = make([]float64, p)
		for k := range p {
			s := 0.0
			for i := range n {
				s += (xs[j][i] - mx[j]) * (xs[k][i] - mx[k])
			}
			a[j][k] = s
		}
		s := 0.0
		for i := range n {
			s += (xs[j][i] - mx[j]) * (y[i] - my)
		}
		b[j] = s
	}
	beta, err := solve(a, b)
	if err != nil {
		return Fit{}, err
	}
	f := Fit{Coef: make([]float64, p+1), N: n, Residuals: make([]float64, n)}
	f.Coef[0] = my
	for j := range p {
		f.Coef[j+1] = beta[j]
		f.Coef[0] -= beta[j] * mx[j]
	}
	var ssRes, ssTot float64
	for i := range n {
		yh := f.Coef[0]
		for j := range p {
			yh += f.Coef[j+1] * xs[j][i]
		}
		r := y[i] - yh
		f.Residuals[i] = r
		ssRes += r * r
		ssTot += (y[i] - my) * (y[i] - my)
		f.MaxAbs = math.Max(f.MaxAbs, math.Abs(r))
	}
	f.RMS = math.Sqrt(ssRes / float64(n))
	if ssTot > 0 {
		f.R2 = 1 - ssRes/ssTot
	} else {
		f.R2 = 1
	}
	return f, nil
}

func mean(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

// solve solves a·x = b in place by Gaussian elimination with partial
// pivoting; a pivot below 1e-12 of the matrix scale is singular.
func solve(a [][]float64, b []float64) ([]float64, error) {
	n := len(b)
	scale := 0.0
	for i := range n {
		for j := range n {
			scale = math.Max(scale, math.Abs(a[i][j]))
		}
	}
	if scale == 0 {
		return nil, ErrSingular
	}
	for col := range n {
		piv := col
		for r := col + 1; r < n; r++ {
			if math.Abs(a[r][col]) > math.Abs(a[piv][col]) {
				piv = r
			}
		}
		if math.Abs(a[piv][col]) < 1e-12*scale {
			return nil, ErrSingular
		}
		a[col], a[piv] = a[piv], a[col]
		b[col], b[piv] = b[piv], b[col]
		for r := col + 1; r < n; r++ {
			m := a[r][col] / a[col][col]
			for c := col; c < n; c++ {
				a[r][c] -= m * a[col][c]
			}
			b[r] -= m * b[col]
		}
	}
	x := make([]float64, n)
	for r := n - 1; r >= 0; r-- {
		s := b[r]
		for c := r + 1; c < n; c++ {
			s -= a[r][c] * x[c]
		}
		x[r] = s / a[r][r]
	}
	return x, nil
}
