//! The validated study: storms, catchments, ponds, inflows, points and
//! records, in internal units, with every cross-reference resolved.
//!
//! Nothing here knows about TOML. A `Study` is only built by
//! `scenario::load`, which checks everything once; the simulation then
//! needs no further checks.

use crate::methods::hydraulics::Outlet;
use crate::methods::pond::StageStorage;
use crate::methods::rainfall::{MassCurve, NrcsType};
use crate::methods::runoff::Lambda;
use crate::methods::timing::Segment;
use crate::methods::unit_hydrograph::Shape;
use crate::util::units::UnitSystem;
use crate::warning::Warning;
use std::path::PathBuf;

/// A validated study.
#[derive(Debug, Clone)]
pub struct Study {
    /// Free-text title.
    pub title: String,
    /// Unit system of input and results.
    pub units: UnitSystem,
    /// Computation step of design storms, h.
    pub step_h: f64,
    /// Whether the step was given in the scenario (else chosen by the rule).
    pub step_given: bool,
    /// Condition names; index 0 is not special, see `baseline`.
    pub conditions: Vec<String>,
    /// Index of the baseline condition.
    pub baseline: usize,
    /// Whether the baseline has no element (a scenario whose elements all
    /// belong to one other condition): it is not simulated, and limits that
    /// need it are reported "not checked: no baseline".
    pub baseline_empty: bool,
    /// 2-year 24-hour rainfall, in (when given).
    pub p2_in: Option<f64>,
    /// Design storms.
    pub storms: Vec<Storm>,
    /// Catchments, ponds and inflows.
    pub elements: Vec<Element>,
    /// Points of comparison.
    pub points: Vec<Point>,
    /// Long records.
    pub records: Vec<Record>,
    /// Warnings found while loading.
    pub warnings: Vec<Warning>,
    /// Provenance of the inputs.
    pub provenance: Provenance,
    /// Outlet dimensions to be sized.
    pub sizing: Vec<SizedDim>,
    /// Memory cap for one run, bytes.
    pub memory_limit_bytes: u64,
    /// The report's project block (`[report]`).
    pub report: ReportInfo,
}

impl Study {
    /// The conditions that are simulated: every one but an empty baseline.
    pub fn simulated_conditions(&self) -> Vec<usize> {
        (0..self.conditions.len())
            .filter(|&c| !(self.baseline_empty && c == self.baseline))
            .collect()
    }

    /// Whether every element belongs to the baseline, the study's only
    /// condition: its limits in flow units (absolute, per area) are checked
    /// on it, and limits that compare conditions cannot be.
    pub fn one_condition(&self) -> bool {
        self.conditions.len() == 1
    }

    /// Whether the points' limits are checked on condition `c`: every
    /// condition but the baseline, and the baseline when it is the only one.
    pub fn limits_apply_to(&self, c: usize) -> bool {
        c != self.baseline || self.one_condition()
    }

    /// Whether a limit cannot be checked: it needs the baseline's results
    /// when there are none (reported "not checked: no baseline"), or it
    /// compares conditions in a study of one condition ("not checked: one
    /// condition only").
    pub fn cannot_check(&self, limit: &Limit) -> bool {
        match limit {
            Limit::Relative { condition, .. } => {
                (self.baseline_empty && *condition == self.baseline) || self.one_condition()
            }
            Limit::None | Limit::Absolute { .. } | Limit::PerArea { .. } => false,
        }
    }
}

/// The project block of the HTML report (`[report]`), each entry as written.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct ReportInfo {
    /// Project number.
    pub project_number: Option<String>,
    /// Client.
    pub client: Option<String>,
    /// Prepared by.
    pub prepared_by: Option<String>,
    /// Date of the report.
    pub date: Option<String>,
}

/// What was read, for the report's provenance.
#[derive(Debug, Clone, Default)]
pub struct Provenance {
    /// The scenario file as resolved.
    pub scenario: PathBuf,
    /// SHA-256 of the scenario text, hex.
    pub scenario_sha256: String,
    /// Every other input file read, as resolved.
    pub inputs: Vec<PathBuf>,
    /// The scenario text, for rewriting a sized copy.
    pub scenario_text: String,
    /// Byte spans of the file paths in the scenario, with the resolved path.
    pub path_spans: Vec<(std::ops::Range<usize>, PathBuf)>,
}

