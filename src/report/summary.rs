//! The results of a run in the scenario's units, as one serde structure:
//! `summary.json` is this structure, and the Markdown report and plots read
//! it too.

use crate::engine::analysis::{Analysis, PondCheck, PondCheckKind, PondLimitCheck};
use crate::engine::catchment_timing::catchment_timing;
use crate::engine::network;
use crate::engine::records::RecordsResult;
use crate::methods::timing::Segment;
use crate::model::{ElementKind, Kind, Study};
use crate::util::units::{Quantity, UnitSystem};
use serde::Serialize;

/// A kind is written as its word ("catchment", "pond", "inflow", "point").
impl Serialize for Kind {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(self.word())
    }
}

/// A pond check is written as its word ("overtopping", "freeboard",
/// "drain time").
impl Serialize for PondCheckKind {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(self.word())
    }
}

/// Units of the numbers in the summary.
#[derive(Debug, Clone, Serialize)]
pub struct Units {
    /// Flow unit.
    pub flow: &'static str,
    /// Volume unit.
    pub volume: &'static str,
    /// Stage and length unit.
    pub stage: &'static str,
    /// Rain and runoff depth unit.
    pub depth: &'static str,
    /// Catchment area unit.
    pub area: &'static str,
    /// Time unit of results.
    pub time: &'static str,
}

/// Where the results came from.
#[derive(Debug, Clone, Serialize)]
pub struct ProvenanceOut {
    /// Program name.
    pub program: &'static str,
    /// Program version.
    pub version: &'static str,
    /// Run date and time (UTC, RFC 3339).
    pub run_date: String,
    /// Scenario file.
    pub scenario: String,
    /// SHA-256 of the scenario text.
    pub scenario_sha256: String,
    /// Every input file read.
    pub inputs: Vec<String>,
}

/// One flow-path segment.
#[derive(Debug, Clone, Serialize)]
pub struct SegmentOut {
    /// sheet | shallow | channel.
    pub kind: &'static str,
    /// Length.
    pub length: f64,
    /// Slope, ft/ft.
    pub slope: f64,
    /// Manning n (sheet, channel) or null.
    pub n: Option<f64>,
    /// Surface (shallow) or null.
    pub surface: Option<String>,
    /// Velocity (ft/s or m/s).
    pub velocity: f64,
    /// Travel time, h.
    pub time_h: f64,
}

/// The inputs of the NRCS watershed-lag equation (Bedient et al. eq. 2-18).
#[derive(Debug, Clone, Serialize)]
pub struct WatershedLagOut {
    /// Flow length to the divide (ft or m).
    pub length: f64,
    /// Average watershed slope, %.
    pub slope_pct: f64,
}

/// One cover row.
#[derive(Debug, Clone, Serialize)]
pub struct CoverOut {
    /// Label.
    pub cover: String,
    /// Curve number.
    pub cn: f64,
    /// Area.
    pub area: f64,
    /// Impervious cover marked `connected = false` (written only when so).
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub unconnected: bool,
}

/// How a catchment's impervious cover (CN 98) enters its runoff.
#[derive(Debug, Clone, Serialize)]
pub struct ImperviousOut {
    /// `"separate"` (the connected share at CN 98 on its own in design
    /// storms and event-mode records) or `"composite"` (one CN).
    pub treatment: &'static str,
    /// Share of the area that is directly connected impervious cover, 0-1.
    pub connected_fraction: f64,
    /// CN of the rest of the area (what runs off beside the connected share
    /// when it is computed on its own).
    pub rest_cn: f64,
    /// How the composite CN was formed: `"area-weighted"` or
    /// `"TR-55 Figure 2-4"` (unconnected impervious cover at half weight).
    pub composite: &'static str,
}

impl ImperviousOut {
    /// The sentence the reports print under a catchment's covers.
    pub fn sentence(&self) -> String {
        let mut text = String::new();
        if self.composite == "TR-55 Figure 2-4" {
            text.push_str("The composite CN counts impervious cover marked unconnected at half weight (TR-55 Figure 2-4, under 30 % impervious; the equation is recalled from memory), so it is not the area-weighted mean of the rows. ");
        }
        if self.treatment == "separate" {
            text.push_str(&format!(
                "Impervious cover computed separately: the directly connected share, {:.1} % of the area, runs off at CN 98 on its own and the rest at CN {:.2}, added by area (design storms and event-mode records; continuous records always do so).",
                100.0 * self.connected_fraction,
                self.rest_cn
            ));
        } else {
            text.push_str(&format!(
                "Directly connected impervious cover is {:.1} % of the area, in the composite CN (`impervious = \"composite\"`; continuous records compute it on its own at CN 98).",
                100.0 * self.connected_fraction
            ));
        }
        text
    }
}

