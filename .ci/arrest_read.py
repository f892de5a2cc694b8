#!/usr/bin/python3
"""An independent read of the arrests of measured cooling curves, for undercool's real-data tests.

Reads the measured curves kept beside the repository (the folder given, normally
../shared/realdata; never part of the repository) straight from their published files, with its
own plain parsing, and prints one JSON document on stdout: for each curve the arrests found by
scipy.signal.savgol_filter and the first zero crossings of dT/dt, at three smoothing windows
(3, 5, 8 s at 5 readings a second; 5, 7, 11 s at 1 a second; 100, 140, 200 s at one every 20 s).

The read, for each window W (seconds) and order 2:
  1. the readings are put on an even time grid at their median step (np.interp: the logger
     export steps unevenly, 0.04-1.3 s, and savgol_filter assumes even steps);
  2. T and dT/dt are savgol_filter(T, n, 2) and savgol_filter(T, n, 2, deriv=1, delta=dt),
     n = W/dt readings rounded, made odd (at least 5), mode='interp';
  3. the search starts where the smoothed curve has fallen 3 degC below its highest reading
     (the pour peak, or the start of a file that begins in the liquid);
  4. an arrest is sought among the readings inside its temperature window (given per curve):
     its minimum is where dT/dt first crosses zero from - to + (linear interpolation of T at
     dT/dt = 0), its maximum where dT/dt next crosses from + to -. A crossing counts only if
     dT/dt keeps its new sign for at least 1 s, or for two readings when they are further apart
     (so the noise of a flat plateau does not make one). Without a - to + crossing the arrest
     is the first local maximum of dT/dt in the window (a shoulder: the largest dT/dt within
     one smoothing window either side), and its minimum is its maximum;
  5. a second arrest (the eutectic after a primary arrest) is sought only after the first;
  6. the end of freezing is the first local minimum of dT/dt (the smallest within one window
     either side) after the eutectic's maximum at or below half the lowest dT/dt there; null
     when it lies within one window of the file's end (the recording stopped before it settled).

Keys: alpha_min_c/alpha_c (the primary arrest: minimum and growth temperature, alpha_min_c null
without recalescence), eutectic_min_c/eutectic_max_c, solidus_c (end of freezing), and their
times (_s) on the file's own time axis. null means not found (the window never reached, too few
readings, or the recording stopped first).

Usage: arrest_read.py [--windows W1,W2,W3] REALDATA_DIR
Run with Debian's /usr/bin/python3 and python3-scipy.
"""
import csv
import json
import math
import os
import sys

import numpy as np
from scipy.signal import savgol_filter

# Each curve: name, how to read it, and its arrest windows (degC). Windows are wide bands around
# what the phase diagrams give (Al-Si: alpha-Al liquidus between the eutectic and pure Al, the
# eutectic at or below 577 degC, Murray and McAlister 1984; Sn-Bi: Sn 231.9, Bi 271.4, eutectic
# 139 degC) widened for this hobby-grade sensor's few kelvin of offset.
ALSI = {"primary": (585.0, 650.0), "eutectic": (540.0, 580.0)}
# The logger-export pair logs from room temperature, before the pour: its pour peak comes 9 s
# before the alpha-Al arrest, so a window of 8 s would smooth the two together; 2, 3 and 5 s there.
ALSI_POURED = dict(ALSI, windows=(2.0, 3.0, 5.0))
CURVES = [
    ("beforeA", ("temp_first", "joebee-alsi-before-after/beforeA.txt"), ALSI),
    ("afterA", ("temp_first", "joebee-alsi-before-after/afterA.txt"), ALSI),
    ("beforeB", ("logger", "joebee-alsi-before-after/beforeB.txt"), ALSI_POURED),
    ("afterB", ("logger", "joebee-alsi-before-after/afterB.txt"), ALSI_POURED),
    ("Sn100", ("column", "mignard-snbi-arduino/EutecticData.csv", "Sn100"), {"eutectic": (215.0, 240.0)}),
    ("Sn0", ("column", "mignard-snbi-arduino/EutecticData.csv", "Sn0"), {"eutectic": (255.0, 280.0)}),
    ("Sn40", ("column", "mignard-snbi-arduino/EutecticData.csv", "Sn40"), {"eutectic": (120.0, 140.0)}),
]
# the Sn-Bi alloys with a primary arrest above the eutectic (labels: wt% Sn)
for col in ["Sn90", "Sn80", "Sn71", "Sn64", "Sn54", "Sn47", "Sn33", "Sn20", "Sn10"]:
    CURVES.append((col, ("column", "mignard-snbi-arduino/EutecticData.csv", col),
                   {"primary": (137.0, 265.0), "eutectic": (120.0, 140.0)}))
