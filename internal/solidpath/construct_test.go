package solidpath

import (
	"math"
	"math/rand/v2"
)

// Constructed cups: curves built in this file from the heat balance a
// method assumes, with a known fraction solid and latent heat, so that the
// method must give them back. CONSTRUCTED test data, not measurements.

// smooth is the C¹ ramp 0 → 1 over [a, b] (3u² − 2u³).
func smooth(t, a, b float64) float64 {
	switch {
	case t <= a:
		return 0
	case t >= b:
		return 1
	}
	u := (t - a) / (b - a)
	return u * u * (3 - 2*u)
}

// constructed describes a cup: fs rises to the primary share fp over
// [t1, t2], then to 1 over [t2, t3] (the eutectic), and the curve starts at
// T0 in the liquid.
type constructed struct {
	t1, t2, t3, dur float64
	fp              float64
	T0              float64
	L, c            float64 // J/kg, J/(kg K)
	k, ambient      float64 // Newtonian: 1/s, °C

	// Fourier: radii (m), diffusivities (m²/s) and the centre-to-wall
	// difference g(t) = T_c − T_w = gradient·(1 + 0.5·fs(t)) (°C).
	rc, rw     float64
	aL, aS     float64
	gradient   float64
	fourierCup bool
}

func (c constructed) fs(t float64) float64 {
	return c.fp*smooth(t, c.t1, c.t2) + (1-c.fp)*smooth(t, c.t2, c.t3)
}

// dfs is dfs/dt by the derivative of the ramps.
func (c constructed) dfs(t float64) float64 {
	ramp := func(a, b float64) float64 {
		if t <= a || t >= b {
			return 0
		}
		u := (t - a) / (b - a)
		return 6 * u * (1 - u) / (b - a)
	}
	return c.fp*ramp(c.t1, c.t2) + (1-c.fp)*ramp(c.t2, c.t3)
}

// gap is T_c − T_w of the Fourier cup.
func (c constructed) gap(t float64) float64 { return c.gradient * (1 + 0.5*c.fs(t)) }

// rate is T' of the (centre) curve.
func (c constructed) rate(t, temp float64) float64 {
	latent := c.L / c.c * c.dfs(t)
	if !c.fourierCup {
		return -c.k*(temp-c.ambient) + latent
	}
	f := c.fs(t)
	a := (1-f)*c.aL + f*c.aS
	return a*(-4*c.gap(t)/(c.rw*c.rw-c.rc*c.rc)) + latent
}

// sample integrates the curve with RK4 at 1 ms and reads it every 1/rate
// seconds, with a time jitter of up to jitter·step, white noise σ and
// quantisation q (seeded); it returns the times, centre and wall readings.
func (c constructed) sample(rate, jitter, sigma, q float64, seed uint64) (tt, centre, wall []float64) {
	rng := rand.New(rand.NewPCG(seed, 7))
	const h = 0.001
	temp, now := c.T0, 0.0
	step := 1 / rate
	next := 0.0
	for now <= c.dur {
		if now >= next-h/2 {
			read := func(v float64) float64 {
				v += sigma * rng.NormFloat64()
				if q > 0 {
					v = math.Round(v/q) * q
				}
				return v
			}
			tt = append(tt, now)
			centre = append(centre, read(temp))
			if c.fourierCup {
				wall = append(wall, read(temp-c.gap(now)))
			}
			next = now + step*(1+jitter*(2*rng.Float64()-1))
		}
		k1 := c.rate(now, temp)
		k2 := c.rate(now+h/2, temp+h/2*k1)
		k3 := c.rate(now+h/2, temp+h/2*k2)
		k4 := c.rate(now+h, temp+h*k3)
		temp += h / 6 * (k1 + 2*k2 + 2*k3 + k4)
		now += h
	}
	return tt, centre, wall
}

// events are the cup's events as the point finder would give them: the
// first arrest a few seconds into the primary freezing, the eutectic at its
// start, the end at t3; marks at the start and middle of the eutectic.
func (c constructed) events() Events {
	return Events{PourS: math.NaN(), ArrestS: c.t1 + 0.3*(c.t2-c.t1), EutecticS: c.t2, EndS: c.t3,
		Marks: []Mark{{KeyEutecticStart, c.t2}, {KeyEutecticMin, c.t2 + 0.5*(c.t3-c.t2)}}}
}

// newtonianCup is an Al-Si-like cup under Newton's law of cooling.
func newtonianCup() constructed {
	return constructed{t1: 40, t2: 190, t3: 330, dur: 420, fp: 0.55, T0: 690, L: 450e3, c: 1180, k: 0.0025, ambient: 25}
}

// fourierCup is the same cup read by two thermocouples, with a liquid
// diffusivity below the solid's.
func fourierCup() constructed {
	c := newtonianCup()
	c.fourierCup = true
	c.rc, c.rw = 0, 0.016
	c.aL, c.aS = 4e-5, 6e-5
	c.gradient = 1.5
	return c
}
