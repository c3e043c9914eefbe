//! Figures of a long record: flow-duration curves, peak-flow frequency and the overview of
//! daily highest flows against the calendar.

use crate::util::calendar::{self, civil_from_days, decimal_year};

use super::{DurationPlot, FrequencyPlot, OverviewPlot, PlotError};
use plotters::prelude::*;

use super::axes::*;
use super::draw::*;
use super::style::*;
use crate::methods::stats::max_first;

/// Flow-duration curves: flow (log axis) against the percent of time it is equalled or
/// exceeded (log axis). Zero flows cannot appear on a log axis and are left out (the subtitle
/// says so).
pub fn flow_duration_png(p: &DurationPlot) -> Result<Vec<u8>, PlotError> {
    draw_flow_duration(p, Target::Png)?.png()
}

/// The same figure as SVG text, for the HTML report.
pub fn flow_duration_svg(p: &DurationPlot) -> Result<String, PlotError> {
    Ok(draw_flow_duration(p, Target::Svg)?.svg())
}

pub(super) fn draw_flow_duration(p: &DurationPlot, target: Target) -> Result<Drawn, PlotError> {
    let name = plot_name("flow-duration plot", &p.title);
    let mut zero_left_out = false;
    let curves: Vec<(String, Vec<(f64, f64)>)> = p
        .curves
        .iter()
        .map(|(label, pts)| {
            let kept = pts
                .iter()
                .filter(|(f, q)| {
                    let ok_f = f.is_finite() && *f > 0.0;
                    if ok_f && *q == 0.0 {
                        zero_left_out = true;
                    }
                    ok_f && q.is_finite() && *q > 0.0
                })
                .map(|(f, q)| (f.min(1.0) * 100.0, *q))
                .collect();
            (label.clone(), kept)
        })
        .collect();
    let (x_lo, _) = log_range(
        curves.iter().flat_map(|(_, c)| c.iter().map(|&(x, _)| x)),
        (1.0, 100.0),
    );
    let x_lo = x_lo.min(10.0);
    let x_hi = 100.0;
    let (y_lo, y_hi) = log_range(
        curves.iter().flat_map(|(_, c)| c.iter().map(|&(_, y)| y)),
        (0.1, 1.0),
    );
    let mut subtitle = "Share of the record in which each flow is equalled or exceeded".to_string();
    if curves.iter().all(|(_, c)| c.is_empty()) {
        subtitle.push_str("; no positive flows to show");
    } else if zero_left_out {
        subtitle.push_str("; zero flows are not shown on the log scale");
    }
    let mut legend: Vec<(String, Swatch)> = curves
        .iter()
        .enumerate()
        .map(|(i, (l, c))| {
            let label = if c.is_empty() {
                format!("{l} (no flow above zero)")
            } else {
                l.clone()
            };
            (label, Swatch::Line(colour_of(i), 3, dash_of(i)))
        })
        .collect();
    if let Some(band) = &p.control {
        let base = curves
            .get(band.baseline)
            .map_or("baseline", |c| c.0.as_str());
        legend.push((
            "controlled flow range".to_string(),
            Swatch::Bar(BAND_FILL, BAND_EDGE),
        ));
        legend.push((
            format!(
                "allowed: {base} time + {} %",
                fmt_value(band.tolerance * 100.0)
            ),
            Swatch::Line(LIMIT, 2, Dash::Short),
        ));
        legend.push((
            "level above the allowance".to_string(),
            Swatch::Marker(LIMIT, Shape::Square),
        ));
    }
    let x_ticks = decade_ticks(x_lo, x_hi);
    let y_ticks = decade_ticks(y_lo, y_hi);
    let y_light = if (y_hi.log10() - y_lo.log10()).abs() <= 5.0 {
        log_ticks(y_lo, y_hi, &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0])
    } else {
        Vec::new()
    };

    render_to(target, &name, |root| {
        let (body, foot, rows) = layout(root, &p.title, &subtitle, &legend)?;
        let mut chart = ChartBuilder::on(&body)
            .margin_left(24)
            .margin_right(48)
            .margin_top(12)
            .margin_bottom(6)
            .x_label_area_size(70)
            .y_label_area_size(112)
            .build_cartesian_2d(
                (x_lo..x_hi).log_scale().with_key_points(x_ticks.clone()),
                (y_lo..y_hi)
                    .log_scale()
                    .with_key_points(y_ticks.clone())
                    .with_light_points(y_light.clone()),
            )?;
        house_mesh!(chart)
            .x_label_formatter(&|v| fmt_log_tick(v))
            .y_label_formatter(&|v| fmt_log_tick(v))
            .x_desc("Time the flow is equalled or exceeded (% of record)")
            .y_desc(format!("Flow ({})", p.flow_unit))
            .draw()?;
        let area = chart.plotting_area();
        if let Some(band) = &p.control {
            draw_control(area, band, &curves, (x_lo, x_hi), (y_lo, y_hi))?;
        }
        for (i, (_, pts)) in curves.iter().enumerate() {
            // Clamped so that rounding at the ends can never put a point off the plot.
            let pts = pts
                .iter()
                .map(|&(x, y)| (x.clamp(x_lo, x_hi), y.clamp(y_lo, y_hi)))
                .collect();
            draw_path(area, pts, colour_of(i).stroke_width(3), dash_of(i))?;
        }
        draw_legend(&foot, &legend, &rows)?;
        Ok(())
    })
}

