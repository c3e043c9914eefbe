//! Numbers on figures: label formats, value ranges, and linear, log and time ticks.

use super::PlotError;
use super::style::*;

/// A value for a label, with precision suited to report tables.
pub(super) fn fmt_value(v: f64) -> String {
    if !v.is_finite() {
        return "n/a".to_string();
    }
    let a = v.abs();
    if a == 0.0 {
        "0".to_string()
    } else if !(1e-3..1e6).contains(&a) {
        format!("{v:.3e}")
    } else if a >= 100.0 {
        format!("{v:.0}")
    } else if a >= 10.0 {
        format!("{v:.1}")
    } else if a >= 1.0 {
        format!("{v:.2}")
    } else {
        format!("{v:.3}")
    }
}

/// An elevation or stage for a label (two decimals, as elevations are usually given).
pub(super) fn fmt_stage(v: f64) -> String {
    if !v.is_finite() {
        "n/a".to_string()
    } else if v.abs() >= 1e6 {
        format!("{v:.3e}")
    } else {
        format!("{v:.2}")
    }
}

/// A time in hours for a label: always two decimals, the one time format of every figure and
/// table (`12.00 h`, `12.08 h`).
pub(super) fn fmt_hours(t: f64) -> String {
    format!("{t:.2}")
}

pub(super) fn trim_decimals(s: String) -> String {
    if s.contains('.') && !s.contains('e') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A tick label on a linear axis.
pub(super) fn fmt_tick(v: &f64) -> String {
    let v = *v;
    let a = v.abs();
    if a < 1e-12 {
        "0".to_string()
    } else if !(1e-3..1e6).contains(&a) {
        format!("{v:.2e}")
    } else {
        trim_decimals(format!("{v:.4}"))
    }
}

/// A tick label on a logarithmic axis (1-2-5 values).
pub(super) fn fmt_log_tick(v: &f64) -> String {
    let v = *v;
    if !(1e-4..1e6).contains(&v) {
        format!("{v:e}")
    } else {
        let decimals = (-v.log10().floor()).max(0.0) as usize;
        trim_decimals(format!("{v:.decimals$}"))
    }
}

/// Time step as words for axis and legend text, e.g. "6-min" or "1-h".
pub(super) fn fmt_step(step_h: f64) -> String {
    let min = step_h * 60.0;
    if step_h < 1.0 {
        format!("{}-min", trim_decimals(format!("{min:.1}")))
    } else {
        format!("{}-h", trim_decimals(format!("{step_h:.2}")))
    }
}

pub(super) fn finite(values: impl IntoIterator<Item = f64>) -> impl Iterator<Item = f64> {
    values.into_iter().filter(|v| v.is_finite())
}

/// Low and high ends of a linear value axis that starts at zero (or below, for negative data),
/// with `headroom` times the largest value on top. No data, or only zeros, gives 0..1.
pub(super) fn value_range(
    values: impl IntoIterator<Item = f64>,
    headroom: f64,
) -> Result<(f64, f64), String> {
    let (mut lo, mut hi) = (0.0_f64, 0.0_f64);
    for v in finite(values) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if hi <= lo {
        return Ok((lo, lo + 1.0));
    }
    if hi > 0.0 {
        let h = hi * headroom;
        hi = if h.is_finite() { h } else { hi };
    }
    if lo < 0.0 {
        let l = lo - 0.05 * (hi - lo);
        lo = if l.is_finite() { l } else { lo };
    }
    if (hi - lo).is_finite() && hi > lo {
        Ok((lo, hi))
    } else {
        Err(format!(
            "values from {lo:e} to {hi:e} span too wide a range to plot"
        ))
    }
}

/// Low and high ends of an axis that covers the values with a margin on both sides (for stage).
pub(super) fn padded_range(values: impl IntoIterator<Item = f64>) -> Result<(f64, f64), String> {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for v in finite(values) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if lo > hi {
        return Ok((0.0, 1.0));
    }
    let span = hi - lo;
    let pad = if span > 0.0 {
        0.08 * span
    } else {
        lo.abs().max(1.0) * 0.05
    };
    let (l, h) = (lo - pad, hi + pad);
    if l.is_finite() && h.is_finite() && (h - l).is_finite() && h > l {
        Ok((l, h))
    } else {
        Err(format!(
            "values from {lo:e} to {hi:e} span too wide a range to plot"
        ))
    }
}

/// Unbroken runs of finite points; a NaN or infinite value ends a run.
pub(super) fn runs(points: impl IntoIterator<Item = (f64, f64)>) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    let mut cur = Vec::new();
    for (x, y) in points {
        if x.is_finite() && y.is_finite() {
            cur.push((x, y));
        } else if !cur.is_empty() {
            out.push(std::mem::take(&mut cur));
        }
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out
}

/// Points of a uniformly sampled series, `(k * step_h, values[k])`.
pub(super) fn timed(values: &[f64], step_h: f64) -> impl Iterator<Item = (f64, f64)> + '_ {
    values
        .iter()
        .enumerate()
        .map(move |(k, &v)| (k as f64 * step_h, v))
}