/// A catchment's derived parameters.
#[derive(Debug, Clone, Serialize)]
pub struct CatchmentOut {
    /// Name.
    pub name: String,
    /// Condition(s), joined with ", " when several.
    pub condition: String,
    /// Every condition it belongs to.
    pub conditions: Vec<String>,
    /// Area.
    pub area: f64,
    /// Composite CN (Ia = 0.2 S basis), unrounded.
    pub cn: f64,
    /// Initial-abstraction ratio.
    pub lambda: f64,
    /// CN equivalent to the retention used (differs from `cn` for lambda 0.05).
    pub cn_used: f64,
    /// Retention S used (in or mm).
    pub retention: f64,
    /// Time of concentration, h.
    pub tc_h: f64,
    /// Lag, h.
    pub lag_h: f64,
    /// Where Tc and lag come from: "tc", "flow path", "lag_time" or
    /// "watershed_lag".
    pub timing: &'static str,
    /// The NRCS watershed-lag equation's inputs, when it gave the lag.
    pub watershed_lag: Option<WatershedLagOut>,
    /// Time to peak of the unit hydrograph, h.
    pub tp_h: f64,
    /// Unit-hydrograph peak per unit depth (flow per in or per mm), the
    /// largest ordinate sampled at the step.
    pub uh_peak_per_depth: f64,
    /// Unit-hydrograph peak per unit depth by the formula PRF A Q / Tp.
    pub uh_formula_peak_per_depth: f64,
    /// Peak rate factor.
    pub prf: f64,
    /// Covers.
    pub covers: Vec<CoverOut>,
    /// How impervious cover enters the runoff, when the catchment has
    /// directly connected impervious cover or `impervious = "separate"`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub impervious: Option<ImperviousOut>,
    /// Flow path.
    pub flow_path: Vec<SegmentOut>,
    /// Where it drains.
    pub to: String,
}

/// One row of `events`: an element or point in a storm and condition.
#[derive(Debug, Clone, Serialize)]
pub struct EventOut {
    /// Storm.
    pub storm: String,
    /// Condition.
    pub condition: String,
    /// Element or point.
    pub element: String,
    /// catchment | pond | inflow | channel | point.
    pub kind: Kind,
    /// Rain depth (catchments).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rain_depth: Option<f64>,
    /// Runoff depth (catchments).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub runoff_depth: Option<f64>,
    /// Peak inflow (ponds and channels).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub peak_inflow: Option<f64>,
    /// Time of the peak inflow, h (channels).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub peak_inflow_time_h: Option<f64>,
    /// Inflow volume (channels).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub inflow_volume: Option<f64>,
    /// Water still in the reach at the run's end (channels).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stored_at_end: Option<f64>,
    /// The channel's Muskingum parameters and routing split (channels).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub channel: Option<ChannelOut>,
    /// Peak flow (outflow for ponds).
    pub peak_flow: f64,
    /// Time of the peak, h.
    pub peak_time_h: f64,
    /// Peak stage (ponds).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub peak_stage: Option<f64>,
    /// Peak storage above the table's lowest stage (ponds).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub peak_storage: Option<f64>,
    /// Runoff or outflow volume.
    pub volume: f64,
    /// Freeboard to the top (ponds with a top).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub freeboard: Option<f64>,
    /// Whether the pond overtopped.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub overtopped: Option<bool>,
    /// (inflow - outflow - change in storage) / inflow.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mass_balance_error: Option<f64>,
    /// Drain time, h (null when not drained within the run).
    #[serde(skip_serializing_if = "is_not_pond")]
    pub drain_time_h: Option<Option<f64>>,
    /// Volume infiltrated (ponds that infiltrate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub infiltrated_volume: Option<f64>,
}

impl EventOut {
    /// What a channel did to the peak in this event: how much lower the
    /// outflow peak is than the inflow peak (%, None without inflow) and
    /// how much later it comes (min); None for other elements.
    pub fn peak_lowered_and_delay(&self) -> Option<(Option<f64>, f64)> {
        let (pin, tin) = (self.peak_inflow?, self.peak_inflow_time_h?);
        let lowered = (pin > 0.0).then(|| 100.0 * (1.0 - self.peak_flow / pin));
        Some((lowered, (self.peak_time_h - tin) * 60.0))
    }
}

/// A channel's Muskingum parameters and how it was routed at the step.
#[derive(Debug, Clone, Serialize)]
pub struct ChannelOut {
    /// Muskingum K, h.
    pub k_h: f64,
    /// Muskingum X.
    pub x: f64,
    /// Sub-reaches of K / n in series.
    pub sub_reaches: usize,
    /// Routing steps per run step.
    pub sub_steps: usize,
    /// The routing step, h (the run step over `sub_steps`).
    pub sub_step_h: f64,
}