/// Return periods for the frequency axis: the customary design recurrence intervals.
pub(super) const RETURN_PERIODS_YR: [f64; 13] = [
    1.0, 2.0, 5.0, 10.0, 25.0, 50.0, 100.0, 200.0, 500.0, 1000.0, 2000.0, 5000.0, 10000.0,
];

/// Annual peak flows at their plotting positions (markers) and the fitted curve (lines) of
/// each condition, against return period on a log axis.
pub fn frequency_png(p: &FrequencyPlot) -> Result<Vec<u8>, PlotError> {
    draw_frequency(p, Target::Png)?.png()
}

/// The same figure as SVG text, for the HTML report.
pub fn frequency_svg(p: &FrequencyPlot) -> Result<String, PlotError> {
    Ok(draw_frequency(p, Target::Svg)?.svg())
}

pub(super) fn draw_frequency(p: &FrequencyPlot, target: Target) -> Result<Drawn, PlotError> {
    let name = plot_name("frequency plot", &p.title);
    let ok = |&&(t, q): &&(f64, f64)| t.is_finite() && t > 0.0 && q.is_finite();
    let all_t = p
        .observed
        .iter()
        .chain(&p.fitted)
        .flat_map(|(_, c)| c.iter().filter(ok).map(|&(t, _)| t));
    let (t_min, t_max) = all_t.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), t| {
        (a.min(t), b.max(t))
    });
    let (x_lo, x_hi) = if t_min <= t_max {
        let lo = if t_min >= 1.0 { 1.0 } else { floor125(t_min) };
        let hi_target = t_max.max(10.0);
        let hi = RETURN_PERIODS_YR
            .iter()
            .copied()
            .find(|&r| r >= hi_target * (1.0 - 1e-9))
            .unwrap_or_else(|| ceil125(hi_target));
        (lo, if hi.is_finite() { hi } else { t_max })
    } else {
        (1.0, 100.0)
    };
    let flows = p
        .observed
        .iter()
        .chain(&p.fitted)
        .flat_map(|(_, c)| c.iter().filter(ok).map(|&(_, q)| q));
    let (y_lo, y_hi) = value_range(flows, 1.15).map_err(|m| input_error(&name, m))?;

    // One colour per condition name, in order of first appearance.
    let mut names: Vec<&str> = Vec::new();
    for (l, _) in p.observed.iter().chain(&p.fitted) {
        if !names.contains(&l.as_str()) {
            names.push(l);
        }
    }
    let index_of = |l: &str| names.iter().position(|n| *n == l).unwrap_or(0);
    let mut legend: Vec<(String, Swatch)> = Vec::new();
    for (l, _) in &p.observed {
        let i = index_of(l);
        legend.push((
            format!("{l}: annual peaks"),
            Swatch::Marker(colour_of(i), shape_of(i)),
        ));
    }
    for (l, _) in &p.fitted {
        let i = index_of(l);
        legend.push((
            format!("{l}: fitted"),
            Swatch::Line(colour_of(i), 3, dash_of(i)),
        ));
    }
    // Below one year (not expected from an annual series) and beyond the table: decades.
    let mut x_ticks: Vec<f64> = decade_ticks(x_lo, 1.0);
    x_ticks.retain(|&t| t <= 1.0);
    x_ticks.extend(
        RETURN_PERIODS_YR
            .iter()
            .copied()
            .filter(|&r| r > 1.0 && r <= x_hi * (1.0 + 1e-9)),
    );
    if x_hi >= 1e5 {
        x_ticks.extend(decade_ticks(1e5, x_hi));
    }

    let subtitle = if t_min <= t_max {
        "Annual peak flows at their plotting positions and the fitted distribution"
    } else {
        "No annual peaks or fitted curve to show"
    };

    render_to(target, &name, |root| {
        let (body, foot, rows) = layout(root, &p.title, subtitle, &legend)?;
        let mut chart = ChartBuilder::on(&body)
            .margin_left(24)
            .margin_right(48)
            .margin_top(12)
            .margin_bottom(6)
            .x_label_area_size(70)
            .y_label_area_size(112)
            .build_cartesian_2d(
                (x_lo..x_hi).log_scale().with_key_points(x_ticks.clone()),
                y_lo..y_hi,
            )?;
        house_mesh!(chart)
            .x_label_formatter(&|v| fmt_log_tick(v))
            .y_label_formatter(&|v| fmt_tick(v))
            .y_labels(10)
            .y_max_light_lines(1)
            .x_desc("Return period (years)")
            .y_desc(format!("Peak flow ({})", p.flow_unit))
            .draw()?;
        let area = chart.plotting_area();
        for (l, pts) in &p.fitted {
            let i = index_of(l);
            let pts = pts.iter().map(|&(t, q)| {
                if t > 0.0 {
                    (t.clamp(x_lo, x_hi), q.clamp(y_lo, y_hi))
                } else {
                    (f64::NAN, q)
                }
            });
            for run in runs(pts) {
                draw_path(area, run, colour_of(i).stroke_width(3), dash_of(i))?;
            }
        }
        for (l, pts) in &p.observed {
            let i = index_of(l);
            for &(t, q) in pts.iter().filter(ok) {
                draw_marker(
                    root,
                    area.map_coordinate(&(t.clamp(x_lo, x_hi), q.clamp(y_lo, y_hi))),
                    shape_of(i),
                    colour_of(i),
                    6,
                )?;
            }
        }
        draw_legend(&foot, &legend, &rows)?;
        Ok(())
    })
}

