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
    encode_png(draw_pond(p)?)
}

pub(super) fn draw_pond(p: &PondPlot) -> Result<Canvas, PlotError> {
    let name = plot_name("pond plot", &p.title);
    let dt = check_step(&name, p.step_h)?;
    let n = [p.inflow.len(), p.outflow.len(), p.stage.len()]
        .into_iter()
        .max()
        .unwrap_or(0)
        .saturating_sub(1);
    let t_end = time_end(&name, n, dt)?;
    let flows = p.inflow.iter().chain(&p.outflow).copied();
    let (q_lo, q_hi) = value_range(flows, 1.3).map_err(|m| input_error(&name, m))?;
    let stages = p
        .stage
        .iter()
        .copied()
        .chain(std::iter::once(p.peak_stage))
        .chain(p.references.iter().map(|(_, v)| *v));
    let (s_lo, s_hi) = padded_range(stages).map_err(|m| input_error(&name, m))?;
    let (x_major, x_minor) = time_ticks(t_end);

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

    render(&name, |root| {
        let (body, foot, rows) = layout(root, &p.title, &p.subtitle, &legend)?;
        let mut chart = ChartBuilder::on(&body)
            .margin_left(24)
            .margin_right(24)
            .margin_top(12)
            .margin_bottom(6)
            .x_label_area_size(70)
            .y_label_area_size(104)
            .right_y_label_area_size(112)
            .build_cartesian_2d(
                TickedAxis::new(0.0, t_end, x_major.clone(), x_minor.clone()),
                q_lo..q_hi,
            )?
            .set_secondary_coord(0.0..t_end, s_lo..s_hi);
        house_mesh!(chart)
            .x_label_formatter(&|v| fmt_tick(v))
            .y_label_formatter(&|v| fmt_tick(v))
            .y_labels(10)
            .y_max_light_lines(1)
            .x_desc("Time from start of storm (h)")
            .y_desc(format!("Flow ({})", p.flow_unit))
            .draw()?;
        chart
            .configure_secondary_axes()
            .axis_style(MUTED.stroke_width(1))
            .label_style(font(19))
            .axis_desc_style(font(22))
            .y_label_formatter(&|v| fmt_tick(v))
            .y_labels(10)
            .y_desc(format!("Water-surface elevation ({})", p.stage_unit))
            .draw()?;

        let bounds = plot_bounds(chart.plotting_area());
        let mut crowd = Crowding::new(bounds);
        let stage_area = chart.secondary_plotting_area();
        let area = chart.plotting_area();
        let mut ref_notes = Vec::new();
        for (label, v) in p.references.iter().filter(|(_, v)| v.is_finite()) {
            let line = vec![(0.0, *v), (t_end, *v)];
            crowd.trace(line.iter().map(|pt| stage_area.map_coordinate(pt)));
            draw_path(stage_area, line, REFERENCE.stroke_width(2), Dash::Short)?;
            let (_, y) = stage_area.map_coordinate(&(t_end, *v));
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
            for run in runs(timed(values, dt)) {
                crowd.trace(run.iter().map(|pt| area.map_coordinate(pt)));
                draw_path(area, run, c.stroke_width(3), dash)?;
            }
        }
        for run in runs(timed(&p.stage, dt)) {
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
