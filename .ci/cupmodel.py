#!/usr/bin/python3
"""An independent cup model: simulated cooling curves of a thermal-analysis cup, for undercool's tests.

Written from textbook physics, not from undercool's own simulator (internal/sim), so that the
detector (internal/arrest) is checked on curve shapes it was not tuned to. numpy and scipy only.

    cupmodel.py OUTDIR [--cups N] [--dt S]

writes OUTDIR/cup_NNN.csv (time_s,temp_c: the noisy logger's readings) and OUTDIR/cups.json (each
cup's parameters and its truth, read off the noiseless centre thermocouple curve by the
definitions of docs/analysis.md, "Characteristic points"; null where a point does not exist).
Every number is drawn from numpy's default_rng with fixed seeds: the same files on every run.

The model (docs/analysis.md, "An independent cup model"):

  * geometry: an infinitely long cylinder of melt, radius R, in N radial cells (node i at r = i dr,
    cell 0 the central disc) inside a sand wall of M cells; heat flows by conduction only (the
    1-D heat equation in cylindrical coordinates, finite volumes, Carslaw and Jaeger, Conduction
    of Heat in Solids, 1959). The liquid's conductivity carries a factor for convection; the
    solid's does not. Melt and sand meet through an interface conductance h_i; the sand's outer
    face loses heat by convection and radiation, h_c (T - Ta) + eps sigma (T^4 - Ta^4).
  * enthalpy: each melt cell conserves h = c T + L (1 - fs); conduction changes h, the kinetics
    change fs, and T = (h - L (1 - fs)) / c. Each 0.02 s step takes the conduction implicitly
    (backward Euler: one banded solve, scipy.linalg.solve_banded, for all cups' cells, the
    outer face's radiation linearised at the step's start), then the kinetics explicitly;
    growth never heats a cell above the liquidus (primary) or the eutectic temperature.
  * primary phase (hypoeutectic alloys): grains appear once the cell is undercooled dTn_p below
    the liquidus (site saturation, N_p per m^3) or a neighbour holds primary solid (the dendrites
    grow in); their envelopes grow at v = mu_p dT^2 (a dendrite tip law of the KGT form, Kurz and
    Fisher, Fundamentals of Solidification, recalled) and fill the cell as 1 - exp(-4/3 pi N R^3)
    (Johnson-Mehl-Avrami); inside the envelopes the solid approaches the Scheil fraction
    fs = 1 - ((Tm - T)/(Tm - TL))^(1/(k-1)) (Scheil 1942) at the rate 1/tau_p, at most its value at
    the eutectic temperature.
  * eutectic (and a pure metal's freezing): nuclei N = A dT^2 per m^3 of liquid, never fewer than
    before (Oldfield 1966, cast iron, recalled), or all at once at dTn (site saturation; pure
    metals, and Al-Si); the grains grow at v = mu dT^2 (Oldfield's law) and their fraction of the
    remaining liquid is 1 - exp(-X), dX/dt = 4 pi v sum(R^2) (Avrami), tracked by the moments of
    the grain radii; a neighbour more than half eutectic grows into the cell as a front, adding
    v A/V to dX/dt (A the face they share, V the cell's volume).
  * chill layer (on some cups): the outermost cells, against the cold wall, have 30-300 times the
    nuclei and a third of the nucleation undercooling.
  * thermocouple at the centre with a first-order lag tau (dTtc/dt = (T0 - Ttc)/tau), at room
    temperature until the pour; the logger samples it at 4-50 Hz with white noise and
    quantisation.

The truth is read off the noiseless thermocouple curve on the model's step (0.02 s), with
T' the central difference over +-0.1 s and T'' the central difference of T' over +-0.25 s.
"""

import json
import math
import os
import sys

import numpy as np
import scipy
from scipy.linalg import solve_banded
from scipy.ndimage import maximum_filter1d
from scipy.signal import lfilter

SIGMA = 5.670374419e-8  # Stefan-Boltzmann constant, W m^-2 K^-4 (CODATA 2018)