/// Ticks (fractional year, label) for a calendar axis from day `z0` to day `z1`.
pub(super) fn calendar_ticks(z0: i64, z1: i64) -> Vec<(f64, String)> {
    let (x0, x1) = (decimal_year(z0), decimal_year(z1));
    let span = x1 - x0;
    let (y0, _, _) = civil_from_days(z0);
    let (y1, _, _) = civil_from_days(z1);
    if span >= 2.0 {
        let step = [1, 2, 5, 10, 20, 50, 100, 200, 500, 1000]
            .into_iter()
            .find(|&s| span / s as f64 <= 14.0)
            .unwrap_or(1000);
        (y0..=y1)
            .filter(|y| y.rem_euclid(step) == 0)
            .map(|y| (y as f64, y.to_string()))
            .filter(|&(x, _)| x >= x0 - 1e-9 && x <= x1 + 1e-9)
            .collect()
    } else {
        let months = (span * 12.0).ceil().max(1.0);
        let every = [1, 2, 3, 6]
            .into_iter()
            .find(|&k| months / k as f64 <= 13.0)
            .unwrap_or(6);
        let mut out = Vec::new();
        for y in y0..=y1 {
            for m in (1..=12).filter(|m| (m - 1) % every == 0) {
                let Some(x) = calendar::day_number(y, m, 1).map(decimal_year) else {
                    continue;
                };
                if x >= x0 - 1e-9 && x <= x1 + 1e-9 {
                    let label = if m == 1 {
                        y.to_string()
                    } else {
                        format!("{y}-{m:02}")
                    };
                    out.push((x, label));
                }
            }
        }
        out
    }
}

