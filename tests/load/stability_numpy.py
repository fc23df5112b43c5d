#!/usr/bin/env python3
"""Baseline for the README's stability figure: OADEV, MDEV, OHDEV and TOTDEV at octave averaging factors, written in
vectorised numpy straight from the NIST SP 1065 formulas (prefix sums for MDEV), on N white-FM readings.

    apt-get install python3-numpy && /usr/bin/python3 tests/load/stability_numpy.py 1048576
"""
import sys
import time

import numpy as np


def octaves(limit):
    m = 1
    while m <= limit:
        yield m
        m *= 2


def run(y):
    x = np.concatenate(([0.0], np.cumsum(y - y.mean())))
    n = len(x)
    out = {}
    out["oadev"] = [np.sqrt(np.mean((x[2 * m:] - 2 * x[m:-m] + x[:-2 * m]) ** 2) / 2) / m for m in octaves((n - 1) // 2)]
    p = np.concatenate(([0.0], np.cumsum(x)))
    mdev = []
    for m in octaves(n // 3):
        s = p[3 * m:] - 3 * p[2 * m:-m] + 3 * p[m:-2 * m] - p[:-3 * m]
        mdev.append(np.sqrt(np.mean(s ** 2) / 2) / (m * m))
    out["mdev"] = mdev
    out["ohdev"] = [np.sqrt(np.mean((x[3 * m:] - 3 * x[2 * m:-m] + 3 * x[m:-2 * m] - x[:-3 * m]) ** 2) / 6) / m for m in octaves((n - 1) // 3)]
    left = 2 * x[0] - x[1:-1][::-1]
    right = 2 * x[-1] - x[1:-1][::-1]
    ext = np.concatenate((left, x, right))
    mid = n - 2
    tot = []
    for m in octaves((n - 1) // 2):
        c = ext[mid + 1: mid + n - 1]
        d = ext[mid + 1 - m: mid + n - 1 - m] - 2 * c + ext[mid + 1 + m: mid + n - 1 + m]
        tot.append(np.sqrt(np.sum(d ** 2) / (2 * (n - 2))) / m)
    out["totdev"] = tot
    return out


if __name__ == "__main__":
    count = int(sys.argv[1]) if len(sys.argv) > 1 else 1 << 20
    rng = np.random.default_rng(1)
    y = 1e-11 * rng.standard_normal(count)
    run(y)
    times = []
    for _ in range(5):
        start = time.perf_counter()
        run(y)
        times.append(time.perf_counter() - start)
    print(f"numpy {np.__version__}, N = {count}: best {min(times):.3f} s, median {sorted(times)[2]:.3f} s of 5 runs")
