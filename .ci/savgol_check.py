#!/usr/bin/python3
"""Reference Savitzky-Golay smoothing and derivatives for undercool's curve tests.

Reads curve files (the project's format: '# key: value' lines, a header, then
time_s,temp_c rows) and prints, as one JSON document on stdout, the output of
scipy.signal.savgol_filter (mode='interp': the edge samples come from the
polynomial fitted to the first and last window) for each window, order and
derivative given, with delta = the median sample interval of the file.

Usage: savgol_check.py [--config W,O,D ...] FILE...
Run with Debian's /usr/bin/python3 and python3-scipy.
"""
import json
import sys

import numpy as np
from scipy.signal import savgol_filter

DEFAULT_CONFIGS = [(5, 2, 0), (11, 2, 0), (21, 3, 0), (41, 2, 1), (21, 3, 1), (11, 2, 2), (31, 4, 2)]


def read_curve(path):
    t, v = [], []
    with open(path, encoding="utf-8") as f:
        for line in f:
            line = line.strip()
            if not line or line.startswith("#"):
                continue
            cols = line.replace(";", ",").split(",")
            try:
                t.append(float(cols[0]))
                v.append(float(cols[1]))
            except ValueError:
                continue  # the header row
    return np.array(t), np.array(v)


def main(argv):
    configs, files = [], []
    i = 0
    while i < len(argv):
        if argv[i] == "--config":
            configs.append(tuple(int(x) for x in argv[i + 1].split(",")))
            i += 2
        else:
            files.append(argv[i])
            i += 1
    configs = configs or DEFAULT_CONFIGS
    out = {"scipy": __import__("scipy").__version__, "curves": []}
    for path in files:
        t, v = read_curve(path)
        dt = float(np.median(np.diff(t)))
        res = []
        for w, o, d in configs:
            if len(v) < w:
                continue
            y = savgol_filter(v, w, o, deriv=d, delta=dt, mode="interp")
            res.append({"window": w, "order": o, "deriv": d, "values": [float(x) for x in y]})
        out["curves"].append({"file": path, "dt": dt, "temp": [float(x) for x in v], "results": res})
    json.dump(out, sys.stdout)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
