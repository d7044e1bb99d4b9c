"""The planted universe of cli_check.sh and cli_data_check_counts.sh: a
daily universe of 10 securities over 150 weekdays with mistakes planted by
hand (numpy only draws the noise): LIR901 an unadjusted 2-for-1 split,
LIR902 a doubling undone two days later, LIR903 stale for 7 days, LIR904
in percents, LIR905 prices, LIR906 a return below -100%.  Writes the
universe to argv[1] and the planted rows' dates (rows 40, 60, 62, 20, 30)
to argv[1] + ".dates"."""
import sys, datetime
import numpy as np
rng = np.random.default_rng(2385)
m, t = 10, 150
x = 0.0004 + 0.012 * rng.standard_normal((t, m))
x[40, 0] = -0.5012                       # LIR901: 2-for-1 split, kept
x[60, 1] = 1.0031; x[62, 1] = 1 / 2.0031 - 1   # LIR902: doubled, undone
x[20:27, 2] = 0.0                        # LIR903: stale for 7 days
x[:, 3] *= 100                           # LIR904: percents
x[:, 4] = 48.75 * (1 + x[:, 4])          # LIR905: prices
x[30, 5] = -1.2                          # LIR906: below -100%
d, dates = datetime.date(2024, 1, 1), []
while len(dates) < t:
    if d.weekday() < 5:
        dates.append(d.isoformat())
    d += datetime.timedelta(days=1)
with open(sys.argv[1], "w") as f:
    f.write("date," + ",".join("LIR9%02d" % (i + 1) for i in range(m)) + "\n")
    for k in range(t):
        f.write(dates[k] + "," + ",".join(repr(float(v)) for v in x[k]) + "\n")
print(dates[40], dates[60], dates[62], dates[20], dates[30], file=open(sys.argv[1] + ".dates", "w"))
