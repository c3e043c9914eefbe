//! The figures of the design storms as data: each storm's hydrographs at each point and each
//! pond's inflow, outflow and stage, in output units, windowed around the action
//! ([`plot::action_window`]; the whole run is in the storm CSV). The PNGs (`cli::run`) and the
//! HTML report draw from the same list, so both show the same figures.

use crate::engine::analysis::{self, Analysis};
use crate::model::{ElementKind, Study};
use crate::report::plot::{self, PlotError};
use crate::report::summary::{self, Out};
use crate::util::units::Quantity;

/// What a storm figure is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Subject {
    /// The hydrographs of every condition at a point (index into `study.points`).
    Point(usize),
    /// A pond (element index) in one condition.
    Pond {
        /// Element index.
        element: usize,
        /// Condition index.
        condition: usize,
    },
}

/// The drawing data of one figure.
#[derive(Debug, Clone, PartialEq)]
pub enum FigureData {
    /// Hydrographs at a point.
    Storm(plot::StormPointPlot),
    /// A pond's routing.
    Pond(plot::PondPlot),
}

/// One storm figure: its caption, what it shows, and its data.
#[derive(Debug, Clone, PartialEq)]
pub struct StormFigure {
    /// Caption stem ("10-yr at outfall").
    pub caption: String,
    /// Storm index.
    pub storm: usize,
    /// What it is about.
    pub subject: Subject,
    /// What to draw.
    pub data: FigureData,
}

impl StormFigure {
    /// The figure as PNG bytes.
    ///
    /// # Errors
    /// When it cannot be drawn.
    pub fn png(&self) -> Result<Vec<u8>, PlotError> {
        match &self.data {
            FigureData::Storm(d) => plot::storm_point_png(d),
            FigureData::Pond(d) => plot::pond_png(d),
        }
    }

    /// The figure as SVG text.
    ///
    /// # Errors
    /// When it cannot be drawn.
    pub fn svg(&self) -> Result<String, PlotError> {
        match &self.data {
            FigureData::Storm(d) => plot::storm_point_svg(d),
            FigureData::Pond(d) => plot::pond_svg(d),
        }
    }
}

/// Every storm's figures: per storm, the hydrographs at each point, then each pond of each
/// simulated condition.
pub fn storm_figures(study: &Study, a: &Analysis) -> Vec<StormFigure> {
    let mut out = Vec::new();
    for st in &a.storms {
        for pi in 0..study.points.len() {
            out.push(point_figure(study, a, st, pi));
        }
        for c in &st.conditions {
            for (i, er) in c.elements.iter().enumerate() {
                if let Some(f) = pond_figure(study, st, c.condition, i, er.as_ref()) {
                    out.push(f);
                }
            }
        }
    }
    out
}

fn flow_unit(o: Out) -> String {
    o.unit(Quantity::Flow).replace("m3/s", "m³/s")
}

fn point_figure(
    study: &Study,
    a: &Analysis,
    st: &crate::engine::network::StormResult,
    pi: usize,
) -> StormFigure {
    let o = Out(study.units);
    let storm = &study.storms[st.storm];
    let p = &study.points[pi];
    let hydrographs: Vec<plot::Series> = st
        .conditions
        .iter()
        .map(|c| plot::Series {
            label: study.conditions[c.condition].clone(),
            values: c.points[pi].iter().map(|v| o.flow(*v)).collect(),
        })
        .collect();
    let limit = st
        .conditions
        .iter()
        .filter(|c| c.condition != study.baseline)
        .find_map(|c| analysis::limit_cfs(study, &a.topology, &a.storms, pi, st.storm, c.condition))
        .map(|l| {
            (
                format!(
                    "limit ({})",
                    p.limit_text.get(st.storm).cloned().unwrap_or_default()
                ),
                o.flow(l),
            )
        });
    let series: Vec<&[f64]> = hydrographs.iter().map(|h| h.values.as_slice()).collect();
    let window_h = plot::action_window(&series, st.step_h);
    let data = plot::StormPointPlot {
        title: format!(
            "{} - {} at {}",
            if study.title.is_empty() {
                "runnel"
            } else {
                &study.title
            },
            storm.name,
            p.name
        ),
        subtitle: format!(
            "depth {} {}, step {:.0} min; runnel {}",
            crate::util::units::sig(o.depth(storm.depth_in()), 3),
            o.unit(Quantity::Depth),
            study.step_h * 60.0,
            env!("CARGO_PKG_VERSION")
        ),
        step_h: st.step_h,
        rain: st.rain_in.iter().map(|r| o.depth(*r)).collect(),
        rain_unit: o.unit(Quantity::Depth).to_string(),
        flow_unit: flow_unit(o),
        hydrographs,
        limit,
        window_h,
    };
    StormFigure {
        caption: format!("{} at {}", storm.name, p.name),
        storm: st.storm,
        subject: Subject::Point(pi),
        data: FigureData::Storm(data),
    }
}