# Material data (recalled, handbook orders of magnitude; marked recalled in docs/analysis.md):
# density kg/m^3, specific heat J/(kg K), latent heat J/kg, conductivity of liquid and solid W/(m K).
MATERIALS = {
    "iron": dict(rho=7000.0, c=800.0, L=230e3, kl=30.0, ks=35.0),
    "alsi": dict(rho=2450.0, c=1150.0, L=430e3, kl=80.0, ks=150.0),
    "al": dict(rho=2380.0, c=1150.0, L=397e3, kl=95.0, ks=210.0),
    "zn": dict(rho=6570.0, c=480.0, L=112e3, kl=50.0, ks=110.0),
    "sn": dict(rho=6990.0, c=240.0, L=59e3, kl=30.0, ks=60.0),
}
# ITS-90 freezing points, degC (Preston-Thomas, Metrologia 27 (1990) 3).
FIXED = {"al": 660.323, "zn": 419.527, "sn": 231.928}

FAMILY = {"grey-iron": "iron", "al-si7": "aluminum", "pure-al": "pure", "pure-zn": "pure", "pure-sn": "pure"}
# Eutectic windows of docs/analysis.md ("What counts as the eutectic"), degC; pure metals: open.
WINDOW = {"iron": (1070.0, 1180.0), "aluminum": (545.0, 577.0), "pure": (-math.inf, math.inf)}

DT = 0.02  # the model's step, and the fine grid the centre curve is kept on, s
ALLOYS = ["grey-iron", "al-si7", "grey-iron", "al-si7", "pure-al", "pure-zn", "pure-sn"]


def geo(a, b, u):
    return a * (b / a) ** u


def draw_cup(i):
    """Parameters of cup i from its own seed."""
    rng = np.random.default_rng([2026, 12, i])
    alloy = ALLOYS[i % len(ALLOYS)]
    # gradient strength: a third nearly lumped (0), a third strong (1), a third between
    u = [0.0, 1.0, float(rng.uniform())][int(rng.integers(3))]
    p = dict(name="cup_%03d" % i, alloy=alloy, family=FAMILY[alloy], gradient=u)
    p["radius_mm"] = float(rng.uniform(15, 20))
    # 30-48 radial cells: with 10-16 a pure metal's plateau showed the enthalpy method's staircase
    # (a wobble of T' each time the front crossed a cell), which a real front does not make
    p["cells"] = 3 * int(rng.integers(10, 17))
    p["sand_mm"] = float(rng.uniform(4, 8))
    p["sand_k"] = float(rng.uniform(0.5, 1.0))  # resin-bonded silica sand, W/(m K) (recalled)
    p["room_c"] = float(rng.uniform(18, 32))
    p["h_conv"] = float(rng.uniform(10, 30))  # natural convection, W/(m^2 K) (recalled)
    p["emissivity"] = float(rng.uniform(0.6, 0.9))
    p["h_interface"] = geo(800.0, 3000.0, u) * float(rng.uniform(0.8, 1.25))  # W/(m^2 K)
    # the liquid's conductivity multiplier for convection: 6 (nearly lumped) down to none (1; 1.8 for
    # iron, whose handbook conductivity alone makes 25-40 degC from the wall to the centre)
    p["conv_factor"] = geo(6.0, 1.8 if alloy == "grey-iron" else 1.0, u) * float(rng.uniform(0.85, 1.15))
    p["chill_cells"] = int(rng.integers(1, 3)) if rng.uniform() < 0.4 else 0
    p["chill_nuclei"] = float(geo(30, 300, rng.uniform()))
    if alloy == "grey-iron":
        mat = "iron"
        te = float(rng.uniform(1140, 1155))
        # liquidus above the iron family's eutectic window (1070-1180 degC), so that the primary
        # arrest is one by the definitions
        p.update(liquidus_c=float(rng.uniform(1185, 1250)), eutectic_c=te, melting_c=1538.0, k_part=0.5,
                 pour_c=0.0, dtn_p=float(rng.uniform(1.5, 5)), n_p=float(geo(1e8, 1e10, rng.uniform())),
                 mu_p=float(geo(3e-6, 3e-5, rng.uniform())), tau_p=float(rng.uniform(0.5, 2)),
                 eut_law="oldfield", a_e=float(geo(3e8, 3e10, rng.uniform())), dtn_e=0.0,
                 mu_e=float(geo(1.5e-7, 6e-7, rng.uniform())))
        p["pour_c"] = p["liquidus_c"] + float(rng.uniform(60, 140))
    elif alloy == "al-si7":
        mat = "alsi"
        te = float(rng.uniform(565, 577))
        p.update(liquidus_c=float(rng.uniform(612, 618)), eutectic_c=te, melting_c=660.323, k_part=0.13,
                 dtn_p=float(rng.uniform(0.5, 3)), n_p=float(geo(1e8, 1e10, rng.uniform())),
                 mu_p=float(geo(1e-5, 1e-4, rng.uniform())), tau_p=float(rng.uniform(0.5, 2)),
                 eut_law="saturation", n_e=float(geo(1e8, 1e11, rng.uniform())),
                 dtn_e=float(rng.uniform(0.5, 4)), mu_e=float(geo(3e-7, 3e-6, rng.uniform())))
        p["pour_c"] = p["liquidus_c"] + float(rng.uniform(60, 130))
    else:
        mat = alloy[5:]
        tm = FIXED[mat]
        p.update(liquidus_c=None, eutectic_c=tm, melting_c=tm, eut_law="saturation",
                 n_e=float(geo(1e7, 1e10, rng.uniform())), dtn_e=float(rng.uniform(1, 5)),
                 mu_e=float(geo(3e-5, 3e-4, rng.uniform())))
        p["pour_c"] = tm + float(rng.uniform(30, 80))
    # a third of the alloy cups with 1e3-1e6 times the eutectic nuclei, 10-100 times the growth
    # constant and a fifth of the nucleation undercooling (a well-inoculated iron; an Al-Si melt rich
    # in nucleants): growth then keeps up with the heat flow near the eutectic temperature, and the
    # centre recalesces by tenths of a degree or not at all
    p["many_nuclei"] = 1.0
    if alloy in ("grey-iron", "al-si7") and rng.uniform() < 1 / 3:
        p["many_nuclei"] = float(geo(1e3, 1e6, rng.uniform()))
        for key in ("a_e", "n_e"):
            if key in p:
                p[key] *= p["many_nuclei"]
        p["mu_e"] *= float(geo(10, 100, rng.uniform()))
        p["dtn_e"] /= 5
    p["material"] = mat
    p.update(MATERIALS[mat])
    p["lag_s"] = float(rng.uniform(0.3, 1.0))
    p["pre_s"] = float(rng.uniform(0.5, 3))  # readings at room temperature before the pour
    p["rate_hz"] = float([4, 5, 8, 10, 16, 20, 25, 40, 50][int(rng.integers(9))])
    p["noise_c"] = float(rng.uniform(0, 0.3))
    p["quant_c"] = float([0, 0.01, 0.1, 0.25][int(rng.integers(4))])
    p["phase_s"] = float(rng.uniform(0, 1)) / p["rate_hz"]
    p["seed"] = [2026, 12, i]
    return p


