// Package curve holds the signal processing of a cooling curve: single-sample
// spike removal, Savitzky–Golay smoothing and derivatives, and a robust noise
// estimate. It is pure: slices in, slices out. Functions that fill a slice take
// the destination first; a nil destination allocates.
package curve

import (
	"fmt"
	"math"
	"sync"
)

// Kernel is a Savitzky–Golay filter: the least-squares polynomial of degree
// Order fitted to Window consecutive equally spaced samples, differentiated
// Deriv times and evaluated at the centre sample (Savitzky & Golay, Anal.
// Chem. 36 (1964) 1627; corrected tables: Steinier, Termonia & Deltour, Anal.
// Chem. 44 (1972) 1906).
//
// Edges: the first and last Window/2 outputs come from the same polynomial
// fitted to the first (last) Window samples, evaluated at the output's own
// position — the "interp" edge mode of scipy.signal.savgol_filter. No sample
// is padded or mirrored.
//
// A Kernel is immutable and safe for concurrent use. Get one from SavGol, which
// computes each (window, order, deriv) once and then returns the same value.
type Kernel struct {
	Window, Order, Deriv int

	half int
	// centre holds the weights that give the output at the window's centre
	// from its Window samples, per sample^Deriv (Apply and At divide by
	// dt^Deriv).
	centre []float64
	// proj[a][j] is the weight of sample j in the fitted polynomial's
	// coefficient of z^a, z = (position − half)/half; an edge output at
	// window position r is Σ_a a!/(a−Deriv)! z_r^(a−Deriv) (proj[a]·window)
	// / half^Deriv (edgeAt). Only Order+1 such rows are kept, not one row
	// of weights per window position: those would be Window² numbers, half
	// a gigabyte for the 8 s window of a 1 kHz logger.
	proj [][]float64
}

type kernelKey struct{ window, order, deriv int }

var (
	kernelMu    sync.Mutex
	kernelCache = map[kernelKey]*Kernel{}
)

// SavGol returns the Savitzky–Golay kernel for an odd window of samples, a
// polynomial order below the window and a derivative order 0 … order. Kernels
// are computed once per (window, order, deriv) and shared. It panics on
// misuse, since the arguments come from code, not from data.
func SavGol(window, order, deriv int) *Kernel {
	if window < 3 || window%2 == 0 {
		panic(fmt.Sprintf("curve: Savitzky–Golay window %d must be odd and at least 3", window))
	}
	if order < 0 || order >= window {
		panic(fmt.Sprintf("curve: Savitzky–Golay order %d must be in [0, window−1=%d]", order, window-1))
	}
	if deriv < 0 || deriv > order {
		panic(fmt.Sprintf("curve: Savitzky–Golay derivative %d must be in [0, order=%d]", deriv, order))
	}
	key := kernelKey{window, order, deriv}
	kernelMu.Lock()
	defer kernelMu.Unlock()
	if k, ok := kernelCache[key]; ok {
		return k
	}
	k := newKernel(window, order, deriv)
	kernelCache[key] = k
	return k
}

// newKernel solves the normal equations of the fit on the scaled abscissa
// z = (j − half)/half, which keeps them well conditioned, and rescales.
func newKernel(window, order, deriv int) *Kernel {
	half := window / 2
	np := order + 1
	scale := float64(half)
	// Gram matrix G = AᵀA with A[j][a] = z_j^a.
	g := make([]float64, np*np)
	zp := make([]float64, window*np) // z_j^a
	for j := 0; j < window; j++ {
		z := float64(j-half) / scale
		p := 1.0
		for a := 0; a < np; a++ {
			zp[j*np+a] = p
			p *= z
		}
	}
	for a := 0; a < np; a++ {
		for b := 0; b < np; b++ {
			s := 0.0
			for j := 0; j < window; j++ {
				s += zp[j*np+a] * zp[j*np+b]
			}
			g[a*np+b] = s
		}
	}
	inv := invert(g, np)
	// Coefficient b_a of the fit = Σ_j (G⁻¹Aᵀ)[a][j] y_j. The deriv-th
	// derivative at z_r, per unit of z, is Σ_a b_a a!/(a−deriv)! z_r^(a−deriv);
	// per sample it is divided by scale^deriv.
	proj := make([][]float64, np)
	for a := 0; a < np; a++ {
		proj[a] = make([]float64, window)
		for j := 0; j < window; j++ {
			s := 0.0
			for b := 0; b < np; b++ {
				s += inv[a*np+b] * zp[j*np+b]
			}
			proj[a][j] = s
		}
	}
	k := &Kernel{Window: window, Order: order, Deriv: deriv, half: half, proj: proj}
	k.centre = k.EdgeCoefficients(half)
	return k
}