/// A design storm.
#[derive(Debug, Clone)]
pub struct Storm {
    /// Name.
    pub name: String,
    /// How its rain is given.
    pub rain: StormRain,
}

/// The rain of a design storm.
#[derive(Debug, Clone)]
pub enum StormRain {
    /// A dimensionless mass curve scaled to a depth and duration.
    Pattern {
        /// The curve.
        curve: MassCurve,
        /// The NRCS type, when it is one of the four patterns.
        nrcs: Option<NrcsType>,
        /// Pattern key as written.
        key: String,
        /// Depth, in.
        depth_in: f64,
        /// Duration, h.
        duration_h: f64,
    },
    /// A nested storm from local depth-duration values (alternating-block
    /// method), built at the run's step.
    Nested {
        /// `(duration h, depth in)`, checked: both increasing, average
        /// intensity never increasing.
        depths: Vec<(f64, f64)>,
        /// Fraction of the duration at which the largest block falls.
        peak_at: f64,
        /// Duration, h.
        duration_h: f64,
        /// Depth over the duration, in.
        depth_in: f64,
    },
    /// A gauge record: rain per interval, the first starting at t = 0.
    Gauge {
        /// File, as resolved.
        path: PathBuf,
        /// Depth per interval, in.
        depth_in: Vec<f64>,
        /// Interval, h.
        interval_h: f64,
        /// Start of the first interval, seconds since 1970-01-01 (naive).
        start_s: i64,
    },
}

impl Storm {
    /// Total rain depth, in.
    pub fn depth_in(&self) -> f64 {
        match &self.rain {
            StormRain::Pattern { depth_in, .. } | StormRain::Nested { depth_in, .. } => *depth_in,
            StormRain::Gauge { depth_in, .. } => depth_in.iter().sum(),
        }
    }

    /// When the rain ends, h from the storm start.
    pub fn rain_end_h(&self) -> f64 {
        match &self.rain {
            StormRain::Pattern { duration_h, .. } | StormRain::Nested { duration_h, .. } => {
                *duration_h
            }
            StormRain::Gauge {
                depth_in,
                interval_h,
                ..
            } => depth_in.len() as f64 * interval_h,
        }
    }

    /// The NRCS type, if the storm uses one of the four 24-h patterns.
    pub fn nrcs(&self) -> Option<NrcsType> {
        match &self.rain {
            StormRain::Pattern { nrcs, .. } => *nrcs,
            StormRain::Nested { .. } | StormRain::Gauge { .. } => None,
        }
    }

    /// Rain per step, in, over `n_steps` steps.
    pub fn rain_at_step(&self, step_h: f64, n_steps: usize) -> Vec<f64> {
        match &self.rain {
            StormRain::Pattern {
                curve,
                depth_in,
                duration_h,
                ..
            } => {
                crate::methods::rainfall::hyetograph(curve, *depth_in, *duration_h, step_h, n_steps)
            }
            StormRain::Nested {
                depths,
                peak_at,
                duration_h,
                ..
            } => {
                crate::methods::rainfall::nested::hyetograph(
                    depths,
                    *duration_h,
                    *peak_at,
                    step_h,
                    n_steps,
                )
                .0
            }
            StormRain::Gauge {
                depth_in,
                interval_h,
                ..
            } => crate::methods::rainfall::resample_gauge(depth_in, *interval_h, step_h, n_steps),
        }
    }
}

/// Where an element sends its flow.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Target {
    /// Another element (a pond).
    Element(usize),
    /// A point.
    Point(usize),
}

/// A catchment, pond or inflow hydrograph.
#[derive(Debug, Clone)]
pub struct Element {
    /// Name.
    pub name: String,
    /// Membership by condition index.
    pub conditions: Vec<bool>,
    /// Where it drains.
    pub to: Target,
    /// Pure translation on the way to `to`, h.
    pub lag_h: f64,
    /// What it is.
    pub kind: ElementKind,
}

