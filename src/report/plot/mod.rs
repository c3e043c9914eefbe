//! PNG figures for a drainage report: storm hydrographs under their hyetograph, pond inflow,
//! outflow and stage, flow-duration curves, peak-flow frequency and long-record overviews.
//!
//! This module implements no hydrologic method and so cites no published source: it draws
//! series that other modules have already computed (hydrographs, routed stages, plotting
//! positions, fitted curves). It takes plain data, does no file I/O and returns the encoded PNG
//! bytes. Layout, wording and colours are runnel's own. Text is set in the bundled DejaVu Sans
//! font (registered with plotters' `ab_glyph` renderer), so no system fonts are needed.
//!
//! Input values that are NaN or infinite are skipped (a line breaks at them); empty or all-zero
//! series give a plot with a unit axis instead of an error.
//!
//! One file per figure family: `storm.rs` (hydrographs at a point), `pond.rs`
//! (a pond's inflow, outflow and stage), `record.rs` (flow duration, frequency and the
//! long-record overview), over shared helpers: `style.rs` (font, colours, line and marker
//! styles, the canvas and PNG encoding), `axes.rs` (number labels, ranges and ticks) and
//! `draw.rs` (axes, lines, markers, titles, legends and the placement of notes).

mod axes;
mod curves;
mod draw;
mod pond;
mod record;
mod storm;
mod style;
mod surface;
#[cfg(test)]
mod tests;

pub use axes::{WINDOW_TAIL_FRACTION, action_window};
pub use curves::{pond_curves_png, pond_curves_svg};
pub use pond::{pond_png, pond_svg};
pub use record::{
    flow_duration_png, flow_duration_svg, frequency_png, frequency_svg, overview_png, overview_svg,
};
pub use storm::{storm_point_png, storm_point_svg};

/// Width of every figure, in pixels.
pub const WIDTH_PX: u32 = 1600;
/// Height of every figure, in pixels.
pub const HEIGHT_PX: u32 = 1000;

/// Error from drawing a figure.
#[derive(Debug, thiserror::Error)]
pub enum PlotError {
    /// The drawing library or the PNG encoder failed.
    #[error("plot {name}: {message}")]
    Draw {
        /// Which figure (kind and title).
        name: String,
        /// What went wrong.
        message: String,
    },
    /// The input cannot be drawn (for example a time step that is not a positive number).
    #[error("plot {name}: {message}")]
    Input {
        /// Which figure (kind and title).
        name: String,
        /// What was expected and what was given.
        message: String,
    },
}

/// One named series sampled at a uniform time step: `values[k]` is the value at `k * step_h`.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Legend text (usually the condition's name).
    pub label: String,
    /// Values at the step ends, starting at t = 0.
    pub values: Vec<f64>,
}

/// Hydrographs of every condition at one point for one storm, with the storm's rain above.
#[derive(Debug, Clone, PartialEq)]
pub struct StormPointPlot {
    /// First title line (e.g. the point and the storm).
    pub title: String,
    /// Second, smaller title line (e.g. the study and the storm depth).
    pub subtitle: String,
    /// Time step of every series, hours.
    pub step_h: f64,
    /// Rain depth in each step: `rain[k]` falls during `[k * step_h, (k + 1) * step_h)`.
    pub rain: Vec<f64>,
    /// Unit of rain depth, `"in"` or `"mm"`.
    pub rain_unit: String,
    /// Unit of flow, `"cfs"` or `"m³/s"`.
    pub flow_unit: String,
    /// One hydrograph per condition, in the flow unit.
    pub hydrographs: Vec<Series>,
    /// Optional horizontal limit line: legend text and flow.
    pub limit: Option<(String, f64)>,
    /// Time window shown, hours (`None`: the whole run); see [`action_window`].
    pub window_h: Option<(f64, f64)>,
}

