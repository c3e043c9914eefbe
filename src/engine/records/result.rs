//! The typed results of the long records, in internal units (cfs, ft3,
//! in, ft, seconds and interval indices), and the progress interface the
//! command layer implements.

use crate::methods::stats;
use crate::warning::Warning;

/// What a record entry is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SubjectKind {
    /// A catchment.
    Catchment,
    /// An inflow hydrograph (adds nothing over a record).
    Inflow,
    /// A pond (its outflow).
    Pond,
    /// A channel (its routed outflow).
    Channel,
    /// A design point.
    Point,
}

impl SubjectKind {
    /// The word the reports use.
    pub fn label(self) -> &'static str {
        match self {
            SubjectKind::Catchment => "catchment",
            SubjectKind::Inflow => "inflow",
            SubjectKind::Pond => "pond",
            SubjectKind::Channel => "channel",
            SubjectKind::Point => "point",
        }
    }
}

/// One calendar year's maximum of a record series.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct YearMax {
    /// Calendar year.
    pub year: i32,
    /// The year's maximum (the unit is in the field holding it).
    pub value: f64,
}

/// A flow of the fitted frequency distribution.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FrequencyFlow {
    /// Return period, years.
    pub return_period_yr: f64,
    /// Flow, cfs.
    pub flow_cfs: f64,
}

/// What a pond adds to its record entry.
#[derive(Debug, Clone, PartialEq)]
pub struct PondRecord {
    /// Stage (ft) equalled or exceeded at each of [`EXCEEDANCES`](super::EXCEEDANCES).
    pub stage_duration_ft: Vec<f64>,
    /// Annual maximum stage, ft.
    pub annual_max_stage_ft: Vec<YearMax>,
    /// Mass-balance error of the routing (fraction of the inflow volume).
    pub mass_balance_error: f64,
    /// Volumes infiltrated and evaporated, for a pond that loses water.
    pub lost: Option<crate::methods::pond::LossTotals>,
}

/// One element or point over one record and condition, internal units.
#[derive(Debug, Clone, PartialEq)]
pub struct ElementRecord {
    /// Record name.
    pub record: String,
    /// Condition index.
    pub condition: usize,
    /// Element or point name.
    pub element: String,
    /// What it is.
    pub kind: SubjectKind,
    /// Start of the first interval, seconds since 1970-01-01 (UTC).
    pub start_s: i64,
    /// Length of one interval, s.
    pub step_s: i64,
    /// Intervals from the start to the end of the record.
    pub steps: usize,
    /// Rain over the record, in.
    pub rain_in: f64,
    /// Runoff depth over the contributing area, in.
    pub runoff_in: f64,
    /// Runoff or outflow volume, ft3.
    pub volume_ft3: f64,
    /// Peak flow, cfs.
    pub peak_cfs: f64,
    /// Index of the peak in the series (0 = the record's start).
    pub peak_index: usize,
    /// Annual maximum flows (complete years), cfs.
    pub annual_peaks_cfs: Vec<YearMax>,
    /// Years left out for less than 90 % coverage.
    pub incomplete_years: Vec<i32>,
    /// Years with zero peak, left out of the fit.
    pub zero_years: Vec<i32>,
    /// LP3 frequency flows at [`RETURN_PERIODS`](super::RETURN_PERIODS) (empty without a fit).
    pub frequency: Vec<FrequencyFlow>,
    /// LP3 fit of log10 annual peaks in cfs (the skew is the one used: the
    /// weighted skew when the record has a regional skew).
    pub lp3: Option<stats::Lp3Fit>,
    /// The Bulletin 17B analysis behind `lp3`: the low-outlier test and the
    /// skew weighting.
    pub frequency_analysis: Option<stats::FrequencyAnalysis>,
    /// Flow (cfs) equalled or exceeded at each of [`EXCEEDANCES`](super::EXCEEDANCES).
    pub flow_duration_cfs: Vec<f64>,
    /// Number of rain events (catchments, event mode).
    pub events: Option<usize>,
    /// Stage statistics and mass balance (ponds).
    pub pond: Option<PondRecord>,
    /// Soil-moisture results (catchments).
    pub moisture: Option<MoistureRecord>,
}

/// A catchment's soil-moisture results over one record and condition.
#[derive(Debug, Clone, PartialEq)]
pub struct MoistureRecord {
    /// Rain less runoff over the record, in over the catchment.
    pub infiltration_in: f64,
    /// Curve numbers at the events' start (the moisture-accounted part in
    /// continuous mode; the AMC-adjusted CN in event mode); `None` without events.
    pub event_cn: Option<crate::methods::moisture::CnRange>,
}

/// A point's series over one record and condition, reduced for its plots.
#[derive(Debug, Clone, PartialEq)]
pub struct PointSeries {
    /// Record name.
    pub record: String,
    /// Condition index.
    pub condition: usize,
    /// Point index.
    pub point: usize,
    /// Flow (cfs) equalled or exceeded at each of [`plot_exceedances`](super::plot_exceedances).
    pub duration_curve_cfs: Vec<f64>,
    /// Daily maximum flows, cfs, from the record's start.
    pub daily_max_cfs: Vec<f64>,
}

