//! A pond's inflow, outflow and water-surface elevation through a storm.

use super::{PlotError, PondPlot};
use plotters::prelude::*;

use super::axes::*;
use super::draw::*;
use super::style::*;
use crate::methods::stats::max_first;

/// Inflow and outflow of a pond (left axis) and its water-surface elevation (right axis), with
/// a labelled dashed line at each reference elevation and the peaks marked.
pub fn pond_png(p: &PondPlot) -> Result<Vec<u8>, PlotError> {
    draw_pond(p, Target::Png)?.png()
}

/// The same figure as SVG text, for the HTML report.
pub fn pond_svg(p: &PondPlot) -> Result<String, PlotError> {
    Ok(draw_pond(p, Target::Svg)?.svg())
}

pub(super) fn draw_pond(p: &PondPlot, target: Target) -> Result<Drawn, PlotError> {
    let name = plot_name("pond plot", &p.title);
    let dt = check_step(&name, p.step_h)?;
    let n = [p.inflow.len(), p.outflow.len(), p.stage.len()]
        .into_iter()
        .max()
        .unwrap_or(0)
        .saturating_sub(1);
    let t_end = time_end(&name, n, dt)?;
    let win = window_of(p.window_h, t_end);
    let in_win =
        |v: &[f64]| -> Vec<f64> { windowed(v, dt, win).into_iter().map(|(_, q)| q).collect() };
    let flows = in_win(&p.inflow).into_iter().chain(in_win(&p.outflow));
    let (q_lo, q_hi) = value_range(flows, 1.3).map_err(|m| input_error(&name, m))?;
    let stages = p
        .stage
        .iter()
        .copied()
        .chain(std::iter::once(p.peak_stage))
        .chain(p.references.iter().map(|(_, v)| *v));
    let (s_lo, s_hi) = padded_range(stages).map_err(|m| input_error(&name, m))?;

    let inflow_c = colour_of(0);
    let outflow_c = colour_of(1);
    let stage_c = colour_of(2);
    let legend: Vec<(String, Swatch)> = vec![
        (
            "inflow (left axis)".to_string(),
            Swatch::Line(inflow_c, 3, Dash::Solid),
        ),
        (
            "outflow (left axis)".to_string(),
            Swatch::Line(outflow_c, 3, Dash::Long),
        ),
        (
            "water surface (right axis)".to_string(),
            Swatch::Line(stage_c, 3, Dash::Solid),
        ),
        (
            "reference elevation".to_string(),
            Swatch::Line(REFERENCE, 2, Dash::Short),
        ),
    ];

    let axes = TimeAxes {
        t: win,
        y: (q_lo, q_hi),
        y2: (s_lo, s_hi),
        y_desc: format!("Flow ({})", p.flow_unit),
        y2_desc: format!("Water-surface elevation ({})", p.stage_unit),
        y2_labels: 10,
    };

    render_to(target, &name, |root| {
        let (body, foot, rows) = layout(root, &p.title, &p.subtitle, &legend)?;
        let chart = time_chart(&body, &axes)?;
        let bounds = plot_bounds(chart.plotting_area());
        let mut crowd = Crowding::new(bounds);
        let stage_area = chart.secondary_plotting_area();
        let area = chart.plotting_area();
        let mut ref_notes = Vec::new();
        for (label, v) in p.references.iter().filter(|(_, v)| v.is_finite()) {
            let line = vec![(win.0, *v), (win.1, *v)];
            crowd.trace(line.iter().map(|pt| stage_area.map_coordinate(pt)));
            draw_path(stage_area, line, REFERENCE.stroke_width(2), Dash::Short)?;
            let (_, y) = stage_area.map_coordinate(&(win.1, *v));
            ref_notes.push(Note {
                anchor: (bounds.2 - 4, y),
                text: format!("{label} {} {}", fmt_stage(*v), p.stage_unit),
                colour: REFERENCE,
                marker: None,
            });
        }
        for (values, c, dash) in [
            (&p.inflow, inflow_c, Dash::Solid),
            (&p.outflow, outflow_c, Dash::Long),
        ] {
            for run in runs(windowed(values, dt, win)) {
                crowd.trace(run.iter().map(|pt| area.map_coordinate(pt)));
                draw_path(area, run, c.stroke_width(3), dash)?;
            }
        }
        for run in runs(windowed(&p.stage, dt, win)) {
            crowd.trace(run.iter().map(|pt| stage_area.map_coordinate(pt)));
            draw_path(stage_area, run, stage_c.stroke_width(3), Dash::Solid)?;
        }
        let mut notes = Vec::new();
        if p.peak_stage.is_finite() {
            let t = max_first(&p.stage).map_or(0.0, |(_, k)| k as f64 * dt);
            notes.push(Note {
                anchor: stage_area.map_coordinate(&(t, p.peak_stage)),
                text: format!(
                    "peak water surface {} {} at {} h",
                    fmt_stage(p.peak_stage),
                    p.stage_unit,
                    fmt_hours(t)
                ),
                colour: stage_c,
                marker: Some(Shape::Diamond),
            });
        }
        for (what, values, c, shape) in [
            ("peak inflow", &p.inflow, inflow_c, Shape::Circle),
            ("peak outflow", &p.outflow, outflow_c, Shape::Triangle),
        ] {
            if let Some((v, k)) = max_first(values).filter(|&(v, _)| v > 0.0) {
                let t = k as f64 * dt;
                notes.push(Note {
                    anchor: area.map_coordinate(&(t, v)),
                    text: format!(
                        "{what} {} {} at {} h",
                        fmt_value(v),
                        p.flow_unit,
                        fmt_hours(t)
                    ),
                    colour: c,
                    marker: Some(shape),
                });
            }
        }
        notes.extend(ref_notes);
        draw_notes(root, &notes, &mut crowd, bounds)?;
        draw_legend(&foot, &legend, &rows)?;
        Ok(())
    })
}