impl ChannelOut {
    /// The channel's parameters with its split at `step_h`.
    pub fn of(
        ch: &crate::model::Channel,
        plan: crate::methods::channel::Plan,
        step_h: f64,
    ) -> Self {
        ChannelOut {
            k_h: ch.k_h,
            x: ch.x,
            sub_reaches: plan.sub_reaches,
            sub_steps: plan.sub_steps,
            sub_step_h: step_h / plan.sub_steps as f64,
        }
    }
}

fn is_not_pond(v: &Option<Option<f64>>) -> bool {
    v.is_none()
}

/// One limit check at a point: a peak in a design storm against its limit,
/// or a flow-duration rule over a record.
#[derive(Debug, Clone, Serialize)]
pub struct ComparisonOut {
    /// Point.
    pub point: String,
    /// Storm (peak checks).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub storm: Option<String>,
    /// Record (flow-duration control).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub record: Option<String>,
    /// Baseline condition.
    pub baseline: String,
    /// Condition checked.
    pub condition: String,
    /// What is checked: "peak" or "flow duration".
    pub check: ComparisonKind,
    /// "meets", "exceeds", or "not checked: no baseline".
    pub status: ComparisonStatus,
    /// Baseline peak (peak checks with a baseline; null otherwise).
    pub baseline_peak: Option<f64>,
    /// Condition's peak (peak checks; null for flow durations).
    pub peak: Option<f64>,
    /// Limit (peak checks that are checked; null otherwise).
    pub limit: Option<f64>,
    /// The limit or rule as written.
    pub limit_text: String,
    /// Whether it holds (null when not checked).
    pub pass: Option<bool>,
    /// Area draining to the point in the condition checked.
    pub area: f64,
    /// Area draining to the point in the baseline (null without one).
    pub baseline_area: Option<f64>,
    /// The flow-duration result (flow-duration checks that are checked).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub duration: Option<DurationOut>,
}

/// What a comparison at a point checks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum ComparisonKind {
    /// A design storm's peak flow against its limit.
    #[serde(rename = "peak")]
    Peak,
    /// A long record's flow durations against the baseline's.
    #[serde(rename = "flow duration")]
    FlowDuration,
}

/// How a comparison at a point came out.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum ComparisonStatus {
    /// The limit holds.
    #[serde(rename = "meets")]
    Meets,
    /// The limit is exceeded.
    #[serde(rename = "exceeds")]
    Exceeds,
    /// The limit needs a baseline the scenario does not have.
    #[serde(rename = "not checked: no baseline")]
    NoBaseline,
    /// The limit compares conditions, and the scenario has one condition.
    #[serde(rename = "not checked: one condition only")]
    OneCondition,
}

impl ComparisonStatus {
    /// The status of a check that passed, failed, or was not made (None):
    /// in a study of one condition, or for want of a baseline.
    pub fn of(pass: Option<bool>, one_condition: bool) -> Self {
        match pass {
            Some(true) => Self::Meets,
            Some(false) => Self::Exceeds,
            None if one_condition => Self::OneCondition,
            None => Self::NoBaseline,
        }
    }

    /// The words the reports print.
    pub fn text(self) -> &'static str {
        match self {
            Self::Meets => "meets",
            Self::Exceeds => "exceeds",
            Self::NoBaseline => NOT_CHECKED_NO_BASELINE,
            Self::OneCondition => NOT_CHECKED_ONE_CONDITION,
        }
    }
}

impl std::fmt::Display for ComparisonStatus {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.text())
    }
}

impl ComparisonOut {
    /// Whether the check failed (a check not made does not fail).
    pub fn fails(&self) -> bool {
        self.pass == Some(false)
    }
}

/// A flow-duration rule's result at its worst flow level.
#[derive(Debug, Clone, Serialize)]
pub struct DurationOut {
    /// Lowest flow of the rule's range.
    pub from_flow: f64,
    /// Highest flow of the rule's range.
    pub to_flow: f64,
    /// Number of flow levels compared (evenly spaced in log).
    pub levels: usize,
    /// Relative tolerance on the baseline's time.
    pub tolerance: f64,
    /// The level where the condition's time most exceeds the baseline's.
    pub worst_flow: f64,
    /// The baseline's time above that level, h.
    pub baseline_time_h: f64,
    /// The condition's time above that level, h.
    pub time_h: f64,
    /// The time allowed above it: the baseline's times (1 + tolerance), h.
    pub allowed_time_h: f64,
    /// (time - baseline time) / baseline time at that level (null when the
    /// baseline's time is zero).
    pub worst_relative_excess: Option<f64>,
}