/// Inflow, outflow and water-surface stage of one pond for one storm.
#[derive(Debug, Clone, PartialEq)]
pub struct PondPlot {
    /// First title line.
    pub title: String,
    /// Second, smaller title line.
    pub subtitle: String,
    /// Time step of every series, hours.
    pub step_h: f64,
    /// Unit of flow, `"cfs"` or `"m³/s"`.
    pub flow_unit: String,
    /// Unit of stage, `"ft"` or `"m"`.
    pub stage_unit: String,
    /// Inflow at the step ends, in the flow unit.
    pub inflow: Vec<f64>,
    /// Outflow at the step ends, in the flow unit.
    pub outflow: Vec<f64>,
    /// Water-surface stage at the step ends, in the stage unit.
    pub stage: Vec<f64>,
    /// Highest stage reached, in the stage unit.
    pub peak_stage: f64,
    /// Reference elevations drawn as labelled dashed lines (outlet inverts, crests, the top).
    pub references: Vec<(String, f64)>,
    /// Time window shown, hours (`None`: the whole run); see [`action_window`].
    pub window_h: Option<(f64, f64)>,
}

/// Flow-duration curves, one per condition.
#[derive(Debug, Clone, PartialEq)]
pub struct DurationPlot {
    /// Title line.
    pub title: String,
    /// Unit of flow, `"cfs"` or `"m³/s"`.
    pub flow_unit: String,
    /// Per condition: (fraction of time equalled or exceeded, 0..1; flow), sorted.
    pub curves: Vec<(String, Vec<(f64, f64)>)>,
    /// The duration control at this point, if it has one: shaded, with its allowance drawn.
    pub control: Option<DurationBand>,
}

/// A flow-duration control as drawn: the controlled flow range, the allowance over the
/// baseline's curve, and the levels at which a condition's curve exceeds it.
#[derive(Debug, Clone, PartialEq)]
pub struct DurationBand {
    /// Lowest controlled flow, in the flow unit.
    pub from_flow: f64,
    /// Highest controlled flow, in the flow unit.
    pub to_flow: f64,
    /// Relative tolerance on the baseline's time (0.1 = 10 %).
    pub tolerance: f64,
    /// Index into `curves` of the baseline.
    pub baseline: usize,
    /// Flow levels compared (in the flow unit), evenly spaced in log over the range.
    pub levels: Vec<f64>,
}

/// Annual peak flows against return period, with the fitted curve of each condition.
#[derive(Debug, Clone, PartialEq)]
pub struct FrequencyPlot {
    /// Title line.
    pub title: String,
    /// Unit of flow, `"cfs"` or `"m³/s"`.
    pub flow_unit: String,
    /// Per condition: (return period in years, annual peak) at its plotting position.
    pub observed: Vec<(String, Vec<(f64, f64)>)>,
    /// Per condition: (return period in years, flow) along the fitted distribution.
    pub fitted: Vec<(String, Vec<(f64, f64)>)>,
}

/// The highest flow of each day over a long record, one line per condition.
#[derive(Debug, Clone, PartialEq)]
pub struct OverviewPlot {
    /// Title line.
    pub title: String,
    /// Unit of flow, `"cfs"` or `"m³/s"`.
    pub flow_unit: String,
    /// Calendar date (year, month, day) of day 0.
    pub day_labels_start: (i32, u32, u32),
    /// Per condition: one value per day, starting at day 0.
    pub daily_max: Vec<(String, Vec<f64>)>,
}

/// A pond's stage-storage and stage-discharge relations at the same stages.
#[derive(Debug, Clone, PartialEq)]
pub struct PondCurvesPlot {
    /// First title line.
    pub title: String,
    /// Second, smaller title line.
    pub subtitle: String,
    /// Unit of stage.
    pub stage_unit: String,
    /// Unit of volume.
    pub volume_unit: String,
    /// Unit of flow.
    pub flow_unit: String,
    /// Stages, rising, in the stage unit.
    pub stages: Vec<f64>,
    /// Storage at each stage.
    pub storage: Vec<f64>,
    /// Each outlet device: legend text and its discharge at each stage.
    pub devices: Vec<(String, Vec<f64>)>,
    /// Total discharge at each stage.
    pub total: Vec<f64>,
    /// Top of the embankment, in the stage unit.
    pub top: Option<f64>,
}
