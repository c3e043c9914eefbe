//! Hydrographs of every condition at a point under the storm's rain.

use super::{PlotError, StormPointPlot};
use plotters::prelude::*;

use super::axes::*;
use super::draw::*;
use super::style::*;
use crate::methods::stats::max_first;

/// Hydrographs of every condition at a point, with the storm's rain hanging from the top on an
/// inverted right axis and each condition's peak labelled with its flow and time.
///
/// The flow axis reaches 1.6 times the highest flow and the rain axis 3 times the highest rain
/// per step, so the bars keep to the top third and the hydrographs to the lower part.
pub fn storm_point_png(p: &StormPointPlot) -> Result<Vec<u8>, PlotError> {
    draw_storm_point(p, Target::Png)?.png()
}

/// The same figure as SVG text, for the HTML report.
pub fn storm_point_svg(p: &StormPointPlot) -> Result<String, PlotError> {
    Ok(draw_storm_point(p, Target::Svg)?.svg())
}

pub(super) fn draw_storm_point(p: &StormPointPlot, target: Target) -> Result<Drawn, PlotError> {
    let name = plot_name("storm plot", &p.title);
    let dt = check_step(&name, p.step_h)?;
    let n_flow = p
        .hydrographs
        .iter()
        .map(|s| s.values.len().saturating_sub(1))
        .max()
        .unwrap_or(0);
    let t_end = time_end(&name, n_flow.max(p.rain.len()), dt)?;
    let win = window_of(p.window_h, t_end);
    let in_win =
        |v: &[f64]| -> Vec<f64> { windowed(v, dt, win).into_iter().map(|(_, q)| q).collect() };
    let limit_value = p.limit.as_ref().map(|(_, v)| *v).filter(|v| v.is_finite());
    let flows = p
        .hydrographs
        .iter()
        .flat_map(|s| in_win(&s.values))
        .chain(limit_value);
    let (q_lo, q_hi) = value_range(flows, 1.6).map_err(|m| input_error(&name, m))?;
    let rain_max = finite(p.rain.iter().copied()).fold(0.0_f64, f64::max);
    let r_hi = if rain_max > 0.0 {
        let r = rain_max * 3.0;
        if r.is_finite() { r } else { rain_max }
    } else {
        1.0
    };
    let step_words = fmt_step(dt);

    let mut legend: Vec<(String, Swatch)> = vec![(
        if rain_max > 0.0 {
            format!("rain in each {step_words} step (right axis)")
        } else {
            "no rain in this storm".to_string()
        },
        Swatch::Bar(RAIN_FILL, RAIN_EDGE),
    )];
    let peaks: Vec<Option<(f64, usize)>> =
        p.hydrographs.iter().map(|s| max_first(&s.values)).collect();
    for (i, (s, pk)) in p.hydrographs.iter().zip(&peaks).enumerate() {
        let label = match pk {
            Some((v, _)) if *v > 0.0 => s.label.clone(),
            _ => format!("{} (no flow)", s.label),
        };
        legend.push((label, Swatch::Line(colour_of(i), 3, dash_of(i))));
    }
    if let (Some((label, _)), Some(v)) = (&p.limit, limit_value) {
        legend.push((
            format!("{label}: {} {}", fmt_value(v), p.flow_unit),
            Swatch::Line(LIMIT, 2, Dash::Long),
        ));
    }
    let axes = TimeAxes {
        t: win,
        y: (q_lo, q_hi),
        y2: (r_hi, 0.0),
        y_desc: format!("Flow ({})", p.flow_unit),
        y2_desc: format!("Rain per {step_words} step ({})", p.rain_unit),
        y2_labels: 8,
    };

    render_to(target, &name, |root| {
        let (body, foot, rows) = layout(root, &p.title, &p.subtitle, &legend)?;
        let chart = time_chart(&body, &axes)?;
        let bounds = plot_bounds(chart.plotting_area());
        let mut crowd = Crowding::new(bounds);

        // Rain bars hanging from the top; outlined only when wide enough to show the outline.
        let rain_area = chart.secondary_plotting_area();
        let bar_px = f64::from(rain_area.dim_in_pixel().0) * dt / (win.1 - win.0);
        for (k, r) in p.rain.iter().enumerate() {
            let (a, b) = (k as f64 * dt, (k + 1) as f64 * dt);
            if !(r.is_finite() && *r > 0.0) || a < win.0 - 1e-9 || b > win.1 + 1e-9 {
                continue;
            }
            let b = [(a, 0.0), (b, r.min(r_hi))];
            rain_area.draw(&Rectangle::new(b, RAIN_FILL.filled()))?;
            if bar_px >= 5.0 {
                rain_area.draw(&Rectangle::new(b, RAIN_EDGE.stroke_width(1)))?;
            }
            crowd.fill(
                rain_area.map_coordinate(&b[0]),
                rain_area.map_coordinate(&b[1]),
            );
        }

        let area = chart.plotting_area();
        if let Some(v) = limit_value {
            let line = vec![(win.0, v), (win.1, v)];
            crowd.trace(line.iter().map(|pt| area.map_coordinate(pt)));
            draw_path(area, line, LIMIT.stroke_width(2), Dash::Long)?;
        }
        let mut notes: Vec<(f64, (String, String, Note))> = Vec::new();
        for (i, (s, pk)) in p.hydrographs.iter().zip(&peaks).enumerate() {
            for run in runs(windowed(&s.values, dt, win)) {
                crowd.trace(run.iter().map(|pt| area.map_coordinate(pt)));
                draw_path(area, run, colour_of(i).stroke_width(3), dash_of(i))?;
            }
            if let Some((v, k)) = pk.filter(|&(v, _)| v > 0.0) {
                let t = k as f64 * dt;
                let rest = format!("{} {} at {} h", fmt_value(v), p.flow_unit, fmt_hours(t));
                notes.push((
                    v,
                    (
                        s.label.clone(),
                        rest,
                        Note {
                            anchor: area.map_coordinate(&(t, v)),
                            text: String::new(),
                            colour: colour_of(i),
                            marker: Some(shape_of(i)),
                        },
                    ),
                ));
            }
        }
        // The highest peak gets the first choice of place; equal peaks share one note.
        notes.sort_by(|a, b| b.0.total_cmp(&a.0));
        let notes = merge_equal_notes(notes.into_iter().map(|(_, n)| n).collect());
        draw_notes(root, &notes, &mut crowd, bounds)?;
        draw_legend(&foot, &legend, &rows)?;
        Ok(())
    })
}