/// One pond limit check.
#[derive(Debug, Clone, Serialize)]
pub struct PondCheckOut {
    /// Pond.
    pub pond: String,
    /// Storm or record.
    pub storm: String,
    /// Condition.
    pub condition: String,
    /// freeboard | drain time | overtopping.
    pub check: PondCheckKind,
    /// Value found (stage units or h; null when never drained).
    pub value: Option<f64>,
    /// Limit.
    pub limit: f64,
    /// Whether it holds.
    pub pass: bool,
}

/// One sized outlet dimension.
#[derive(Debug, Clone, Serialize)]
pub struct SizedOut {
    /// Pond.
    pub pond: String,
    /// 0-based outlet index (reports number outlets from 1: this is one less).
    pub outlet: usize,
    /// The outlet's `name`, when the scenario gives one.
    pub outlet_name: Option<String>,
    /// Field name.
    pub field: &'static str,
    /// Unit of `value`, `min` and `max` (the scenario's length unit, or deg).
    pub unit: &'static str,
    /// Chosen value (length units, or degrees).
    pub value: f64,
    /// Range min.
    pub min: f64,
    /// Range max.
    pub max: f64,
    /// Buildable increment: `value` is a whole multiple of it.
    pub increment: f64,
    /// The storm whose limit governs.
    pub governing_storm: Option<String>,
    /// The point or pond limit that governs.
    pub governing_check: Option<String>,
    /// (limit - peak) / limit of the governing check.
    pub margin: Option<f64>,
    /// Whether the range could meet every limit.
    pub feasible: bool,
    /// When not feasible: the limits that fail at every size, and why.
    pub reason: Option<String>,
}

/// TR-55 graphical cross-check.
#[derive(Debug, Clone, Serialize)]
pub struct GraphicalOut {
    /// Catchment.
    pub catchment: String,
    /// Storm.
    pub storm: String,
    /// Ia/P used.
    pub ia_over_p: f64,
    /// Unit peak discharge, csm/in.
    pub unit_peak_csm_per_in: f64,
    /// Graphical peak.
    pub graphical_peak: f64,
    /// Hydrograph peak.
    pub hydrograph_peak: f64,
    /// Whether Tc or Ia/P were clamped.
    pub clamped: bool,
}

/// A warning.
#[derive(Debug, Clone, Serialize)]
pub struct WarningOut {
    /// Short code.
    pub code: &'static str,
    /// Full message.
    pub message: String,
}

/// The whole `summary.json`.
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    /// Title.
    pub title: String,
    /// Unit system.
    pub unit_system: String,
    /// Units.
    pub units: Units,
    /// Step, h.
    pub step_h: f64,
    /// Baseline condition.
    pub baseline: String,
    /// Conditions simulated (an empty baseline is not).
    pub conditions: Vec<String>,
    /// Whether the baseline has elements (false: limits that need it are
    /// "not checked: no baseline").
    pub baseline_present: bool,
    /// Catchments.
    pub catchments: Vec<CatchmentOut>,
    /// Design storms: pattern, depth, duration and tabulation.
    pub storms: Vec<crate::report::storms::StormOut>,
    /// Events.
    pub events: Vec<EventOut>,
    /// Point comparisons.
    pub comparisons: Vec<ComparisonOut>,
    /// Pond limit checks.
    pub pond_checks: Vec<PondCheckOut>,
    /// TR-55 graphical cross-checks.
    pub graphical_checks: Vec<GraphicalOut>,
    /// Sized outlets.
    pub sized: Vec<SizedOut>,
    /// Long-record results.
    pub records: Vec<crate::report::records::RecordOut>,
    /// Warning messages, as printed on stderr.
    pub warnings: Vec<String>,
    /// The same warnings with a short stable code each.
    pub warning_details: Vec<WarningOut>,
    /// Provenance.
    pub provenance: ProvenanceOut,
    /// Each pond's outlet structure and its rating, one column per device.
    pub structures: Vec<crate::report::structure::StructureOut>,
    /// Every device's flow at each pond's routed peak.
    pub device_peaks: Vec<crate::report::structure::DevicePeakOut>,
    /// Clogged-outlet checks.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub failure_checks: Vec<crate::report::structure::FailureOut>,
    /// Whether every limit holds and no pond overtops.
    pub all_pass: bool,
    /// The caution every report carries.
    pub caution: &'static str,
}

/// The status of a check that needs a baseline the scenario does not have.
pub const NOT_CHECKED_NO_BASELINE: &str = "not checked: no baseline";

/// The status of a check that compares conditions in a scenario of one.
pub const NOT_CHECKED_ONE_CONDITION: &str = "not checked: one condition only";

