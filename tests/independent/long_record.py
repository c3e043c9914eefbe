#!/usr/bin/env python3
"""Independent numpy/scipy computation of a long rain-gauge record.

    python3 long_record.py SCENARIO.toml [--json OUT.json] [--storage cone|linear-area|linear-volume]

Written only from the interface contract (scenario-format.md: "Long records",
"Ponds", "Rainfall CSV", "Conventions") and the published methods in
reference/published-values.md. It checks another program's numbers, so it is
kept plain: vectorised numpy where the method allows it, a plain loop only for
the pond (storage-indication is a recurrence).

Supported scenario subset (anything else is refused with a message, never
silently ignored): units = "us"; catchments with area, cn, tc, to, condition
(lambda 0.2); ponds with stage_area, start, top, circular orifice and
sharp-crested weir outlets; points; [[record]] with gauge, interval,
missing, moisture = "event", dry_gap.

Planning-level computations by published methods: check results against local
codes; designs are to be sealed by a licensed professional, and ponds with
embankments may fall under dam-safety rules.
"""

import argparse
import datetime as dt
import hashlib
import json
import math
import re
import sys
import time
import tomllib
from array import array
from pathlib import Path

import numpy as np
from scipy import signal, stats

G_FT_S2 = 32.174          # standard gravity, ft/s2
FT2_PER_AC = 43560.0
RETURN_PERIODS_YR = [1.5, 2, 5, 10, 25, 50, 100, 200, 500]
EXCEEDANCE = [0.0001, 0.001, 0.01, 0.05, 0.1, 0.2, 0.5]
YEAR_COMPLETE_FRACTION = 0.90   # contract "Annual series"
STAGE_GRID_FT = 0.001           # spacing of the stage grid of the routing table
GRID_ABOVE_TOP_FT = 20.0        # the routing table reaches this far above `top`

# NEH 630 ch.16 Table 16-1 (transcribed): t/Tp -> q/qp of the dimensionless unit hydrograph.
DUH_T = np.array([0.0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0, 1.1, 1.2, 1.3, 1.4,
                  1.5, 1.6, 1.7, 1.8, 1.9, 2.0, 2.2, 2.4, 2.6, 2.8, 3.0, 3.2, 3.4, 3.6, 3.8,
                  4.0, 4.5, 5.0])
DUH_Q = np.array([0.0, 0.03, 0.10, 0.19, 0.31, 0.47, 0.66, 0.82, 0.93, 0.99, 1.00, 0.99, 0.93,
                  0.86, 0.78, 0.68, 0.56, 0.46, 0.39, 0.33, 0.28, 0.207, 0.147, 0.107, 0.077,
                  0.055, 0.040, 0.029, 0.021, 0.015, 0.011, 0.005, 0.0])


class InputError(Exception):
    """Bad or unsupported input; reported as `error: ...` with exit code 2."""


# ---------------------------------------------------------------- units

_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([A-Za-z%]*)\s*$")
_FACTORS = {
    "area": {"ac": FT2_PER_AC, "ft2": 1.0},
    "time": {"s": 1.0, "min": 60.0, "h": 3600.0, "hr": 3600.0, "d": 86400.0},
    "length": {"ft": 1.0, "in": 1.0 / 12.0},
}


def quantity(value, kind, where, bare_ok=True):
    """A scenario number in US base units (ft2, s, ft); strings carry a unit."""
    if isinstance(value, bool):
        raise InputError(f"{where}: expected a number, got {value!r}")
    if isinstance(value, (int, float)):
        if not bare_ok:
            raise InputError(f"{where}: a {kind} needs a unit, e.g. \"15 min\"")
        return float(value) * (FT2_PER_AC if kind == "area" else 1.0)
    if isinstance(value, str):
        m = _UNIT.match(value)
        if m:
            num, unit = float(m.group(1)), m.group(2)
            if unit == "" and bare_ok:
                return num * (FT2_PER_AC if kind == "area" else 1.0)
            if unit in _FACTORS[kind]:
                return num * _FACTORS[kind][unit]
        raise InputError(f"{where}: cannot read {value!r} as a {kind} "
                         f"(units understood here: {', '.join(_FACTORS[kind])})")
    raise InputError(f"{where}: expected a number or a string with a unit, got {value!r}")


def conditions_of(item):
    c = item.get("condition")
    if c is None:
        return None                      # belongs to every condition
    return [c] if isinstance(c, str) else list(c)


# ---------------------------------------------------------------- rainfall CSV

def _days_from_civil(y, m, d):
    """Days since 1970-01-01 of proleptic Gregorian dates (vectorised, int64)."""
    y = y - (m <= 2)
    era = np.floor_divide(y, 400)
    yoe = y - era * 400
    mp = (m + 9) % 12                    # March = 0
    doy = (153 * mp + 2) // 5 + d - 1
    doe = yoe * 365 + yoe // 4 - yoe // 100 + doy
    return era * 146097 + doe - 719468


def _parse_times_fast(a, starts, row0=0):
    """Seconds since 1970 of `YYYY-MM-DD[ T]HH:MM[:SS]` at each line start, or None."""
    n_bytes = a.size

    def col(off):
        idx = starts + off
        if idx.size and idx[-1] >= n_bytes:
            return None
        return a[idx]

    for off, ch in ((4, b"-"), (7, b"-"), (13, b":")):
        c = col(off)
        if c is None or not np.all(c == ord(ch)):
            return None
    c = col(10)
    if c is None or not np.all((c == ord(" ")) | (c == ord("T"))):
        return None
    after = col(16)
    if after is None:
        return None
    if np.all(after == ord(",")):
        sec_offsets = None
    elif np.all(after == ord(":")):
        end = col(19)
        if end is None or not np.all(end == ord(",")):
            return None               # fractions of a second or offsets: slow path
        sec_offsets = (17, 18)
    else:
        return None

    def num(offs):
        v = np.zeros(starts.size, dtype=np.int64)
        for off in offs:
            dgt = col(off).astype(np.int64) - 48
            if np.any((dgt < 0) | (dgt > 9)):
                return None
            v = v * 10 + dgt
        return v

    parts = [num(o) for o in ((0, 1, 2, 3), (5, 6), (8, 9), (11, 12), (14, 15))]
    parts.append(num(sec_offsets) if sec_offsets else np.zeros(starts.size, dtype=np.int64))
    if any(p is None for p in parts):
        return None
    y, mo, d, hh, mi, ss = parts
    if np.any((mo < 1) | (mo > 12) | (d < 1) | (hh > 23) | (mi > 59) | (ss > 59)):
        bad = int(np.flatnonzero((mo < 1) | (mo > 12) | (d < 1) | (hh > 23) | (mi > 59) | (ss > 59))[0])
        raise InputError(f"line {row0 + bad + 2}: invalid date or time")
    # Rows come in runs of one date: convert each run's date once.
    key = (y * 16 + mo) * 32 + d
    run_start = np.flatnonzero(np.r_[True, key[1:] != key[:-1]])
    yu, mu, du = y[run_start], mo[run_start], d[run_start]
    days_u = _days_from_civil(yu, mu, du)
    nxt = _days_from_civil(np.where(mu == 12, yu + 1, yu), np.where(mu == 12, 1, mu + 1), np.ones_like(du))
    if np.any(days_u >= nxt):             # day beyond the end of its month
        bad = int(run_start[np.flatnonzero(days_u >= nxt)[0]])
        raise InputError(f"line {row0 + bad + 2}: invalid date")
    days = np.repeat(days_u, np.diff(np.r_[run_start, key.size]))
    return days * 86400 + hh * 3600 + mi * 60 + ss


