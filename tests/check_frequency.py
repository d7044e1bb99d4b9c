"""Reference check of --frequency (calendar periods) and --bad-cells against numpy.

An invented daily universe (ids LIR9xx) is written twice, as prices and as
returns, with a late listing, an early delisting, gaps, spreadsheet errors
('#N/A', '#DIV/0!') and a zero price.  numpy, independently of holdcount:
  prices:  the last price observed in each calendar week, month or quarter,
           then simple returns between consecutive period-end prices
           (missing when either end is missing);
  returns: (1 + r_1)...(1 + r_k) - 1 over the returns observed in the period
           (missing when none is), the compounding that defines a
           multi-period simple return (common practice);
and compares each security's count of periods and annualised sd (sample
divisor n-1, times sqrt(periods per year)) with `holdcount describe`'s
"kept" table, the periods and dates with its fields, to 1e-9 relative.
Weeks run from the day after the calendar's weekend: Monday for a
Monday-Friday file, Sunday for a Sunday-Thursday one (both checked).
--bad-cells refuse (the default) must stop with status 3 naming line and
column; --bad-cells missing must count the cells and name the first.
"""
import datetime as dt
import json
import os
import subprocess
import sys

import numpy as np

exe = os.environ["HOLDCOUNT"]
tmp = os.path.join(os.environ["HOLDCOUNT_TEST_TMP"], "check_frequency")
os.makedirs(tmp, exist_ok=True)
fails = 0


def fail(msg):
    global fails
    print("FAIL:", msg)
    fails += 1


def trading_days(start, n, weekdays):
    out, d = [], start
    while len(out) < n:
        if d.weekday() in weekdays:
            out.append(d)
        d += dt.timedelta(1)
    return out


