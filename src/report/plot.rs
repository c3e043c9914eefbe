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

use std::error::Error as StdError;
use std::sync::OnceLock;

use crate::util::calendar::{self, civil_from_days, decimal_year};
use image::ImageEncoder;
use image::codecs::png::{CompressionType, FilterType, PngEncoder};
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::register_font;

/// The bundled DejaVu Sans font (Bitstream Vera licence; see `assets/DejaVuSans-LICENSE.txt`).
static FONT: &[u8] = include_bytes!(concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/assets/DejaVuSans.ttf"
));

/// Font family under which the bundled font is registered (plotters' default for tick labels).
const FAMILY: &str = "sans-serif";

/// Width of every figure, in pixels.
pub const WIDTH_PX: u32 = 1600;
/// Height of every figure, in pixels.
pub const HEIGHT_PX: u32 = 1000;

/// Height of the band at the top that holds the title and the subtitle, in pixels.
const TITLE_BAND_PX: u32 = 96;

const INK: RGBColor = RGBColor(34, 34, 34);
const MUTED: RGBColor = RGBColor(92, 92, 92);
const GRID_BOLD: RGBColor = RGBColor(212, 212, 212);
const GRID_LIGHT: RGBColor = RGBColor(238, 238, 238);
const RAIN_FILL: RGBColor = RGBColor(168, 194, 222);
const RAIN_EDGE: RGBColor = RGBColor(112, 142, 178);
const LIMIT: RGBColor = RGBColor(176, 28, 46);
const REFERENCE: RGBColor = RGBColor(104, 104, 104);

/// Line colours, one per condition in order. Chosen to stay apart for the common forms of
/// colour-vision deficiency (blue/orange first); lines also differ in dash pattern.
const SERIES_COLOURS: [RGBColor; 6] = [
    RGBColor(31, 87, 153),
    RGBColor(214, 112, 20),
    RGBColor(23, 133, 107),
    RGBColor(156, 60, 132),
    RGBColor(85, 85, 85),
    RGBColor(181, 151, 22),
];

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

type Area<'a> = DrawingArea<BitMapBackend<'a>, Shift>;
type DrawResult = Result<(), Box<dyn StdError>>;

/// Dash pattern of a line.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Dash {
    /// Unbroken.
    Solid,
    /// Long dashes.
    Long,
    /// Short dashes.
    Short,
}

/// Marker drawn at an annotated point or an observed value.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Shape {
    /// Filled circle.
    Circle,
    /// Filled triangle pointing up.
    Triangle,
    /// Filled square.
    Square,
    /// Filled diamond.
    Diamond,
}

/// How one legend entry is drawn.
#[derive(Debug, Clone, Copy)]
enum Swatch {
    /// A line sample.
    Line(RGBColor, u32, Dash),
    /// A filled bar.
    Bar(RGBColor, RGBColor),
    /// A marker.
    Marker(RGBColor, Shape),
}

/// A text label tied to a point of the figure (pixel coordinates), with its marker.
struct Note {
    anchor: (i32, i32),
    text: String,
    colour: RGBColor,
    marker: Option<Shape>,
}

fn colour_of(i: usize) -> RGBColor {
    SERIES_COLOURS[i % SERIES_COLOURS.len()]
}

fn dash_of(i: usize) -> Dash {
    match i % 3 {
        0 => Dash::Solid,
        1 => Dash::Long,
        _ => Dash::Short,
    }
}

fn shape_of(i: usize) -> Shape {
    match i % 4 {
        0 => Shape::Circle,
        1 => Shape::Triangle,
        2 => Shape::Square,
        _ => Shape::Diamond,
    }
}

fn font(size: u32) -> TextStyle<'static> {
    TextStyle::from((FAMILY, size).into_font()).color(&INK)
}

fn plot_name(kind: &str, title: &str) -> String {
    if title.trim().is_empty() {
        kind.to_string()
    } else {
        format!("{kind} \"{title}\"")
    }
}

fn draw_error(name: &str, e: impl std::fmt::Display) -> PlotError {
    PlotError::Draw {
        name: name.to_string(),
        message: e.to_string(),
    }
}

fn input_error(name: &str, message: String) -> PlotError {
    PlotError::Input {
        name: name.to_string(),
        message,
    }
}

/// Registers the bundled font once per process.
fn ensure_font(name: &str) -> Result<(), PlotError> {
    static REGISTERED: OnceLock<bool> = OnceLock::new();
    let ok = *REGISTERED.get_or_init(|| register_font(FAMILY, FontStyle::Normal, FONT).is_ok());
    if ok {
        Ok(())
    } else {
        Err(draw_error(
            name,
            "the bundled DejaVu Sans font could not be loaded",
        ))
    }
}

/// PNG row filter. The adaptive filter gives files about half the size for the same pixels,
/// but unoptimised (debug) builds of the `png` crate take about a second per figure with it,
/// so debug builds use the cheap `Sub` filter. The decoded image is the same either way.
const PNG_FILTER: FilterType = if cfg!(debug_assertions) {
    FilterType::Sub
} else {
    FilterType::Adaptive
};

/// A drawn figure before encoding: its name (for error messages) and its RGB pixels, row by row.
struct Canvas {
    name: String,
    rgb: Vec<u8>,
}

/// Draws into a white RGB canvas of `WIDTH_PX` x `HEIGHT_PX`.
fn render(
    name: &str,
    draw: impl for<'a> FnOnce(&Area<'a>) -> DrawResult,
) -> Result<Canvas, PlotError> {
    ensure_font(name)?;
    let len = WIDTH_PX as usize * HEIGHT_PX as usize * 3;
    let mut rgb = vec![255u8; len];
    {
        let backend = BitMapBackend::with_buffer_and_format(&mut rgb, (WIDTH_PX, HEIGHT_PX))
            .map_err(|e| draw_error(name, e))?;
        let root = backend.into_drawing_area();
        draw(&root)
            .and_then(|()| root.present().map_err(Into::into))
            .map_err(|e| draw_error(name, e))?;
    }
    Ok(Canvas {
        name: name.to_string(),
        rgb,
    })
}

/// Encodes a drawn figure as PNG.
fn encode_png(canvas: Canvas) -> Result<Vec<u8>, PlotError> {
    let mut png = Vec::new();
    PngEncoder::new_with_quality(&mut png, CompressionType::Fast, PNG_FILTER)
        .write_image(&canvas.rgb, WIDTH_PX, HEIGHT_PX, image::ColorType::Rgb8)
        .map_err(|e| draw_error(&canvas.name, e))?;
    Ok(png)
}

// ---------------------------------------------------------------------------------------------
// Numbers and ranges
// ---------------------------------------------------------------------------------------------