def end_below(c):
    """The temperature the centre must fall below before the record ends, degC: 35 degC below the
    eutectic, and 15 degC below the family's eutectic window where it has one."""
    lo = WINDOW[c["family"]][0]
    return min(c["eutectic_c"] - 35, lo - 15 if math.isfinite(lo) else math.inf)


class Cups:
    """All cups integrated side by side: the melt and sand nodes of every cup in one chain
    (cup after cup, no link between cups), so that one banded solve steps them all."""

    M = 4  # sand cells

    def __init__(self, cups, dt):
        self.cups, self.dt = cups, dt
        M = self.M
        nb = np.array([c["cells"] for c in cups])
        self.nb = nb
        per = lambda key, d=0.0: np.array([float(c.get(key, d) if c.get(key, d) is not None else d) for c in cups])
        cup_of = np.repeat(np.arange(len(cups)), nb)  # melt node -> cup
        self.cup_of = cup_of
        j = np.concatenate([np.arange(n) for n in nb])  # radial index of each melt node
        self.j = j
        R = per("radius_mm")[cup_of] / 1000
        dr = R / (nb[cup_of] - 0.5)
        self.dr = dr
        rin = np.maximum(j - 0.5, 0) * dr
        rout = (j + 0.5) * dr
        self.rout = rout
        vol = np.pi * (rout ** 2 - rin ** 2)
        m = lambda key, d=0.0: per(key, d)[cup_of]
        self.rho, self.c, self.L, self.kl, self.ks = m("rho"), m("c"), m("L"), m("kl"), m("ks")
        self.klc = self.kl * m("conv_factor")
        self.Cm = self.rho * self.c * vol  # heat capacity per m of length, J/(m K)
        # chain positions
        start = np.concatenate([[0], np.cumsum(nb + M)[:-1]])
        self.K = int(np.sum(nb + M))
        self.melt = np.concatenate([s + np.arange(n) for s, n in zip(start, nb)])
        self.sand = np.concatenate([s + n + np.arange(M) for s, n in zip(start, nb)])
        self.centre = start
        self.wall = start + nb - 1  # chain position of each cup's outermost melt node
        self.wallm = np.cumsum(nb) - 1  # ... and its melt index
        self.outer = start + nb + M - 1
        # melt-melt links: melt node a (not a cup's last) to a+1
        inner = np.nonzero(np.concatenate([np.arange(n) < n - 1 for n in nb]))[0]
        self.mm = inner
        self.mm_link = self.melt[inner]  # link index = chain position of its inner node
        cR = per("radius_mm") / 1000
        ds = per("sand_mm") / 1000 / M
        ksand = per("sand_k")
        self.cR, self.ds, self.ksand, self.hi = cR, ds, ksand, per("h_interface")
        rs = cR[:, None] + (np.arange(M)[None, :] + 0.5) * ds[:, None]
        self.Cs = (1500.0 * 1000.0 * 2 * np.pi * rs * ds[:, None]).ravel()  # sand: 1500 kg/m^3, 1000 J/(kg K) (recalled)
        C = np.zeros(self.K)
        C[self.melt] = self.Cm
        C[self.sand] = self.Cs
        self.C = C
        G = np.zeros(self.K - 1)
        for b in range(len(cups)):
            for q in range(M - 1):
                rf = cR[b] + (q + 1) * ds[b]
                G[start[b] + nb[b] + q] = 2 * np.pi * rf * ksand[b] / ds[b]
        self.G0 = G
        Rout = cR + M * ds
        self.Aout = 2 * np.pi * Rout
        self.Gout_half = 2 * np.pi * Rout * ksand / (ds / 2)
        self.hc, self.eps, self.Ta = per("h_conv"), per("emissivity"), per("room_c")
        # kinetics, per melt node
        self.hypo = np.array([c["liquidus_c"] is not None for c in cups])[cup_of]
        self.TL = np.where(self.hypo, m("liquidus_c", -1e9), -1e9)
        self.TE, self.Tm, self.kp = m("eutectic_c"), m("melting_c"), m("k_part", 0.5)
        self.dtn_p, self.n_p, self.mu_p, self.tau_p = m("dtn_p"), m("n_p", 1.0), m("mu_p"), m("tau_p", 1.0)
        self.oldfield = np.array([c["eut_law"] == "oldfield" for c in cups])[cup_of]
        self.a_e, self.n_e, self.dtn_e, self.mu_e = m("a_e"), m("n_e"), m("dtn_e"), m("mu_e")
        chill = np.array([c["chill_cells"] for c in cups])[cup_of]
        inchill = j >= nb[cup_of] - chill
        f = np.where(inchill, m("chill_nuclei"), 1.0)
        self.n_p, self.a_e, self.n_e = self.n_p * f, self.a_e * f, self.n_e * f
        g = np.where(inchill, 1 / 3, 1.0)
        self.dtn_p, self.dtn_e = self.dtn_p * g, self.dtn_e * g
        self.a_in = 2 * np.pi * rin / vol  # inner and outer face area per volume, 1/m
        self.a_out = 2 * np.pi * rout / vol
        self.fpE = np.where(self.hypo, self.scheil(self.TE), 0.0)
        self.first = j == 0
        self.last = j == nb[cup_of] - 1
        self.pour = per("pour_c")
        self.below = np.array([end_below(c) for c in cups])

    def scheil(self, T):
        x = (self.Tm - T) / np.maximum(self.Tm - self.TL, 1e-9)
        return np.where(self.hypo, np.clip(1 - np.maximum(x, 1.0) ** (1 / (self.kp - 1)), 0, 1), 0.0)

    def run(self, tmax=1200.0):
        dt, K, M = self.dt, self.K, self.M
        B = len(self.cups)
        T = np.zeros(K)
        T[self.melt] = self.pour[self.cup_of]
        T[self.sand] = np.repeat(self.Ta, M)
        nm = len(self.melt)
        fs = np.zeros(nm)
        fsp = np.zeros(nm)
        Rg = np.zeros(nm)
        pnuc = np.zeros(nm, bool)
        N0, M1, M2, X = np.zeros(nm), np.zeros(nm), np.zeros(nm), np.zeros(nm)
        Tak = self.Ta + 273.15
        rec = []
        t_solid = np.full(B, np.inf)
        done = np.zeros(B, bool)
        step = 0
        ab = np.zeros((3, K))
        Cdt = self.C / dt
        G = self.G0.copy()
        a, b = self.mm, self.mm + 1
        while True:
            k = self.klc * (1 - fs) + self.ks * fs
            G[self.mm_link] = 2 * np.pi * self.rout[a] * (2 * k[a] * k[b] / (k[a] + k[b])) / self.dr[a]
            kw = k[self.wallm]
            res = (self.dr[self.wallm] / 2) / (2 * np.pi * self.cR * kw) + 1 / (2 * np.pi * self.cR * self.hi) \
                + (self.ds / 2) / (2 * np.pi * self.cR * self.ksand)
            G[self.wall] = 1 / res
            # the outer face: convection and radiation, linearised about the last sand node's temperature
            To = T[self.outer]
            Tk = To + 273.15
            heff = self.hc + self.eps * SIGMA * (Tk ** 2 + Tak ** 2) * (Tk + Tak)
            Gamb = 1 / (1 / self.Gout_half + 1 / (self.Aout * heff))
            diag = Cdt.copy()
            diag[:-1] += G
            diag[1:] += G
            diag[self.outer] += Gamb
            ab[0, 1:] = -G
            ab[1] = diag
            ab[2, :-1] = -G
            rhs = Cdt * T
            rhs[self.outer] += Gamb * self.Ta
            T = solve_banded((1, 1), ab, rhs, check_finite=False)
            Tm = T[self.melt]
            # primary phase
            dTp = self.TL - Tm
            grown = fsp > 0.02
            nbr = np.zeros(nm, bool)
            nbr[1:] |= grown[:-1] & ~self.first[1:]
            nbr[:-1] |= grown[1:] & ~self.last[:-1]
            pnuc |= self.hypo & ((dTp >= self.dtn_p) | (nbr & (dTp > 0)))
            Rg = Rg + np.where(pnuc, self.mu_p * np.maximum(dTp, 0) ** 2 * dt, 0)
            fg = 1 - np.exp(-4 / 3 * np.pi * self.n_p * Rg ** 3)
            target = np.minimum(self.scheil(Tm), self.fpE)
            dp = np.where(pnuc, fg * np.maximum(target - fsp, 0) * (1 - np.exp(-dt / self.tau_p)), 0)
            # growth never heats a cell above the liquidus: the step releases at most that much
            dp = np.minimum(dp, np.maximum(self.TL - Tm, 0) * self.c / self.L)
            fsp = fsp + dp
            # eutectic
            dTe = np.maximum(self.TE - Tm, 0)
            fe = 1 - np.exp(-X)
            # a neighbour more than half eutectic grows into the cell as a front over the face
            # they share: extended volume at v times that face's area per volume of the cell
            half = fe > 0.5
            front = np.zeros(nm)
            front[1:] += np.where(half[:-1] & ~self.first[1:], self.a_in[1:], 0.0)
            front[:-1] += np.where(half[1:] & ~self.last[:-1], self.a_out[:-1], 0.0)
            want = np.where(self.oldfield, self.a_e * dTe ** 2, np.where(dTe >= self.dtn_e, self.n_e, 0.0))
            N0 = N0 + np.maximum(want - N0, 0) * (1 - fe)
            v = self.mu_e * dTe ** 2
            X = X + 4 * np.pi * v * M2 * dt + v * front * dt
            M2 = M2 + 2 * v * M1 * dt
            M1 = M1 + v * N0 * dt
            fe = 1 - np.exp(-X)
            fs_new = np.maximum(fsp + (1 - fsp) * fe, fs)
            # nor the eutectic above the eutectic temperature (the grains' fraction then waits for
            # the heat to be carried away, as growth limited by heat flow does)
            cap = fs + dp * (1 - fe) + np.maximum(self.TE - (Tm + self.L / self.c * dp * (1 - fe)), 0) * self.c / self.L
            fs_new = np.minimum(fs_new, np.maximum(cap, fs))
            T[self.melt] = Tm + self.L / self.c * (fs_new - fs)
            fs = fs_new
            step += 1
            tnow = step * dt
            rec.append((T[self.centre].copy(), fs[self.j == 0].copy(), T[self.wall].copy(), fs[self.wallm].copy()))
            allsolid = np.minimum.reduceat(fs, np.concatenate([[0], np.cumsum(self.nb)[:-1]])) > 0.9995
            t_solid = np.where(allsolid & ~np.isfinite(t_solid), tnow, t_solid)
            done |= (tnow > t_solid + 40) & (T[self.centre] < self.below)
            if done.all() or tnow > tmax:
                break
        cen = np.array([r[0] for r in rec]).T
        cfs = np.array([r[1] for r in rec]).T
        wT = np.array([r[2] for r in rec]).T
        wfs = np.array([r[3] for r in rec]).T
        return cen, cfs, wT, wfs, t_solid