// weight is the factor a!/(a−Deriv)! z_r^(a−Deriv) by which the
// polynomial's coefficient of z^a enters the output at window position r,
// per unit of z (divide by unit for per sample).
func (k *Kernel) weight(a, r int) float64 {
	z := float64(r-k.half) / float64(k.half)
	return fallingFactorial(a, k.Deriv) * math.Pow(z, float64(a-k.Deriv)) // Pow(0, 0) = 1
}

// unit is half^Deriv, the conversion from per unit of z to per sample.
func (k *Kernel) unit() float64 { return math.Pow(float64(k.half), float64(k.Deriv)) }

// edgeAt is the output at window position r of the fit to the Window
// samples w (per sample^Deriv), from the projections p[a] = proj[a]·w
// (edgeProj).
func (k *Kernel) edgeAt(r int, p []float64) float64 {
	v := 0.0
	for a := k.Deriv; a < len(k.proj); a++ {
		v += k.weight(a, r) * p[a]
	}
	return v / k.unit()
}

// edgeProj appends the projections proj[a]·w of the window w to p.
func (k *Kernel) edgeProj(p, w []float64) []float64 {
	for _, row := range k.proj {
		p = append(p, dot(row, w))
	}
	return p
}

func fallingFactorial(a, d int) float64 {
	f := 1.0
	for i := 0; i < d; i++ {
		f *= float64(a - i)
	}
	return f
}

// invert returns the inverse of the n×n matrix m (row major) by Gauss–Jordan
// elimination with partial pivoting.
func invert(m []float64, n int) []float64 {
	a := make([]float64, n*2*n)
	for i := 0; i < n; i++ {
		copy(a[i*2*n:], m[i*n:(i+1)*n])
		a[i*2*n+n+i] = 1
	}
	w := 2 * n
	for c := 0; c < n; c++ {
		p := c
		for r := c + 1; r < n; r++ {
			if math.Abs(a[r*w+c]) > math.Abs(a[p*w+c]) {
				p = r
			}
		}
		if p != c {
			for k := 0; k < w; k++ {
				a[c*w+k], a[p*w+k] = a[p*w+k], a[c*w+k]
			}
		}
		d := a[c*w+c]
		for k := 0; k < w; k++ {
			a[c*w+k] /= d
		}
		for r := 0; r < n; r++ {
			if r == c {
				continue
			}
			f := a[r*w+c]
			if f == 0 {
				continue
			}
			for k := 0; k < w; k++ {
				a[r*w+k] -= f * a[c*w+k]
			}
		}
	}
	out := make([]float64, n*n)
	for i := 0; i < n; i++ {
		copy(out[i*n:(i+1)*n], a[i*2*n+n:(i+1)*2*n])
	}
	return out
}

// Coefficients returns the centre weights, per sample^Deriv, in window order:
// the output at i is Σ_k c[k]·x[i−Window/2+k]. The slice is shared; do not
// modify it.
func (k *Kernel) Coefficients() []float64 { return k.centre }

// EdgeCoefficients returns the weights for the output at window position r
// (0 … Window−1) of a fit to one window of samples; r = Window/2 is the
// centre. The slice is computed on each call (Window numbers).
func (k *Kernel) EdgeCoefficients(r int) []float64 {
	row := make([]float64, k.Window)
	for a := k.Deriv; a < len(k.proj); a++ {
		f := k.weight(a, r)
		for j, c := range k.proj[a] {
			row[j] += f * c
		}
	}
	unit := k.unit()
	for j := range row {
		row[j] /= unit
	}
	return row
}

// NoiseGain is √Σc², the factor by which the kernel scales the standard
// deviation of white noise (per sample^Deriv; divide by dt^Deriv for units
// of time).
func (k *Kernel) NoiseGain() float64 {
	s := 0.0
	for _, c := range k.centre {
		s += c * c
	}
	return math.Sqrt(s)
}