/// Keeps, for each of `buckets` equal slices of the series, its first, lowest, highest and last
/// point (in time order), so a long record draws fast and looks the same at figure resolution.
pub(super) fn thin(points: &[(f64, f64)], buckets: usize) -> Vec<(f64, f64)> {
    if points.len() <= buckets * 4 || buckets == 0 {
        return points.to_vec();
    }
    let per = points.len().div_ceil(buckets);
    let mut out = Vec::with_capacity(buckets * 4);
    for chunk in points.chunks(per) {
        let (Some(first), Some(last)) = (chunk.first(), chunk.last()) else {
            continue;
        };
        let lo = chunk
            .iter()
            .enumerate()
            .min_by(|a, b| a.1.1.total_cmp(&b.1.1));
        let hi = chunk
            .iter()
            .enumerate()
            .max_by(|a, b| a.1.1.total_cmp(&b.1.1));
        let mut picks = vec![(0, *first), (chunk.len() - 1, *last)];
        if let Some((i, v)) = lo {
            picks.push((i, *v));
        }
        if let Some((i, v)) = hi {
            picks.push((i, *v));
        }
        picks.sort_by_key(|&(i, _)| i);
        picks.dedup_by_key(|&mut (i, _)| i);
        out.extend(picks.into_iter().map(|(_, v)| v));
    }
    out
}
/// One condition's panel of the record overview.
pub(super) struct Panel<'a> {
    pub(super) label: &'a str,
    pub(super) values: &'a [f64],
    /// (fractional year, flow) of each day.
    pub(super) points: Vec<(f64, f64)>,
}

/// The overview's subtitle: the days it covers, from day `z0` (counted from 1970-01-01).
fn overview_subtitle(p: &OverviewPlot, z0: i64, n_days: i64) -> String {
    let date_of = |k: i64| calendar::format_date(z0 + k);
    let has_days = p.daily_max.iter().any(|(_, v)| !v.is_empty());
    if !has_days {
        "No daily values to show".to_string()
    } else if n_days == 1 {
        format!("Highest flow of one day, {}", date_of(0))
    } else {
        format!(
            "Highest flow of each day, {} to {} ({n_days} days), same flow scale in every panel",
            date_of(0),
            date_of(n_days - 1),
        )
    }
}

/// One panel per condition, each day drawn at the fractional year of its start.
fn overview_panels(p: &OverviewPlot, z0: i64, n_days: i64) -> Vec<Panel<'_>> {
    p.daily_max
        .iter()
        .map(|(label, v)| {
            let pts = v
                .iter()
                .take(usize::try_from(n_days).unwrap_or(usize::MAX))
                .enumerate()
                .map(|(k, &q)| (decimal_year(z0 + k as i64), q))
                .collect();
            Panel {
                label: label.as_str(),
                values: v.as_slice(),
                points: pts,
            }
        })
        .collect()
}

/// The highest flow of each day over a long record against calendar years: one panel per
/// condition, all on the same flow scale, each with its highest day labelled.
pub fn overview_png(p: &OverviewPlot) -> Result<Vec<u8>, PlotError> {
    draw_overview(p, Target::Png)?.png()
}

/// The same figure as SVG text, for the HTML report.
pub fn overview_svg(p: &OverviewPlot) -> Result<String, PlotError> {
    Ok(draw_overview(p, Target::Svg)?.svg())
}