def lagged(temp, dt, tau, room, pre):
    """The thermocouple at the centre: at room temperature for pre s, then a first-order lag
    tau dy/dt = x - y, exact for an input linear between grid points (the melt reaches the
    thermocouple within the first step)."""
    a = math.exp(-dt / tau)
    g = tau / dt
    b0, b1 = 1 - g + a * g, g - a - a * g
    x = np.concatenate([[0.0], temp - room])
    y = lfilter([b0, b1], [1, -a], x)
    npre = int(round(pre / dt))
    return np.concatenate([np.full(npre, room), y + room])


def slope(T, dt, h):
    """Central difference over +-h s (one-sided at the ends)."""
    k = max(1, int(round(h / dt)))
    d = np.empty_like(T)
    d[k:-k] = (T[2 * k:] - T[:-2 * k]) / (2 * k * dt)
    d[:k] = d[k]
    d[-k:] = d[-k - 1]
    return d


def cross(T, d, i):
    """T interpolated where d crosses zero between fine indices i and i+1."""
    if d[i + 1] == d[i]:
        return float(T[i])
    w = d[i] / (d[i] - d[i + 1])
    return float(T[i] + w * (T[i + 1] - T[i]))


def arrests_of(T, d, i0, half):
    """The arrests after index i0, in time order: ("recal", i, j) where T' crosses zero from - to +
    at i and back at j with T rising at least 0.05 degC and then falling at least 0.05 degC before
    T' turns up again (docs/analysis.md), ("flat", i, j) for a
    smaller excursion (an arrest at zero), ("shoulder", i, i) for a local maximum of T' below zero
    (the largest T' within +-half readings, above both ends of that span)."""
    n = len(T)
    up = [int(i) for i in np.nonzero((d[:-1] < 0) & (d[1:] >= 0))[0] if i >= i0]
    down = [int(i) for i in np.nonzero((d[:-1] > 0) & (d[1:] <= 0))[0] if i >= i0]
    out = []
    end = -1
    for i in up:
        if i <= end:
            continue  # inside the recalescence before
        # it ends at the first + -> - crossing after which T falls by 0.05 degC before T' turns up
        # again (docs/analysis.md): a pause with a smaller dip is inside it
        j = None
        for k in (k for k in down if k > i):
            nxt = [u for u in up if u > k]
            if not nxt or T[k] - T[nxt[0]] >= 0.05:
                j = k
                break
        if j is None:
            break  # the record ends on the rise
        out.append(("recal" if T[j] - T[i] >= 0.05 else "flat", i, j))
        end = j
    mx = maximum_filter1d(d, 2 * half + 1, mode="nearest")
    idx = np.nonzero((d == mx) & (d < 0))[0]
    for i in idx:
        i = int(i)
        if i < i0 + 1 or i >= n - half - 1 or not (d[i] > d[i - half] and d[i] > d[i + half]):
            continue
        if any(a <= i <= b for _, a, b in out):
            continue
        if out and out[-1][0] == "shoulder" and i - out[-1][1] <= half:
            continue
        out.append(("shoulder", i, i))
    out.sort(key=lambda a: a[1])
    # of shoulders closer than half a window, the first
    keep = []
    for a in out:
        if a[0] == "shoulder" and keep and keep[-1][0] == "shoulder" and a[1] - keep[-1][1] <= half:
            continue
        keep.append(a)
    return keep