# the Pb-Sn teaching lab, one reading every 20 s
CURVES += [
    ("PbSn_Pb", ("plain", "cn-lab-pbsn-stepcooling/PbSn_Pb.csv"), {"eutectic": (300.0, 335.0)}),
    ("PbSn_Sn", ("plain", "cn-lab-pbsn-stepcooling/PbSn_Sn.csv"), {"eutectic": (215.0, 240.0)}),
    ("PbSn_Sn30", ("plain", "cn-lab-pbsn-stepcooling/PbSn_Sn30.csv"), {"primary": (190.0, 300.0), "eutectic": (170.0, 190.0)}),
    ("PbSn_Sn61p9", ("plain", "cn-lab-pbsn-stepcooling/PbSn_Sn61p9.csv"), {"eutectic": (170.0, 190.0)}),
    ("PbSn_Sn80", ("plain", "cn-lab-pbsn-stepcooling/PbSn_Sn80.csv"), {"primary": (190.0, 230.0), "eutectic": (170.0, 190.0)}),
]

DEFAULT_WINDOWS = {"5": (3.0, 5.0, 8.0), "1": (5.0, 7.0, 11.0), "slow": (100.0, 140.0, 200.0)}


def read(root, how):
    """Time (s) and temperature (degC) of one curve, read with plain parsing."""
    kind, rel = how[0], how[1]
    path = os.path.join(root, rel)
    t, v = [], []
    with open(path, encoding="utf-8-sig", newline="") as f:
        if kind == "temp_first":  # two tab-separated columns, no header: temperature, time
            for line in f:
                if line.strip():
                    a, b = line.split()
                    v.append(float(a))
                    t.append(float(b))
        elif kind == "logger":  # header Date, Time, "AI:2  Analog Input" (degC), "MT2   Time" (s)
            rows = csv.reader(f, delimiter="\t")
            head = next(rows)
            it, iv = head.index("MT2   Time"), head.index("AI:2  Analog Input")
            for r in rows:
                if r:
                    t.append(float(r[it]))
                    v.append(float(r[iv]))
        elif kind == "column":  # time, then one column per alloy, blank once its record stopped
            rows = csv.reader(f)
            head = [h.strip() for h in next(rows)]
            j = head.index(how[2])
            for r in rows:
                if j >= len(r) or not r[j].strip():
                    break
                t.append(float(r[0]))
                v.append(float(r[j]))
        else:  # plain: '#' comments, a header, time_s,temp_C
            for line in f:
                line = line.strip()
                if not line or line.startswith("#") or line.startswith("time"):
                    continue
                a, b = line.split(",")[:2]
                t.append(float(a))
                v.append(float(b))
    return np.array(t), np.array(v)


def crossings(d, dt, rising):
    """Indices i where d changes sign between i-1 and i (- to + if rising), the new sign kept for
    at least 1 s (and two readings)."""
    hold = max(2, int(math.ceil(1.0 / dt)))
    out = []
    for i in range(1, len(d)):
        a, b = d[i - 1], d[i]
        if (rising and a < 0 <= b) or (not rising and a > 0 >= b):
            seg = d[i:i + hold]
            if len(seg) == hold and (np.all(seg >= 0) if rising else np.all(seg <= 0)):
                out.append(i)
    return out