/// The caution carried by every report.
pub const CAUTION: &str = "Planning-level computations by published methods (TR-55, NEH 630). Check them against the local drainage code and have them reviewed and sealed by a licensed professional engineer before use. A pond with an embankment may fall under state dam-safety rules.";

/// Output conversion helper.
#[derive(Debug, Clone, Copy)]
pub struct Out(pub UnitSystem);

impl Out {
    /// Flow.
    pub fn flow(&self, cfs: f64) -> f64 {
        cfs * Quantity::Flow.output_factor(self.0)
    }
    /// Volume.
    pub fn volume(&self, ft3: f64) -> f64 {
        ft3 * Quantity::Volume.output_factor(self.0)
    }
    /// Length or stage.
    pub fn length(&self, ft: f64) -> f64 {
        ft * Quantity::Length.output_factor(self.0)
    }
    /// Depth.
    pub fn depth(&self, inch: f64) -> f64 {
        inch * Quantity::Depth.output_factor(self.0)
    }
    /// Area.
    pub fn area(&self, ac: f64) -> f64 {
        ac * Quantity::Area.output_factor(self.0)
    }
    /// Unit label.
    pub fn unit(&self, q: Quantity) -> &'static str {
        q.output_unit(self.0)
    }
    /// A weir coefficient (C in Q = C L H^1.5, US ft^0.5/s inside) in the
    /// scenario's system: SI values are US values times sqrt(0.3048 m/ft)
    /// (3.33 US = 1.84 SI).
    pub fn weir_coefficient(&self, c_us: f64) -> f64 {
        match self.0 {
            UnitSystem::Us => c_us,
            UnitSystem::Si => c_us * crate::util::units::M_PER_FT.sqrt(),
        }
    }
}

pub use crate::util::text::kind_and_name;

impl Summary {
    /// `summary.json`'s text.
    ///
    /// # Errors
    /// A value serde cannot write (not expected: every field is plain data).
    pub fn to_json(&self) -> Result<String, serde_json::Error> {
        serde_json::to_string_pretty(self)
    }
}

/// One sized dimension in output units (lengths in the scenario's length
/// unit; angles in degrees).
pub fn sized_out(study: &Study, r: &crate::engine::sizing::SizedResult) -> SizedOut {
    let o = Out(study.units);
    let angle = r.field == crate::model::SizedField::Angle;
    let conv = |x: f64| if angle { x } else { o.length(x) };
    SizedOut {
        pond: study.elements[r.element].name.clone(),
        outlet: r.outlet,
        outlet_name: r.outlet_name.clone(),
        field: r.field.key(),
        unit: if angle {
            "deg"
        } else {
            o.unit(Quantity::Length)
        },
        value: conv(r.value),
        min: conv(r.min),
        max: conv(r.max),
        increment: conv(r.increment),
        governing_storm: r.governing_storm.map(|k| study.storms[k].name.clone()),
        governing_check: r.governing_check.clone(),
        margin: r.margin,
        feasible: r.feasible(),
        reason: r.reason.clone(),
    }
}