def read_truth(t, T, family, hypo):
    """The characteristic points of docs/analysis.md ("Characteristic points") read off the
    noiseless thermocouple curve T(t) on its fine grid."""
    dt = t[1] - t[0]
    d = slope(T, dt, 0.1)
    dd = slope(d, dt, 0.25)
    n = len(T)
    pt = lambda i: dict(c=round(float(T[i]), 4), s=round(float(t[i]), 3))
    at = lambda c, i: dict(c=round(c, 4), s=round(float(t[i]), 3))
    out = {}
    ip = int(np.argmax(T))
    out["pour_peak"] = pt(ip)
    lo, hi = WINDOW[family]
    half = int(round(2.0 / dt))
    # the arrests start after the steepest fall of the pour transient
    i0 = ip + int(np.argmin(d[ip:ip + int(20 / dt)]))
    arrests = arrests_of(T, d, i0, half)
    tmin = lambda a: cross(T, d, a[1]) if a[0] != "shoulder" else float(T[a[1]])
    tmax = lambda a: cross(T, d, a[2]) if a[0] != "shoulder" else float(T[a[2]])
    out["arrests"] = [(a[0], round(tmin(a), 3), round(float(t[a[1]]), 2)) for a in arrests]
    # an arrest reaching above the eutectic window is a primary arrest; the liquidus is the first
    primary = [a for a in arrests if tmax(a) > hi]
    after = primary[0][2] if primary else -1
    inwin = [a for a in arrests if lo <= tmin(a) <= hi and tmax(a) <= hi and a[1] > after]
    for key in ("liquidus_min", "liquidus", "eutectic_start", "eutectic_min", "eutectic_max", "solidus"):
        out[key] = None
    out["recalescence_c"] = None
    if hypo and primary:
        a = primary[0]
        if a[0] == "shoulder":
            out["liquidus"] = pt(a[1])
        elif a[0] == "flat":
            # T' just touches zero without a recalescence: the arrest's top of T'
            out["liquidus"] = pt(a[1] + int(np.argmax(d[a[1]:a[2] + 1])))
        else:
            out["liquidus_min"] = at(tmin(a), a[1])
            out["liquidus"] = at(tmax(a), a[2])
    # the eutectic: a recalescence outranks a shoulder; a later recalescence outranks the one
    # taken when the curve has fallen below its minimum and it rises more than twice as much
    # (an arrest at zero, "flat", ranks as a recalescence of its own small rise)
    recs = [a for a in inwin if a[0] != "shoulder"]
    eut = None
    if recs:
        eut = recs[0]
        # (a pure metal's single plateau is never reopened, docs/analysis.md)
        for b in recs[1:] if family != "pure" else []:
            if tmin(b) < tmin(eut) and tmax(b) - tmin(b) > 2 * (tmax(eut) - tmin(eut)):
                eut = b
    elif inwin:
        # without recalescence: the arrest whose T' comes nearest zero
        eut = max(inwin, key=lambda a: d[a[1]] if a[0] == "shoulder" else 0.0)
    if eut is None:
        return out
    if eut[0] == "shoulder":
        out["eutectic_min"] = out["eutectic_max"] = pt(eut[1])
    else:
        out["eutectic_min"] = at(tmin(eut), eut[1])
        out["eutectic_max"] = at(tmax(eut), eut[2])
    out["recalescence_c"] = round(out["eutectic_max"]["c"] - out["eutectic_min"]["c"], 4)
    # start: the largest T'' between the last local minimum of T' before the minimum and the minimum
    im = eut[1]
    k = im
    while k > i0 and d[k - 1] <= d[k]:
        k -= 1
    if k < im:
        out["eutectic_start"] = pt(k + int(np.argmax(dd[k:im + 1])))
    # diagnostics (not points): the liquid's mean slope over the 10 s before the first arrest's
    # minimum, and T' at the end of freezing
    first = arrests[0][1] if arrests else i0
    k10 = max(i0, first - int(round(10 / dt)))
    out["liquid_rate"] = round(float((T[first] - T[k10]) / max(t[first] - t[k10], dt)), 3)
    # end of freezing: the most negative T' after the eutectic plateau; null when it falls
    # within 2 s of the record's end (the record stopped before it settled)
    ie = eut[2]
    js = ie + int(np.argmin(d[ie:]))
    if js < n - half:
        out["solidus"] = pt(js)
        out["end_slope"] = round(float(d[js]), 3)
    return out