def _parse_times_slow(lines):
    """Fallback: Python's ISO parser for any other layout (offsets, fractions)."""
    out = np.empty(len(lines), dtype=np.int64)
    ref_tz = None
    epoch = dt.datetime(1970, 1, 1)
    for i, s in enumerate(lines):
        try:
            t = dt.datetime.fromisoformat(s.strip())
        except ValueError:
            raise InputError(f"line {i + 2}: cannot read the time {s.strip()!r}") from None
        if t.tzinfo is not None:
            # Times with an offset are brought to the first row's offset and kept as
            # wall-clock times there (calendar years are those of that clock).
            ref_tz = ref_tz or t.tzinfo
            t = t.astimezone(ref_tz).replace(tzinfo=None)
        out[i] = round((t - epoch).total_seconds())
    return out


def read_gauge(path, interval_s=None, missing_zero=False):
    """Read a gauge CSV (dense or sparse) into a dense per-interval depth array.

    Returns (depth_in per interval, t0 in s since 1970, interval_s, rows).
    t0 is the first row's time minus the interval (contract, Conventions: Time).
    """
    try:
        raw = Path(path).read_bytes()
    except OSError as e:
        raise InputError(f"{path}: {e.strerror}") from None
    a = np.frombuffer(raw, dtype=np.uint8)
    nl = np.flatnonzero(a == 10)
    first_end = int(nl[0]) if nl.size else a.size
    header = [h.strip().lower() for h in raw[:first_end].decode("utf-8-sig").strip().split(",")]
    if len(header) < 2 or header[0] != "time":
        raise InputError(f"{path}:1: the header must start with `time`, then `depth` or `cumulative`")
    if "depth" in header:
        kind, col = "depth", header.index("depth")
    elif "cumulative" in header:
        kind, col = "cumulative", header.index("cumulative")
    else:
        raise InputError(f"{path}:1: no `depth` or `cumulative` column")

    # Depth column: numpy's C reader.
    try:
        values = np.loadtxt(path, delimiter=",", skiprows=1, usecols=col, dtype=np.float64, ndmin=1,
                            encoding="utf-8")
    except ValueError as e:
        raise InputError(f"{path}: {e}") from None

    # Time column: fixed-layout bytes, vectorised; anything else goes the slow way.
    starts = np.r_[0, nl + 1][1:]                 # line starts after the header
    ends = np.r_[nl, a.size][1:]
    nonblank = ends - starts > (a[np.minimum(ends - 1, a.size - 1)] == 13)
    del ends, nl
    starts = starts[nonblank & (starts < a.size)]
    del nonblank
    if starts.size != values.size:
        raise InputError(f"{path}: {starts.size} data lines but {values.size} values "
                         "(blank or comment lines are not allowed)")
    if values.size == 0:
        raise InputError(f"{path}: no data rows")
    # Parse in chunks of rows to bound the memory of the temporaries.
    t = np.empty(starts.size, dtype=np.int64)
    chunk = 1 << 20
    for c0 in range(0, starts.size, chunk):
        try:
            part = _parse_times_fast(a, starts[c0:c0 + chunk], c0)
        except InputError as e:
            raise InputError(f"{path}: {e}") from None
        if part is None:
            t = None
            break
        t[c0:c0 + chunk] = part
    if t is None:
        text = raw.decode("utf-8-sig").splitlines()[1:]
        try:
            t = _parse_times_slow([ln.split(",")[0] for ln in text if ln.strip()])
        except InputError as e:
            raise InputError(f"{path}: {e}") from None

    if kind == "cumulative":
        values = np.diff(values, prepend=0.0)
    if np.any(~np.isfinite(values)) or np.any(values < 0):
        bad = int(np.flatnonzero(~np.isfinite(values) | (values < 0))[0])
        raise InputError(f"{path}:{bad + 2}: rain depth must be a finite number >= 0")

    gaps = np.diff(t)
    if np.any(gaps <= 0):
        bad = int(np.flatnonzero(gaps <= 0)[0])
        raise InputError(f"{path}:{bad + 3}: rows must be in strictly increasing time order")
    if interval_s is None:
        if gaps.size == 0:
            raise InputError(f"{path}: one row only; give `interval` on the record")
        interval_s = int(gaps.min())      # contract: default interval is the smallest gap
    if np.any(gaps % interval_s):
        bad = int(np.flatnonzero(gaps % interval_s)[0])
        raise InputError(f"{path}:{bad + 3}: gap is not a whole multiple of the interval")
    if not missing_zero and np.any(gaps != interval_s):
        bad = int(np.flatnonzero(gaps != interval_s)[0])
        raise InputError(f"{path}:{bad + 3}: missing intervals (set missing = \"zero\" to allow)")

    idx = (t - t[0]) // interval_s
    depth = np.zeros(int(idx[-1]) + 1)
    depth[idx] = values                   # interval i ends at t[0] + i * interval
    t0 = int(t[0]) - interval_s
    return depth, t0, interval_s, int(values.size)


# ---------------------------------------------------------------- runoff

def scs_runoff_in(p_in, s_in):
    """TR-55 eq. 2-3 with Ia = 0.2 S (eq. 2-2): Q = (P - 0.2S)^2 / (P + 0.8S), 0 for P <= Ia."""
    ia = 0.2 * s_in
    pe = np.maximum(p_in - ia, 0.0)
    return pe * pe / (p_in + 0.8 * s_in)


