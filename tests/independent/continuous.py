#!/usr/bin/env python3
"""Independent check of runnel's continuous soil-moisture mode (numpy/scipy).

Written from issue 12 ("Continuous soil moisture") and section 13a of
reference/published-values.md, not from runnel's code. Everything else (gauge
reading, unit hydrograph, convolution, pond routing, statistics) is reused from
long_record.py, the event-mode check written earlier from the contract.

The model, as the issue gives it, for each catchment's pervious part:

- Events are split by `dry_gap` as in event mode.
- Within an event the runoff is TR-55 eq. 2-3 with the event's starting
  retention S and Ia = 0.2 S. The issue asks for the exact incremental update
  1/(S - F1) = 1/(S - F0) + dP/S^2; the reference file (13a) shows that it
  integrates to eq. 2-3 on the event's cumulative rain, so this script uses
  eq. 2-3 on the cumulative rain directly (a different route to the same
  numbers: if runnel's stepping were wrong the two would part).
- After an event S falls by P - Q (what infiltrated), never below S(CN III).
- Between events dS/dt = PET(t) exp(-c S / Smax), Smax = S(CN I), S capped at
  Smax (recovery law recalled from memory in the issue). Integrated here with
  the closed form of the reference file (13a) on pieces of constant PET, cut
  at calendar-month boundaries found with numpy datetime64; `--ode` integrates
  it with scipy's solve_ivp instead, as a check of that closed form.
- The record starts at S(CN II) unless `initial` says "I" or "III".
- AMC I / III curve numbers: Chow et al. (1988) CN(I) = 4.2 CN/(10 - 0.058 CN),
  CN(III) = 23 CN/(10 + 0.13 CN) (reference file, section 7).
- Directly connected impervious cover (covers with cn = 98) is computed
  separately: eq. 2-3 per event at CN 98 with its own Ia, added by area to the
  pervious share, whose CN is the area-weighted CN of the other covers.

Conventions the issue leaves open, taken as runnel's README states them: the
time between events runs from the end of an event's last rainy interval to
the start of the next event's first one (dry intervals inside an event, shorter
than dry_gap, do not recover); the dry time before the record's first event
counts as between events; a step belongs to the calendar month of its start.

Usage:
    python3 continuous.py ../data/record-continuous.toml --json OUT.json [--ode]

Caution: planning-level computations by published methods. Check results
against local codes; designs are to be sealed by a licensed professional.
Ponds with embankments may fall under dam-safety rules.
"""

import argparse
import json
import sys
import time
import tomllib
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).parent))
import long_record as lr  # noqa: E402

MM_PER_IN = 25.4


def cn_dry(cn):
    return 4.2 * cn / (10.0 - 0.058 * cn)


def cn_wet(cn):
    return 23.0 * cn / (10.0 + 0.13 * cn)


def retention(cn):
    return 1000.0 / cn - 10.0


def eq_2_3(p, s):
    """TR-55 eq. 2-3 with Ia = 0.2 S; p may be an array."""
    ia = 0.2 * s
    pe = np.maximum(p - ia, 0.0)
    return pe * pe / np.maximum(pe + s, 1e-300)


def pet_in_per_day(v):
    if isinstance(v, (int, float)):
        return float(v)  # US scenario: inches per day
    num, unit = str(v).split()
    f = {"in": 1.0, "mm": 1.0 / MM_PER_IN, "cm": 10.0 / MM_PER_IN}[unit]
    return float(num) * f


def recover_closed_form(s, smax, pet, c, days):
    if smax <= 0 or s >= smax or pet <= 0 or days <= 0:
        return s
    s1 = smax / c * np.log(np.exp(c * s / smax) + c * pet * days / smax)
    return min(smax, s1)


def recover_ode(s, smax, pet, c, days):
    from scipy.integrate import solve_ivp

    if smax <= 0 or s >= smax or pet <= 0 or days <= 0:
        return s
    sol = solve_ivp(lambda t, y: [pet * np.exp(-c * y[0] / smax)], (0.0, days), [s],
                    rtol=1e-11, atol=1e-13, method="DOP853")
    return min(smax, float(sol.y[0, -1]))


def month_pieces(t0_s, step_s, a, b):
    """[(month 1-12, steps)] for steps a..b-1, a step in the month of its start."""
    if a >= b:
        return []
    starts = (np.datetime64(int(t0_s), "s") + np.arange(a, b) * np.timedelta64(int(step_s), "s"))
    months = starts.astype("datetime64[M]").astype(int) % 12 + 1
    cut = np.flatnonzero(np.diff(months)) + 1
    edges = np.r_[0, cut, months.size]
    return [(int(months[edges[k]]), int(edges[k + 1] - edges[k])) for k in range(edges.size - 1)]


def events_of(rain, step_s, dry_gap_s):
    """List of (first, last) rainy interval of each event."""
    wet = np.flatnonzero(rain > 0)
    if wet.size == 0:
        return []
    gap = np.diff(wet) - 1
    new = np.r_[True, gap * step_s >= dry_gap_s]
    firsts = wet[new]
    lasts = np.r_[wet[np.flatnonzero(new)[1:] - 1], wet[-1]]
    return list(zip(firsts.tolist(), lasts.tolist()))