/// Builds the summary from a study, its design-storm analysis, its sized
/// outlets and its long records.
pub fn build(
    study: &Study,
    a: &Analysis,
    sized: &[crate::engine::sizing::SizedResult],
    rec: &RecordsResult,
    run_date: String,
) -> Summary {
    let o = Out(study.units);
    let step_h = study.step_h;
    let catchments = catchments_out(study);
    let events = events_out(study, a);
    let mut comparisons = peak_comparisons_out(study, a);
    comparisons.extend(crate::report::records::comparisons(study, rec));

    // What the long records found: overtopping counts like a storm's.
    let pond_checks: Vec<PondCheckOut> = a
        .pond_checks
        .iter()
        .map(|c| pond_check_out(study, c))
        .chain(crate::report::records::pond_checks(study, rec))
        .collect();

    let graphical_checks = a
        .graphical
        .iter()
        .map(|g| GraphicalOut {
            catchment: study.elements[g.element].name.clone(),
            storm: study.storms[g.storm].name.clone(),
            ia_over_p: g.ia_over_p,
            unit_peak_csm_per_in: g.qu_csm_per_in,
            graphical_peak: o.flow(g.graphical_peak_cfs),
            hydrograph_peak: o.flow(g.hydrograph_peak_cfs),
            clamped: g.clamped,
        })
        .collect();

    let warning_details: Vec<WarningOut> = study
        .warnings
        .iter()
        .chain(&a.warnings)
        .chain(&crate::report::records::warnings(study, rec))
        .map(|w| WarningOut {
            code: w.code(),
            message: w.to_string(),
        })
        .collect();
    let warnings = warning_details.iter().map(|w| w.message.clone()).collect();

    let all_pass = !comparisons.iter().any(ComparisonOut::fails)
        && pond_checks.iter().all(|c| c.pass)
        && sized.iter().all(|s| s.feasible())
        && a.failures.iter().all(|f| f.pass);
    Summary {
        title: study.title.clone(),
        unit_system: study.units.to_string(),
        units: Units {
            flow: o.unit(Quantity::Flow),
            volume: o.unit(Quantity::Volume),
            stage: o.unit(Quantity::Length),
            depth: o.unit(Quantity::Depth),
            area: o.unit(Quantity::Area),
            time: "h",
        },
        step_h,
        baseline: study.conditions[study.baseline].clone(),
        conditions: study
            .simulated_conditions()
            .into_iter()
            .map(|c| study.conditions[c].clone())
            .collect(),
        baseline_present: !study.baseline_empty,
        catchments,
        storms: crate::report::storms::storms_out(study),
        events,
        comparisons,
        pond_checks,
        graphical_checks,
        sized: sized.iter().map(|r| sized_out(study, r)).collect(),
        records: crate::report::records::entries(study, rec),
        warnings,
        warning_details,
        provenance: ProvenanceOut {
            program: "runnel",
            version: env!("CARGO_PKG_VERSION"),
            run_date,
            scenario: study.provenance.scenario.display().to_string(),
            scenario_sha256: study.provenance.scenario_sha256.clone(),
            inputs: study
                .provenance
                .inputs
                .iter()
                .map(|p| p.display().to_string())
                .collect(),
        },
        structures: crate::report::structure::structures_out(study),
        device_peaks: crate::report::structure::device_peaks_out(study, a),
        failure_checks: crate::report::structure::failures_out(study, a),
        all_pass,
        caution: CAUTION,
    }
}

/// Each catchment's derived parameters in output units.
fn catchments_out(study: &Study) -> Vec<CatchmentOut> {
    let o = Out(study.units);
    let step_h = study.step_h;
    let mut catchments = Vec::new();
    for e in &study.elements {
        let ElementKind::Catchment(c) = &e.kind else {
            continue;
        };
        let conds: Vec<String> = study
            .conditions
            .iter()
            .zip(&e.conditions)
            .filter(|(_, m)| **m)
            .map(|(n, _)| n.clone())
            .collect();
        let timing = catchment_timing(c, study.p2_in, step_h);
        catchments.push(CatchmentOut {
            name: e.name.clone(),
            condition: conds.join(", "),
            conditions: conds,
            area: o.area(c.area_ac),
            cn: c.cn,
            lambda: c.lambda.ratio(),
            cn_used: crate::methods::runoff::cn_from_retention_in(c.retention_in),
            retention: o.depth(c.retention_in),
            tc_h: timing.tc_h,
            lag_h: timing.lag_h,
            timing: c.timing_basis.word(),
            watershed_lag: match c.timing_basis {
                crate::model::TimingBasis::WatershedLag { length_ft, slope } => {
                    Some(WatershedLagOut {
                        length: o.length(length_ft),
                        slope_pct: slope * 100.0,
                    })
                }
                _ => None,
            },
            tp_h: timing.tp_h,
            uh_peak_per_depth: o.flow(timing.uh_peak_cfs_per_in) / o.depth(1.0),
            uh_formula_peak_per_depth: o.flow(timing.uh_formula_peak_cfs_per_in) / o.depth(1.0),
            prf: c.prf,
            covers: c
                .covers
                .iter()
                .map(|r| CoverOut {
                    cover: r.label.clone(),
                    cn: r.cn,
                    area: o.area(r.area_ac),
                    unconnected: r.is_impervious() && !r.connected,
                })
                .collect(),
            impervious: (c.separate_impervious
                || c.connected_fraction > 0.0
                || c.unconnected_reduced)
                .then_some(ImperviousOut {
                    treatment: if c.separate_impervious {
                        "separate"
                    } else {
                        "composite"
                    },
                    connected_fraction: c.connected_fraction,
                    rest_cn: c.rest_cn,
                    composite: if c.unconnected_reduced {
                        "TR-55 Figure 2-4"
                    } else {
                        "area-weighted"
                    },
                }),
            flow_path: c
                .segments
                .iter()
                .zip(&timing.segments)
                .map(|(s, t)| {
                    let (n, surface) = match s {
                        Segment::Sheet { n, .. } | Segment::Channel { n, .. } => (Some(*n), None),
                        Segment::Shallow { surface, .. } => (None, Some(surface.clone())),
                    };
                    SegmentOut {
                        kind: s.kind(),
                        length: o.length(s.length_ft()),
                        slope: s.slope(),
                        n,
                        surface,
                        velocity: o.length(t.velocity_fps),
                        time_h: t.time_h,
                    }
                })
                .collect(),
            to: target_name(study, e.to),
        });
    }

    catchments
}