/// The kinds of network element.
#[derive(Debug, Clone)]
pub enum ElementKind {
    /// Rain falls on it and runs off.
    Catchment(Catchment),
    /// Storage routed through outlets.
    Pond(Pond),
    /// A hydrograph computed elsewhere.
    Inflow(Inflow),
    /// A reach (swale, ditch, stream) routed by the Muskingum method.
    Channel(Channel),
}

/// A channel reach routed by the Muskingum method
/// ([`crate::methods::channel`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Channel {
    /// Muskingum K, the reach's travel time, h.
    pub k_h: f64,
    /// Muskingum X, the weighting of inflow against outflow (0 to 0.5).
    pub x: f64,
}

/// How many K a run allows after the last rain for a channel's recession:
/// the outflow of an emptying reach falls as `exp(-t / (K (1 - X)))`, below
/// 0.1 % of its peak (the run-length rule) after `ln 1000 = 6.9` K at most.
pub const CHANNEL_RECESSION_K: f64 = 7.0;

impl Channel {
    /// The routing split at step `step_h` ([`crate::methods::channel::plan`]).
    pub fn plan(&self, step_h: f64) -> Option<crate::methods::channel::Plan> {
        crate::methods::channel::plan(self.k_h, self.x, step_h)
    }
}

impl Element {
    /// Kind word for results: catchment, pond, inflow, channel.
    pub fn kind_word(&self) -> &'static str {
        Kind::of(&self.kind).word()
    }

    /// Time (h) a run allows for this element on the way to its target
    /// beyond the storm's tail: its `lag`, and for a channel
    /// [`CHANNEL_RECESSION_K`] times its K, so that the reach's recession
    /// finishes within the run.
    pub fn run_allowance_h(&self) -> f64 {
        let own = match &self.kind {
            ElementKind::Channel(ch) => CHANNEL_RECESSION_K * ch.k_h,
            _ => 0.0,
        };
        self.lag_h.max(0.0) + own
    }
}

/// What a row of results is about: an element of one of the three kinds,
/// or a point of comparison.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// A catchment.
    Catchment,
    /// A pond.
    Pond,
    /// An inflow hydrograph.
    Inflow,
    /// A channel reach.
    Channel,
    /// A point of comparison.
    Point,
}

impl Kind {
    /// The kind of an element.
    pub fn of(kind: &ElementKind) -> Kind {
        match kind {
            ElementKind::Catchment(_) => Kind::Catchment,
            ElementKind::Pond(_) => Kind::Pond,
            ElementKind::Inflow(_) => Kind::Inflow,
            ElementKind::Channel(_) => Kind::Channel,
        }
    }

    /// The word written in results: catchment, pond, inflow, point.
    pub fn word(self) -> &'static str {
        match self {
            Kind::Catchment => "catchment",
            Kind::Pond => "pond",
            Kind::Inflow => "inflow",
            Kind::Channel => "channel",
            Kind::Point => "point",
        }
    }
}

/// One cover row of a catchment's worksheet.
#[derive(Debug, Clone)]
pub struct CoverRow {
    /// Description: the land key and soil, or "given".
    pub label: String,
    /// Curve number.
    pub cn: f64,
    /// Area, ac.
    pub area_ac: f64,
    /// Whether the cover is pervious (for the CN > 98 warning).
    pub pervious: bool,
    /// `false` for impervious cover marked `connected = false` (TR-55
    /// Figure 2-4); `true` otherwise.
    pub connected: bool,
}

impl CoverRow {
    /// Whether the row is impervious cover at CN 98 (roofs, paving, curbed
    /// streets, or a `cn = 98` row), the cover TR-55 (1986) Table 2-2a
    /// treats as directly connected unless marked otherwise.
    pub fn is_impervious(&self) -> bool {
        !self.pervious && (self.cn - crate::methods::moisture::IMPERVIOUS_CN).abs() < 1e-9
    }
}