def event_cumulative_rain(rain_in, step_s, dry_gap_s):
    """Per rainy interval: (indices, P at interval start, P at interval end) within its event.

    An event begins at a rainy interval preceded by at least dry_gap of zero rain
    (the record's first rainy interval begins the first event).
    """
    wet = np.flatnonzero(rain_in > 0)
    if wet.size == 0:
        return wet, np.zeros(0), np.zeros(0), 0
    zeros_before = np.diff(wet) - 1                      # dry intervals between rainy ones
    new_event = np.r_[True, zeros_before * step_s >= dry_gap_s]
    event_id = np.cumsum(new_event) - 1
    cum = np.cumsum(rain_in[wet])
    base = (cum - rain_in[wet])[new_event]               # cumulative rain before each event
    p_end = cum - base[event_id]
    p_start = np.empty_like(p_end)
    p_start[1:] = p_end[:-1]                             # telescopes exactly within an event
    p_start[new_event] = 0.0
    return wet, p_start, p_end, int(new_event.sum())


def excess_series(n, wet, p_start, p_end, cn):
    """Interval excess Q(P_end) - Q(P_start) (in), S = 1000/CN - 10 (TR-55 eq. 2-4)."""
    s_in = 1000.0 / cn - 10.0
    ex = np.zeros(n)
    ex[wet] = scs_runoff_in(p_end, s_in) - scs_runoff_in(p_start, s_in)
    return ex


# ---------------------------------------------------------------- unit hydrograph

def unit_hydrograph_cfs_per_in(area_ft2, tc_s, step_s):
    """Ordinates U_k (cfs per inch of excess) at k*step, contract convention.

    Tp = step/2 + 0.6 Tc (BHV eq. 2-17 with lag = 0.6 Tc); q/qp interpolated
    linearly in NEH 630 ch.16 Table 16-1 (transcribed); scaled so that
    sum(U_k) * step = one inch over the area (replaces the nominal 484 A Q / Tp peak).
    """
    tp_s = step_s / 2.0 + 0.6 * tc_s
    k_max = int(math.floor(5.0 * tp_s / step_s))
    ratio = np.interp(np.arange(k_max + 1) * step_s / tp_s, DUH_T, DUH_Q, right=0.0)
    one_inch_ft3 = area_ft2 / 12.0
    u = ratio * one_inch_ft3 / (ratio.sum() * step_s)
    qp_nominal = 484.0 * (area_ft2 / FT2_PER_AC / 640.0) / (tp_s / 3600.0)   # BHV eq. 2-16
    return u, tp_s, qp_nominal


def convolve_flow(excess_in, u):
    """Q(k*step) = sum_j e_j U_(k-j), k = 0..N (truncated at the end of the record)."""
    n = excess_in.size
    full = signal.fftconvolve(excess_in, u)
    q = np.maximum(full[: n + 1], 0.0) if full.size >= n + 1 else np.r_[np.maximum(full, 0.0), np.zeros(n + 1 - full.size)]
    # FFT round-off leaves ~1e-16 noise where the exact sum is zero: zero those steps,
    # using the exact support of the sum (any excess among the U_k > 0 terms).
    # cs[k] = number of intervals j < k with excess; Q(k) has a term with excess
    # iff cs[k] - cs[k - K] > 0 (K = last ordinate; U_0 = 0).
    k_u = u.size - 1
    cs = np.zeros(n + 1, dtype=np.int64)
    np.cumsum(excess_in > 0, out=cs[1:])
    lo = np.zeros(n + 1, dtype=np.int64)
    if k_u <= n:
        lo[k_u:] = cs[: n + 1 - k_u]
    q[cs == lo] = 0.0
    return q


# ---------------------------------------------------------------- pond

def storage_ft3(stages_ft, table, mode):
    """Storage above the table's lowest stage.

    Between rows: conic frustum, V = h/3 (A1 + A2 + sqrt(A1 A2)) (frustum volume).
    At a stage inside a row pair (choice of this script, see README):
      cone          - the part below the stage is itself a frustum of the same cone,
                      so sqrt(A) varies linearly with stage (default);
      linear-area   - A varies linearly with stage, frustum formula on the part below;
      linear-volume - storage interpolated linearly between the rows' frustum volumes.
    Above the last row the last area is kept (contract, Ponds).
    """
    h = np.array([r[0] for r in table], dtype=float)
    a = np.array([r[1] for r in table], dtype=float)
    seg = np.diff(h) / 3.0 * (a[:-1] + a[1:] + np.sqrt(a[:-1] * a[1:]))
    v_rows = np.r_[0.0, np.cumsum(seg)]
    x = np.asarray(stages_ft, dtype=float)
    i = np.clip(np.searchsorted(h, x, side="right") - 1, 0, h.size - 2)
    frac = np.clip((x - h[i]) / (h[i + 1] - h[i]), 0.0, 1.0)
    dh = frac * (h[i + 1] - h[i])
    if mode == "cone":
        a_x = (np.sqrt(a[i]) + frac * (np.sqrt(a[i + 1]) - np.sqrt(a[i]))) ** 2
        v = v_rows[i] + dh / 3.0 * (a[i] + a_x + np.sqrt(a[i] * a_x))
    elif mode == "linear-area":
        a_x = a[i] + frac * (a[i + 1] - a[i])
        v = v_rows[i] + dh / 3.0 * (a[i] + a_x + np.sqrt(a[i] * a_x))
    else:
        v = v_rows[i] + frac * (v_rows[i + 1] - v_rows[i])
    above = x > h[-1]
    v = np.where(above, v_rows[-1] + a[-1] * (x - h[-1]), v)
    return np.where(x < h[0], 0.0, v)


def orifice_cfs(stage_ft, invert_ft, diameter_ft, cd):
    """Circular orifice (contract, Ponds): below the crown Cd A_wet(h) sqrt(2 g h/2),
    above it Cd A sqrt(2 g (h - D/2)) (orifice equation, BHV ch. 4); free outfall."""
    h = np.maximum(np.asarray(stage_ft, dtype=float) - invert_ft, 0.0)
    r = diameter_ft / 2.0
    hw = np.minimum(h, diameter_ft)
    # wetted circular segment of depth hw
    a_wet = r * r * np.arccos(np.clip((r - hw) / r, -1.0, 1.0)) - (r - hw) * np.sqrt(np.maximum(2 * r * hw - hw * hw, 0.0))
    a_full = math.pi * r * r
    below = cd * a_wet * np.sqrt(2.0 * G_FT_S2 * hw / 2.0)
    above = cd * a_full * np.sqrt(2.0 * G_FT_S2 * np.maximum(h - r, 0.0))
    return np.where(h < diameter_ft, below, above)