pub(super) fn check_step(name: &str, step_h: f64) -> Result<f64, PlotError> {
    if step_h.is_finite() && step_h > 0.0 {
        Ok(step_h)
    } else {
        Err(input_error(
            name,
            format!("expected the time step in hours to be a positive number, got {step_h}"),
        ))
    }
}

/// End of the time axis for `n` steps (1 h when there is nothing to show).
pub(super) fn time_end(name: &str, n: usize, step_h: f64) -> Result<f64, PlotError> {
    let t = n as f64 * step_h;
    if !t.is_finite() {
        Err(input_error(
            name,
            format!("{n} steps of {step_h} h is too long a time axis to plot"),
        ))
    } else if t > 0.0 {
        Ok(t)
    } else {
        Ok(1.0)
    }
}

/// Major and minor tick positions for a time axis in hours.
pub(super) fn time_ticks(t_end: f64) -> (Vec<f64>, Vec<f64>) {
    const STEPS: [f64; 12] = [
        0.05, 0.1, 0.25, 0.5, 1.0, 2.0, 3.0, 6.0, 12.0, 24.0, 48.0, 168.0,
    ];
    let mut step = t_end / 14.0;
    for s in STEPS {
        if t_end / s <= 14.0 {
            step = s;
            break;
        }
    }
    let minor_div = if (step / 3.0).fract() == 0.0 && step >= 3.0 {
        3.0
    } else {
        2.0
    };
    (
        multiples(step, t_end, 40),
        multiples(step / minor_div, t_end, 120),
    )
}

pub(super) fn multiples(step: f64, end: f64, max_count: usize) -> Vec<f64> {
    if !(step > 0.0 && step.is_finite()) {
        return vec![0.0];
    }
    (0..=max_count)
        .map(|i| i as f64 * step)
        .take_while(|&t| t <= end * (1.0 + 1e-9))
        .collect()
}

/// The 1-2-5 value at or below `v` (v > 0).
pub(super) fn floor125(v: f64) -> f64 {
    let e = v.log10().floor();
    let base = 10f64.powf(e);
    let m = v / base;
    let f = if m >= 5.0 - 1e-9 {
        5.0
    } else if m >= 2.0 - 1e-9 {
        2.0
    } else {
        1.0
    };
    f * base
}

/// The 1-2-5 value at or above `v` (v > 0).
pub(super) fn ceil125(v: f64) -> f64 {
    let e = v.log10().floor();
    let base = 10f64.powf(e);
    let m = v / base;
    let f = if m <= 1.0 + 1e-9 {
        1.0
    } else if m <= 2.0 + 1e-9 {
        2.0
    } else if m <= 5.0 + 1e-9 {
        5.0
    } else {
        10.0
    };
    f * base
}

/// Tick values from `mantissas` times powers of ten between `lo` and `hi` (both > 0).
pub(super) fn log_ticks(lo: f64, hi: f64, mantissas: &[f64]) -> Vec<f64> {
    let (e0, e1) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    let mut out = Vec::new();
    for e in e0..=e1.min(e0 + 400) {
        for &m in mantissas {
            let v = m * 10f64.powi(e);
            if v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9) {
                out.push(v);
            }
        }
    }
    out
}

/// A log axis range that covers the positive values, with 1-2-5 ends.
pub(super) fn log_range(values: impl IntoIterator<Item = f64>, default: (f64, f64)) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for v in finite(values).filter(|&v| v > 0.0) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if lo > hi {
        return default;
    }
    // Round the ends out to 1-2-5 values where that stays finite and positive.
    let round_down = |v: f64| {
        Some(floor125(v))
            .filter(|&r| r > 0.0 && r <= v)
            .unwrap_or(v)
    };
    let round_up = |v: f64| {
        Some(ceil125(v))
            .filter(|&r| r.is_finite() && r >= v)
            .unwrap_or(v)
    };
    let (mut l, mut h) = (round_down(lo), round_up(hi));
    if h <= l {
        l = round_down(l * 0.99);
        h = round_up(h * 1.01);
    }
    if h > l { (l, h) } else { (lo * 0.5, lo * 2.0) }
}

