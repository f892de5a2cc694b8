#!/usr/bin/python3
"""The notebook way of re-analysing an archive of cup curves, as one script.

What a metallurgist's Jupyter notebook does with a folder of curve files, for
the end-to-end speed comparison with `undercool analyze --json` (see
compare.py and docs/performance.md): for each file, read it with
numpy.loadtxt, smooth it with scipy's Savitzky-Golay filter (a 2 s window,
quadratic) taking dT/dt, and read the first zero crossings of dT/dt after the
pour peak: the first minimum (- to +) and the maximum after it (+ to -). One
JSON object per file on stdout, like analyze --json.

It reads the project's own curve format ('# key: value' lines, a header row,
time_s,temp_c rows). Run with Debian's /usr/bin/python3 and python3-scipy.

Usage: notebook.py FILE...
"""
import json
import sys

import numpy as np
from scipy.signal import savgol_filter


def read(path):
    with open(path, encoding="utf-8") as f:
        lines = [line for line in f if not line.startswith("#")]
    data = np.loadtxt(lines[1:], delimiter=",", usecols=(0, 1), ndmin=2)
    return data[:, 0], data[:, 1]


def analyse(path):
    t, temp = read(path)
    dt = float(np.median(np.diff(t)))
    window = max(5, int(round(2.0 / dt)) | 1)
    slope = savgol_filter(temp, window, 2, deriv=1, delta=dt)
    peak = int(np.argmax(temp))
    sign = np.sign(slope[peak:])
    up = np.where((sign[:-1] < 0) & (sign[1:] >= 0))[0]
    out = {"file": path, "samples": len(t), "rate_hz": 1 / dt, "pour_peak_c": float(temp[peak]),
           "first_min_c": None, "first_min_s": None, "first_max_c": None, "first_max_s": None}
    if len(up):
        i = peak + int(up[0]) + 1
        out["first_min_c"], out["first_min_s"] = float(temp[i]), float(t[i])
        down = np.where((sign[up[0] + 1:-1] > 0) & (sign[up[0] + 2:] <= 0))[0]
        if len(down):
            j = i + int(down[0]) + 1
            out["first_max_c"], out["first_max_s"] = float(temp[j]), float(t[j])
    return out


def main(paths):
    for path in paths:
        print(json.dumps(analyse(path)))


if __name__ == "__main__":
    main(sys.argv[1:])