def at_zero(t, y, d, i):
    """Time and T where d crosses zero between readings i-1 and i (linear)."""
    f = d[i - 1] / (d[i - 1] - d[i]) if d[i - 1] != d[i] else 0.0
    return t[i - 1] + f * (t[i] - t[i - 1]), y[i - 1] + f * (y[i] - y[i - 1])


def arrest(t, y, d, dt, n, lo, hi, start):
    """The first arrest at or after index start with T inside [lo, hi]: (min, max, index of max),
    min and max as (s, degC) pairs, min None without recalescence; None when not found. n is
    the smoothing window in readings."""
    inside = [i for i in range(max(start, 1), len(y)) if lo <= y[i] <= hi]
    if len(inside) < 3:
        return None, None, None
    first, last = inside[0], inside[-1]
    ups = [i for i in crossings(d, dt, True) if first <= i <= last and lo <= y[i] <= hi]
    if ups:
        i = ups[0]
        downs = [j for j in crossings(d, dt, False) if j > i]
        if downs:
            return at_zero(t, y, d, i), at_zero(t, y, d, downs[0]), downs[0]
        return at_zero(t, y, d, i), None, len(y) - 1
    for j in inside:
        if j >= n and j + n < len(d) and d[j] == max(d[j - n:j + n + 1]):
            return None, (float(t[j]), float(y[j])), j
    return None, None, None


def read_curve(t0, v0, windows_s, spec):
    dt = float(np.median(np.diff(t0)))
    t = np.arange(t0[0], t0[-1] + dt / 2, dt)
    v = np.interp(t, t0, v0)
    out = []
    for w in windows_s:
        n = max(5, int(round(w / dt)) | 1)
        if len(v) < n + 2:
            out.append({"window_s": w, "points": n, "read": None})
            continue
        y = savgol_filter(v, n, 2, mode="interp")
        d = savgol_filter(v, n, 2, deriv=1, delta=dt, mode="interp")
        top = int(np.argmax(y))
        start = next((i for i in range(top, len(y)) if y[i] <= y[top] - 3.0), len(y))
        pts = {}
        if "primary" in spec:
            mn, mx, end = arrest(t, y, d, dt, n, *spec["primary"], start)
            pts["alpha_min"], pts["alpha"] = mn, mx
            if end is not None:
                # the eutectic is sought once the primary arrest has ended
                start = end
        mn, mx, end = arrest(t, y, d, dt, n, *spec["eutectic"], start)
        if mx is not None and mn is None:
            mn = mx  # a eutectic without recalescence: its minimum is its maximum
        pts["eutectic_min"], pts["eutectic_max"] = mn, mx
        pts["solidus"] = None
        if end is not None:
            # the end of freezing: the first clear minimum of dT/dt after the eutectic, unless it
            # lies within a window of the file's end (the recording stopped before it settled)
            half = 0.5 * float(np.min(d[end:]))
            for k in range(end, len(d) - n):
                if d[k] <= half and d[k] == min(d[max(0, k - n):k + n + 1]):
                    pts["solidus"] = (float(t[k]), float(y[k]))
                    break
        read = {}
        for k, p in pts.items():
            read[k + "_c"] = None if p is None else round(float(p[1]), 3)
            read[k + "_s"] = None if p is None else round(float(p[0]), 3)
        out.append({"window_s": w, "points": n, "read": read})
    return dt, out


def main(argv):
    windows = None
    if len(argv) >= 2 and argv[0] == "--windows":
        windows = tuple(float(x) for x in argv[1].split(","))
        argv = argv[2:]
    if len(argv) != 1:
        print(__doc__, file=sys.stderr)
        return 2
    root = argv[0]
    doc = {"scipy": __import__("scipy").__version__, "order": 2, "curves": []}
    for name, how, spec in CURVES:
        t, v = read(root, how)
        step = float(np.median(np.diff(t)))
        ws = windows or spec.get("windows") or DEFAULT_WINDOWS["5" if step < 0.5 else "1" if step < 5 else "slow"]
        dt, reads = read_curve(t, v, ws, spec)
        doc["curves"].append({"name": name, "file": how[1], "readings": len(t), "dt": dt, "reads": reads})
    json.dump(doc, sys.stdout, indent=1)
    print()
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