def weir_cfs(stage_ft, crest_ft, length_ft, coef, contractions):
    """Sharp-crested rectangular weir, Francis form Q = C (L - 0.1 n H) H^1.5
    (USBR Water Measurement Manual 2001 standard weir, C = 3.33 US)."""
    hh = np.maximum(np.asarray(stage_ft, dtype=float) - crest_ft, 0.0)
    eff = np.maximum(length_ft - 0.1 * contractions * hh, 0.0)
    return coef * eff * hh ** 1.5


def pond_outflow_cfs(pond, stages_ft):
    q = np.zeros_like(np.asarray(stages_ft, dtype=float))
    for o in pond["outlets"]:
        if o["kind"] == "orifice":
            q += orifice_cfs(stages_ft, o["invert"], o["diameter"], o["cd"])
        else:
            q += weir_cfs(stages_ft, o["crest"], o["length"], o["coefficient"], o["contractions"])
    return q


def storage_indication(inflow, si_tab, o_tab, si0, o0):
    """BHV eq. 4-13 step by step: (I_n + I_(n+1)) + (2S_n/dt - O_n) = 2S_(n+1)/dt + O_(n+1).

    si_tab/o_tab: the table of 2S/dt + O versus O (increasing). Returns (2S/dt + O, O)
    at every step end. A plain Python loop with numpy.interp (a recurrence).
    """
    # array.array holds raw doubles (8 bytes each, not a Python object per value)
    # and is quick to index from Python.
    inflow = array("d", np.ascontiguousarray(inflow, dtype=np.float64).tobytes())
    n = len(inflow) - 1
    si = array("d", bytes(8 * (n + 1)))
    out = array("d", bytes(8 * (n + 1)))
    si[0] = si0
    out[0] = o0
    ind = si0 - 2.0 * o0                 # 2S/dt - O
    interp = np.interp
    for k in range(n):
        rhs = inflow[k] + inflow[k + 1] + ind
        o = float(interp(rhs, si_tab, o_tab))
        ind = rhs - 2.0 * o
        si[k + 1] = rhs
        out[k + 1] = o
    return np.frombuffer(si, dtype=np.float64), np.frombuffer(out, dtype=np.float64)


def route_pond(pond, inflow_cfs, step_s, storage_mode):
    """Storage-indication routing, BHV eq. 4-13:
    (I_n + I_(n+1)) + (2 S_n/dt - O_n) = 2 S_(n+1)/dt + O_(n+1),
    with O and stage read off a table of 2S/dt + O on a fine stage grid (numpy.interp).
    """
    bottom = pond["table"][0][0]
    top_grid = max(pond["top"], pond["table"][-1][0]) + GRID_ABOVE_TOP_FT
    stage_tab = np.round(bottom + STAGE_GRID_FT * np.arange(int(round((top_grid - bottom) / STAGE_GRID_FT)) + 1), 9)
    # Outflow is strongly curved just above an invert or crest (orifice ~ h^2 at first,
    # weir ~ H^1.5): refine geometrically there so that low flows keep their accuracy.
    refine = np.geomspace(1e-6, 0.5, 800)
    extra = [pond["start"]] + [r[0] for r in pond["table"]]
    for o in pond["outlets"]:
        z = o.get("invert", o.get("crest"))
        extra += [z] + list(z + refine)
        if o["kind"] == "orifice":
            extra.append(z + o["diameter"])
    stage_tab = np.union1d(stage_tab, np.round(extra, 12))
    stage_tab = stage_tab[(stage_tab >= bottom) & (stage_tab <= top_grid)]
    v_tab = storage_ft3(stage_tab, pond["table"], storage_mode)
    o_tab = pond_outflow_cfs(pond, stage_tab)
    si_tab = 2.0 * v_tab / step_s + o_tab
    if np.any(np.diff(si_tab) <= 0):
        raise InputError(f"pond {pond['name']!r}: storage must increase with stage")

    s0 = float(storage_ft3(np.array([pond["start"]]), pond["table"], storage_mode)[0])
    o0 = float(pond_outflow_cfs(pond, np.array([pond["start"]]))[0])
    si, out = storage_indication(inflow_cfs, si_tab, o_tab, 2.0 * s0 / step_s + o0, o0)
    if si.max() > si_tab[-1]:
        raise InputError(f"pond {pond['name']!r}: water rises more than {GRID_ABOVE_TOP_FT} ft "
                         "above the top; the routing table does not reach it")
    stage = np.interp(si, si_tab, stage_tab)
    storage = np.interp(si, si_tab, v_tab)
    return out, stage, storage


# ---------------------------------------------------------------- statistics