/// The result of a flow-duration control that could be checked.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DurationCheck {
    /// Lowest flow of the rule's range, cfs.
    pub from_cfs: f64,
    /// Highest flow of the rule's range, cfs.
    pub to_cfs: f64,
    /// Number of flow levels compared.
    pub levels: usize,
    /// Relative tolerance on the baseline's time.
    pub tolerance: f64,
    /// The level where the condition's time most exceeds the baseline's, cfs.
    pub worst_flow_cfs: f64,
    /// The baseline's time above that level, h.
    pub baseline_time_h: f64,
    /// The condition's time above that level, h.
    pub time_h: f64,
    /// The time allowed above it, h.
    pub allowed_time_h: f64,
    /// The condition's time over the baseline's, less one, at that level
    /// (`None` when the baseline never reaches it and the condition does).
    pub worst_relative_excess: Option<f64>,
    /// Whether the condition's times stay within the rule at every level.
    pub pass: bool,
}

/// A flow-duration control of a point over a record for one condition.
#[derive(Debug, Clone, PartialEq)]
pub struct DurationComparison {
    /// Point index.
    pub point: usize,
    /// Record name.
    pub record: String,
    /// Condition index.
    pub condition: usize,
    /// Area draining to the point in the condition, ac.
    pub area_ac: f64,
    /// Area draining to the point in the baseline, ac (`None` without one).
    pub baseline_area_ac: Option<f64>,
    /// The check (`None`: not checked, the baseline is empty).
    pub check: Option<DurationCheck>,
}

/// Whether a pond with a top overtopped over a record.
#[derive(Debug, Clone, PartialEq)]
pub struct OvertoppingCheck {
    /// Pond name.
    pub pond: String,
    /// Record name.
    pub record: String,
    /// Condition name.
    pub condition: String,
    /// Highest stage, ft.
    pub peak_stage_ft: f64,
    /// Top of the pond, ft.
    pub top_ft: f64,
    /// Whether the stage stayed at or below the top.
    pub pass: bool,
}

/// A warning of the long records, with its quantities in internal units
/// (`report::records` turns each into a [`Warning`]).
#[derive(Debug, Clone, PartialEq)]
pub enum RecordWarning {
    /// A warning without quantities to convert.
    Plain(Warning),
    /// A pond rose above its top.
    Overtopped {
        /// Pond.
        pond: String,
        /// Record.
        record: String,
        /// Condition.
        condition: String,
        /// When the highest stage came, seconds since 1970-01-01 (UTC).
        when_s: i64,
        /// Highest stage, ft.
        stage_ft: f64,
        /// Top, ft.
        top_ft: f64,
    },
    /// Water still in a pond, or not yet at a point, when the record ends.
    WaterLeft {
        /// Record.
        record: String,
        /// Condition.
        condition: String,
        /// `pond "NAME"` or `point "NAME"`.
        element: String,
        /// The volume, ft3.
        left_ft3: f64,
        /// The volume as a percentage of what entered.
        percent: f64,
        /// Where the water is.
        what: &'static str,
    },
    /// Part of an element's outflow lagged past the end of the record.
    LagPastEnd {
        /// Record.
        record: String,
        /// Condition.
        condition: String,
        /// Element.
        element: String,
        /// The lag, h.
        lag_h: f64,
        /// The volume lost, ft3.
        lost_ft3: f64,
    },
}

/// What the records produced, in internal units.
#[derive(Debug, Clone, Default)]
pub struct RecordsResult {
    /// One entry per record, condition and element or point, the
    /// conditions in the study's order within each record.
    pub elements: Vec<ElementRecord>,
    /// Each point's reduced series per record and simulated condition.
    pub points: Vec<PointSeries>,
    /// Flow-duration controls.
    pub comparisons: Vec<DurationComparison>,
    /// Overtopping checks of ponds over each record (one per pond and
    /// condition that has a top); a failure counts in the exit code.
    pub overtopping: Vec<OvertoppingCheck>,
    /// What the records could not see or resolve (overtopping, water left
    /// at the end, runoff lagged past the end, incomplete years, short fits,
    /// mass balance).
    pub warnings: Vec<RecordWarning>,
    /// Seconds spent per stage and intervals simulated.
    pub timings: Timings,
}

/// Seconds spent in each stage of the long records, for benchmarks.
#[derive(Debug, Clone, Copy, Default)]
pub struct Timings {
    /// Rain at the step.
    pub rain_s: f64,
    /// Excess rainfall (moisture accounting) and its unit-hydrograph
    /// convolution, computed together one rainy interval at a time (the
    /// benchmarks time each alone).
    pub runoff_s: f64,
    /// Pond routing.
    pub routing_s: f64,
    /// Statistics (annual series, frequency, durations).
    pub statistics_s: f64,
    /// Intervals simulated (summed over records).
    pub intervals: usize,
}

/// Where the records report their progress: the command layer shows it,
/// tests and benchmarks pass [`Silent`].
pub trait Progress {
    /// A record starts: `steps` intervals, `elements` element simulations
    /// (conditions times elements) to come.
    fn start(&self, record: &str, steps: usize, elements: u64);
    /// One element of one condition is done.
    fn advance(&self);
    /// The record is done.
    fn finish(&self);
}

/// Progress that goes nowhere.
#[derive(Debug, Clone, Copy, Default)]
pub struct Silent;

impl Progress for Silent {
    fn start(&self, _record: &str, _steps: usize, _elements: u64) {}
    fn advance(&self) {}
    fn finish(&self) {}
}