pub(super) fn draw_overview(p: &OverviewPlot, target: Target) -> Result<Drawn, PlotError> {
    let name = plot_name("record overview", &p.title);
    let (y, m, d) = p.day_labels_start;
    let Some(z0) = calendar::day_number(y, m, d) else {
        return Err(input_error(
            &name,
            format!("expected a calendar date for day 0, got {y}-{m:02}-{d:02}"),
        ));
    };
    let n_days = p.daily_max.iter().map(|(_, v)| v.len()).max().unwrap_or(0);
    let n_days = i64::try_from(n_days.max(1))
        .unwrap_or(i64::MAX)
        .min(10_000_000);
    let z1 = z0 + n_days;
    let (x0, x1) = (decimal_year(z0), decimal_year(z1));
    let (q_lo, q_hi) = value_range(
        p.daily_max.iter().flat_map(|(_, v)| v.iter().copied()),
        1.15,
    )
    .map_err(|m| input_error(&name, m))?;
    let ticks = calendar_ticks(z0, z1);
    let tick_x: Vec<f64> = ticks.iter().map(|(x, _)| *x).collect();
    let label_of = |v: &f64| {
        ticks
            .iter()
            .find(|(x, _)| (x - v).abs() < 1e-6)
            .map(|(_, l)| l.clone())
            .unwrap_or_default()
    };
    let date_of = |k: i64| calendar::format_date(z0 + k);
    let subtitle = overview_subtitle(p, z0, n_days);
    let panels = overview_panels(p, z0, n_days);

    render_to(target, &name, |root| {
        let (body, _, _) = layout(root, &p.title, &subtitle, &[])?;
        let n = panels.len().max(1) as u32;
        let axis_px = 70;
        let (_, body_h) = body.dim_in_pixel();
        let panel_h = (body_h.saturating_sub(axis_px) / n).max(1);
        let mut rest = body;
        for i in 0..n as usize {
            let last = i + 1 == n as usize;
            let (panel, below) = if last {
                (rest.clone(), rest.clone())
            } else {
                rest.split_vertically(panel_h)
            };
            rest = below;
            let mut chart = ChartBuilder::on(&panel)
                .margin_left(24)
                .margin_right(48)
                .margin_top(18)
                .margin_bottom(if last { 6 } else { 4 })
                .x_label_area_size(if last { axis_px } else { 0 })
                .y_label_area_size(112)
                .build_cartesian_2d(
                    TickedAxis::new(x0, x1, tick_x.clone(), Vec::new()),
                    q_lo..q_hi,
                )?;
            let blank = |_: &f64| String::new();
            let x_fmt: &dyn Fn(&f64) -> String = if last { &label_of } else { &blank };
            house_mesh!(chart)
                .x_label_formatter(x_fmt)
                .y_label_formatter(&|v| fmt_tick(v))
                .y_labels(if n > 2 { 4 } else { 6 })
                .y_max_light_lines(1)
                .x_desc(match (last, x1 - x0 >= 2.0) {
                    (false, _) => "",
                    (true, true) => "Year",
                    (true, false) => "Date",
                })
                .y_desc(format!("Flow ({})", p.flow_unit))
                .draw()?;

            let area = chart.plotting_area();
            let bounds = plot_bounds(area);
            let Some(Panel {
                label,
                values,
                points: pts,
            }) = panels.get(i)
            else {
                root.draw(&Text::new(
                    "no record to show",
                    (bounds.0 + 14, bounds.1 + 10),
                    font(22).color(&MUTED),
                ))?;
                continue;
            };
            let c = colour_of(i);
            let mut crowd = Crowding::new(bounds);
            let buckets = area.dim_in_pixel().0 as usize;
            // Dense records draw in 1-px lines (wider ones smear into blocks).
            let width = if pts.len() * 2 > buckets { 1 } else { 2 };
            for run in runs(pts.iter().copied()) {
                let run = thin(&run, buckets);
                crowd.trace(run.iter().map(|pt| area.map_coordinate(pt)));
                draw_path(area, run, c.stroke_width(width), Dash::Solid)?;
            }
            let highest =
                max_first(values.get(..pts.len()).unwrap_or(values)).filter(|&(v, _)| v > 0.0);
            let tag = if highest.is_some() {
                (*label).to_string()
            } else {
                format!("{label} (no flow)")
            };
            let (tw, th) = root.estimate_text_size(&tag, &font(22))?;
            let tag_box = [
                (bounds.0 + 8, bounds.1 + 6),
                (bounds.0 + 22 + tw as i32, bounds.1 + 14 + th as i32),
            ];
            crowd.fill(tag_box[0], tag_box[1]);
            let mut notes = Vec::new();
            if let Some((v, k)) = highest {
                let x = pts.get(k).map_or(x0, |pt| pt.0);
                notes.push(Note {
                    anchor: area.map_coordinate(&(x, v)),
                    text: format!(
                        "highest {} {} on {}",
                        fmt_value(v),
                        p.flow_unit,
                        date_of(k as i64)
                    ),
                    colour: c,
                    marker: Some(shape_of(i)),
                });
            }
            draw_notes(root, &notes, &mut crowd, bounds)?;
            root.draw(&Rectangle::new(tag_box, WHITE.mix(0.92).filled()))?;
            root.draw(&Rectangle::new(tag_box, c.stroke_width(2)))?;
            root.draw(&Text::new(
                tag,
                (tag_box[0].0 + 7, tag_box[0].1 + 4),
                font(22).color(&c),
            ))?;
        }
        Ok(())
    })
}