// At returns the filter output at sample i of x sampled every dt seconds
// (°C/s^Deriv for temperatures in °C), with the edge handling described on
// Kernel. It panics if x is shorter than the window.
func (k *Kernel) At(x []float64, i int, dt float64) float64 {
	n := len(x)
	if n < k.Window {
		panic(fmt.Sprintf("curve: %d samples are fewer than the window %d", n, k.Window))
	}
	var v float64
	var p [8]float64 // Order+1 projections; orders above 7 allocate
	switch {
	case i < k.half:
		v = k.edgeAt(i, k.edgeProj(p[:0], x[:k.Window]))
	case i >= n-k.half:
		v = k.edgeAt(i-(n-k.Window), k.edgeProj(p[:0], x[n-k.Window:]))
	default:
		v = dot(k.centre, x[i-k.half:i+k.half+1])
	}
	return v / math.Pow(dt, float64(k.Deriv))
}

// AtGrowing is At for a curve that is still growing: for i < Window/2 the
// start-edge fit of the first Window samples, otherwise the centre kernel
// over x[i−Window/2 … i+Window/2], so the value never depends on samples
// beyond i+Window/2 (x must reach that far).
func (k *Kernel) AtGrowing(x []float64, i int, dt float64) float64 {
	var v float64
	if i < k.half {
		var p [8]float64
		v = k.edgeAt(i, k.edgeProj(p[:0], x[:k.Window]))
	} else {
		v = dot(k.centre, x[i-k.half:i+k.half+1])
	}
	if k.Deriv == 0 {
		return v
	}
	return v * (1 / math.Pow(dt, float64(k.Deriv))) // as AppendGrowing, bit for bit
}

// AppendGrowing appends AtGrowing(x, i, dt) for i = from … to−1 to dst and
// returns it (x must reach to−1+Window/2).
func (k *Kernel) AppendGrowing(dst, x []float64, from, to int, dt float64) []float64 {
	inv := 1 / math.Pow(dt, float64(k.Deriv))
	h, c := k.half, k.centre
	var pa [8]float64
	var p []float64 // the start edge's projections, once
	for i := from; i < to; i++ {
		if i < h {
			if p == nil {
				p = k.edgeProj(pa[:0], x[:k.Window])
			}
			dst = append(dst, k.edgeAt(i, p)*inv)
			continue
		}
		dst = append(dst, dot(c, x[i-h:i+h+1])*inv)
	}
	return dst
}

// Apply filters x, sampled every dt seconds, into dst and returns it (nil
// allocates; dst may not alias x). Outputs are in the units of x per
// s^Deriv. It panics if x is shorter than the window or dst is too short.
func (k *Kernel) Apply(dst, x []float64, dt float64) []float64 {
	n := len(x)
	if n < k.Window {
		panic(fmt.Sprintf("curve: %d samples are fewer than the window %d", n, k.Window))
	}
	if dst == nil {
		dst = make([]float64, n)
	}
	if len(dst) < n {
		panic(fmt.Sprintf("curve: destination of %d is shorter than %d samples", len(dst), n))
	}
	inv := 1 / math.Pow(dt, float64(k.Deriv))
	h := k.half
	var pa, pb [8]float64
	p, q := k.edgeProj(pa[:0], x[:k.Window]), k.edgeProj(pb[:0], x[n-k.Window:])
	for i := 0; i < h; i++ {
		dst[i] = k.edgeAt(i, p) * inv
		dst[n-h+i] = k.edgeAt(h+1+i, q) * inv
	}
	c := k.centre
	for i := h; i < n-h; i++ {
		dst[i] = dot(c, x[i-h:i+h+1]) * inv
	}
	return dst[:n]
}

// dot is Σ a[i]·b[i] over len(a) with four partial sums.
func dot(a, b []float64) float64 {
	b = b[:len(a)]
	var s0, s1, s2, s3 float64
	i := 0
	for ; i+4 <= len(a); i += 4 {
		p, q := a[i:i+4:i+4], b[i:i+4:i+4] // one bounds check for the four
		s0 += p[0] * q[0]
		s1 += p[1] * q[1]
		s2 += p[2] * q[2]
		s3 += p[3] * q[3]
	}
	for ; i < len(a); i++ {
		s0 += a[i] * b[i]
	}
	return (s0 + s1) + (s2 + s3)
}

// WindowSamples converts a window length in seconds to an odd number of
// samples at rateHz, at least minSamples (raised to odd) and at least
// order+2, so that windows keep their length in time from 2 Hz to 200 Hz.
func WindowSamples(seconds, rateHz float64, order, minSamples int) int {
	w := int(math.Round(seconds * rateHz))
	if w < minSamples {
		w = minSamples
	}
	if w < order+2 {
		w = order + 2
	}
	if w < 3 {
		w = 3
	}
	if w%2 == 0 {
		w++
	}
	return w
}
