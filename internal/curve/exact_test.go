package curve

import (
	"math"
	"math/big"
	"testing"
)

// exactWeights solves the least-squares normal equations of a Savitzky–Golay
// fit in exact rational arithmetic (math/big) and returns the weights for the
// output at window position r: an independent reference for the kernels.
func exactWeights(window, order, deriv, r int) []*big.Rat {
	m := window / 2
	n := order + 1
	pow := func(k, a int) *big.Rat {
		v := big.NewRat(1, 1)
		for range a {
			v.Mul(v, big.NewRat(int64(k), 1))
		}
		return v
	}
	// augmented [G | I]
	g := make([][]*big.Rat, n)
	for a := range n {
		g[a] = make([]*big.Rat, 2*n)
		for b := range n {
			s := new(big.Rat)
			for k := -m; k <= m; k++ {
				s.Add(s, pow(k, a+b))
			}
			g[a][b] = s
			g[a][n+b] = new(big.Rat)
		}
		g[a][n+a].SetInt64(1)
	}
	for c := range n {
		p := c
		for g[p][c].Sign() == 0 {
			p++
		}
		g[c], g[p] = g[p], g[c]
		inv := new(big.Rat).Inv(g[c][c])
		for k := range 2 * n {
			g[c][k].Mul(g[c][k], inv)
		}
		for row := range n {
			if row == c || g[row][c].Sign() == 0 {
				continue
			}
			f := new(big.Rat).Set(g[row][c])
			for k := range 2 * n {
				g[row][k].Sub(g[row][k], new(big.Rat).Mul(f, g[c][k]))
			}
		}
	}
	z := r - m // output position relative to the centre
	w := make([]*big.Rat, window)
	for j := range window {
		k := j - m
		s := new(big.Rat)
		for a := deriv; a < n; a++ {
			// d^deriv/dz^deriv of z^a at z, times coefficient a of the fit
			f := big.NewRat(1, 1)
			for i := range deriv {
				f.Mul(f, big.NewRat(int64(a-i), 1))
			}
			f.Mul(f, pow(z, a-deriv))
			for b := range n {
				s.Add(s, new(big.Rat).Mul(f, new(big.Rat).Mul(g[a][n+b], pow(k, b))))
			}
		}
		w[j] = s
	}
	return w
}

// The kernels, centre and edge rows, agree with the exact rational
// least-squares weights to 5e-14 of the largest weight (scipy 1.10's
// savgol_coeffs for window 31, order 4, deriv 2 is off by 4e-13 of it).
func TestSavGolExact(t *testing.T) {
	for _, c := range []struct{ window, order, deriv int }{
		{5, 2, 0}, {11, 3, 1}, {21, 2, 1}, {31, 4, 2}, {41, 2, 0}, {9, 4, 3},
	} {
		k := SavGol(c.window, c.order, c.deriv)
		for _, r := range []int{0, 1, c.window / 2, c.window - 1} {
			exact := exactWeights(c.window, c.order, c.deriv, r)
			big := 0.0
			for _, e := range exact {
				f, _ := e.Float64()
				big = math.Max(big, math.Abs(f))
			}
			for j, e := range exact {
				f, _ := e.Float64()
				if d := math.Abs(k.EdgeCoefficients(r)[j] - f); d > 5e-14*big {
					t.Errorf("window %d order %d deriv %d row %d: w[%d] = %.17g, exact %.17g", c.window, c.order, c.deriv, r, j, k.EdgeCoefficients(r)[j], f)
				}
			}
		}
	}
}
