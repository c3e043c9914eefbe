#!/usr/bin/env python3
"""Seeded generator of an invented 15-minute rain record (demo data only).

The model is deliberately NOT a Poisson rectangular-pulse model:

* a two-state (dry/wet) first-order Markov chain of 15-minute intervals whose
  transition probabilities vary by calendar month;
* the depth of a wet interval is gamma-distributed (monthly scale, fixed shape);
* each year's depths are multiplied by a lognormal "wet year / dry year" factor;
* on top of that, occasional convective bursts (a Poisson number per month,
  mostly in summer): 1 to 6 hours long, a lognormal total depth spread over the
  burst with a peaked (triangular) profile, so that annual peaks differ from
  year to year.

All numbers describe an invented climate (about 35-50 in of rain a year); they
are not fitted to any real gauge.

Output: a SPARSE rainfall CSV per the scenario contract ("Rainfall CSV"):
header `time,depth`, `time` the END of the interval (`YYYY-MM-DD HH:MM`),
depth in inches with 3 decimals, one row per interval whose depth rounds to
at least 0.001 in, plus the first and the last interval of the record.

    python3 make_record.py [--seed N] [--first-year 2001] [--years 20] [--out PATH]
"""

import argparse
import math
from pathlib import Path

import numpy as np

STEP_MIN = 15

# Invented monthly parameters, January..December.
# P(dry -> wet) per 15-min interval; P(wet -> wet) per 15-min interval.
P_DW = np.array([0.0085, 0.0085, 0.0100, 0.0110, 0.0115, 0.0105,
                 0.0095, 0.0090, 0.0085, 0.0085, 0.0090, 0.0090])
P_WW = np.array([0.86, 0.86, 0.84, 0.82, 0.80, 0.76,
                 0.74, 0.74, 0.78, 0.82, 0.85, 0.86])
# Gamma depth of a wet interval: fixed shape, monthly scale (in).
GAMMA_SHAPE = 0.75
GAMMA_SCALE = np.array([0.020, 0.020, 0.023, 0.028, 0.034, 0.041,
                        0.043, 0.041, 0.035, 0.027, 0.023, 0.021])
# Convective bursts: mean number per month, lognormal total depth (median in, log-sigma).
BURST_RATE = np.array([0.0, 0.0, 0.05, 0.15, 0.35, 0.65,
                       0.80, 0.70, 0.35, 0.10, 0.02, 0.0])
BURST_MEDIAN_IN = 1.2
BURST_LOG_SIGMA = 0.6
BURST_HOURS = (1, 6)
# Year-to-year multiplier on all depths (lognormal, median 1).
YEAR_LOG_SIGMA = 0.10


def generate(seed: int, first_year: int, n_years: int):
    """Return (interval end times as datetime64[m], depths in inches) for a dense record."""
    rng = np.random.default_rng(seed)
    t_start = np.datetime64(f"{first_year:04d}-01-01T00:00", "m")
    t_end = np.datetime64(f"{first_year + n_years:04d}-01-01T00:00", "m")
    n = int((t_end - t_start) / np.timedelta64(STEP_MIN, "m"))
    starts = t_start + np.arange(n) * np.timedelta64(STEP_MIN, "m")
    month = (starts.astype("datetime64[M]").astype(np.int64) % 12)  # 0 = January
    year_idx = starts.astype("datetime64[Y]").astype(np.int64) - (first_year - 1970)

    # Two-state Markov chain (sequential by nature).
    u = rng.random(n)
    p_dw = P_DW[month]
    p_ww = P_WW[month]
    wet = np.zeros(n, dtype=bool)
    state = False
    for i in range(n):
        state = u[i] < (p_ww[i] if state else p_dw[i])
        wet[i] = state

    depth = np.zeros(n)
    k = np.flatnonzero(wet)
    depth[k] = rng.gamma(GAMMA_SHAPE, GAMMA_SCALE[month[k]])

    # Convective bursts: Poisson count per calendar month.
    month_start_idx = np.flatnonzero(np.r_[True, np.diff(month) != 0])
    month_end_idx = np.r_[month_start_idx[1:], n]
    for a, b in zip(month_start_idx, month_end_idx):
        m = month[a]
        for _ in range(rng.poisson(BURST_RATE[m])):
            hours = rng.integers(BURST_HOURS[0], BURST_HOURS[1] + 1)
            length = hours * 60 // STEP_MIN
            total = BURST_MEDIAN_IN * math.exp(BURST_LOG_SIGMA * rng.standard_normal())
            # afternoon start, anywhere in the month
            day0 = rng.integers(0, (b - a) // 96)
            hour0 = rng.integers(12, 21)
            s = a + day0 * 96 + hour0 * 4
            e = min(s + length, n)
            if e <= s:
                continue
            # peaked profile, peak in the first half of the burst
            x = (np.arange(e - s) + 0.5) / (e - s)
            apex = rng.uniform(0.2, 0.5)
            w = np.where(x < apex, x / apex, (1 - x) / (1 - apex))
            w = np.maximum(w, 0.05)
            depth[s:e] += total * w / w.sum()

    # Wet and dry years.
    year_factor = np.exp(YEAR_LOG_SIGMA * rng.standard_normal(n_years))
    depth *= year_factor[year_idx]

    ends = starts + np.timedelta64(STEP_MIN, "m")
    return ends, depth


def write_sparse(path: Path, ends, depth):
    """Write the sparse CSV; keeps the first and last interval even when dry."""
    q = np.round(depth, 3)
    keep = q >= 0.0005
    keep[0] = True
    keep[-1] = True
    idx = np.flatnonzero(keep)
    times = np.datetime_as_string(ends[idx], unit="m")
    with open(path, "w", newline="\n") as f:
        f.write("time,depth\n")
        for t, d in zip(times, q[idx]):
            f.write(f"{t[:10]} {t[11:16]},{d:.3f}\n")
    return len(idx)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seed", type=int, default=20010101)
    ap.add_argument("--first-year", type=int, default=2001)
    ap.add_argument("--years", type=int, default=20)
    here = Path(__file__).resolve().parent
    ap.add_argument("--out", type=Path,
                    default=here.parent / "data" / "rain" / "cross-check-20yr-15min.csv")
    args = ap.parse_args()

    ends, depth = generate(args.seed, args.first_year, args.years)
    args.out.parent.mkdir(parents=True, exist_ok=True)
    rows = write_sparse(args.out, ends, depth)

    q = np.round(depth, 3)
    years = (ends - np.timedelta64(STEP_MIN, "m")).astype("datetime64[Y]").astype(int) + 1970
    annual = np.bincount(years - args.first_year, weights=q)
    print(f"wrote {args.out} ({rows} rows, {args.out.stat().st_size / 1e6:.2f} MB)")
    print(f"annual rain (in): mean {annual.mean():.1f}, min {annual.min():.1f}, max {annual.max():.1f}")
    wet_frac = np.mean(q > 0)
    print(f"wet fraction of intervals {wet_frac:.3f}; largest interval {q.max():.3f} in")


if __name__ == "__main__":
    main()