def continuous_excess(rain, t0_s, step_s, cat, rec, recover):
    """Excess series (in) of one catchment and its moisture summary."""
    n = rain.size
    f = cat["connected_fraction"]
    cn = cat["rest_cn"]
    s_min, s_max = retention(cn_wet(cn)), retention(cn_dry(cn))
    s = retention({"I": cn_dry(cn), "II": cn, "III": cn_wet(cn)}[rec["initial"]])
    c, pet = rec["recovery"], rec["pet"]
    s98 = retention(98.0)
    ex = np.zeros(n)
    event_cns = []
    free_from = 0  # first step after the previous event (or the record start)
    for first, last in events_of(rain, step_s, rec["dry_gap_s"]):
        for month, steps in month_pieces(t0_s, step_s, free_from, first):
            s = recover(s, s_max, pet[month - 1], c, steps * step_s / 86400.0)
        event_cns.append(1000.0 / (10.0 + s))
        r = rain[first:last + 1]
        p = np.cumsum(r)
        q = eq_2_3(p, s)
        q_imp = eq_2_3(p, s98)
        ex[first:last + 1] = (1 - f) * np.diff(np.r_[0.0, q]) + f * np.diff(np.r_[0.0, q_imp])
        s = max(s_min, s - (p[-1] - q[-1]))
        free_from = last + 1
    cns = np.array(event_cns)
    return ex, len(event_cns), {
        "event_cn": ({"min": float(cns.min()), "mean": float(cns.mean()), "max": float(cns.max())}
                     if cns.size else None),
    }


def load(path):
    with open(path, "rb") as fh:
        sc = tomllib.load(fh)
    extra = {}
    for c in sc.get("catchment", []):
        covers = c.pop("cover", None)
        if covers:
            area = sum(lr.quantity(cv["area"], "area", "cover area") for cv in covers)
            imp = sum(lr.quantity(cv["area"], "area", "cover area") for cv in covers if cv["cn"] == 98)
            rest = [(cv["cn"], lr.quantity(cv["area"], "area", "cover area")) for cv in covers if cv["cn"] != 98]
            rest_area = sum(a for _, a in rest)
            rest_cn = sum(cn * a for cn, a in rest) / rest_area if rest_area > 0 else 98.0
            c["cn"] = sum(cv["cn"] * lr.quantity(cv["area"], "area", "") for cv in covers) / area
            c["area"] = f"{area / lr.FT2_PER_AC!r} ac"
            extra[c["name"]] = (imp / area, rest_cn)
        else:
            extra[c["name"]] = (0.0, float(c["cn"]))
    recs = []
    for r in sc.get("record", []):
        if r.get("moisture") != "continuous":
            raise lr.InputError("this script checks moisture = \"continuous\" only")
        recs.append({"pet": [pet_in_per_day(v) for v in r["pet"]],
                     "recovery": float(r.get("recovery", 1.0)),
                     "initial": r.get("initial", "II")})
        for k in ("moisture", "pet", "recovery", "initial"):
            r.pop(k, None)
    sc_checked = lr.load_scenario_dict(sc, path)
    _, catchments, _, _, records, _ = sc_checked
    for cat in catchments:
        cat["connected_fraction"], cat["rest_cn"] = extra[cat["name"]]
    for rec, more in zip(records, recs):
        rec.update(more)
    return sc_checked


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("scenario")
    ap.add_argument("--json")
    ap.add_argument("--ode", action="store_true", help="recover with solve_ivp instead of the closed form")
    a = ap.parse_args(argv)
    try:
        sc, catchments, ponds, points, records, conds = load(a.scenario)
    except lr.InputError as e:
        print(f"error: {e}", file=sys.stderr)
        return 2
    recover = recover_ode if a.ode else recover_closed_form
    timing = {k: 0.0 for k in ("csv_read", "excess", "convolution", "routing", "statistics")}
    out = {"title": sc.get("title"), "scenario": a.scenario, "recovery_integration": "ode" if a.ode else "closed form",
           "records_info": [], "records": [], "warnings": []}
    for rec in records:
        moist = {}

        def excess_of(rain, t0_s, step_s, cats, rec=rec):
            t = time.perf_counter()
            res, n_events = {}, 0
            for cat in cats:
                ex, n_events, m = continuous_excess(rain, t0_s, step_s, cat, rec, recover)
                res[cat["name"]] = ex
                m["infiltration_depth"] = float(rain.sum() - ex.sum())
                m["annual_runoff"] = annual_sums(ex, t0_s, step_s)
                moist[cat["name"]] = m
            timing["excess"] += time.perf_counter() - t
            return res, n_events

        info, results, warnings = lr.run_record(rec, catchments, ponds, points, conds, "cone", timing,
                                                excess_of=excess_of)
        for e in results:
            if e["kind"] == "catchment":
                e.update(moist[e["element"]])
        info["pet_in_per_day"] = rec["pet"]
        info["recovery"] = rec["recovery"]
        info["initial"] = rec["initial"]
        out["records_info"].append(info)
        out["records"].extend(results)
        out["warnings"].extend(warnings)
    out["timing_s"] = timing
    for e in out["records"]:
        if e["kind"] == "catchment":
            cn = e["event_cn"] or {}
            print(f"{e['condition']:>10} {e['element']:<16} runoff {e['runoff_depth']:.4f} in, "
                  f"infiltration {e['infiltration_depth']:.4f} in, event CN {cn.get('min', 0):.2f}/"
                  f"{cn.get('mean', 0):.2f}/{cn.get('max', 0):.2f}")
    print("times (s): " + ", ".join(f"{k} {v:.3f}" for k, v in timing.items()))
    if a.json:
        Path(a.json).write_text(json.dumps(out, indent=1, default=float))
    return 0


def annual_sums(ex, t0_s, step_s):
    years = (np.datetime64(int(t0_s), "s") + np.arange(ex.size) * np.timedelta64(int(step_s), "s")) \
        .astype("datetime64[Y]").astype(int) + 1970
    ys = np.unique(years)
    return [{"year": int(y), "runoff_depth": float(ex[years == y].sum())} for y in ys]


if __name__ == "__main__":
    sys.exit(main())