/// A validated catchment.
#[derive(Debug, Clone)]
pub struct Catchment {
    /// Area, ac.
    pub area_ac: f64,
    /// Cover rows (empty when `cn` was given directly).
    pub covers: Vec<CoverRow>,
    /// Composite curve number (for Ia = 0.2 S), unrounded.
    pub cn: f64,
    /// Initial-abstraction ratio.
    pub lambda: Lambda,
    /// Retention used with the ratio, in.
    pub retention_in: f64,
    /// Flow path segments (empty when `tc` was given directly).
    pub segments: Vec<Segment>,
    /// Time of concentration, h (from the lag, `Tc = L / 0.6`, when a lag
    /// was given).
    pub tc_h: f64,
    /// Watershed lag of the unit hydrograph, h (`0.6 Tc` unless given or
    /// computed by the watershed-lag equation).
    pub uh_lag_h: f64,
    /// Which input the timing came from.
    pub timing_basis: TimingBasis,
    /// Peak rate factor.
    pub prf: f64,
    /// Unit-hydrograph shape.
    pub shape: Shape,
    /// Share (0-1) of the area that is directly connected impervious cover
    /// at CN 98 (0 when `cn` was given directly).
    pub connected_fraction: f64,
    /// Curve number of the rest of the area (pervious and composite covers,
    /// with unconnected impervious cover by TR-55 Figure 2-4); `cn` when
    /// there is no connected impervious cover.
    pub rest_cn: f64,
    /// `impervious = "separate"`: design storms and event-mode records
    /// compute the connected impervious share on its own (continuous
    /// records always do).
    pub separate_impervious: bool,
    /// Whether the composite CN counts impervious cover marked
    /// `connected = false` at half weight (TR-55 Figure 2-4, under 30 %
    /// impervious), so that it is not the area-weighted mean of the covers.
    pub unconnected_reduced: bool,
}

impl Catchment {
    /// Excess per step (in over the whole area) of a design storm's rain (in per step).
    ///
    /// # Formula
    /// TR-55 (1986) eq. 2-1 on the cumulative rain, with the composite CN,
    /// or with `impervious = "separate"` for the connected impervious share
    /// at CN 98 and the rest at its own CN, added by area.
    pub fn storm_excess_in(&self, rain_in: &[f64]) -> Vec<f64> {
        let ratio = self.lambda.ratio();
        if !self.separate_impervious || self.connected_fraction <= 0.0 {
            return crate::methods::runoff::excess_per_step_in(rain_in, self.retention_in, ratio);
        }
        crate::methods::runoff::split_excess_per_step_in(
            rain_in,
            self.connected_fraction,
            self.lambda
                .retention_in(crate::methods::moisture::IMPERVIOUS_CN),
            self.lambda.retention_in(self.rest_cn),
            ratio,
        )
    }
}

/// Where a catchment's timing comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TimingBasis {
    /// `tc` given; lag = 0.6 Tc.
    TcGiven,
    /// TR-55 velocity method over the flow path; lag = 0.6 Tc.
    FlowPath,
    /// `lag_time` given; Tc = lag / 0.6.
    LagGiven,
    /// NRCS watershed-lag equation (Bedient et al. eq. 2-18); Tc = lag / 0.6.
    WatershedLag {
        /// Length to the divide, ft.
        length_ft: f64,
        /// Average watershed slope, ft/ft.
        slope: f64,
    },
}

impl TimingBasis {
    /// A short description for reports.
    pub fn describe(&self) -> &'static str {
        match self {
            TimingBasis::TcGiven => "Tc given; lag = 0.6 Tc",
            TimingBasis::FlowPath => "Tc by the TR-55 velocity method; lag = 0.6 Tc",
            TimingBasis::LagGiven => "lag given; Tc = lag / 0.6",
            TimingBasis::WatershedLag { .. } => {
                "lag by the NRCS watershed-lag equation (Bedient et al. eq. 2-18); Tc = lag / 0.6"
            }
        }
    }

    /// The word written in `summary.json`.
    pub fn word(&self) -> &'static str {
        match self {
            TimingBasis::TcGiven => "tc",
            TimingBasis::FlowPath => "flow path",
            TimingBasis::LagGiven => "lag_time",
            TimingBasis::WatershedLag { .. } => "watershed_lag",
        }
    }
}