def key(d, freq, week_start):
    if freq == "monthly":
        return (d.year, d.month)
    if freq == "quarterly":
        return (d.year, (d.month - 1) // 3)
    since = (d.weekday() - week_start) % 7
    return (d - dt.timedelta(since)).toordinal()


def groups(days, freq, week_start):
    g, last = [], None
    for k, d in enumerate(days):
        kk = key(d, freq, week_start)
        if kk != last:
            g.append([])
            last = kk
        g[-1].append(k)
    return g


def describe(path, *opts):
    r = subprocess.run([exe, "describe", path, "--format", "json", "-q", *opts],
                       capture_output=True, text=True)
    return r.returncode, (json.loads(r.stdout) if r.returncode == 0 else None), r.stderr


def write(path, days, ids, cells):
    with open(path, "w") as f:
        f.write("date," + ",".join(ids) + "\n")
        for d, row in zip(days, cells):
            f.write(d.isoformat() + "," + ",".join(row) + "\n")


def compare(label, got, days_out, R, ppy):
    """R: periods x securities numpy returns (NaN = missing)."""
    if got["periods"] != R.shape[0]:
        fail(f"{label}: {got['periods']} periods, numpy {R.shape[0]}")
        return
    if got["last_date"] != days_out[-1].isoformat() or got["first_date"] != days_out[0].isoformat():
        fail(f"{label}: dates {got['first_date']}..{got['last_date']}, numpy "
             f"{days_out[0]}..{days_out[-1]}")
    if abs(got["periods_per_year"] - ppy) > 1e-12:
        fail(f"{label}: {got['periods_per_year']} periods a year, expected {ppy}")
    for j, row in enumerate(got["kept"]):
        x = R[:, j][~np.isnan(R[:, j])]
        sd = np.std(x, ddof=1) * np.sqrt(ppy)
        if row["periods"] != len(x):
            fail(f"{label}: {row['id']} has {row['periods']} periods, numpy {len(x)}")
        elif abs(row["sd"] - sd) > 1e-9 * sd:
            fail(f"{label}: {row['id']} sd {row['sd']!r}, numpy {sd!r}")


rng = np.random.default_rng(20261203)
M, T = 8, 420
ids = [f"LIR9{i:02d}" for i in range(M)]
for cal, weekdays, wstart in (("mon-fri", {0, 1, 2, 3, 4}, 0), ("sun-thu", {6, 0, 1, 2, 3}, 6)):
    days = trading_days(dt.date(2020, 1, 2), T, weekdays)
    P = 100 * np.exp(np.cumsum(rng.normal(0.0003, 0.012, (T, M)), axis=0))
    P[:60, 2] = np.nan             # listed late
    P[300:, 5] = np.nan            # delisted early
    P[100:104, 6] = np.nan         # a gap
    cells = [[("" if np.isnan(v) else f"{v:.6f}") for v in row] for row in P]
    cells[150][1] = "#N/A"
    cells[151][3] = "#DIV/0!"
    cells[200][4] = "0"
    # the prices as written (six decimals), the bad cells missing
    Pn = np.array([[float(c) if c and not c.startswith("#") and float(c) > 0 else np.nan for c in row]
                   for row in cells])
    ppath = os.path.join(tmp, f"prices-{cal}.csv")
    write(ppath, days, ids, cells)

    # --bad-cells refuse (default): status 3, the cell's line and column
    rc, _, err = describe(ppath, "--prices")
    if rc != 3 or f"{ppath}:152:3:" not in err or "#N/A" not in err:
        fail(f"{cal}: refuse gave status {rc}, stderr {err.strip()!r}; expected 3 naming {ppath}:152:3")
    rc, js, err = describe(ppath, "--prices", "--bad-cells", "missing")
    if rc != 0:
        fail(f"{cal}: --bad-cells missing exited {rc}: {err.strip()}")
        continue
    if js.get("bad_cells") != 3 or not js.get("bad_cell_first", "").startswith(f"{ppath}:152:3: '#N/A'"):
        fail(f"{cal}: bad cells {js.get('bad_cells')} first {js.get('bad_cell_first')!r}, expected 3 from line 152")

    # daily returns written out (missing where a price is), for the returns route
    Rd = Pn[1:] / Pn[:-1] - 1
    rcells = [[("" if np.isnan(v) else repr(float(v))) for v in row] for row in Rd]
    rpath = os.path.join(tmp, f"returns-{cal}.csv")
    write(rpath, days[1:], ids, rcells)

    for freq, ppy in (("weekly", 52.0), ("monthly", 12.0), ("quarterly", 4.0)):
        # prices: the last observed price of each period, then ratios
        g = groups(days, freq, wstart)
        E = np.full((len(g), M), np.nan)
        for k, rows in enumerate(g):
            for j in range(M):
                obs = [Pn[r, j] for r in rows if not np.isnan(Pn[r, j])]
                if obs:
                    E[k, j] = obs[-1]
        R = E[1:] / E[:-1] - 1
        out_days = [days[rows[-1]] for rows in g][1:]
        rc, js, err = describe(ppath, "--prices", "--bad-cells", "missing", "--frequency", freq)
        if rc != 0:
            fail(f"{cal} prices {freq}: exited {rc}: {err.strip()}")
        else:
            compare(f"{cal} prices {freq}", js, out_days, R, ppy)
            if js.get("periods_read") != T - 1:
                fail(f"{cal} prices {freq}: periods_read {js.get('periods_read')}, expected {T - 1}")

        # returns: compounded over the returns observed in each period
        g = groups(days[1:], freq, wstart)
        R = np.full((len(g), M), np.nan)
        for k, rows in enumerate(g):
            for j in range(M):
                obs = [Rd[r, j] for r in rows if not np.isnan(Rd[r, j])]
                if obs:
                    R[k, j] = np.prod(1 + np.array(obs)) - 1
        out_days = [days[1:][rows[-1]] for rows in g]
        rc, js, err = describe(rpath, "--frequency", freq)
        if rc != 0:
            fail(f"{cal} returns {freq}: exited {rc}: {err.strip()}")
        else:
            compare(f"{cal} returns {freq}", js, out_days, R, ppy)

print("check_frequency: %s" % ("ok" if fails == 0 else f"{fails} failure(s)"))
sys.exit(1 if fails else 0)
