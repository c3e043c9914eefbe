//! A pond's stage-storage and stage-discharge curves, side by side on a shared stage axis,
//! with the discharge of each outlet device and their total.

use super::{PlotError, PondCurvesPlot};
use plotters::prelude::*;

use super::axes::*;
use super::draw::*;
use super::style::*;

/// The stage-storage curve (left panel) and the stage-discharge curves (right panel: each
/// device dashed, the total solid) of a pond, stage upwards on both, the top of the embankment
/// as a dotted line.
pub fn pond_curves_png(p: &PondCurvesPlot) -> Result<Vec<u8>, PlotError> {
    draw_pond_curves(p, Target::Png)?.png()
}

/// The same figure as SVG text, for the HTML report.
pub fn pond_curves_svg(p: &PondCurvesPlot) -> Result<String, PlotError> {
    Ok(draw_pond_curves(p, Target::Svg)?.svg())
}

pub(super) fn draw_pond_curves(p: &PondCurvesPlot, target: Target) -> Result<Drawn, PlotError> {
    let name = plot_name("pond curves", &p.title);
    let (s_lo, s_hi) =
        padded_range(p.stages.iter().copied().chain(p.top)).map_err(|m| input_error(&name, m))?;
    let (v_lo, v_hi) =
        value_range(p.storage.iter().copied(), 1.05).map_err(|m| input_error(&name, m))?;
    let flows = p
        .total
        .iter()
        .copied()
        .chain(p.devices.iter().flat_map(|d| d.1.iter().copied()));
    let (q_lo, q_hi) = value_range(flows, 1.05).map_err(|m| input_error(&name, m))?;
    let mut legend: Vec<(String, Swatch)> = vec![
        (
            "storage".to_string(),
            Swatch::Line(colour_of(2), 3, Dash::Solid),
        ),
        (
            "total outflow".to_string(),
            Swatch::Line(INK, 3, Dash::Solid),
        ),
    ];
    for (i, (label, _)) in p.devices.iter().enumerate() {
        legend.push((label.clone(), Swatch::Line(colour_of(i), 2, Dash::Long)));
    }
    if p.top.is_some() {
        legend.push((
            "top of embankment".to_string(),
            Swatch::Line(REFERENCE, 2, Dash::Short),
        ));
    }
    render_to(target, &name, |root| {
        let (body, foot, rows) = layout(root, &p.title, &p.subtitle, &legend)?;
        let (left, right) = body.split_horizontally(body.dim_in_pixel().0 / 2);
        let panels = [
            (&left, (v_lo, v_hi), format!("Storage ({})", p.volume_unit)),
            (&right, (q_lo, q_hi), format!("Outflow ({})", p.flow_unit)),
        ];
        for (k, (panel, (x0, x1), x_desc)) in panels.into_iter().enumerate() {
            let mut chart = ChartBuilder::on(panel)
                .margin_left(24)
                .margin_right(36)
                .margin_top(12)
                .margin_bottom(6)
                .x_label_area_size(70)
                .y_label_area_size(104)
                .build_cartesian_2d(x0..x1, s_lo..s_hi)?;
            house_mesh!(chart)
                .x_label_formatter(&|v| fmt_tick(v))
                .y_label_formatter(&|v| fmt_tick(v))
                .x_labels(6)
                .y_labels(10)
                .x_desc(x_desc)
                .y_desc(format!("Stage ({})", p.stage_unit))
                .draw()?;
            let area = chart.plotting_area();
            if let Some(t) = p.top.filter(|t| t.is_finite()) {
                draw_path(
                    area,
                    vec![(x0, t), (x1, t)],
                    REFERENCE.stroke_width(2),
                    Dash::Short,
                )?;
            }
            let pairs = |xs: &[f64]| -> Vec<(f64, f64)> {
                xs.iter().zip(&p.stages).map(|(&x, &h)| (x, h)).collect()
            };
            if k == 0 {
                for run in runs(pairs(&p.storage)) {
                    draw_path(area, run, colour_of(2).stroke_width(3), Dash::Solid)?;
                }
            } else {
                for (i, (_, q)) in p.devices.iter().enumerate() {
                    for run in runs(pairs(q)) {
                        draw_path(area, run, colour_of(i).stroke_width(2), Dash::Long)?;
                    }
                }
                for run in runs(pairs(&p.total)) {
                    draw_path(area, run, INK.stroke_width(3), Dash::Solid)?;
                }
            }
        }
        draw_legend(&foot, &legend, &rows)?;
        Ok(())
    })
}