/// Exceedance (% of record) at which a duration curve (sorted by exceedance, flow falling)
/// reaches `q`: interpolated in log flow, 0 above its highest flow, `None` below its lowest.
fn exceedance_at(curve: &[(f64, f64)], q: f64) -> Option<f64> {
    let first = curve.first()?;
    if q > first.1 {
        return Some(0.0);
    }
    for w in curve.windows(2) {
        let [(x0, q0), (x1, q1)] = [w[0], w[1]];
        if q <= q0 && q >= q1 {
            let f = if q0 > q1 {
                (q0.ln() - q.ln()) / (q0.ln() - q1.ln())
            } else {
                0.0
            };
            return Some(x0 + f * (x1 - x0));
        }
    }
    None
}

/// The control band (shaded flow range), the allowance (the baseline's curve stretched by the
/// tolerance, inside the range) and a square at each level where another condition's curve
/// lies beyond the allowance, read from the curves as plotted.
fn draw_control(
    area: &DrawingArea<super::surface::Surface<'_>, impl CoordTranslate<From = (f64, f64)>>,
    band: &super::DurationBand,
    curves: &[(String, Vec<(f64, f64)>)],
    (x_lo, x_hi): (f64, f64),
    (y_lo, y_hi): (f64, f64),
) -> super::style::DrawResult {
    let (q0, q1) = (
        band.from_flow.clamp(y_lo, y_hi),
        band.to_flow.clamp(y_lo, y_hi),
    );
    area.draw(&Rectangle::new(
        [(x_lo, q0), (x_hi, q1)],
        BAND_FILL.filled(),
    ))?;
    for q in [q0, q1] {
        draw_path(
            area,
            vec![(x_lo, q), (x_hi, q)],
            BAND_EDGE.stroke_width(1),
            Dash::Solid,
        )?;
    }
    let Some((_, base)) = curves.get(band.baseline) else {
        return Ok(());
    };
    let allowed: Vec<(f64, f64)> = band
        .levels
        .iter()
        .filter_map(|&q| {
            let x = exceedance_at(base, q)? * (1.0 + band.tolerance);
            (x > 0.0).then_some((x.clamp(x_lo, x_hi), q.clamp(y_lo, y_hi)))
        })
        .collect();
    if allowed.len() > 1 {
        draw_path(area, allowed, LIMIT.stroke_width(2), Dash::Short)?;
    }
    let root = area.strip_coord_spec();
    for (i, (_, c)) in curves.iter().enumerate() {
        if i == band.baseline {
            continue;
        }
        for &q in &band.levels {
            let (Some(xb), Some(xc)) = (exceedance_at(base, q), exceedance_at(c, q)) else {
                continue;
            };
            if xc > xb * (1.0 + band.tolerance) + 1e-9 && xc > 0.0 {
                let at = area.map_coordinate(&(xc.clamp(x_lo, x_hi), q.clamp(y_lo, y_hi)));
                let (ox, oy) = root.get_base_pixel();
                draw_marker(&root, (at.0 - ox, at.1 - oy), Shape::Square, LIMIT, 4)?;
            }
        }
    }
    Ok(())
}