/// A validated pond.
#[derive(Debug, Clone)]
pub struct Pond {
    /// Stage-storage relation.
    pub storage: StageStorage,
    /// How the storage was given.
    pub storage_kind: StorageKind,
    /// Outlets, in the scenario's order.
    pub outlets: Vec<Outlet>,
    /// Each outlet's optional `name`, in the same order.
    pub outlet_names: Vec<Option<String>>,
    /// Initial water surface, ft (None: the lowest outlet, or the bottom).
    pub start_ft: Option<f64>,
    /// Top of embankment, ft.
    pub top_ft: Option<f64>,
    /// Embankment crest length for overtopping, ft.
    pub top_length_ft: f64,
    /// Least freeboard allowed, ft.
    pub min_freeboard_ft: Option<f64>,
    /// Longest drain time allowed, h.
    pub max_drain_time_h: Option<f64>,
    /// Stage grid spacing for the routing table, ft.
    pub grid_step_ft: f64,
    /// Barrels, tailwater, counts and the clogged-outlet checks.
    pub structure: Box<Structure>,
    /// Infiltration and evaporation (none by default).
    pub losses: crate::methods::pond::PondLosses,
}

/// The parts of a pond's outlet works beyond its outlets: how many of
/// each opening, which barrel each drains into, the barrels, the
/// tailwater, and the clogged-outlet checks.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Structure {
    /// Identical copies of each outlet (`count`), in the outlets' order.
    pub counts: Vec<u32>,
    /// The barrel each outlet drains into (`into`), in the outlets' order.
    pub into: Vec<Option<usize>>,
    /// Barrels.
    pub barrels: Vec<crate::methods::hydraulics::Barrel>,
    /// Each barrel's name.
    pub barrel_names: Vec<String>,
    /// Each barrel's entrance keyword.
    pub barrel_entrances: Vec<String>,
    /// Tailwater downstream, if given.
    pub tailwater: Option<crate::methods::hydraulics::Tailwater>,
    /// Clogged-outlet checks.
    pub failures: Vec<FailureCheck>,
}

/// A `[[pond.failure]]` check: a storm routed with some devices blocked.
#[derive(Debug, Clone, PartialEq)]
pub struct FailureCheck {
    /// Storm index.
    pub storm: usize,
    /// Blocked outlets (indices).
    pub blocked_outlets: Vec<usize>,
    /// Blocked barrels (indices).
    pub blocked_barrels: Vec<usize>,
    /// The names as written, for the reports.
    pub blocked_names: Vec<String>,
    /// Least freeboard to keep, ft.
    pub min_freeboard_ft: f64,
    /// Starting water surface, ft (None: full, at the lowest unblocked opening).
    pub start_ft: Option<f64>,
}

/// How a pond's stage-storage relation was given.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StorageKind {
    /// `stage_area` rows, conic frustum between them.
    StageArea,
    /// `stage_volume` rows.
    StageVolume,
    /// `basin` geometry (bottom, length, width, side slopes, depth).
    Basin,
    /// Underground units alone (galleries, vaults, stone beds).
    Underground,
    /// A stage-area table with underground units added.
    StageAreaAndUnderground,
    /// A stage-volume table with underground units added.
    StageVolumeAndUnderground,
    /// Basin geometry with underground units added.
    BasinAndUnderground,
}

impl StorageKind {
    /// How the report describes it.
    pub fn describe(self) -> &'static str {
        match self {
            StorageKind::StageArea => "stage-area (conic frustum between rows)",
            StorageKind::StageVolume => "stage-volume",
            StorageKind::Basin => "basin geometry (stage-area, conic frustum)",
            StorageKind::Underground => {
                "underground (pipe galleries by circular segment, vaults, stone voids)"
            }
            StorageKind::StageAreaAndUnderground => {
                "stage-area (conic frustum between rows) plus underground units"
            }
            StorageKind::StageVolumeAndUnderground => "stage-volume plus underground units",
            StorageKind::BasinAndUnderground => {
                "basin geometry (stage-area, conic frustum) plus underground units"
            }
        }
    }
}

/// Weir coefficient of an overtopped embankment (broad-crested, US units;
/// a common value, from memory).
pub const EMBANKMENT_WEIR_COEFFICIENT: f64 = 2.6;