/// A value for a label, with precision suited to report tables.
fn fmt_value(v: f64) -> String {
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
fn fmt_stage(v: f64) -> String {
    if !v.is_finite() {
        "n/a".to_string()
    } else if v.abs() >= 1e6 {
        format!("{v:.3e}")
    } else {
        format!("{v:.2}")
    }
}

/// A time in hours for a label, without trailing zeros.
fn fmt_hours(t: f64) -> String {
    trim_decimals(format!("{t:.2}"))
}

fn trim_decimals(s: String) -> String {
    if s.contains('.') && !s.contains('e') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A tick label on a linear axis.
fn fmt_tick(v: &f64) -> String {
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
fn fmt_log_tick(v: &f64) -> String {
    let v = *v;
    if !(1e-4..1e6).contains(&v) {
        format!("{v:e}")
    } else {
        let decimals = (-v.log10().floor()).max(0.0) as usize;
        trim_decimals(format!("{v:.decimals$}"))
    }
}

/// Time step as words for axis and legend text, e.g. "6-min" or "1-h".
fn fmt_step(step_h: f64) -> String {
    let min = step_h * 60.0;
    if step_h < 1.0 {
        format!("{}-min", trim_decimals(format!("{min:.1}")))
    } else {
        format!("{}-h", trim_decimals(format!("{step_h:.2}")))
    }
}

fn finite(values: impl IntoIterator<Item = f64>) -> impl Iterator<Item = f64> {
    values.into_iter().filter(|v| v.is_finite())
}

/// Low and high ends of a linear value axis that starts at zero (or below, for negative data),
/// with `headroom` times the largest value on top. No data, or only zeros, gives 0..1.
fn value_range(values: impl IntoIterator<Item = f64>, headroom: f64) -> Result<(f64, f64), String> {
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
fn padded_range(values: impl IntoIterator<Item = f64>) -> Result<(f64, f64), String> {
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

/// Index and value of the largest finite value (first one on ties).
fn peak(values: &[f64]) -> Option<(usize, f64)> {
    let mut best: Option<(usize, f64)> = None;
    for (i, &v) in values.iter().enumerate() {
        if v.is_finite() && best.is_none_or(|(_, b)| v > b) {
            best = Some((i, v));
        }
    }
    best
}

/// Unbroken runs of finite points; a NaN or infinite value ends a run.
fn runs(points: impl IntoIterator<Item = (f64, f64)>) -> Vec<Vec<(f64, f64)>> {
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
fn timed(values: &[f64], step_h: f64) -> impl Iterator<Item = (f64, f64)> + '_ {
    values
        .iter()
        .enumerate()
        .map(move |(k, &v)| (k as f64 * step_h, v))
}

fn check_step(name: &str, step_h: f64) -> Result<f64, PlotError> {
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
fn time_end(name: &str, n: usize, step_h: f64) -> Result<f64, PlotError> {
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
fn time_ticks(t_end: f64) -> (Vec<f64>, Vec<f64>) {
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

fn multiples(step: f64, end: f64, max_count: usize) -> Vec<f64> {
    if !(step > 0.0 && step.is_finite()) {
        return vec![0.0];
    }
    (0..=max_count)
        .map(|i| i as f64 * step)
        .take_while(|&t| t <= end * (1.0 + 1e-9))
        .collect()
}

/// The 1-2-5 value at or below `v` (v > 0).
fn floor125(v: f64) -> f64 {
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
fn ceil125(v: f64) -> f64 {
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
fn log_ticks(lo: f64, hi: f64, mantissas: &[f64]) -> Vec<f64> {
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
fn log_range(values: impl IntoIterator<Item = f64>, default: (f64, f64)) -> (f64, f64) {
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
fn decade_ticks(lo: f64, hi: f64) -> Vec<f64> {
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

// ---------------------------------------------------------------------------------------------
// Drawing helpers
// ---------------------------------------------------------------------------------------------

/// A linear f64 axis with chosen major and minor tick positions. (plotters' own key-point
/// combinator drops the value formatter of a plain f64 axis, so this one keeps it.)
#[derive(Clone)]
struct TickedAxis {
    inner: plotters::coord::types::RangedCoordf64,
    major: Vec<f64>,
    minor: Vec<f64>,
}

impl TickedAxis {
    fn new(lo: f64, hi: f64, major: Vec<f64>, minor: Vec<f64>) -> Self {
        Self {
            inner: (lo..hi).into(),
            major,
            minor,
        }
    }
}

impl Ranged for TickedAxis {
    type FormatOption = plotters::coord::ranged1d::DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.inner.map(value, limit)
    }

    fn key_points<Hint: plotters::coord::ranged1d::KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.minor.clone()
        } else {
            self.major.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.inner.range()
    }
}

fn draw_path<CT>(
    area: &DrawingArea<BitMapBackend<'_>, CT>,
    points: Vec<(f64, f64)>,
    style: ShapeStyle,
    dash: Dash,
) -> DrawResult
where
    CT: CoordTranslate<From = (f64, f64)>,
{
    match dash {
        Dash::Solid => area.draw(&PathElement::new(points, style))?,
        Dash::Long => area.draw(&DashedPathElement::new(points, 16, 9, style))?,
        Dash::Short => area.draw(&DashedPathElement::new(points, 5, 6, style))?,
    }
    Ok(())
}

fn draw_marker(
    root: &Area<'_>,
    (x, y): (i32, i32),
    shape: Shape,
    colour: RGBColor,
    r: i32,
) -> DrawResult {
    let fill = colour.filled();
    let edge = WHITE.stroke_width(2);
    match shape {
        Shape::Circle => {
            root.draw(&Circle::new((x, y), r + 1, WHITE.filled()))?;
            root.draw(&Circle::new((x, y), r, fill))?;
        }
        Shape::Triangle => {
            let (a, b, c) = (
                (x, y - r - 3),
                (x + r + 3, y + r + 1),
                (x - r - 3, y + r + 1),
            );
            root.draw(&Polygon::new(vec![a, b, c], fill))?;
            root.draw(&PathElement::new(vec![a, b, c, a], edge))?;
        }
        Shape::Square => {
            root.draw(&Rectangle::new([(x - r, y - r), (x + r, y + r)], fill))?;
            root.draw(&Rectangle::new([(x - r, y - r), (x + r, y + r)], edge))?;
        }
        Shape::Diamond => {
            let d = r + 2;
            let (a, b, c, e) = ((x, y - d), (x + d, y), (x, y + d), (x - d, y));
            root.draw(&Polygon::new(vec![a, b, c, e], fill))?;
            root.draw(&PathElement::new(vec![a, b, c, e, a], edge))?;
        }
    }
    Ok(())
}

fn draw_title(area: &Area<'_>, title: &str, subtitle: &str) -> DrawResult {
    area.draw(&Text::new(title.to_string(), (40, 18), font(34)))?;
    if !subtitle.is_empty() {
        area.draw(&Text::new(
            subtitle.to_string(),
            (40, 62),
            font(22).color(&MUTED),
        ))?;
    }
    Ok(())
}

/// Legend entries laid out in rows: each row lists (entry index, width in pixels).
type LegendRows = Vec<Vec<(usize, i32)>>;

const LEGEND_ROW_PX: i32 = 34;
const LEGEND_SWATCH_PX: i32 = 40;

/// Splits the legend entries into rows that fit the figure width; returns (row, width) lists.
fn legend_rows(
    root: &Area<'_>,
    items: &[(String, Swatch)],
) -> Result<LegendRows, Box<dyn StdError>> {
    let style = font(20);
    let max_w = WIDTH_PX as i32 - 120;
    let mut rows: Vec<Vec<(usize, i32)>> = Vec::new();
    let mut cur: Vec<(usize, i32)> = Vec::new();
    let mut cur_w = 0;
    for (i, (label, _)) in items.iter().enumerate() {
        let (tw, _) = root.estimate_text_size(label, &style)?;
        let w = LEGEND_SWATCH_PX + 10 + tw as i32 + 36;
        if cur_w + w > max_w && !cur.is_empty() {
            rows.push(std::mem::take(&mut cur));
            cur_w = 0;
        }
        cur.push((i, w));
        cur_w += w;
    }
    if !cur.is_empty() {
        rows.push(cur);
    }
    Ok(rows)
}

fn legend_height(rows: &[Vec<(usize, i32)>]) -> u32 {
    (rows.len() as u32) * LEGEND_ROW_PX as u32 + 18
}

/// Draws the legend as centred rows in the band below the chart.
fn draw_legend(
    area: &Area<'_>,
    items: &[(String, Swatch)],
    rows: &[Vec<(usize, i32)>],
) -> DrawResult {
    // Coordinates on a `Shift` area are relative to its own top-left corner.
    let (x0, y0) = (0, 0);
    let x1 = area.dim_in_pixel().0 as i32;
    let style = font(20);
    for (r, row) in rows.iter().enumerate() {
        let total: i32 = row.iter().map(|&(_, w)| w).sum::<i32>() - 36;
        let mut x = x0 + ((x1 - x0) - total).max(0) / 2;
        let cy = y0 + 6 + r as i32 * LEGEND_ROW_PX + LEGEND_ROW_PX / 2;
        // Swatches sit on the middle of the lower-case letters, a little above the text box's.
        let sy = cy - 2;
        for &(i, w) in row {
            let Some((label, swatch)) = items.get(i) else {
                continue;
            };
            let sx = (x, x + LEGEND_SWATCH_PX);
            match *swatch {
                Swatch::Line(c, width, dash) => {
                    let st = c.stroke_width(width);
                    match dash {
                        Dash::Solid => {
                            area.draw(&PathElement::new(vec![(sx.0, sy), (sx.1, sy)], st))?;
                        }
                        Dash::Long => {
                            area.draw(&PathElement::new(vec![(sx.0, sy), (sx.0 + 16, sy)], st))?;
                            area.draw(&PathElement::new(vec![(sx.0 + 24, sy), (sx.1, sy)], st))?;
                        }
                        Dash::Short => {
                            let mut s = sx.0;
                            while s < sx.1 {
                                area.draw(&PathElement::new(
                                    vec![(s, sy), ((s + 5).min(sx.1), sy)],
                                    st,
                                ))?;
                                s += 11;
                            }
                        }
                    }
                }
                Swatch::Bar(fill, edge) => {
                    let rect = [(sx.0 + 6, sy - 9), (sx.1 - 6, sy + 9)];
                    area.draw(&Rectangle::new(rect, fill.filled()))?;
                    area.draw(&Rectangle::new(rect, edge.stroke_width(1)))?;
                }
                Swatch::Marker(c, shape) => {
                    draw_marker(area, ((sx.0 + sx.1) / 2, sy), shape, c, 6)?;
                }
            }
            let (_, th) = area.estimate_text_size(label, &style)?;
            area.draw(&Text::new(
                label.clone(),
                (sx.1 + 10, cy - th as i32 / 2),
                style.clone(),
            ))?;
            x += w;
        }
    }
    Ok(())
}

/// Size of a cell of the crowding grid, in pixels.
const CELL_PX: i32 = 4;

/// Where the figure is already drawn on (lines, markers, bars), on a coarse grid with a
/// summed-area table, so that notes can be put where they hide the least.
struct Crowding {
    x0: i32,
    y0: i32,
    cols: usize,
    rows: usize,
    marks: Vec<u32>,
    sums: Vec<u32>,
}

impl Crowding {
    fn new((x0, y0, x1, y1): (i32, i32, i32, i32)) -> Self {
        let cols = ((x1 - x0).max(1) / CELL_PX + 1) as usize;
        let rows = ((y1 - y0).max(1) / CELL_PX + 1) as usize;
        Self {
            x0,
            y0,
            cols,
            rows,
            marks: vec![0; cols * rows],
            sums: Vec::new(),
        }
    }

    fn cell(&self, (x, y): (i32, i32)) -> Option<usize> {
        let c = (x - self.x0).div_euclid(CELL_PX);
        let r = (y - self.y0).div_euclid(CELL_PX);
        if c < 0 || r < 0 || c as usize >= self.cols || r as usize >= self.rows {
            None
        } else {
            Some(r as usize * self.cols + c as usize)
        }
    }

    fn mark(&mut self, p: (i32, i32), weight: u32) {
        let Some(i) = self.cell(p) else {
            return;
        };
        if let Some(m) = self.marks.get_mut(i) {
            *m = m.saturating_add(weight);
        }
    }

    /// Marks a polyline given in pixels, filling in the points between its vertices (lines
    /// weigh more than filled areas: a note may cover part of a bar sooner than a curve).
    fn trace(&mut self, pts: impl IntoIterator<Item = (i32, i32)>) {
        let mut prev: Option<(i32, i32)> = None;
        for p in pts {
            if let Some(q) = prev {
                let dx = i64::from(p.0) - i64::from(q.0);
                let dy = i64::from(p.1) - i64::from(q.1);
                let n = (dx.abs().max(dy.abs()) / i64::from(CELL_PX)).clamp(1, 2000);
                for k in 1..=n {
                    let x = i64::from(q.0) + dx * k / n;
                    let y = i64::from(q.1) + dy * k / n;
                    self.mark((x as i32, y as i32), 3);
                }
            } else {
                self.mark(p, 3);
            }
            prev = Some(p);
        }
    }

    /// Marks a filled rectangle given in pixels.
    fn fill(&mut self, (l, t): (i32, i32), (r, b): (i32, i32)) {
        let (l, r) = (l.min(r), l.max(r));
        let (t, b) = (t.min(b), t.max(b));
        let mut y = t;
        while y <= b {
            let mut x = l;
            while x <= r {
                self.mark((x, y), 1);
                x += CELL_PX;
            }
            y += CELL_PX;
        }
    }

    fn finish(&mut self) {
        let w = self.cols + 1;
        let mut sums = vec![0u32; w * (self.rows + 1)];
        for r in 0..self.rows {
            let mut row = 0u32;
            for c in 0..self.cols {
                row = row.saturating_add(self.marks.get(r * self.cols + c).copied().unwrap_or(0));
                let above = sums.get(r * w + c + 1).copied().unwrap_or(0);
                if let Some(s) = sums.get_mut((r + 1) * w + c + 1) {
                    *s = above.saturating_add(row);
                }
            }
        }
        self.sums = sums;
    }

    /// Total marks in the cells that a pixel rectangle touches.
    fn count(&self, (l, t, r, b): (i32, i32, i32, i32)) -> u32 {
        let w = self.cols + 1;
        let c0 = ((l - self.x0).div_euclid(CELL_PX)).clamp(0, self.cols as i32) as usize;
        let c1 = ((r - self.x0).div_euclid(CELL_PX) + 1).clamp(0, self.cols as i32) as usize;
        let r0 = ((t - self.y0).div_euclid(CELL_PX)).clamp(0, self.rows as i32) as usize;
        let r1 = ((b - self.y0).div_euclid(CELL_PX) + 1).clamp(0, self.rows as i32) as usize;
        let at = |r: usize, c: usize| i64::from(self.sums.get(r * w + c).copied().unwrap_or(0));
        let v = at(r1, c1) - at(r0, c1) - at(r1, c0) + at(r0, c0);
        u32::try_from(v.max(0)).unwrap_or(u32::MAX)
    }
}

/// A rectangle in pixels: (left, top, right, bottom).
type Rect = (i32, i32, i32, i32);

/// A point or a size in pixels.
type Px = (i32, i32);

/// Chooses a box for each note (anchor point and box size, in pixels) inside `bounds`. Each
/// box goes to the nearby spot that hides the fewest drawn marks and keeps clear of the boxes
/// placed before it (notes are placed in the given order) and of every anchor.
fn place_notes(notes: &[(Px, Px)], crowding: &mut Crowding, bounds: Rect) -> Vec<Rect> {
    let (bx0, by0, bx1, by1) = bounds;
    for &((ax, ay), _) in notes {
        for d in -9..=9 {
            crowding.mark((ax + d, ay), 40);
            crowding.mark((ax, ay + d), 40);
        }
    }
    crowding.finish();
    let mut placed: Vec<Rect> = Vec::new();
    for &((ax, ay), (w, h)) in notes {
        let lefts = [ax + 14, ax - 14 - w, ax - w / 2, ax + 40, ax - 40 - w];
        let mut tops = vec![ay - h - 8, ay - h / 2, ay + 10];
        for k in 1..=6 {
            tops.push(ay - h - 8 - k * (h + 8));
            tops.push(ay + 10 + k * (h + 8));
        }
        let mut best: Option<(i64, Rect)> = None;
        for &l in &lefts {
            for &t in &tops {
                let bx = (l, t, l + w, t + h);
                if bx.0 < bx0 + 2 || bx.2 > bx1 - 2 || bx.1 < by0 + 2 || bx.3 > by1 - 2 {
                    continue;
                }
                let clash = placed
                    .iter()
                    .any(|p| bx.0 < p.2 + 4 && bx.2 + 4 > p.0 && bx.1 < p.3 + 4 && bx.3 + 4 > p.1);
                let near_x = ax.clamp(bx.0, bx.2);
                let near_y = ay.clamp(bx.1, bx.3);
                let dist = i64::from((near_x - ax).abs() + (near_y - ay).abs());
                let score =
                    i64::from(crowding.count(bx)) * 12 + dist + if clash { 1_000_000 } else { 0 };
                if best.is_none_or(|(s, _)| score < s) {
                    best = Some((score, bx));
                }
            }
        }
        // Nothing fits inside the plot (a tiny plot or a huge note): use the top-left corner.
        placed.push(best.map_or((bx0 + 4, by0 + 4, bx0 + 4 + w, by0 + 4 + h), |b| b.1));
    }
    placed
}

/// Draws notes in boxes chosen by [`place_notes`], with a leader line when a box ends up away
/// from its point, and the notes' markers on top.
fn draw_notes(
    root: &Area<'_>,
    notes: &[Note],
    crowding: &mut Crowding,
    bounds: Rect,
) -> DrawResult {
    let style = font(19);
    let mut sized = Vec::with_capacity(notes.len());
    for n in notes {
        let (tw, th) = root.estimate_text_size(&n.text, &style)?;
        sized.push((n.anchor, (tw as i32 + 14, th as i32 + 10)));
    }
    let boxes = place_notes(&sized, crowding, bounds);
    for (note, &(left, top, right, bottom)) in notes.iter().zip(&boxes) {
        let (ax, ay) = note.anchor;
        let near_x = ax.clamp(left, right);
        let near_y = ay.clamp(top, bottom);
        if (near_x - ax).abs() + (near_y - ay).abs() > 24 {
            root.draw(&PathElement::new(
                vec![(ax, ay), (near_x, near_y)],
                note.colour.stroke_width(1),
            ))?;
        }
        root.draw(&Rectangle::new(
            [(left, top), (right, bottom)],
            WHITE.mix(0.92).filled(),
        ))?;
        root.draw(&Rectangle::new(
            [(left, top), (right, bottom)],
            note.colour.stroke_width(1),
        ))?;
        root.draw(&Text::new(
            note.text.clone(),
            (left + 7, top + 5),
            style.clone(),
        ))?;
    }
    for note in notes {
        if let Some(shape) = note.marker {
            draw_marker(root, note.anchor, shape, note.colour, 7)?;
        }
    }
    Ok(())
}

/// Splits the area below the title band into the chart body and the legend band.
fn layout<'a>(
    root: &Area<'a>,
    title: &str,
    subtitle: &str,
    legend: &[(String, Swatch)],
) -> Result<(Area<'a>, Area<'a>, LegendRows), Box<dyn StdError>> {
    let (top, rest) = root.split_vertically(TITLE_BAND_PX);
    draw_title(&top, title, subtitle)?;
    let rows = legend_rows(root, legend)?;
    let rest_h = rest.dim_in_pixel().1;
    let (body, foot) = rest.split_vertically(rest_h.saturating_sub(legend_height(&rows)));
    Ok((body, foot, rows))
}

fn plot_bounds<CT: CoordTranslate>(
    area: &DrawingArea<BitMapBackend<'_>, CT>,
) -> (i32, i32, i32, i32) {
    let (xr, yr) = area.get_pixel_range();
    (xr.start, yr.start, xr.end, yr.end)
}

// ---------------------------------------------------------------------------------------------
// Figures
// ---------------------------------------------------------------------------------------------

/// The house style of grid, axes and labels.
macro_rules! house_mesh {
    ($chart:expr) => {
        $chart
            .configure_mesh()
            .bold_line_style(GRID_BOLD.stroke_width(1))
            .light_line_style(GRID_LIGHT.stroke_width(1))
            .axis_style(MUTED.stroke_width(1))
            .label_style(font(19))
            .axis_desc_style(font(22))
    };
}

/// Hydrographs of every condition at a point, with the storm's rain hanging from the top on an
/// inverted right axis and each condition's peak labelled with its flow and time.
///
/// The flow axis reaches 1.6 times the highest flow and the rain axis 3 times the highest rain
/// per step, so the bars keep to the top third and the hydrographs to the lower part.
pub fn storm_point_png(p: &StormPointPlot) -> Result<Vec<u8>, PlotError> {
    encode_png(draw_storm_point(p)?)
}

fn draw_storm_point(p: &StormPointPlot) -> Result<Canvas, PlotError> {
    let name = plot_name("storm plot", &p.title);
    let dt = check_step(&name, p.step_h)?;
    let n_flow = p
        .hydrographs
        .iter()
        .map(|s| s.values.len().saturating_sub(1))
        .max()
        .unwrap_or(0);
    let t_end = time_end(&name, n_flow.max(p.rain.len()), dt)?;
    let limit_value = p.limit.as_ref().map(|(_, v)| *v).filter(|v| v.is_finite());
    let flows = p
        .hydrographs
        .iter()
        .flat_map(|s| s.values.iter().copied())
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
    let peaks: Vec<Option<(usize, f64)>> = p.hydrographs.iter().map(|s| peak(&s.values)).collect();
    for (i, (s, pk)) in p.hydrographs.iter().zip(&peaks).enumerate() {
        let label = match pk {
            Some((_, v)) if *v > 0.0 => s.label.clone(),
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
    let (x_major, x_minor) = time_ticks(t_end);

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
            .set_secondary_coord(0.0..t_end, r_hi..0.0);
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
            .y_labels(8)
            .y_desc(format!("Rain per {step_words} step ({})", p.rain_unit))
            .draw()?;

        let bounds = plot_bounds(chart.plotting_area());
        let mut crowd = Crowding::new(bounds);

        // Rain bars hanging from the top; outlined only when wide enough to show the outline.
        let rain_area = chart.secondary_plotting_area();
        let bar_px = f64::from(rain_area.dim_in_pixel().0) * dt / t_end;
        for (k, r) in p.rain.iter().enumerate() {
            if !(r.is_finite() && *r > 0.0) {
                continue;
            }
            let b = [(k as f64 * dt, 0.0), ((k + 1) as f64 * dt, r.min(r_hi))];
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
            let line = vec![(0.0, v), (t_end, v)];
            crowd.trace(line.iter().map(|pt| area.map_coordinate(pt)));
            draw_path(area, line, LIMIT.stroke_width(2), Dash::Long)?;
        }
        let mut notes: Vec<(f64, Note)> = Vec::new();
        for (i, (s, pk)) in p.hydrographs.iter().zip(&peaks).enumerate() {
            for run in runs(timed(&s.values, dt)) {
                crowd.trace(run.iter().map(|pt| area.map_coordinate(pt)));
                draw_path(area, run, colour_of(i).stroke_width(3), dash_of(i))?;
            }
            if let Some((k, v)) = pk.filter(|&(_, v)| v > 0.0) {
                let t = k as f64 * dt;
                let text = format!(
                    "{}: {} {} at {} h",
                    s.label,
                    fmt_value(v),
                    p.flow_unit,
                    fmt_hours(t)
                );
                notes.push((
                    v,
                    Note {
                        anchor: area.map_coordinate(&(t, v)),
                        text,
                        colour: colour_of(i),
                        marker: Some(shape_of(i)),
                    },
                ));
            }
        }
        // The highest peak gets the first choice of place.
        notes.sort_by(|a, b| b.0.total_cmp(&a.0));
        let notes: Vec<Note> = notes.into_iter().map(|(_, n)| n).collect();
        draw_notes(root, &notes, &mut crowd, bounds)?;
        draw_legend(&foot, &legend, &rows)?;
        Ok(())
    })
}

/// Inflow and outflow of a pond (left axis) and its water-surface elevation (right axis), with
/// a labelled dashed line at each reference elevation and the peaks marked.
pub fn pond_png(p: &PondPlot) -> Result<Vec<u8>, PlotError> {
    encode_png(draw_pond(p)?)
}

fn draw_pond(p: &PondPlot) -> Result<Canvas, PlotError> {
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
            let t = peak(&p.stage).map_or(0.0, |(k, _)| k as f64 * dt);
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
            if let Some((k, v)) = peak(values).filter(|&(_, v)| v > 0.0) {
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

/// Flow-duration curves: flow (log axis) against the percent of time it is equalled or
/// exceeded (log axis). Zero flows cannot appear on a log axis and are left out (the subtitle
/// says so).
pub fn flow_duration_png(p: &DurationPlot) -> Result<Vec<u8>, PlotError> {
    encode_png(draw_flow_duration(p)?)
}

fn draw_flow_duration(p: &DurationPlot) -> Result<Canvas, PlotError> {
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
    let legend: Vec<(String, Swatch)> = curves
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
    let x_ticks = decade_ticks(x_lo, x_hi);
    let y_ticks = decade_ticks(y_lo, y_hi);
    let y_light = if (y_hi.log10() - y_lo.log10()).abs() <= 5.0 {
        log_ticks(y_lo, y_hi, &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0])
    } else {
        Vec::new()
    };

    render(&name, |root| {
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
const RETURN_PERIODS_YR: [f64; 13] = [
    1.0, 2.0, 5.0, 10.0, 25.0, 50.0, 100.0, 200.0, 500.0, 1000.0, 2000.0, 5000.0, 10000.0,
];

/// Annual peak flows at their plotting positions (markers) and the fitted curve (lines) of
/// each condition, against return period on a log axis.
pub fn frequency_png(p: &FrequencyPlot) -> Result<Vec<u8>, PlotError> {
    encode_png(draw_frequency(p)?)
}

fn draw_frequency(p: &FrequencyPlot) -> Result<Canvas, PlotError> {
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

    render(&name, |root| {
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
fn calendar_ticks(z0: i64, z1: i64) -> Vec<(f64, String)> {
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
fn thin(points: &[(f64, f64)], buckets: usize) -> Vec<(f64, f64)> {
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
struct Panel<'a> {
    label: &'a str,
    values: &'a [f64],
    /// (fractional year, flow) of each day.
    points: Vec<(f64, f64)>,
}

/// The highest flow of each day over a long record against calendar years: one panel per
/// condition, all on the same flow scale, each with its highest day labelled.
pub fn overview_png(p: &OverviewPlot) -> Result<Vec<u8>, PlotError> {
    encode_png(draw_overview(p)?)
}

fn draw_overview(p: &OverviewPlot) -> Result<Canvas, PlotError> {
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
    let has_days = p.daily_max.iter().any(|(_, v)| !v.is_empty());
    let subtitle = if !has_days {
        "No daily values to show".to_string()
    } else if n_days == 1 {
        format!("Highest flow of one day, {}", date_of(0))
    } else {
        format!(
            "Highest flow of each day, {} to {} ({n_days} days), same flow scale in every panel",
            date_of(0),
            date_of(n_days - 1),
        )
    };
    // Each day is drawn at the fractional year of its start.
    let panels: Vec<Panel<'_>> = p
        .daily_max
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
        .collect();

    render(&name, |root| {
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
            let highest = peak(values.get(..pts.len()).unwrap_or(values)).filter(|&(_, v)| v > 0.0);
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
            if let Some((k, v)) = highest {
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

#[cfg(test)]
mod tests {
    use super::*;

    const PNG_SIGNATURE: [u8; 8] = [0x89, b'P', b'N', b'G', 0x0D, 0x0A, 0x1A, 0x0A];

    /// Checks the PNG signature, decodes the image and checks its size; returns the RGB bytes.
    fn decoded(png: &[u8]) -> Vec<u8> {
        assert_eq!(png.get(..8), Some(&PNG_SIGNATURE[..]), "PNG signature");
        let img = image::load_from_memory_with_format(png, image::ImageFormat::Png)
            .expect("the bytes decode as PNG")
            .into_rgb8();
        assert!(
            img.width() >= 1600 && img.height() >= 1000,
            "{}x{}",
            img.width(),
            img.height()
        );
        img.into_raw()
    }

    /// Checks the PNG signature and the size in the header (IHDR) without decoding.
    fn header_ok(png: &[u8]) {
        assert_eq!(png.get(..8), Some(&PNG_SIGNATURE[..]), "PNG signature");
        assert_eq!(png.get(12..16), Some(&b"IHDR"[..]), "IHDR first");
        let be = |r: std::ops::Range<usize>| {
            png.get(r)
                .and_then(|b| <[u8; 4]>::try_from(b).ok())
                .map_or(0, u32::from_be_bytes)
        };
        assert!(
            be(16..20) >= 1600 && be(20..24) >= 1000,
            "{}x{}",
            be(16..20),
            be(20..24)
        );
    }

    /// Checks that a drawn (not encoded) figure has its full size and something on it.
    fn drawn(c: &Canvas) {
        assert_eq!(c.rgb.len(), WIDTH_PX as usize * HEIGHT_PX as usize * 3);
        assert!(c.rgb.iter().any(|&b| b < 128), "nothing dark was drawn");
    }

    /// Whether each colour appears exactly in two 32-pixel-wide vertical strips of the image
    /// (at a third and at half of its width). A line across the plot, solid or dashed, crosses
    /// both strips; scanning only the strips keeps the test fast in debug builds.
    fn colours_present(rgb: &[u8], colours: &[RGBColor]) -> Vec<bool> {
        let w = WIDTH_PX as usize;
        let mut seen = vec![false; colours.len()];
        for row in rgb.chunks_exact(w * 3) {
            for x0 in [w / 3, w / 2] {
                for px in row
                    .get(x0 * 3..(x0 + 32) * 3)
                    .unwrap_or(&[])
                    .chunks_exact(3)
                {
                    for (s, c) in seen.iter_mut().zip(colours) {
                        *s |= px == [c.0, c.1, c.2];
                    }
                }
            }
        }
        seen
    }

    /// Invented demo data: a smooth single-peaked hydrograph.
    fn bump(n: usize, peak_at: usize, height: f64) -> Vec<f64> {
        (0..n)
            .map(|k| {
                let x = (k as f64 - peak_at as f64) / 12.0;
                height * (-x * x).exp()
            })
            .collect()
    }

    fn storm(hydrographs: Vec<Series>, rain: Vec<f64>) -> StormPointPlot {
        StormPointPlot {
            title: "Outfall to Tansy Creek - 10-yr storm".to_string(),
            subtitle: "Orchard Row (demo) - 24-h storm, 5.1 in".to_string(),
            step_h: 0.1,
            rain,
            rain_unit: "in".to_string(),
            flow_unit: "cfs".to_string(),
            hydrographs,
            limit: Some(("allowed (existing peak)".to_string(), 12.0)),
        }
    }

    fn series(label: &str, values: Vec<f64>) -> Series {
        Series {
            label: label.to_string(),
            values,
        }
    }

    fn pond(inflow: Vec<f64>, outflow: Vec<f64>, stage: Vec<f64>, peak_stage: f64) -> PondPlot {
        PondPlot {
            title: "Basin B - 10-yr storm".to_string(),
            subtitle: "Orchard Row (demo)".to_string(),
            step_h: 0.1,
            flow_unit: "cfs".to_string(),
            stage_unit: "ft".to_string(),
            inflow,
            outflow,
            stage,
            peak_stage,
            references: vec![
                ("orifice invert".to_string(), 50.0),
                ("weir crest".to_string(), 52.5),
                ("top of embankment".to_string(), 54.0),
            ],
        }
    }

    #[test]
    fn storm_plot_is_a_png_of_at_least_1600_by_1000_with_every_condition_in_its_colour() {
        let p = storm(
            vec![
                series("existing", bump(120, 40, 12.0)),
                series("proposed", bump(120, 35, 18.0)),
            ],
            bump(60, 30, 0.4),
        );
        let rgb = decoded(&storm_point_png(&p).expect("storm plot"));
        // Both conditions' lines, the rain bars and the limit line, each in its own colour.
        let seen = colours_present(&rgb, &[colour_of(0), colour_of(1), RAIN_FILL, LIMIT]);
        assert_eq!(seen, [true; 4]);
    }

    #[test]
    fn title_band_has_rendered_text() {
        let p = storm(vec![series("existing", bump(50, 20, 3.0))], vec![0.1; 20]);
        let c = draw_storm_point(&p).expect("storm plot");
        let dark = c
            .rgb
            .chunks_exact(3)
            .enumerate()
            .filter(|(i, px)| {
                let (x, y) = (*i as u32 % WIDTH_PX, *i as u32 / WIDTH_PX);
                y < TITLE_BAND_PX && x < WIDTH_PX / 2 && px.iter().all(|&b| b < 128)
            })
            .count();
        // A title of ~35 glyphs at 34 px leaves thousands of dark pixels; a missing font none.
        assert!(dark > 500, "only {dark} dark pixels in the title band");
    }

    #[test]
    fn pond_plot_is_a_png_of_at_least_1600_by_1000_with_stage_and_reference_lines() {
        let inflow = bump(150, 50, 30.0);
        let outflow = bump(150, 65, 8.0);
        let stage: Vec<f64> = outflow.iter().map(|q| 50.0 + 3.6 * (q / 8.0)).collect();
        let rgb = decoded(&pond_png(&pond(inflow, outflow, stage, 53.6)).expect("pond plot"));
        // inflow, outflow, stage, reference lines
        let seen = colours_present(&rgb, &[colour_of(0), colour_of(1), colour_of(2), REFERENCE]);
        assert_eq!(seen, [true; 4]);
    }

    #[test]
    fn flow_duration_plot_is_a_png_of_at_least_1600_by_1000() {
        let curve: Vec<(f64, f64)> = (1..=200)
            .map(|i| {
                let f = f64::from(i) / 201.0;
                (f, 0.4 * f.powf(-0.8))
            })
            .collect();
        let p = DurationPlot {
            title: "Flow duration, demo record".to_string(),
            flow_unit: "m³/s".to_string(),
            curves: vec![("existing".to_string(), curve)],
        };
        let rgb = decoded(&flow_duration_png(&p).expect("duration plot"));
        assert_eq!(colours_present(&rgb, &[colour_of(0)]), [true]);
    }

    #[test]
    fn frequency_plot_is_a_png_of_at_least_1600_by_1000() {
        let observed: Vec<(f64, f64)> = (1..=20)
            .map(|m| (21.0 / f64::from(m), 5.0 + f64::from(21 - m)))
            .collect();
        let fitted: Vec<(f64, f64)> = [1.01, 2.0, 10.0, 100.0, 500.0]
            .iter()
            .map(|&t: &f64| (t, 6.0 + 4.0 * t.ln()))
            .collect();
        let p = FrequencyPlot {
            title: "Annual peaks, demo record".to_string(),
            flow_unit: "cfs".to_string(),
            observed: vec![("existing".to_string(), observed)],
            fitted: vec![("existing".to_string(), fitted)],
        };
        let rgb = decoded(&frequency_png(&p).expect("frequency plot"));
        assert_eq!(colours_present(&rgb, &[colour_of(0)]), [true]);
    }

    #[test]
    fn overview_plot_is_a_png_of_at_least_1600_by_1000() {
        let days: Vec<f64> = (0..800).map(|d| f64::from(d % 37) * 0.5).collect();
        let p = OverviewPlot {
            title: "Daily highest flow, demo record".to_string(),
            flow_unit: "cfs".to_string(),
            day_labels_start: (2003, 10, 1),
            daily_max: vec![
                ("existing".to_string(), days.clone()),
                (
                    "proposed".to_string(),
                    days.iter().map(|q| q * 0.7).collect(),
                ),
            ],
        };
        let rgb = decoded(&overview_png(&p).expect("overview plot"));
        assert_eq!(
            colours_present(&rgb, &[colour_of(0), colour_of(1)]),
            [true, true]
        );
    }

    #[test]
    fn empty_storm_and_empty_hydrograph_give_a_plot_not_an_error() {
        header_ok(&storm_point_png(&storm(Vec::new(), Vec::new())).expect("empty storm"));
        let s = storm(vec![series("existing", Vec::new())], Vec::new());
        header_ok(&storm_point_png(&s).expect("empty hydrograph"));
    }

    #[test]
    fn empty_pond_gives_a_plot_not_an_error() {
        let mut p = pond(Vec::new(), Vec::new(), Vec::new(), f64::NAN);
        p.references.clear();
        header_ok(&pond_png(&p).expect("empty pond"));
    }

    #[test]
    fn empty_duration_curves_give_a_plot_not_an_error() {
        let d = DurationPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            curves: vec![("existing".to_string(), Vec::new())],
        };
        header_ok(&flow_duration_png(&d).expect("empty duration"));
    }

    #[test]
    fn empty_frequency_data_give_a_plot_not_an_error() {
        let f = FrequencyPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            observed: Vec::new(),
            fitted: Vec::new(),
        };
        header_ok(&frequency_png(&f).expect("empty frequency"));
    }

    #[test]
    fn empty_record_gives_an_overview_not_an_error() {
        let o = OverviewPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            day_labels_start: (2000, 2, 29),
            daily_max: Vec::new(),
        };
        header_ok(&overview_png(&o).expect("empty overview"));
    }

    #[test]
    fn all_zero_storm_and_pond_flows_give_a_plot_not_an_error() {
        let mut s = storm(vec![series("existing", vec![0.0; 100])], vec![0.0; 50]);
        s.limit = None;
        header_ok(&storm_point_png(&s).expect("zero storm"));
        let p = pond(vec![0.0; 80], vec![0.0; 80], vec![50.0; 80], 50.0);
        header_ok(&pond_png(&p).expect("zero pond"));
    }

    #[test]
    fn all_zero_duration_and_record_flows_give_a_plot_not_an_error() {
        let d = DurationPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            curves: vec![("existing".to_string(), vec![(0.5, 0.0), (1.0, 0.0)])],
        };
        header_ok(&flow_duration_png(&d).expect("zero duration"));
        let o = OverviewPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            day_labels_start: (2010, 1, 1),
            daily_max: vec![("existing".to_string(), vec![0.0; 400])],
        };
        header_ok(&overview_png(&o).expect("zero overview"));
    }

    #[test]
    fn storm_with_single_nan_and_huge_values_is_drawn_without_error() {
        let s = storm(
            vec![
                series("one value", vec![3.0]),
                series(
                    "with gaps",
                    vec![0.0, 1.0, f64::NAN, 4.0, f64::INFINITY, 2.0],
                ),
                series("huge", vec![0.0, 1e300, 0.0]),
            ],
            vec![f64::NAN, -1.0, 0.2, 1e300],
        );
        drawn(&draw_storm_point(&s).expect("storm with odd values"));
        let s = storm(
            vec![series("largest float", vec![0.0, f64::MAX])],
            Vec::new(),
        );
        drawn(&draw_storm_point(&s).expect("storm at f64::MAX"));
    }

    #[test]
    fn pond_duration_and_frequency_with_nan_and_huge_values_are_drawn_without_error() {
        let p = pond(
            vec![f64::NAN, 2.0],
            vec![1e12],
            vec![50.0, f64::NAN, 51.0],
            f64::NAN,
        );
        drawn(&draw_pond(&p).expect("pond with odd values"));
        let d = DurationPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            curves: vec![(
                "odd".to_string(),
                vec![(0.0, 5.0), (f64::NAN, 1.0), (0.3, 1e200), (1.5, 1e-200)],
            )],
        };
        drawn(&draw_flow_duration(&d).expect("duration with odd values"));
        let f = FrequencyPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            observed: vec![(
                "a".to_string(),
                vec![(-2.0, 1.0), (0.0, 2.0), (f64::NAN, 3.0), (5.0, 1e15)],
            )],
            fitted: vec![("a".to_string(), vec![(1e9, 4.0)])],
        };
        drawn(&draw_frequency(&f).expect("frequency with odd values"));
        let d = DurationPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            curves: vec![(
                "max".to_string(),
                vec![(1e-300, f64::MAX), (1.0, f64::MIN_POSITIVE)],
            )],
        };
        drawn(&draw_flow_duration(&d).expect("duration at the float limits"));
        let f = FrequencyPlot {
            title: String::new(),
            flow_unit: "cfs".to_string(),
            observed: vec![("max".to_string(), vec![(f64::MAX, f64::MAX)])],
            fitted: Vec::new(),
        };
        drawn(&draw_frequency(&f).expect("frequency at the float limits"));
    }

    #[test]
    fn a_time_step_that_is_not_a_positive_number_is_an_input_error() {
        for step in [0.0, -0.1, f64::NAN, f64::INFINITY] {
            let mut s = storm(vec![series("existing", vec![1.0, 2.0])], Vec::new());
            s.step_h = step;
            assert!(
                matches!(storm_point_png(&s), Err(PlotError::Input { .. })),
                "step {step}"
            );
            let mut p = pond(vec![1.0], vec![1.0], vec![50.0], 50.0);
            p.step_h = step;
            assert!(
                matches!(pond_png(&p), Err(PlotError::Input { .. })),
                "step {step}"
            );
        }
        let mut s = storm(vec![series("existing", vec![0.0; 10])], Vec::new());
        s.step_h = f64::MAX;
        let err = storm_point_png(&s).expect_err("time axis overflows");
        assert!(err.to_string().contains("too long a time axis"), "{err}");
    }

    #[test]
    fn a_day_zero_that_is_not_a_calendar_date_is_an_input_error() {
        for start in [(2001, 2, 29), (2001, 13, 1), (2001, 4, 31), (2001, 1, 0)] {
            let o = OverviewPlot {
                title: "record".to_string(),
                flow_unit: "cfs".to_string(),
                day_labels_start: start,
                daily_max: vec![("existing".to_string(), vec![1.0])],
            };
            let err = overview_png(&o).expect_err("bad date");
            assert!(
                err.to_string().contains("expected a calendar date"),
                "{err}"
            );
        }
    }

    #[test]
    fn value_axis_of_all_zeros_or_no_data_runs_from_zero_to_one() {
        // runnel's own layout rule, no published source
        assert_eq!(value_range([0.0, 0.0], 1.6), Ok((0.0, 1.0)));
        assert_eq!(value_range([], 1.6), Ok((0.0, 1.0)));
        assert_eq!(value_range([f64::NAN], 1.6), Ok((0.0, 1.0)));
    }

    #[test]
    fn value_axis_puts_the_headroom_factor_over_the_highest_value() {
        // runnel's own layout rule (flow axis 1.6 x the peak), no published source
        let (lo, hi) = value_range([1.0, 10.0, f64::NAN], 1.6).expect("range");
        assert_eq!(lo, 0.0);
        assert!((hi - 16.0).abs() < 1e-12);
        let (_, hi) = value_range([f64::MAX], 1.6).expect("range at f64::MAX");
        assert_eq!(hi, f64::MAX);
        assert!(value_range([-f64::MAX, f64::MAX], 1.6).is_err());
    }

    #[test]
    fn peak_skips_nan_and_takes_the_first_of_equal_highs() {
        assert_eq!(peak(&[1.0, f64::NAN, 3.0, 3.0, 2.0]), Some((2, 3.0)));
        assert_eq!(peak(&[f64::NAN]), None);
        assert_eq!(peak(&[]), None);
    }

    #[test]
    fn lines_break_at_values_that_are_not_finite() {
        let r = runs(timed(
            &[1.0, 2.0, f64::NAN, 3.0, f64::INFINITY, f64::NAN, 4.0, 5.0],
            0.5,
        ));
        assert_eq!(
            r,
            vec![
                vec![(0.0, 1.0), (0.5, 2.0)],
                vec![(1.5, 3.0)],
                vec![(3.0, 4.0), (3.5, 5.0)]
            ]
        );
    }

    #[test]
    fn label_values_carry_report_precision() {
        assert_eq!(fmt_value(0.0), "0");
        assert_eq!(fmt_value(0.1234), "0.123");
        assert_eq!(fmt_value(7.126), "7.13");
        assert_eq!(fmt_value(27.46), "27.5");
        assert_eq!(fmt_value(250.4), "250");
        assert_eq!(fmt_value(1.5e9), "1.500e9");
        assert_eq!(fmt_hours(12.1333), "12.13");
        assert_eq!(fmt_hours(13.0), "13");
        assert_eq!(fmt_step(0.1), "6-min");
        assert_eq!(fmt_step(1.0), "1-h");
        assert_eq!(fmt_log_tick(&0.0005), "0.0005");
        assert_eq!(fmt_log_tick(&20.0), "20");
    }

    #[test]
    fn log_axis_ends_fall_on_one_two_five_values() {
        assert_eq!(log_range([0.03, 42.0], (0.1, 1.0)), (0.02, 50.0));
        assert_eq!(log_range([5.0], (0.1, 1.0)), (2.0, 10.0));
        assert_eq!(log_range([0.0, -1.0, f64::NAN], (0.1, 1.0)), (0.1, 1.0));
        // Ends that cannot be rounded out stay at the data.
        let (l, h) = log_range([1.0, f64::MAX], (0.1, 1.0));
        assert!(l == 1.0 && h == f64::MAX);
        let t = log_ticks(0.02, 50.0, &[1.0, 2.0, 5.0]);
        // 0.02 0.05 0.1 0.2 0.5 1 2 5 10 20 50
        assert_eq!(t.len(), 11);
        assert!((t[0] - 0.02).abs() < 1e-15 && (t[10] - 50.0).abs() < 1e-12);
    }

    /// Day number of a date the test knows exists.
    fn days_from_civil(y: i32, m: u32, d: u32) -> i64 {
        calendar::day_number(y, m, d).unwrap_or_else(|| panic!("{y}-{m}-{d}"))
    }

    #[test]
    fn year_ticks_are_whole_years_on_long_records_and_months_on_short_ones() {
        let long = calendar_ticks(days_from_civil(1991, 1, 1), days_from_civil(2021, 1, 1));
        let labels: Vec<&str> = long.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(labels, ["1995", "2000", "2005", "2010", "2015", "2020"]);
        let short = calendar_ticks(days_from_civil(2003, 10, 1), days_from_civil(2004, 4, 1));
        let labels: Vec<&str> = short.iter().map(|(_, l)| l.as_str()).collect();
        assert_eq!(
            labels,
            [
                "2003-10", "2003-11", "2003-12", "2004", "2004-02", "2004-03", "2004-04"
            ]
        );
    }

    #[test]
    fn thinning_keeps_every_extreme_in_time_order() {
        let pts: Vec<(f64, f64)> = (0..10_000)
            .map(|k| (f64::from(k), f64::from(k % 97)))
            .collect();
        let t = thin(&pts, 100);
        assert!(t.len() <= 400 && t.len() >= 100);
        assert!(t.windows(2).all(|w| w[0].0 < w[1].0), "time order");
        assert_eq!(t.iter().map(|p| p.1).fold(f64::MIN, f64::max), 96.0);
        assert_eq!(t.iter().map(|p| p.1).fold(f64::MAX, f64::min), 0.0);
        assert_eq!(t.first(), pts.first());
        assert_eq!(t.last(), pts.last());
    }

    #[test]
    fn notes_for_the_same_point_do_not_overlap_and_stay_inside_the_plot() {
        let bounds = (100, 100, 900, 700);
        let mut crowd = Crowding::new(bounds);
        crowd.trace([(100, 650), (500, 300), (900, 650)]);
        let notes = [
            ((500, 300), (260, 30)),
            ((500, 300), (260, 30)),
            ((505, 302), (200, 30)),
        ];
        let boxes = place_notes(&notes, &mut crowd, bounds);
        assert_eq!(boxes.len(), 3);
        for (i, a) in boxes.iter().enumerate() {
            assert!(
                a.0 >= bounds.0 && a.1 >= bounds.1 && a.2 <= bounds.2 && a.3 <= bounds.3,
                "{a:?}"
            );
            assert!(
                !(a.0 <= 500 && 500 <= a.2 && a.1 <= 300 && 300 <= a.3),
                "box {a:?} covers its point"
            );
            for b in boxes.iter().skip(i + 1) {
                let overlap = a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3;
                assert!(!overlap, "{a:?} overlaps {b:?}");
            }
        }
    }

    #[test]
    fn crowding_counts_the_marks_inside_a_rectangle() {
        let mut crowd = Crowding::new((0, 0, 400, 400));
        crowd.trace([(0, 200), (400, 200)]);
        crowd.finish();
        assert_eq!(crowd.count((0, 0, 400, 100)), 0);
        assert!(crowd.count((0, 190, 400, 210)) > 0);
        assert_eq!(
            crowd.count((0, 0, 400, 400)),
            crowd.count((0, 150, 400, 250))
        );
    }
}