/// Every element and point in every storm and condition, in output units.
fn events_out(study: &Study, a: &Analysis) -> Vec<EventOut> {
    let o = Out(study.units);
    let step_h = study.step_h;
    let mut events = Vec::new();
    for s in &a.storms {
        let sname = &study.storms[s.storm].name;
        for c in &s.conditions {
            let cname = &study.conditions[c.condition];
            for (i, er) in c.elements.iter().enumerate() {
                let Some(er) = er else { continue };
                let e = &study.elements[i];
                let (pk, pi) = network::peak(&er.outflow_cfs);
                let mut ev = EventOut {
                    storm: sname.clone(),
                    condition: cname.clone(),
                    element: e.name.clone(),
                    kind: Kind::of(&e.kind),
                    rain_depth: None,
                    runoff_depth: None,
                    peak_inflow: None,
                    peak_inflow_time_h: None,
                    inflow_volume: None,
                    stored_at_end: None,
                    channel: None,
                    peak_flow: o.flow(pk),
                    peak_time_h: pi as f64 * step_h,
                    peak_stage: None,
                    peak_storage: None,
                    volume: o.volume(network::volume_ft3(&er.outflow_cfs, step_h)),
                    freeboard: None,
                    overtopped: None,
                    mass_balance_error: None,
                    drain_time_h: None,
                    infiltrated_volume: None,
                };
                if let Some(r) = &er.runoff {
                    ev.rain_depth = Some(o.depth(r.rain_in));
                    ev.runoff_depth = Some(o.depth(r.runoff_in));
                }
                if let Some(p) = &er.pond {
                    let sm = &p.summary;
                    ev.peak_inflow = Some(o.flow(sm.peak_inflow_cfs));
                    ev.peak_stage = Some(o.length(sm.peak_stage_ft));
                    ev.peak_storage = Some(o.volume(sm.peak_storage_ft3));
                    ev.volume = o.volume(sm.outflow_volume_ft3);
                    ev.freeboard = sm.freeboard_ft.map(|f| o.length(f));
                    ev.overtopped = Some(sm.overtopped);
                    ev.mass_balance_error = Some(sm.mass_balance_error);
                    ev.drain_time_h = Some(sm.drain_time_h);
                    ev.infiltrated_volume = infiltrated_volume_out(&e.kind, sm, o);
                }
                if let (Some(chr), ElementKind::Channel(ch)) = (&er.channel, &e.kind) {
                    let sm = chr.summary(&er.outflow_cfs, step_h);
                    ev.peak_inflow = Some(o.flow(sm.peak_in_cfs));
                    ev.peak_inflow_time_h = Some(sm.peak_in_h);
                    ev.inflow_volume = Some(o.volume(sm.volume_in_ft3));
                    ev.stored_at_end = Some(o.volume(sm.stored_end_ft3));
                    ev.mass_balance_error = Some(sm.mass_balance_error());
                    ev.channel = Some(ChannelOut::of(ch, chr.plan, step_h));
                }
                events.push(ev);
            }
            for (pi, q) in c.points.iter().enumerate() {
                let (pk, k) = network::peak(q);
                events.push(EventOut {
                    storm: sname.clone(),
                    condition: cname.clone(),
                    element: study.points[pi].name.clone(),
                    kind: Kind::Point,
                    rain_depth: None,
                    runoff_depth: None,
                    peak_inflow: None,
                    peak_inflow_time_h: None,
                    inflow_volume: None,
                    stored_at_end: None,
                    channel: None,
                    peak_flow: o.flow(pk),
                    peak_time_h: k as f64 * step_h,
                    peak_stage: None,
                    peak_storage: None,
                    volume: o.volume(network::volume_ft3(q, step_h)),
                    freeboard: None,
                    overtopped: None,
                    mass_balance_error: None,
                    drain_time_h: None,
                    infiltrated_volume: None,
                });
            }
        }
    }

    events
}

/// The volume a pond infiltrated in a storm, in output units, for a pond
/// that infiltrates.
fn infiltrated_volume_out(
    kind: &ElementKind,
    sm: &crate::methods::pond::PondSummary,
    o: Out,
) -> Option<f64> {
    match kind {
        ElementKind::Pond(p) if p.losses.infiltration_ft_per_s > 0.0 => {
            Some(o.volume(sm.infiltrated_ft3))
        }
        _ => None,
    }
}