/// Log ticks for an axis: 1-2-5 values when it spans few decades, powers of ten otherwise,
/// and only every n-th power of ten when even those would be more than 16.
pub(super) fn decade_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let decades = (hi.log10() - lo.log10()).abs();
    if decades <= 5.0 {
        log_ticks(lo, hi, &[1.0, 2.0, 5.0])
    } else {
        let every = (decades / 16.0).ceil().max(1.0) as usize;
        log_ticks(lo, hi, &[1.0])
            .into_iter()
            .filter(|v| (v.log10().round() as i64).rem_euclid(every as i64) == 0)
            .collect()
    }
}

/// Fraction of its own peak below which a series counts as drained, for the hydrograph window.
pub const WINDOW_TAIL_FRACTION: f64 = 0.03;

/// Fraction of its own peak above which a series counts as running, for the window's start.
const WINDOW_START_FRACTION: f64 = 1e-3;

/// The time window around the action of uniformly sampled series, hours: from the first step at
/// which any series runs (above 0.1 % of its peak) to the step after each series' peak at which
/// every series has fallen below [`WINDOW_TAIL_FRACTION`] of its own peak, widened by 5 % of the
/// span on each side and rounded out to the time axis's major step, within `[0, t_end]`.
/// `None` when no series has a positive value.
pub fn action_window(series: &[&[f64]], step_h: f64) -> Option<(f64, f64)> {
    if !(step_h.is_finite() && step_h > 0.0) {
        return None;
    }
    let mut first = usize::MAX;
    let mut last = 0usize;
    let mut n = 0usize;
    for s in series {
        n = n.max(s.len().saturating_sub(1));
        let Some((peak, k_peak)) = crate::methods::stats::max_first(s) else {
            continue;
        };
        if !(peak > 0.0 && peak.is_finite()) {
            continue;
        }
        if let Some(k) = s.iter().position(|v| *v > WINDOW_START_FRACTION * peak) {
            first = first.min(k);
        }
        let tail = s
            .iter()
            .enumerate()
            .skip(k_peak)
            .find(|(_, v)| **v < WINDOW_TAIL_FRACTION * peak)
            .map_or(s.len().saturating_sub(1), |(k, _)| k);
        last = last.max(tail);
    }
    if first == usize::MAX {
        return None;
    }
    let t_end = n as f64 * step_h;
    let (a, b) = (first as f64 * step_h, last as f64 * step_h);
    let pad = 0.05 * (b - a).max(step_h);
    let (a, b) = ((a - pad).max(0.0), (b + pad).min(t_end));
    let (major, _) = time_ticks((b - a).max(step_h));
    let step = match major.as_slice() {
        [x0, x1, ..] => x1 - x0,
        _ => 1.0,
    };
    let t0 = ((a / step).floor() * step).max(0.0);
    let t1 = ((b / step).ceil() * step).min(t_end.max(t0 + step_h));
    Some((t0, t1))
}

/// Major and minor ticks of a time axis from `t0` to `t1` hours (multiples of the steps that
/// [`time_ticks`] would choose for the span).
pub(super) fn ticks_between(t0: f64, t1: f64) -> (Vec<f64>, Vec<f64>) {
    let (major, minor) = time_ticks((t1 - t0).max(1e-9));
    let step_of = |v: &[f64]| match v {
        [x0, x1, ..] => x1 - x0,
        _ => (t1 - t0).max(1e-9),
    };
    let within = |step: f64, max: usize| -> Vec<f64> {
        let k0 = (t0 / step - 1e-9).ceil() as i64;
        (0..=max as i64)
            .map(|i| (k0 + i) as f64 * step)
            .take_while(|t| *t <= t1 + 1e-9)
            .collect()
    };
    (within(step_of(&major), 40), within(step_of(&minor), 120))
}

/// The time window to draw: the given one clipped to the run, or the whole run.
pub(super) fn window_of(window_h: Option<(f64, f64)>, t_end: f64) -> (f64, f64) {
    match window_h {
        Some((a, b)) if a.is_finite() && b.is_finite() && a >= 0.0 && b > a => {
            (a, b.min(t_end.max(a + 1e-6)))
        }
        _ => (0.0, t_end),
    }
}