def annual_series(values_per_interval, t0_s, step_s):
    """Annual maxima by calendar year of each interval's START.

    Returns (list of (year, peak, fraction of the year's intervals present), left out).
    """
    n = values_per_interval.size
    y_first = dt.datetime.fromtimestamp(t0_s, dt.timezone.utc).year
    y_last = dt.datetime.fromtimestamp(t0_s + (n - 1) * step_s, dt.timezone.utc).year
    out, left_out = [], []
    for y in range(y_first, y_last + 1):
        lo_s = int(_days_from_civil(np.int64(y), np.int64(1), np.int64(1))) * 86400
        hi_s = int(_days_from_civil(np.int64(y + 1), np.int64(1), np.int64(1))) * 86400
        # intervals k with t0 + k*step in [lo, hi)
        k_lo = -((t0_s - lo_s) // step_s)            # ceil((lo - t0)/step)
        k_hi = -((t0_s - hi_s) // step_s)
        full = k_hi - k_lo
        a, b = max(k_lo, 0), min(k_hi, n)
        frac = (b - a) / full if full > 0 else 0.0
        if b <= a or frac < YEAR_COMPLETE_FRACTION:
            left_out.append({"year": y, "fraction": frac})
            continue
        out.append((y, float(values_per_interval[a:b].max()), frac))
    return out, left_out


def _moments(x):
    """Mean, sample std (n-1) and station skew G = n sum((x-mean)^3)/((n-1)(n-2) s^3)."""
    n = x.size
    mean = float(x.mean())
    s = float(x.std(ddof=1))
    g = float(n * np.sum((x - mean) ** 3) / ((n - 1) * (n - 2) * s ** 3)) if s > 0 else 0.0
    return mean, s, g


def log_pearson3(peaks):
    """Log-Pearson III by moments of log10 peaks (BHV eq. 3-67, Bulletin 17B moments):
    sample std with n-1, station skew G = n sum((x-mean)^3) / ((n-1)(n-2) s^3)
    (contract, Annual series); K from the exact Pearson III quantile (BHV Table 3-4).

    Bulletin 17B low-outlier test (reference file section 13g), for N >= 10
    peaks: K_N = -0.9043 + 3.345 sqrt(log10 N) - 0.4046 log10 N; peaks with
    log10 Q < mean - K_N s are left out and the moments recomputed from the
    rest; the flows then take the conditional probability adjustment: the
    exceedance probability 1/T of the whole record is (N - L)/N times the
    exceedance probability in the fitted (conditional) distribution."""
    x = np.log10(np.asarray(peaks, dtype=float))
    n = x.size
    if n < 3:
        return None
    mean, s, g = _moments(x)
    if s == 0.0:
        return {"n": n, "mean_log10": mean, "std_log10": 0.0, "skew": 0.0,
                "flows": [{"return_period": T, "flow": 10 ** mean} for T in RETURN_PERIODS_YR]}
    removed = []
    share = 1.0
    if n >= 10:
        ln = math.log10(n)
        kn = -0.9043 + 3.345 * math.sqrt(ln) - 0.4046 * ln
        low = mean - kn * s
        keep = x >= low
        removed = sorted(float(10 ** v) for v in x[~keep])
        if removed:
            x = x[keep]
            share = x.size / n
            if x.size < 3:
                return None
            mean, s, g = _moments(x)
    flows = []
    for T in RETURN_PERIODS_YR:
        pc = (1.0 / T) / share
        if pc >= 1.0:
            flows.append({"return_period": T, "flow": float("nan"), "K": float("nan")})
            continue
        k = float(stats.pearson3.ppf(1.0 - pc, g))
        flows.append({"return_period": T, "flow": 10 ** (mean + k * s), "K": k})
    return {"n": int(x.size), "mean_log10": mean, "std_log10": s, "skew": g,
            "low_outliers": removed, "flows": flows}


def flow_duration(values_per_interval):
    """Flow equalled or exceeded for a fraction p of the intervals.

    Rank rule: sort the N interval flows in descending order, q(1) >= ... >= q(N);
    the flow for p is q(m) with m = ceil(p N) (at least 1), no interpolation. So at
    least a fraction p of the intervals have a flow >= the value given.
    """
    v = values_per_interval
    n = v.size
    ranks = [max(1, math.ceil(p * n - 1e-9)) for p in EXCEEDANCE]   # 1e-9 guards p*N round-off
    asc_idx = sorted({n - m for m in ranks})                         # ascending position of q(m)
    part = np.partition(v, asc_idx)
    return [{"exceedance": p, "flow": float(part[n - m]), "rank": m} for p, m in zip(EXCEEDANCE, ranks)]


def iso(t_s):
    return dt.datetime.fromtimestamp(t_s, dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%S")


def element_stats(q, t0_s, step_s, rain_total, extra):
    """Statistics of a flow series q at step ends k = 0..N (q[k] belongs to interval k-1)."""
    n = q.size - 1
    per_interval = q[1:]                  # the value at the end of interval i is that interval's flow
    k_peak = int(np.argmax(q))
    annual, left_out = annual_series(per_interval, t0_s, step_s)
    fit_years = [(y, p) for (y, p, _) in annual if p > 0.0]
    zero_years = [y for (y, p, _) in annual if p <= 0.0]
    lp3 = log_pearson3([p for (_, p) in fit_years]) if fit_years else None
    d = {
        "start": iso(t0_s), "end": iso(t0_s + n * step_s), "steps": n,
        "rain_depth": rain_total,
        "volume": float(q.sum() * step_s),
        "peak_flow": float(q[k_peak]), "peak_time": iso(t0_s + k_peak * step_s),
        "annual_peaks": [{"year": y, "peak_flow": p} for (y, p, _) in annual],
        "years_left_out": left_out, "zero_years_left_out_of_fit": zero_years,
        "frequency": lp3["flows"] if lp3 else [],
        "lp3": {k: v for k, v in lp3.items() if k != "flows"} if lp3 else None,
        "flow_duration": flow_duration(per_interval),
    }
    d.update(extra)
    return d


# ---------------------------------------------------------------- scenario

def load_scenario(path):
    try:
        with open(path, "rb") as f:
            sc = tomllib.load(f)
    except OSError as e:
        raise InputError(f"{path}: {e.strerror}") from None
    except tomllib.TOMLDecodeError as e:
        raise InputError(f"{path}: {e}") from None
    return load_scenario_dict(sc, path)


def load_scenario_dict(sc, path):
    """The scenario as read by tomllib, checked and reduced (continuous.py reuses it)."""
    if sc.get("units", "us") != "us":
        raise InputError("only units = \"us\" is supported by this script")
    for key in ("storm", "inflow"):
        if key in sc:
            print(f"note: [[{key}]] entries are not part of this long-record check and are skipped",
                  file=sys.stderr)

    catchments = []
    for c in sc.get("catchment", []):
        nm = c.get("name", "?")
        for unsupported in ("cover", "flow", "lag"):
            if unsupported in c:
                raise InputError(f"catchment {nm!r}: `{unsupported}` is not supported here")
        if float(c.get("lambda", 0.2)) != 0.2:
            raise InputError(f"catchment {nm!r}: only lambda = 0.2 is supported here")
        cn = float(c["cn"])
        if not 0 < cn <= 100:
            raise InputError(f"catchment {nm!r}: cn must be in (0, 100]")
        catchments.append({"name": nm, "kind": "catchment", "conditions": conditions_of(c),
                           "area_ft2": quantity(c["area"], "area", f"catchment {nm!r} area"),
                           "cn": cn, "tc_s": quantity(c["tc"], "time", f"catchment {nm!r} tc", bare_ok=False),
                           "to": c["to"]})

    ponds = []
    for p in sc.get("pond", []):
        nm = p.get("name", "?")
        if "stage_area" not in p:
            raise InputError(f"pond {nm!r}: only `stage_area` tables are supported here")
        table = [(float(r[0]), float(r[1])) for r in p["stage_area"]]
        if len(table) < 2 or any(b[0] <= a[0] for a, b in zip(table, table[1:])) or any(r[1] <= 0 for r in table):
            raise InputError(f"pond {nm!r}: stage_area needs >= 2 rows, increasing stage, positive area")
        outlets = []
        for j, o in enumerate(p.get("outlet", [])):
            where = f"pond {nm!r} outlet {j}"
            if o["kind"] == "orifice":
                outlets.append({"kind": "orifice", "invert": quantity(o["invert"], "length", where),
                                "diameter": quantity(o["diameter"], "length", where),
                                "cd": float(o.get("cd", 0.61))})
            elif o["kind"] == "weir":
                outlets.append({"kind": "weir", "crest": quantity(o["crest"], "length", where),
                                "length": quantity(o["length"], "length", where),
                                "coefficient": float(o.get("coefficient", 3.33)),
                                "contractions": int(o.get("contractions", 0))})
            else:
                raise InputError(f"{where}: kind {o['kind']!r} is not supported here")
        if not outlets:
            raise InputError(f"pond {nm!r}: no outlet")
        lowest = min(o.get("invert", o.get("crest")) for o in outlets)
        ponds.append({"name": nm, "kind": "pond", "conditions": conditions_of(p), "to": p["to"],
                      "table": table, "outlets": outlets,
                      "start": float(p["start"]) if "start" in p else lowest,
                      "top": float(p["top"]) if "top" in p else table[-1][0]})

    points = [{"name": pt["name"], "kind": "point"} for pt in sc.get("point", [])]
    for pt in sc.get("point", []):
        for key in ("limit", "limits", "durations"):
            if key in pt:
                print(f"note: point {pt['name']!r}: `{key}` is not evaluated by this script", file=sys.stderr)

    records = []
    for r in sc.get("record", []):
        nm = r.get("name", "?")
        if r.get("moisture", "event") != "event":
            raise InputError(f"record {nm!r}: only moisture = \"event\" is supported here")
        if "step" in r:
            raise InputError(f"record {nm!r}: a record `step` is not supported here")
        miss = r.get("missing")
        if miss not in (None, "zero"):
            raise InputError(f"record {nm!r}: missing must be \"zero\" if given")
        records.append({"name": nm, "gauge": (Path(path).parent / r["gauge"]),
                        "interval_s": (quantity(r["interval"], "time", f"record {nm!r} interval", bare_ok=False)
                                       if "interval" in r else None),
                        "missing_zero": miss == "zero",
                        "dry_gap_s": quantity(r.get("dry_gap", "6 h"), "time", f"record {nm!r} dry_gap", bare_ok=False)})
    if not records:
        raise InputError("no [[record]] in the scenario")

    names = [e["name"] for e in catchments + ponds + points]
    if len(set(names)) != len(names):
        raise InputError("element names must be unique")
    for e in catchments + ponds:
        if e["to"] not in names or e["to"] == e["name"]:
            raise InputError(f"{e['kind']} {e['name']!r}: `to` = {e['to']!r} names no pond or point")
    conds = []
    for e in catchments + ponds:
        for c in (e["conditions"] or []):
            if c not in conds:
                conds.append(c)
    baseline = sc.get("baseline", "existing")
    conds.sort(key=lambda c: (c != baseline,))
    if not conds:
        conds = [baseline]
    return sc, catchments, ponds, points, records, conds


def in_condition(e, cond):
    return e["conditions"] is None or cond in e["conditions"]


# ---------------------------------------------------------------- self-check

def self_check():
    """Check the building blocks against published values (and [C] identities)."""
    fails = []

    def check(what, got, want, tol):
        ok = abs(got - want) <= tol
        print(f"{'ok  ' if ok else 'FAIL'} {what}: got {got:.6g}, want {want:.6g} (tol {tol:g})")
        if not ok:
            fails.append(what)

    # TR-55 (1986) Table 2-1 (transcribed): runoff depth, printed to 0.01 in.
    for p, cn, q in [(3.0, 70, 0.71), (5.0, 80, 2.89), (1.0, 98, 0.79), (2.0, 60, 0.06), (10.0, 50, 3.56)]:
        check(f"TR-55 Table 2-1 P={p} CN={cn}", float(scs_runoff_in(np.array(p), 1000 / cn - 10)), q, 0.005)
    # NEH 630 ch.16 Table 16-2 (transcribed): the 0.1-step ordinates are linear interpolation in Table 16-1.
    for x, r in [(2.1, 0.2435), (2.3, 0.177), (3.1, 0.0475), (3.3, 0.0345), (4.1, 0.0098), (4.3, 0.0074), (4.9, 0.001)]:
        check(f"NEH 630 Table 16-2 t/Tp={x}", float(np.interp(x, DUH_T, DUH_Q)), r, 1e-9)
    # Contract, Conventions: sum(U_k) * step holds one inch over the area.
    u, _, _ = unit_hydrograph_cfs_per_in(12 * FT2_PER_AC, 2400.0, 900.0)
    check("unit hydrograph volume, ft3 per inch (12 ac)", float(u.sum() * 900.0), 12 * FT2_PER_AC / 12, 1e-6)
    # Ponce linear reservoir S = K O, K = 2 h, dt = 1 h: 2S/dt + O = 5 O (published-values 9a, PONCE).
    inflow = [100, 150, 250, 400, 800, 1000, 900, 700, 550, 400, 300, 250, 200, 150, 120, 100] + [100] * 10
    o_tab = np.linspace(0.0, 2000.0, 2001)
    si, out = storage_indication(inflow, 5.0 * o_tab, o_tab, 500.0, 100.0)
    check("Ponce 9a peak outflow, h 7", float(out[7]), 757.641, 0.001)
    check("Ponce 9a outflow, h 4", float(out[4]), 370.56, 0.001)
    check("Ponce 9a 2S/dt+O, h 6", float(si[6]), 3647.008, 0.001)
    check("Ponce 9a peak hour", float(np.argmax(out)), 7.0, 0.0)
    # BHV Table 3-4 (Bulletin 17B frequency factors).
    for cs, T, k in [(1.0, 100, 3.022), (-0.5, 2, 0.083), (2.0, 10, 1.302), (-1.0, 25, 1.366), (3.0, 50, 3.152)]:
        check(f"BHV Table 3-4 K(Cs={cs}, T={T})", float(stats.pearson3.ppf(1 - 1 / T, cs)), k, 0.001)
    # Contract, Ponds: the two orifice forms agree at h = D.
    d_ft = 5.0 / 12.0
    lo = float(orifice_cfs(np.array([100.0 + d_ft * (1 - 1e-12)]), 100.0, d_ft, 0.61)[0])
    hi = float(orifice_cfs(np.array([100.0 + d_ft]), 100.0, d_ft, 0.61)[0])
    check("orifice forms agree at h = D (cfs)", lo, hi, 1e-9)
    # [C] frustum of a square pyramid: sides 10 ft -> 20 ft over 10 ft of stage.
    tab = [(0.0, 100.0), (10.0, 400.0)]
    check("frustum volume between rows [C]", float(storage_ft3(np.array([10.0]), tab, "cone")[0]), 7000.0 / 3, 1e-9)
    check("cone-consistent volume at mid-stage [C]", float(storage_ft3(np.array([5.0]), tab, "cone")[0]),
          5.0 / 3 * (100 + 225 + 150), 1e-9)
    check("above the last row, last area kept [C]", float(storage_ft3(np.array([12.0]), tab, "cone")[0]),
          7000.0 / 3 + 800.0, 1e-9)
    # [C] event split: 6 h of zero rain at 15 min = 24 dry intervals starts a new event.
    r = np.zeros(60)
    r[[0, 1, 26, 50]] = 1.0
    wet, p0, p1, n_ev = event_cumulative_rain(r, 900.0, 6 * 3600.0)
    check("events: gaps of 24 and 23 dry intervals", float(n_ev), 2.0, 0.0)
    check("cumulative rain at the last rainy interval", float(p1[-1]), 2.0, 0.0)
    print("self-check:", "all passed" if not fails else f"{len(fails)} FAILED")
    return 0 if not fails else 1


# ---------------------------------------------------------------- main

def run_record(rec, catchments, ponds, points, conds, storage_mode, timing, excess_of=None):
    """excess_of(rain, t0_s, step_s, catchments) -> ({name: excess series}, n_events) replaces
    event accounting (continuous.py passes its soil-moisture accounting)."""
    t = time.perf_counter()
    interval_s = int(round(rec["interval_s"])) if rec["interval_s"] else None
    rain, t0_s, step_s, rows = read_gauge(rec["gauge"], interval_s, rec["missing_zero"])
    timing["csv_read"] += time.perf_counter() - t
    n = rain.size
    dt_s = float(step_s)
    rain_total = float(rain.sum())

    # Excess, once per catchment (it depends only on the rain and the CN).
    t = time.perf_counter()
    wet, p_start, p_end, n_events = event_cumulative_rain(rain, dt_s, rec["dry_gap_s"])
    if excess_of is None:
        excess = {c["name"]: excess_series(n, wet, p_start, p_end, c["cn"]) for c in catchments}
    else:
        excess, n_events = excess_of(rain, t0_s, step_s, catchments)
    del p_start, p_end
    timing["excess"] += time.perf_counter() - t

    # Unit hydrograph and convolution, once per catchment.
    t = time.perf_counter()
    flow = {}
    uh = {}
    for c in catchments:
        u, tp_s, qp = unit_hydrograph_cfs_per_in(c["area_ft2"], c["tc_s"], dt_s)
        uh[c["name"]] = {"tp_h": tp_s / 3600.0, "ordinates": u.size, "u_peak_cfs_per_in": float(u.max()),
                         "qp_nominal_cfs_per_in": qp}
        flow[c["name"]] = convolve_flow(excess[c["name"]], u)
    timing["convolution"] += time.perf_counter() - t
    runoff_in = {name: float(ex.sum()) for name, ex in excess.items()}
    del excess                            # only the totals are needed from here on

    results, warnings = [], []
    for cond in conds:
        cs = [c for c in catchments if in_condition(c, cond)]
        ps = [p for p in ponds if in_condition(p, cond)]
        members = {e["name"]: e for e in cs + ps}
        series = {c["name"]: flow[c["name"]] for c in cs}
        pond_out = {}

        def inflow_to(target):
            q = np.zeros(n + 1)
            got = False
            for e in members.values():
                if e["to"] == target:
                    q += series[e["name"]]
                    got = True
            return q, got

        # Ponds in dependency order (a pond may drain to another pond).
        t = time.perf_counter()
        pending = list(ps)
        while pending:
            ready = [p for p in pending
                     if all(e["name"] in series for e in members.values() if e["to"] == p["name"])]
            if not ready:
                raise InputError(f"condition {cond!r}: ponds drain to each other in a loop")
            for p in ready:
                inflow, _ = inflow_to(p["name"])
                out, stage, storage = route_pond(p, inflow, dt_s, storage_mode)
                series[p["name"]] = out
                pond_out[p["name"]] = (inflow, stage, storage)
                pending.remove(p)
        timing["routing"] += time.perf_counter() - t

        t = time.perf_counter()
        for c in cs:
            q = series[c["name"]]
            results.append({"record": rec["name"], "condition": cond, "element": c["name"], "kind": "catchment",
                            **element_stats(q, t0_s, step_s, rain_total,
                                            {"runoff_depth": runoff_in[c["name"]],
                                             "area_ac": c["area_ft2"] / FT2_PER_AC, "cn": c["cn"],
                                             "tc_h": c["tc_s"] / 3600.0, "unit_hydrograph": uh[c["name"]]})})
        for p in ps:
            inflow, stage, storage = pond_out[p["name"]]
            out = series[p["name"]]
            k_st = int(np.argmax(stage))
            vin = float((inflow.sum() - 0.5 * (inflow[0] + inflow[-1])) * dt_s)     # trapezoid, as routed
            vout = float((out.sum() - 0.5 * (out[0] + out[-1])) * dt_s)
            mbe = (vin - vout - (storage[-1] - storage[0])) / vin if vin > 0 else 0.0
            over = bool(stage.max() > p["top"])
            if over:
                warnings.append(f"pond {p['name']!r} ({cond}) overtops: peak stage {stage.max():.3f} ft > top {p['top']} ft")
            results.append({"record": rec["name"], "condition": cond, "element": p["name"], "kind": "pond",
                            **element_stats(out, t0_s, step_s, rain_total,
                                            {"peak_inflow": float(inflow.max()),
                                             "inflow_volume": float(inflow.sum() * dt_s),
                                             "peak_stage": float(stage[k_st]), "peak_stage_time": iso(t0_s + k_st * step_s),
                                             "peak_storage": float(storage.max()),
                                             "freeboard": p["top"] - float(stage[k_st]), "overtopped": over,
                                             "mass_balance_error": mbe})})
        for pt in points:
            q, got = inflow_to(pt["name"])
            if not got:
                warnings.append(f"point {pt['name']!r}: nothing reaches it in condition {cond!r}")
            area_ac = sum(e["area_ft2"] for e in cs if drains_to(e, pt["name"], members)) / FT2_PER_AC
            vol = float(q.sum() * dt_s)
            results.append({"record": rec["name"], "condition": cond, "element": pt["name"], "kind": "point",
                            **element_stats(q, t0_s, step_s, rain_total,
                                            {"contributing_area_ac": area_ac,
                                             "volume_depth_in": vol / (area_ac * FT2_PER_AC) * 12.0 if area_ac else 0.0})})
        timing["statistics"] += time.perf_counter() - t
    info = {"record": rec["name"], "gauge": str(rec["gauge"]), "gauge_rows": rows,
            "gauge_sha256": hashlib.sha256(Path(rec["gauge"]).read_bytes()).hexdigest(),
            "interval_s": step_s, "steps": n, "start": iso(t0_s), "end": iso(t0_s + n * step_s),
            "rain_depth": rain_total, "rainy_intervals": int(wet.size), "events": n_events,
            "dry_gap_h": rec["dry_gap_s"] / 3600.0}
    return info, results, warnings


def drains_to(e, target, members):
    seen = set()
    while e is not None and e["name"] not in seen:
        if e["to"] == target:
            return True
        seen.add(e["name"])
        e = members.get(e["to"])
    return False


def print_tables(info, results):
    print(f"\nrecord {info['record']!r}: {info['start']} .. {info['end']}, {info['steps']} intervals of "
          f"{info['interval_s'] / 60:g} min, rain {info['rain_depth']:.3f} in, {info['events']} events")
    hdr = f"{'condition':<10} {'element':<16} {'kind':<9} {'rain in':>9} {'runoff in':>9} {'volume ft3':>13} {'peak cfs':>9}  {'peak time':<19} {'peak stage':>10}"
    print(hdr)
    print("-" * len(hdr))
    for r in results:
        ro = f"{r['runoff_depth']:.4f}" if "runoff_depth" in r else ""
        st = f"{r['peak_stage']:.4f}" if "peak_stage" in r else ""
        print(f"{r['condition']:<10} {r['element']:<16} {r['kind']:<9} {r['rain_depth']:9.3f} {ro:>9} "
              f"{r['volume']:13.1f} {r['peak_flow']:9.4f}  {r['peak_time']:<19} {st:>10}")
    print("\nlog-Pearson III (cfs) by return period (yr)")
    print(f"{'condition':<10} {'element':<16} {'n':>3} {'skew':>7} " + " ".join(f"{T:>8g}" for T in RETURN_PERIODS_YR))
    for r in results:
        lp = r["lp3"]
        if not lp:
            n_fit = len(r["annual_peaks"]) - len(r["zero_years_left_out_of_fit"])
            print(f"{r['condition']:<10} {r['element']:<16} {n_fit:3d}   no fit (fewer than 3 years with flow)")
            continue
        print(f"{r['condition']:<10} {r['element']:<16} {lp['n']:3d} {lp['skew']:7.3f} "
              + " ".join(f"{f['flow']:8.4f}" for f in r["frequency"]))
    for r in results:
        z, lo = r["zero_years_left_out_of_fit"], r["years_left_out"]
        if z:
            print(f"  {r['condition']} {r['element']}: {len(z)} year(s) with zero peak left out of the fit"
                  + (f" ({', '.join(map(str, z))})" if len(z) <= 10 else ""))
        if lo:
            print(f"  {r['condition']} {r['element']}: incomplete years left out: "
                  + ", ".join(f"{d['year']} ({d['fraction']:.1%})" for d in lo))
    print("\nflow equalled or exceeded (cfs) for a fraction of the intervals")
    print(f"{'condition':<10} {'element':<16} " + " ".join(f"{p:>8g}" for p in EXCEEDANCE))
    for r in results:
        print(f"{r['condition']:<10} {r['element']:<16} " + " ".join(f"{f['flow']:8.3g}" for f in r["flow_duration"]))
    for r in results:
        if r["kind"] == "pond":
            print(f"\npond {r['element']!r} ({r['condition']}): peak stage {r['peak_stage']:.4f} ft at "
                  f"{r['peak_stage_time']}, freeboard {r['freeboard']:.3f} ft, "
                  f"{'OVERTOPS' if r['overtopped'] else 'does not overtop'}, "
                  f"peak inflow {r['peak_inflow']:.4f} cfs, mass-balance error {r['mass_balance_error']:.2e}")


def main(argv=None):
    ap = argparse.ArgumentParser(description="Independent long-record computation (numpy/scipy).")
    ap.add_argument("scenario", nargs="?")
    ap.add_argument("--self-check", action="store_true",
                    help="check the building blocks against published values, then exit")
    ap.add_argument("--json", help="write all numbers to this JSON file")
    ap.add_argument("--storage", choices=["cone", "linear-area", "linear-volume"], default="cone",
                    help="storage at a stage between two stage_area rows (default cone)")
    args = ap.parse_args(argv)
    if args.self_check:
        return self_check()
    if not args.scenario:
        ap.error("a scenario file is needed")
    try:
        sc, catchments, ponds, points, records, conds = load_scenario(args.scenario)
        timing = dict.fromkeys(["csv_read", "excess", "convolution", "routing", "statistics"], 0.0)
        all_info, all_results, all_warn = [], [], []
        for rec in records:
            info, results, warns = run_record(rec, catchments, ponds, points, conds, args.storage, timing)
            all_info.append(info)
            all_results.extend(results)
            all_warn.extend(warns)
    except (InputError, KeyError) as e:
        msg = f"missing key {e}" if isinstance(e, KeyError) else str(e)
        print(f"error: {args.scenario}: {msg}", file=sys.stderr)
        return 2

    for info in all_info:
        print_tables(info, [r for r in all_results if r["record"] == info["record"]])
    for w in all_warn:
        print(f"warning: {w}", file=sys.stderr)
    compute = sum(v for k, v in timing.items() if k != "csv_read")
    print("\nstage times (s): " + ", ".join(f"{k} {v:.3f}" for k, v in timing.items())
          + f"; total without CSV reading {compute:.3f}")
    print("Caution: planning-level computations by published methods; check against local codes; "
          "designs are to be sealed by a licensed professional; ponds with embankments may fall "
          "under dam-safety rules.")
    if args.json:
        doc = {"title": sc.get("title", ""), "scenario": str(Path(args.scenario).resolve()),
               "scenario_sha256": hashlib.sha256(Path(args.scenario).read_bytes()).hexdigest(),
               "units": {"flow": "cfs", "volume": "ft3", "stage": "ft", "depth": "in", "area": "ac"},
               "storage_between_rows": args.storage,
               "conventions": {"flow_duration_rank": "descending sort, q(m) with m = ceil(p N), N = intervals",
                               "interval_flow": "the value at the end of an interval",
                               "volume": "sum(Q) * dt over step ends 0..N"},
               "records_info": all_info, "records": all_results, "warnings": all_warn,
               "timing_s": {**timing, "total_without_csv": compute},
               "python": sys.version.split()[0], "numpy": np.__version__,
               "scipy": __import__("scipy").__version__}
        Path(args.json).write_text(json.dumps(doc, indent=1))
    return 0


if __name__ == "__main__":
    sys.exit(main())