impl Pond {
    /// The pond's outlet works, nothing blocked.
    pub fn works(&self) -> crate::methods::hydraulics::Works<'_> {
        crate::methods::hydraulics::Works {
            outlets: &self.outlets,
            counts: &self.structure.counts,
            into: &self.structure.into,
            barrels: &self.structure.barrels,
            tailwater: self.structure.tailwater.as_ref(),
            blocked_outlets: &[],
            blocked_barrels: &[],
        }
    }

    /// The embankment as a broad-crested weir above `top`, if there is a top.
    pub fn embankment(&self) -> Option<crate::methods::pond::Embankment> {
        self.top_ft.map(|top| crate::methods::pond::Embankment {
            top_ft: top,
            crest_length_ft: self.top_length_ft,
            coefficient: EMBANKMENT_WEIR_COEFFICIENT,
        })
    }
}

/// A validated inflow hydrograph.
#[derive(Debug, Clone)]
pub struct Inflow {
    /// (h, cfs) rows.
    pub table: Vec<(f64, f64)>,
    /// Storm it belongs to (None: every storm).
    pub storm: Option<usize>,
    /// The file it came from, if any.
    pub file: Option<PathBuf>,
}

impl Inflow {
    /// Flow at time t (h), linear between rows and zero outside them.
    pub fn flow_at(&self, t_h: f64) -> f64 {
        match (self.table.first(), self.table.last()) {
            (Some(a), Some(b)) if t_h >= a.0 && t_h <= b.0 => {
                crate::util::interp::linear(&self.table, t_h)
            }
            _ => 0.0,
        }
    }

    /// Last time with a table row, h.
    pub fn end_h(&self) -> f64 {
        self.table.last().map(|r| r.0).unwrap_or(0.0)
    }
}

/// A peak-flow limit at a point.
#[derive(Debug, Clone, PartialEq)]
pub enum Limit {
    /// Not checked.
    None,
    /// A fraction of a condition's peak in a storm (None: the same storm).
    Relative {
        /// 1.0 for "existing", 0.5 for "50% existing".
        fraction: f64,
        /// Condition index.
        condition: usize,
        /// Storm index, or the storm being checked.
        storm: Option<usize>,
    },
    /// A flow, cfs.
    Absolute {
        /// cfs.
        flow_cfs: f64,
    },
    /// Per acre draining to the point in the checked condition, cfs/ac.
    PerArea {
        /// cfs per ac.
        cfs_per_ac: f64,
    },
}

/// Flow-duration control settings at a point.
#[derive(Debug, Clone, PartialEq)]
pub struct DurationControl {
    /// Lower flow: fraction of the baseline's Qn.
    pub from: (f64, f64),
    /// Upper flow: fraction of the baseline's Qn.
    pub to: (f64, f64),
    /// Relative tolerance.
    pub tolerance: f64,
    /// Text as written, for reports.
    pub text: String,
}

/// A point of comparison.
#[derive(Debug, Clone)]
pub struct Point {
    /// Name.
    pub name: String,
    /// Limit per storm index.
    pub limits: Vec<Limit>,
    /// Limit text per storm index, as written.
    pub limit_text: Vec<String>,
    /// Flow-duration control.
    pub durations: Option<DurationControl>,
}

/// How soil moisture is kept between events in a long record.
#[derive(Debug, Clone, PartialEq)]
pub enum MoistureMode {
    /// CN per event, events split by dry gaps.
    Event {
        /// Dry gap, h.
        dry_gap_h: f64,
        /// Adjust each event's CN by the 5-day antecedent rain.
        antecedent: bool,
        /// Growing-season months.
        growing_months: [bool; 12],
    },
    /// Soil-moisture accounting with evapotranspiration
    /// (`methods::moisture::continuous`).
    Continuous {
        /// Dry gap that ends an event, h.
        dry_gap_h: f64,
        /// Potential evapotranspiration per month, in/day (index 0 = January).
        pet_in_per_day: [f64; 12],
        /// Recovery coefficient c.
        recovery: f64,
        /// Moisture class the record starts at.
        initial: crate::methods::moisture::MoistureClass,
    },
}

