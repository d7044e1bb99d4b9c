#!/usr/bin/python3
"""Generate an invented ragged daily return universe (wide CSV) for benchmarks and tests.

Returns follow one market factor plus security-specific noise.  A share of the
securities (--ragged, default 30%) lists late or delists early (half each), and
a share of the remaining cells (--gaps, default 0.5%) is missing at random.
Dates are weekdays (Monday to Friday) from 2010-01-04.  Ids are LIR00001...
Usage: gen_ragged.py OUT --securities M --periods T [--seed S]
"""
import argparse
import datetime

import numpy as np


def weekdays(n, start=datetime.date(2010, 1, 4)):
    out, d = [], start
    while len(out) < n:
        if d.weekday() < 5:
            out.append(d.isoformat())
        d += datetime.timedelta(days=1)
    return out


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("out")
    ap.add_argument("--securities", type=int, default=5000)
    ap.add_argument("--periods", type=int, default=2500)
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--ragged", type=float, default=0.30)
    ap.add_argument("--gaps", type=float, default=0.005)
    a = ap.parse_args()
    rng = np.random.default_rng(a.seed)
    m, t = a.securities, a.periods
    f = 0.011 * rng.standard_normal(t)
    beta = rng.uniform(0.5, 1.5, m)
    spec = rng.uniform(0.01, 0.03, m)
    x = 0.0003 + f[None, :] * beta[:, None] + spec[:, None] * rng.standard_normal((m, t))
    alive = np.ones((m, t), dtype=bool)
    ragged = rng.random(m) < a.ragged
    late = ragged & (rng.random(m) < 0.5)
    early = ragged & ~late
    for i in np.flatnonzero(late):
        alive[i, : rng.integers(1, t * 3 // 4)] = False
    for i in np.flatnonzero(early):
        alive[i, rng.integers(t // 4, t - 1):] = False
    alive &= rng.random((m, t)) >= a.gaps
    ids = ["LIR%05d" % (i + 1) for i in range(m)]
    dates = weekdays(t)
    with open(a.out, "w") as fh:
        fh.write("date," + ",".join(ids) + "\n")
        for k in range(t):
            col = x[:, k]
            ok = alive[:, k]
            cells = ["%.6g" % v if o else "" for v, o in zip(col.tolist(), ok.tolist())]
            fh.write(dates[k] + "," + ",".join(cells) + "\n")


if __name__ == "__main__":
    main()
