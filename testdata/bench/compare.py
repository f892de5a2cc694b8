#!/usr/bin/python3
"""End-to-end speed of `undercool analyze --json` against the notebook way.

Builds an archive of N curve files (copies of the simulated cups in
testdata/sim, the project's own format, cycling through them), then runs,
round after round and interleaved, `UNDERCOOL analyze --json ARCHIVE/*` and
`python3 notebook.py ARCHIVE/*` (numpy.loadtxt + scipy Savitzky-Golay + first
zero crossings), each with its output thrown away. It prints, per command,
the fastest and the median wall time, files/s, µs per file, MB/s, the peak
resident memory (ru_maxrss from wait4), and the ratio notebook/analyze of the
fastest and of the median rounds. Then the peak memory of analyze on one
file: a 300 s, 10 Hz cup, and a wide file (500,000 empty columns in 200
rows, which the reader before kept in full).

The machine is shared: run it when it is quiet, and compare rounds from the
same run only.

Usage: compare.py [--files N] [--rounds R] UNDERCOOL [UNDERCOOL...]
With several undercool binaries (say, before and after a change), each is run
in every round, and each gets its own line and ratio.
Run with Debian's /usr/bin/python3 and python3-scipy; see docs/performance.md.
"""
import argparse
import glob
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))


def run(argv):
    """Runs argv with its output discarded; returns (wall s, peak RSS MB)."""
    start = time.perf_counter()
    proc = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - start
    err = proc.stderr.read().decode(errors="replace")
    proc.stderr.close()
    if os.waitstatus_to_exitcode(status) != 0:
        sys.exit(f"{argv[0]} failed: {err}")
    return wall, usage.ru_maxrss / 1024


def archive(dirname, n):
    cups = sorted(glob.glob(os.path.join(HERE, "..", "sim", "*.csv")))
    if not cups:
        sys.exit("no simulated cups in testdata/sim")
    paths = []
    for i in range(n):
        p = os.path.join(dirname, f"cup-{i:04d}.csv")
        shutil.copyfile(cups[i % len(cups)], p)
        paths.append(p)
    return paths


def wide(dirname):
    p = os.path.join(dirname, "wide.csv")
    with open(p, "w") as f:
        f.write("time_s,temp_c" + ",c" * 499_990 + "\n")
        for r in range(200):
            f.write(f"{r},{1300 - r}" + "," * 499_990 + "\n")
    return p


def cup300(dirname):
    p = os.path.join(dirname, "cup-300s-10Hz.csv")
    with open(p, "w") as f:
        f.write("# alloy: grey-iron\n# note: constructed 300 s, 10 Hz cup shape\ntime_s,temp_c\n")
        import math
        for i in range(3000):
            ts = i / 10
            f.write(f"{ts:.3f},{1150 + 150 * math.exp(-ts / 40) + 2 * math.sin(ts / 7):.2f}\n")
    return p


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--files", type=int, default=640)
    ap.add_argument("--rounds", type=int, default=7)
    ap.add_argument("undercool", nargs="+")
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as d:
        paths = archive(d, a.files)
        size = sum(os.path.getsize(p) for p in paths)
        label = lambda u: "analyze" if len(a.undercool) == 1 else "analyze " + u
        cmds = {label(u): [u, "analyze", "--json"] + paths for u in a.undercool}
        cmds["notebook"] = ["/usr/bin/python3", os.path.join(HERE, "notebook.py")] + paths
        for argv in cmds.values():
            run(argv)  # warm the page cache and the interpreter's files
        results = {k: [] for k in cmds}
        for _ in range(a.rounds):
            for k, argv in cmds.items():
                results[k].append(run(argv))
        print(f"{a.files} files, {size / 1e6:.1f} MB, {a.rounds} interleaved rounds, {os.cpu_count()} cores")
        width = max(len(k) for k in cmds)
        print(f"{'':{width}} {'fastest s':>9} {'median s':>9} {'files/s':>9} {'µs/file':>8} {'MB/s':>7} {'peak RSS MB':>11}")
        best, med = {}, {}
        for k, rs in results.items():
            walls = [w for w, _ in rs]
            best[k], med[k] = min(walls), statistics.median(walls)
            print(f"{k:{width}} {best[k]:9.3f} {med[k]:9.3f} {a.files / med[k]:9.0f} {med[k] / a.files * 1e6:8.0f} "
                  f"{size / med[k] / 1e6:7.1f} {max(r for _, r in rs):11.1f}")
        for u in a.undercool:
            k = label(u)
            print(f"notebook/{k}: {best['notebook'] / best[k]:.1f}x (fastest rounds), "
                  f"{med['notebook'] / med[k]:.1f}x (medians)")
        one, w = cup300(d), wide(d)
        for u in a.undercool:
            wall, rss = run([u, "analyze", "--json", one])
            print(f"{label(u)} of one 300 s, 10 Hz file: {wall * 1e3:.1f} ms, peak RSS {rss:.1f} MB")
            wall, rss = run([u, "analyze", "--json", w])
            print(f"{label(u)} of the wide file (500,000 empty columns, 200 rows, {os.path.getsize(w) / 1e6:.0f} MB): "
                  f"{wall:.2f} s, peak RSS {rss:.1f} MB")


if __name__ == "__main__":
    main()