def logger(t, T, p, rng):
    ts = np.arange(p["phase_s"], t[-1], 1 / p["rate_hz"])
    y = np.interp(ts, t, T) + rng.normal(0, p["noise_c"], len(ts)) if p["noise_c"] > 0 else np.interp(ts, t, T)
    if p["quant_c"] > 0:
        y = np.round(y / p["quant_c"]) * p["quant_c"]
    return ts, y


def main(argv):
    if len(argv) < 2:
        print("usage: cupmodel.py OUTDIR [--cups N] [--dt S]", file=sys.stderr)
        return 2
    outdir = argv[1]
    ncups = 84
    if "--cups" in argv:
        ncups = int(argv[argv.index("--cups") + 1])
    os.makedirs(outdir, exist_ok=True)
    cups = [draw_cup(i) for i in range(ncups)]
    doc = {"model": "cupmodel.py", "numpy": np.__version__, "scipy": scipy.__version__, "cups": []}
    dt = float(argv[argv.index("--dt") + 1]) if "--dt" in argv else DT
    cen_all, cfs_all, wT_all, wfs_all, tsol_all = Cups(cups, dt).run()
    rec_dt = dt
    for b, c in enumerate(cups):
        cen, cfs, wT, wfs, t_solid = cen_all[b], cfs_all[b], wT_all[b], wfs_all[b], tsol_all[b]
        # keep the record until 40 s after the whole cup is solid and 35 degC below the eutectic
        tt = np.arange(len(cen)) * rec_dt
        # (and 15 degC below the family's eutectic window, 545 degC for Al-Si)
        below = end_below(c)
        end = np.nonzero((tt > t_solid + 40) & (cen < below))[0]
        m = int(end[0]) + 1 if len(end) else len(cen)
        cen, cfs, wT, wfs = cen[:m], cfs[:m], wT[:m], wfs[:m]
        tc = lagged(cen, rec_dt, c["lag_s"], c["room_c"], c["pre_s"])
        t = np.arange(len(tc)) * rec_dt
        rng = np.random.default_rng(c["seed"] + [1])
        ts, y = logger(t, tc, c, rng)
        with open(os.path.join(outdir, c["name"] + ".csv"), "w") as f:
            f.write("time_s,temp_c\n")
            for a, b in zip(ts, y):
                f.write("%.3f,%.3f\n" % (a, b))
        tr = read_truth(t, tc, c["family"], c["liquidus_c"] is not None)
        # diagnostics: how far the wall and centre lie apart while freezing, and how much the
        # centre's own solid grew during the arrest the truth took for the eutectic
        npre = len(tc) - len(cen)
        # while the cup freezes: from the outermost cell's first solid to the centre's last liquid
        fr = (wfs > 0.02) & (cfs < 0.98)
        diag = {"record_s": round(float(t[-1]), 2),
                "centre_minus_wall_c": round(float(np.max(cen[fr] - wT[fr])) if fr.any() else 0.0, 2),
                "centre_solid_s": round(float(np.argmax(cfs > 0.999) * rec_dt + c["pre_s"]), 2)}
        if tr["eutectic_min"] is not None:
            a = max(0, int(round(tr["eutectic_min"]["s"] / rec_dt)) - npre)
            bb = max(0, int(round(tr["eutectic_max"]["s"] / rec_dt)) - npre)
            diag["centre_fs_at_eutectic_min"] = round(float(cfs[min(a, len(cfs) - 1)]), 4)
            diag["centre_fs_at_eutectic_max"] = round(float(cfs[min(bb, len(cfs) - 1)]), 4)
        for key in ("liquid_rate", "end_slope"):
            if key in tr:
                diag[key + "_c_per_s"] = tr.pop(key)
        arrests = tr.pop("arrests")
        diag["arrests"] = arrests
        entry = dict(c)
        entry["file"] = c["name"] + ".csv"
        entry["truth"] = tr
        entry["diag"] = diag
        doc["cups"].append(entry)
    with open(os.path.join(outdir, "cups.json"), "w") as f:
        json.dump(doc, f, indent=1)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