fn pond_figure(
    study: &Study,
    st: &crate::engine::network::StormResult,
    condition: usize,
    i: usize,
    er: Option<&crate::engine::network::ElementResult>,
) -> Option<StormFigure> {
    let o = Out(study.units);
    let storm = &study.storms[st.storm];
    let (Some(pr), ElementKind::Pond(pond)) =
        (er.and_then(|e| e.pond.as_ref()), &study.elements[i].kind)
    else {
        return None;
    };
    let outflow: Vec<f64> = er
        .map(|e| e.outflow_cfs.iter().map(|v| o.flow(*v)).collect())
        .unwrap_or_default();
    let mut references = Vec::new();
    for (k, d) in pond.outlets.iter().enumerate() {
        let label = crate::engine::sizing::outlet_label(
            k,
            pond.outlet_names.get(k).and_then(|n| n.as_deref()),
        );
        references.push((format!("{label} {}", kind_word(d)), o.length(d.lowest_ft())));
    }
    references.extend(structure_references(pond, o));
    if let Some(t) = pond.top_ft {
        references.push(("top of embankment".to_string(), o.length(t)));
    }
    let name = &study.elements[i].name;
    let cname = &study.conditions[condition];
    let inflow: Vec<f64> = pr.inflow_cfs.iter().map(|v| o.flow(*v)).collect();
    let window_h = plot::action_window(&[&inflow, &outflow], st.step_h);
    let data = plot::PondPlot {
        title: format!(
            "{} - {} ({cname})",
            summary::kind_and_name("Pond", name),
            storm.name
        ),
        subtitle: format!(
            "storage-indication routing, step {:.0} min; runnel {}",
            study.step_h * 60.0,
            env!("CARGO_PKG_VERSION")
        ),
        step_h: st.step_h,
        flow_unit: flow_unit(o),
        stage_unit: o.unit(Quantity::Length).to_string(),
        inflow,
        outflow,
        stage: pr.stage_ft.iter().map(|v| o.length(*v)).collect(),
        peak_stage: o.length(pr.summary.peak_stage_ft),
        references,
        window_h,
    };
    Some(StormFigure {
        caption: format!(
            "{}, {} ({cname})",
            summary::kind_and_name("pond", name),
            storm.name
        ),
        storm: st.storm,
        subject: Subject::Pond {
            element: i,
            condition,
        },
        data: FigureData::Pond(data),
    })
}

/// The word for an outlet's reference elevation on a pond figure.
pub fn kind_word(d: &crate::methods::hydraulics::Outlet) -> &'static str {
    use crate::methods::hydraulics::Outlet as D;
    match d {
        D::CircularOrifice { .. } => "orifice invert",
        D::RectangularOrifice { .. } => "orifice invert",
        D::SharpCrestedWeir { .. } => "weir crest",
        D::VNotchWeir { .. } => "V-notch crest",
        D::BroadCrestedWeir { .. } => "spillway crest",
        D::Riser { .. } => "riser rim",
        D::Rating { .. } => "rating start",
        D::PerforatedRiser { .. } => "lowest row of holes",
        D::VaryingWeir { .. } => "weir crest",
    }
}

/// Reference lines of a pond plot for its outlet structure: each barrel's
/// inlet invert and the tailwater (fixed, or with no outflow).
fn structure_references(pond: &crate::model::Pond, o: Out) -> Vec<(String, f64)> {
    let st = &pond.structure;
    let mut v: Vec<(String, f64)> = st
        .barrels
        .iter()
        .zip(&st.barrel_names)
        .map(|(b, n)| (format!("barrel \"{n}\" inlet"), o.length(b.inlet_invert_ft)))
        .collect();
    match &st.tailwater {
        Some(crate::methods::hydraulics::Tailwater::Fixed(x)) => {
            v.push(("tailwater".to_string(), o.length(*x)))
        }
        Some(t) => v.push((
            "tailwater at no outflow".to_string(),
            o.length(t.still_ft()),
        )),
        None => {}
    }
    v
}
