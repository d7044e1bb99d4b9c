#!/usr/bin/env python3
"""Write an invented return universe for the benchmarks (numpy, seeded).

usage: gen_universe.py OUT.csv [--securities M] [--periods T] [--seed S]

A simple one-factor model: r[t, i] = mu + beta_i * f_t + s_i * e[t, i] with a
market factor f of sd 4.5% a month, betas in [0.5, 1.5), security-specific
sd in [3%, 15%); monthly periods ending on invented month ends from 1990.
Ids are invented (BX00001, ...).  Wide CSV: date, then one column per id.
"""
import argparse
import datetime

import numpy as np


def month_ends(n, year=1990):
    out = []
    y, m = year, 1
    for _ in range(n):
        nxt = datetime.date(y + (m == 12), m % 12 + 1, 1)
        out.append((nxt - datetime.timedelta(days=1)).isoformat())
        y, m = nxt.year, nxt.month
    return out


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("out")
    ap.add_argument("--securities", type=int, default=1000)
    ap.add_argument("--periods", type=int, default=240)
    ap.add_argument("--seed", type=int, default=20261201)
    a = ap.parse_args()
    rng = np.random.default_rng(a.seed)
    T, M = a.periods, a.securities
    f = 0.045 * rng.standard_normal(T)
    beta = rng.uniform(0.5, 1.5, M)
    s = rng.uniform(0.03, 0.15, M)
    R = 0.007 + np.outer(f, beta) + rng.standard_normal((T, M)) * s
    dates = month_ends(T)
    with open(a.out, "w") as fp:
        fp.write("date," + ",".join("BX%05d" % (i + 1) for i in range(M)) + "\n")
        for t in range(T):
            fp.write(dates[t] + "," + ",".join("%.6f" % x for x in R[t]) + "\n")


if __name__ == "__main__":
    main()