/// The peak checks at the points, in output units.
fn peak_comparisons_out(study: &Study, a: &Analysis) -> Vec<ComparisonOut> {
    let o = Out(study.units);
    a.comparisons
        .iter()
        .map(|c| ComparisonOut {
            point: study.points[c.point].name.clone(),
            storm: Some(study.storms[c.storm].name.clone()),
            record: None,
            baseline: study.conditions[study.baseline].clone(),
            condition: study.conditions[c.condition].clone(),
            check: ComparisonKind::Peak,
            status: ComparisonStatus::of(c.checked.then_some(c.pass), study.one_condition()),
            baseline_peak: (c.checked && !study.baseline_empty && !study.one_condition())
                .then(|| o.flow(c.baseline_peak_cfs)),
            peak: Some(o.flow(c.peak_cfs)),
            limit: c.checked.then(|| o.flow(c.limit_cfs)),
            limit_text: study.points[c.point]
                .limit_text
                .get(c.storm)
                .cloned()
                .unwrap_or_default(),
            pass: c.checked.then_some(c.pass),
            area: o.area(c.area_ac),
            baseline_area: c.baseline_area_ac.map(|x| o.area(x)),
            duration: None,
        })
        .collect()
}

/// A pond check in output units: stages in the scenario's length unit,
/// times in hours; a value that is not finite (a pond never drained) is
/// null.
fn pond_check_out(study: &Study, c: &PondCheck) -> PondCheckOut {
    let o = Out(study.units);
    let (value, limit) = match c.check {
        PondLimitCheck::Overtopping {
            peak_stage_ft,
            top_ft,
        } => (Some(o.length(peak_stage_ft)), o.length(top_ft)),
        PondLimitCheck::Freeboard {
            freeboard_ft,
            min_freeboard_ft,
        } => (Some(o.length(freeboard_ft)), o.length(min_freeboard_ft)),
        PondLimitCheck::DrainTime { hours, max_hours } => (hours, max_hours),
    };
    PondCheckOut {
        pond: study.elements[c.element].name.clone(),
        storm: study.storms[c.storm].name.clone(),
        condition: study.conditions[c.condition].clone(),
        check: c.check.kind(),
        value: value.filter(|v| v.is_finite()),
        limit,
        pass: c.pass,
    }
}

/// Name of a target.
pub fn target_name(study: &Study, t: crate::model::Target) -> String {
    match t {
        crate::model::Target::Element(i) => study.elements[i].name.clone(),
        crate::model::Target::Point(i) => study.points[i].name.clone(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::StorageKind;

    // common practice, no published source: the words summary.json has
    // always carried (the results contract), unchanged by the enums
    #[test]
    fn kinds_serialize_to_their_words() {
        let words: Vec<String> = [
            Kind::Catchment,
            Kind::Pond,
            Kind::Inflow,
            Kind::Channel,
            Kind::Point,
        ]
        .iter()
        .map(|k| serde_json::to_string(k).unwrap_or_default())
        .collect();
        assert_eq!(
            words,
            [
                "\"catchment\"",
                "\"pond\"",
                "\"inflow\"",
                "\"channel\"",
                "\"point\""
            ]
        );
    }

    #[test]
    fn pond_checks_serialize_to_their_words() {
        let words: Vec<String> = [
            PondCheckKind::Overtopping,
            PondCheckKind::Freeboard,
            PondCheckKind::DrainTime,
        ]
        .iter()
        .map(|k| serde_json::to_string(k).unwrap_or_default())
        .collect();
        assert_eq!(
            words,
            ["\"overtopping\"", "\"freeboard\"", "\"drain time\""]
        );
        assert!(PondCheckKind::DrainTime.is_time());
        assert!(!PondCheckKind::Freeboard.is_time());
    }

    #[test]
    fn pond_check_values_keep_their_units() {
        let c = PondLimitCheck::DrainTime {
            hours: None,
            max_hours: 72.0,
        };
        assert_eq!(c.kind(), PondCheckKind::DrainTime);
        let c = PondLimitCheck::Freeboard {
            freeboard_ft: 1.0,
            min_freeboard_ft: 1.0,
        };
        assert_eq!(c.kind().word(), "freeboard");
        // NIST SP 811 (2008): 1 ft = 0.3048 m exactly (from memory)
        assert!((Out(UnitSystem::Si).length(1.0) - 0.3048).abs() < 1e-12);
    }

    #[test]
    fn storage_kinds_read_as_before() {
        assert_eq!(
            StorageKind::StageArea.describe(),
            "stage-area (conic frustum between rows)"
        );
        assert_eq!(StorageKind::StageVolume.describe(), "stage-volume");
        assert_eq!(
            StorageKind::Basin.describe(),
            "basin geometry (stage-area, conic frustum)"
        );
    }
}