/// A long gauge record for continuous simulation.
#[derive(Debug, Clone)]
pub struct Record {
    /// Name.
    pub name: String,
    /// Gauge file, as resolved.
    pub path: PathBuf,
    /// Rain per interval, in.
    pub depth_in: Vec<f64>,
    /// Gauge interval, h.
    pub interval_h: f64,
    /// Computation step, h.
    pub step_h: f64,
    /// Start of the first interval, s since 1970-01-01 (naive).
    pub start_s: i64,
    /// Moisture accounting.
    pub moisture: MoistureMode,
    /// Regional skew to weight the frequency fits' station skews with
    /// (Bulletin 17B), when given.
    pub regional_skew: Option<crate::methods::stats::RegionalSkew>,
}

/// Which outlet field a sizing range sets.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SizedField {
    /// Orifice or riser diameter.
    Diameter,
    /// Rectangular orifice width.
    Width,
    /// Rectangular orifice height.
    Height,
    /// Weir length.
    Length,
    /// V-notch angle.
    Angle,
    /// Crest elevation.
    Crest,
    /// Invert elevation.
    Invert,
}

impl SizedField {
    /// A sized value (internal units: ft or degrees) with its unit in
    /// `units`; a diameter, width or height also in inches or millimetres:
    /// "1.604 ft (19.25 in)", "0.4889 m (488.9 mm)", "5.450 ft", "90 deg".
    pub fn value_text(self, units: crate::util::units::UnitSystem, v: f64) -> String {
        use crate::util::units::{Quantity, UnitSystem, sig};
        if self == SizedField::Angle {
            return format!("{} deg", sig(v, 4));
        }
        let length = v * Quantity::Length.output_factor(units);
        let main = format!("{} {}", sig(length, 4), Quantity::Length.output_unit(units));
        if !matches!(
            self,
            SizedField::Diameter | SizedField::Width | SizedField::Height
        ) {
            return main;
        }
        match units {
            UnitSystem::Us => format!("{main} ({} in)", sig(v * 12.0, 4)),
            UnitSystem::Si => format!("{main} ({} mm)", sig(length * 1000.0, 4)),
        }
    }

    /// Key as written in scenarios.
    pub fn key(self) -> &'static str {
        match self {
            SizedField::Diameter => "diameter",
            SizedField::Width => "width",
            SizedField::Height => "height",
            SizedField::Length => "length",
            SizedField::Angle => "angle",
            SizedField::Crest => "crest",
            SizedField::Invert => "invert",
        }
    }

    /// Whether a lower value is a larger opening.
    pub fn is_elevation(self) -> bool {
        matches!(self, SizedField::Crest | SizedField::Invert)
    }
}

/// An outlet dimension given as a range, to be solved.
#[derive(Debug, Clone)]
pub struct SizedDim {
    /// Element index of the pond.
    pub element: usize,
    /// Outlet index within the pond.
    pub outlet: usize,
    /// Which field.
    pub field: SizedField,
    /// Range, internal units (ft or degrees).
    pub min: f64,
    /// Range, internal units.
    pub max: f64,
    /// Byte span of the range in the scenario, for the sized copy.
    pub span: std::ops::Range<usize>,
    /// Buildable increment, internal units (ft or degrees): the value
    /// chosen is a whole multiple of it. Filled by `scenario::ponds` from
    /// the range's `increment` or [`SizedField::default_increment`].
    pub increment: f64,
}

impl SizedField {
    /// The default buildable increment (ft, or degrees for an angle):
    /// diameters 0.5 in (10 mm), widths, heights and lengths 0.1 ft
    /// (25 mm), elevations 0.05 ft (10 mm), angles 5 degrees.
    pub fn default_increment(self, units: crate::util::units::UnitSystem) -> f64 {
        use crate::util::units::{M_PER_FT, UnitSystem};
        let si = |mm: f64| mm / 1000.0 / M_PER_FT;
        match (self, units) {
            (SizedField::Angle, _) => 5.0,
            (SizedField::Diameter, UnitSystem::Us) => 0.5 / 12.0,
            (SizedField::Diameter, UnitSystem::Si) => si(10.0),
            (SizedField::Crest | SizedField::Invert, UnitSystem::Us) => 0.05,
            (SizedField::Crest | SizedField::Invert, UnitSystem::Si) => si(10.0),
            (_, UnitSystem::Us) => 0.1,
            (_, UnitSystem::Si) => si(25.0),
        }
    }
}
