//! Warnings: things that are legal but suspect. They are collected during
//! loading and simulation, printed on stderr after the results, and written
//! to `summary.json` and `summary.md`.

use crate::util::units::Shown;
use std::fmt;

/// A warning with an actionable hint in its `Display`.
#[derive(Debug, Clone, PartialEq)]
pub enum Warning {
    /// Sheet flow longer than the NEH 630 ch. 15 (2010) guidance.
    SheetFlowLong {
        /// Catchment.
        catchment: String,
        /// 1-based segment.
        segment: usize,
        /// Length as written in results' units.
        length: String,
    },
    /// Tc under the TR-55 minimum of 0.1 h.
    TcShort {
        /// Catchment.
        catchment: String,
        /// Tc, h.
        tc_h: f64,
    },
    /// Computation step over 0.25 Tp.
    StepCoarse {
        /// Catchment.
        catchment: String,
        /// Step, h.
        step_h: f64,
        /// Tp, h.
        tp_h: f64,
    },
    /// A curve number under 30 (TR-55 Table 2-2 note 4).
    CnLow {
        /// Catchment.
        catchment: String,
        /// The CN.
        cn: f64,
    },
    /// Covers marked `connected = false` in a catchment whose impervious
    /// cover is 30 % or more, where TR-55 Figure 2-4 does not apply.
    UnconnectedIgnored {
        /// Catchment.
        catchment: String,
        /// Impervious share of the catchment, percent.
        impervious_pct: f64,
    },
    /// A pervious cover with CN over 98.
    CnHighPervious {
        /// Catchment.
        catchment: String,
        /// The cover's label.
        cover: String,
        /// The CN.
        cn: f64,
    },
    /// A design storm shorter than a catchment's Tc.
    StormShorterThanTc {
        /// Storm.
        storm: String,
        /// Catchment.
        catchment: String,
        /// Storm duration, h.
        duration_h: f64,
        /// Tc, h.
        tc_h: f64,
    },
    /// A condition never reaches a point.
    PointNotReached {
        /// Point.
        point: String,
        /// Condition.
        condition: String,
    },
    /// A channel that nothing drains to in a condition it belongs to.
    ChannelNoInflow {
        /// Channel.
        channel: String,
        /// Condition.
        condition: String,
    },
    /// An outlet lies above the top of embankment.
    OutletAboveTop {
        /// Pond.
        pond: String,
        /// "outlet 2" or "outlet 2 (\"name\")", numbered from 1.
        outlet: String,
    },
    /// A pond that never fills above its lowest outlet in a storm.
    PondNeverFills {
        /// Pond.
        pond: String,
        /// Storm.
        storm: String,
        /// Condition.
        condition: String,
    },
    /// An orifice whose crown is never submerged in any storm.
    OrificeNeverSubmerged {
        /// Pond.
        pond: String,
        /// "outlet 2" or "outlet 2 (\"name\")", numbered from 1.
        outlet: String,
    },
    /// The water rose over the embankment top.
    Overtopped {
        /// Pond.
        pond: String,
        /// Storm or record.
        storm: String,
        /// Condition.
        condition: String,
    },
    /// The hydrograph peak and the TR-55 graphical peak differ by more than 25 %.
    GraphicalPeakDiffers {
        /// Catchment.
        catchment: String,
        /// Storm.
        storm: String,
        /// Hydrograph peak.
        hydrograph: Shown,
        /// Graphical peak.
        graphical: Shown,
    },
    /// A routing whose volumes do not balance to 0.1 %.
    MassBalance {
        /// Pond.
        pond: String,
        /// `storm "NAME"` or `record "NAME"`.
        run: String,
        /// Condition.
        condition: String,
        /// (inflow - outflow - change in storage) / inflow.
        error: f64,
    },
    /// A channel routed at sub-steps whose outflow, sampled at the step,
    /// does not balance its inflow within 0.1 %.
    ChannelMassBalance {
        /// Channel.
        channel: String,
        /// `storm "NAME"`.
        run: String,
        /// Condition.
        condition: String,
        /// (inflow - outflow - water left in the reach) / inflow.
        error: f64,
    },
    /// A pond rose over its top during a long record.
    RecordOvertopped {
        /// Pond.
        pond: String,
        /// Record.
        record: String,
        /// Condition.
        condition: String,
        /// When the highest stage came.
        when: String,
        /// The highest stage, with its unit.
        stage: String,
        /// How far above the top, with its unit.
        above: String,
    },
    /// Water still stored in a pond, or not yet at a point, when a record ends.
    RecordWaterLeft {
        /// Record.
        record: String,
        /// Condition.
        condition: String,
        /// `pond "NAME"` or `point "NAME"`.
        element: String,
        /// The volume, with its unit.
        left: String,
        /// The volume as a percentage of what entered.
        percent: f64,
        /// Where the water is ("is still stored in it", ...).
        what: &'static str,
    },
    /// Runoff shifted by a `lag` past the end of a record.
    RecordLagPastEnd {
        /// Record.
        record: String,
        /// Condition.
        condition: String,
        /// Element.
        element: String,
        /// The lag, h.
        lag_h: f64,
        /// The volume lost, with its unit.
        lost: String,
    },
    /// Calendar years at the ends of a record with less than 90 % of their intervals.
    RecordIncompleteYears {
        /// Record.
        record: String,
        /// (year, percentage of its intervals in the record).
        years: Vec<(i32, f64)>,
    },
    /// A log-Pearson III fit from fewer than 10 years.
    RecordShortFit {
        /// Record.
        record: String,
        /// The element (None: every element, the record is short).
        element: Option<String>,
        /// Years behind the fit.
        years: usize,
    },
    /// A record's step over 0.25 Tp of a catchment.
    RecordStepCoarse {
        /// Record.
        record: String,
        /// Catchment.
        catchment: String,
        /// Step, h.
        step_h: f64,
        /// Tp at that step, h.
        tp_h: f64,
    },
    /// A record's step coarser than its gauge interval.
    RecordStepCoarserThanGauge {
        /// Record.
        record: String,
        /// Step, h.
        step_h: f64,
        /// Gauge interval, h.
        interval_h: f64,
    },
    /// A point's limit needs the baseline, which has no element.
    NoBaseline {
        /// Point.
        point: String,
        /// What needs it, with its verb: `its limit "existing" needs`.
        what: String,
        /// The baseline condition.
        baseline: String,
        /// The one condition the elements belong to.
        condition: String,
    },
    /// A point's limit compares conditions, and every element belongs to one.
    OneCondition {
        /// Point.
        point: String,
        /// What compares, with its verb: `its limit "existing" compares`.
        what: String,
        /// The one condition.
        condition: String,
    },
    /// The area draining to a point differs from the baseline's by more than 5 %.
    AreaMismatch {
        /// Point.
        point: String,
        /// Condition checked.
        condition: String,
        /// Its area.
        area: Shown,
        /// Baseline condition.
        baseline: String,
        /// The baseline's area.
        baseline_area: Shown,
        /// (area - baseline area) / baseline area, percent.
        difference_pct: f64,
    },
    /// No value in a sizing range meets every limit.
    SizingInfeasible {
        /// Pond.
        pond: String,
        /// "outlet 2" or "outlet 2 (\"name\")".
        outlet: String,
        /// Sized key.
        field: String,
        /// The range, with units.
        range: String,
        /// The limits that fail at every size, and why.
        reason: String,
        /// The value the results are written at, with its unit.
        written_at: String,
    },
    /// A sheet, shallow or channel slope that is legal but almost always a
    /// slip (a percentage written as a ratio).
    SlopeSteep {
        /// Element and key, e.g. `catchment "PR-1", flow segment 2, slope`.
        at: String,
        /// The value as read, with its unit (`2.5 ft/ft`).
        value: String,
        /// The same slope in percent.
        percent: f64,
        /// The usual range, in words.
        usual: String,
        /// The likely intended input, e.g. `"2.5 %"`.
        likely: String,
    },
    /// A Manning n outside the usual range for its kind of flow.
    ManningNUnusual {
        /// Element and key.
        at: String,
        /// The n as read.
        value: String,
        /// The usual range, in words.
        usual: String,
        /// What to do, with the likely intended input.
        hint: String,
    },
    /// A 2-year 24-hour rainfall outside the usual range.
    P2Unusual {
        /// The value as read, with its unit.
        value: String,
        /// The usual range, in words.
        usual: String,
        /// What to do, with the likely intended input.
        hint: String,
    },
    /// A design-storm depth outside the usual range.
    StormDepthUnusual {
        /// Storm.
        storm: String,
        /// The value as read, with its unit.
        value: String,
        /// The usual range, in words.
        usual: String,
        /// What to do, with the likely intended input.
        hint: String,
    },
    /// An orifice or riser diameter written as a bare number that makes a
    /// very large opening (a bare number is in ft or m).
    DiameterBare {
        /// Element and key.
        at: String,
        /// The value as read, with its unit (`6 ft`).
        value: String,
        /// The usual size, in words.
        usual: String,
        /// The likely intended input, e.g. `"6 in"`.
        likely: String,
        /// The same value written with its unit, to confirm it.
        explicit: String,
    },
    /// A weir, spillway or riser coefficient outside the usual range of
    /// the scenario's unit system.
    CoefficientUnusual {
        /// Element and key.
        at: String,
        /// The coefficient as read.
        value: String,
        /// The usual range in the scenario's unit system, in words.
        usual: String,
        /// What to do, with the likely intended input.
        hint: String,
    },
    /// A time of concentration over 24 h.
    TcLong {
        /// Catchment (and key, when `tc` was given).
        at: String,
        /// Tc as read or computed, with its unit.
        value: String,
        /// What to do, with the likely intended input.
        hint: String,
    },
    /// Anything else, worded in full.
    Note(String),
    // -- outlet structures (barrels, tailwater, clogged-outlet checks) --
    /// The tailwater stands above the pond's default start (its lowest
    /// outlet's invert).
    TailwaterAboveStart {
        /// Pond.
        pond: String,
        /// Tailwater with no outflow, with its unit.
        tailwater: String,
        /// Start used, with its unit.
        start: String,
    },
    /// A clogged-outlet check leaves less freeboard than asked (or overtops).
    CloggedOutletFails {
        /// Pond.
        pond: String,
        /// Storm.
        storm: String,
        /// Condition.
        condition: String,
        /// Blocked devices, quoted and joined.
        blocked: String,
        /// Freeboard left, with its unit (or why it was not routed).
        freeboard: String,
        /// Least freeboard asked for, with its unit.
        min_freeboard: String,
    },
}

impl Warning {
    /// A short stable code for scripts.
    pub fn code(&self) -> &'static str {
        match self {
            Warning::SheetFlowLong { .. } => "sheet-flow-long",
            Warning::TcShort { .. } => "tc-short",
            Warning::StepCoarse { .. } => "step-coarse",
            Warning::CnLow { .. } => "cn-low",
            Warning::CnHighPervious { .. } => "cn-high-pervious",
            Warning::UnconnectedIgnored { .. } => "unconnected-ignored",
            Warning::StormShorterThanTc { .. } => "storm-shorter-than-tc",
            Warning::PointNotReached { .. } => "point-not-reached",
            Warning::ChannelNoInflow { .. } => "channel-no-inflow",
            Warning::OutletAboveTop { .. } => "outlet-above-top",
            Warning::PondNeverFills { .. } => "pond-never-fills",
            Warning::OrificeNeverSubmerged { .. } => "orifice-never-submerged",
            Warning::Overtopped { .. } => "overtopped",
            Warning::GraphicalPeakDiffers { .. } => "graphical-peak-differs",
            Warning::MassBalance { .. } => "mass-balance",
            Warning::ChannelMassBalance { .. } => "channel-mass-balance",
            Warning::RecordOvertopped { .. } => "record-overtopped",
            Warning::RecordWaterLeft { .. } => "record-water-left",
            Warning::RecordLagPastEnd { .. } => "record-lag-past-end",
            Warning::RecordIncompleteYears { .. } => "record-incomplete-years",
            Warning::RecordShortFit { .. } => "record-short-fit",
            Warning::RecordStepCoarse { .. } => "record-step-coarse",
            Warning::RecordStepCoarserThanGauge { .. } => "record-step-coarser-than-gauge",
            Warning::SizingInfeasible { .. } => "sizing-infeasible",
            Warning::NoBaseline { .. } => "no-baseline",
            Warning::OneCondition { .. } => "one-condition",
            Warning::AreaMismatch { .. } => "area-mismatch",
            Warning::SlopeSteep { .. } => "slope-steep",
            Warning::ManningNUnusual { .. } => "manning-n-unusual",
            Warning::P2Unusual { .. } => "p2-unusual",
            Warning::StormDepthUnusual { .. } => "storm-depth-unusual",
            Warning::DiameterBare { .. } => "diameter-bare",
            Warning::CoefficientUnusual { .. } => "coefficient-unusual",
            Warning::TcLong { .. } => "tc-long",
            Warning::Note(_) => "note",
            Warning::TailwaterAboveStart { .. } => "tailwater-above-start",
            Warning::CloggedOutletFails { .. } => "clogged-outlet-fails",
        }
    }
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::SheetFlowLong { .. }
            | Warning::TcShort { .. }
            | Warning::StepCoarse { .. }
            | Warning::CnLow { .. }
            | Warning::CnHighPervious { .. }
            | Warning::UnconnectedIgnored { .. }
            | Warning::StormShorterThanTc { .. }
            | Warning::GraphicalPeakDiffers { .. } => self.fmt_catchment(f),
            Warning::OutletAboveTop { .. }
            | Warning::PondNeverFills { .. }
            | Warning::OrificeNeverSubmerged { .. }
            | Warning::Overtopped { .. }
            | Warning::MassBalance { .. } => self.fmt_pond(f),
            Warning::RecordOvertopped { .. }
            | Warning::RecordWaterLeft { .. }
            | Warning::RecordLagPastEnd { .. }
            | Warning::RecordIncompleteYears { .. }
            | Warning::RecordShortFit { .. }
            | Warning::RecordStepCoarse { .. }
            | Warning::RecordStepCoarserThanGauge { .. } => self.fmt_record(f),
            Warning::PointNotReached { .. }
            | Warning::ChannelNoInflow { .. }
            | Warning::ChannelMassBalance { .. }
            | Warning::NoBaseline { .. }
            | Warning::OneCondition { .. }
            | Warning::AreaMismatch { .. }
            | Warning::SizingInfeasible { .. } => self.fmt_network(f),
            Warning::SlopeSteep { .. }
            | Warning::ManningNUnusual { .. }
            | Warning::P2Unusual { .. }
            | Warning::StormDepthUnusual { .. }
            | Warning::DiameterBare { .. }
            | Warning::CoefficientUnusual { .. }
            | Warning::TcLong { .. }
            | Warning::Note(_) => self.fmt_input(f),
            Warning::TailwaterAboveStart { .. } | Warning::CloggedOutletFails { .. } => {
                self.fmt_structure(f)
            }
        }
    }
}

impl Warning {
    /// Outlet structures: tailwater and the clogged-outlet checks.
    fn fmt_structure(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::TailwaterAboveStart {
                pond,
                tailwater,
                start,
            } => write!(
                f,
                "pond \"{pond}\": the tailwater ({tailwater} with no outflow) stands above the pond's start at its lowest outlet ({start}); the routing starts at {start} - if water stands in the pond up to the tailwater between storms, set the pond's `start` to it (a start above the bottom leaves the storage below it out of use)"
            ),
            Warning::CloggedOutletFails {
                pond,
                storm,
                condition,
                blocked,
                freeboard,
                min_freeboard,
            } => write!(
                f,
                "pond \"{pond}\" ({condition}, {storm}) with {blocked} blocked: {freeboard} of freeboard left, less than the {min_freeboard} asked for - enlarge the other outlets or the spillway, or raise the embankment"
            ),
            _ => Ok(()),
        }
    }

    /// Catchments: flow paths, Tc, curve numbers, the step and the TR-55 cross-check.
    fn fmt_catchment(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::SheetFlowLong {
                catchment,
                segment,
                length,
            } => write!(
                f,
                "catchment \"{catchment}\", flow segment {segment}: sheet flow of {length} is longer than 100 ft; NEH 630 ch. 15 (2010) says sheet flow seldom runs more than 100 ft (TR-55 1986 allowed 300 ft) - consider ending it sooner and continuing as shallow flow"
            ),
            Warning::TcShort { catchment, tc_h } => write!(
                f,
                "catchment \"{catchment}\": Tc = {tc_h:.3} h is under the TR-55 minimum of 0.1 h; it is used as computed"
            ),
            Warning::StepCoarse {
                catchment,
                step_h,
                tp_h,
            } => write!(
                f,
                "catchment \"{catchment}\": the step of {:.1} min is more than 0.25 Tp (Tp = {:.1} min); the unit hydrograph is poorly resolved - set a smaller `step`",
                step_h * 60.0,
                tp_h * 60.0
            ),
            Warning::CnLow { catchment, cn } => write!(
                f,
                "catchment \"{catchment}\": CN {cn:.1} is under 30; TR-55 (Table 2-2 note 4) uses CN = 30 for runoff computations - check the cover"
            ),
            Warning::UnconnectedIgnored {
                catchment,
                impervious_pct,
            } => write!(
                f,
                "catchment \"{catchment}\": covers are marked `connected = false`, but impervious cover is {impervious_pct:.1} % of the area; TR-55 (Figure 2-4) reduces the CN for unconnected impervious cover only under 30 %, so all of it is counted as connected - remove `connected = false`, or split the catchment if part of it drains over pervious ground"
            ),
            Warning::CnHighPervious {
                catchment,
                cover,
                cn,
            } => write!(
                f,
                "catchment \"{catchment}\", cover \"{cover}\": CN {cn:.1} over 98 for a pervious cover is unusual - check the cover"
            ),
            Warning::StormShorterThanTc {
                storm,
                catchment,
                duration_h,
                tc_h,
            } => write!(
                f,
                "storm \"{storm}\" lasts {duration_h:.2} h, less than the Tc of catchment \"{catchment}\" ({tc_h:.2} h); the whole catchment never contributes at once - the design storm may be too short"
            ),
            Warning::GraphicalPeakDiffers {
                catchment,
                storm,
                hydrograph,
                graphical,
            } => write!(
                f,
                "catchment \"{catchment}\", {storm}: the hydrograph peak {hydrograph} and the TR-55 graphical-method peak {graphical} differ by more than 25 % - check Tc, CN and the step"
            ),
            // The other families are written by their own functions.
            _ => Ok(()),
        }
    }

    /// Ponds in design storms: outlets, filling, overtopping, mass balance.
    fn fmt_pond(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::OutletAboveTop { pond, outlet } => write!(
                f,
                "pond \"{pond}\", {outlet}: it sits above the top of embankment and can only act once the pond overtops"
            ),
            Warning::PondNeverFills {
                pond,
                storm,
                condition,
            } => write!(
                f,
                "pond \"{pond}\" ({condition}, {storm}): the water never rises above the lowest outlet; the outlets do not act in this storm"
            ),
            Warning::OrificeNeverSubmerged { pond, outlet } => write!(
                f,
                "pond \"{pond}\", {outlet}: the orifice is never submerged in any storm, so it always flows as a weir"
            ),
            Warning::Overtopped {
                pond,
                storm,
                condition,
            } => write!(
                f,
                "pond \"{pond}\" overtops in {storm} ({condition}): the water rises over the top of embankment - the embankment is treated as a broad-crested weir; enlarge the pond or the spillway"
            ),
            Warning::MassBalance {
                pond,
                run,
                condition,
                error,
            } => write!(
                f,
                "pond \"{pond}\" ({condition}, {run}): the routing's mass balance is off by {:.2} % of the inflow volume (more than 0.1 %); its outflow and stage are not reliable - use a smaller `step` (the pond is small for its outlets at this step) or check the pond's tables",
                error * 100.0
            ),
            // The other families are written by their own functions.
            _ => Ok(()),
        }
    }

    /// Long records.
    fn fmt_record(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::RecordOvertopped {
                pond,
                record,
                condition,
                when,
                stage,
                above,
            } => write!(
                f,
                "pond \"{pond}\" overtops in record \"{record}\" ({condition}): the water reaches {stage} at {when}, {above} above the top of embankment - enlarge the pond or the spillway"
            ),
            Warning::RecordWaterLeft {
                record,
                condition,
                element,
                left,
                percent,
                what,
            } => write!(
                f,
                "record \"{record}\" ({condition}), {element}: when the record ends, {left} ({percent:.2} % of the water that entered) {what}; the record's totals and durations leave it out - extend the record past its last storm (dry rows at the end) to count it"
            ),
            Warning::RecordLagPastEnd {
                record,
                condition,
                element,
                lag_h,
                lost,
            } => write!(
                f,
                "record \"{record}\" ({condition}), \"{element}\": its lag of {lag_h} h shifts {lost} of its flow past the end of the record, where it is lost - extend the record past its last storm or check the `lag`"
            ),
            Warning::RecordIncompleteYears { record, years } => {
                write!(f, "record \"{record}\": ")?;
                for (k, (y, pct)) in years.iter().enumerate() {
                    if k > 0 {
                        write!(f, ", ")?;
                    }
                    write!(f, "{y} ({pct:.1} % of its intervals)")?;
                }
                write!(
                    f,
                    " {} not a complete calendar year; years with less than 90 % of their intervals are left out of the annual series and the LP3 fit (and listed as incomplete) - start and end the record on 1 January to use every year",
                    if years.len() == 1 { "is" } else { "are" }
                )
            }
            Warning::RecordShortFit {
                record,
                element,
                years,
            } => match element {
                None => write!(
                    f,
                    "record \"{record}\": only {years} complete calendar year(s); log-Pearson III flows fitted to fewer than 10 annual peaks are very uncertain (Bulletin 17B asks for at least 10 years) - use a longer record, or read Q2 to Q100 as rough"
                ),
                Some(e) => write!(
                    f,
                    "record \"{record}\", {e}: the log-Pearson III fit rests on {years} year(s) with flow (years of zero flow are left out), fewer than 10 - its frequency flows are very uncertain"
                ),
            },
            Warning::RecordStepCoarse {
                record,
                catchment,
                step_h,
                tp_h,
            } => write!(
                f,
                "record \"{record}\", catchment \"{catchment}\": the record's step of {:.1} min is more than 0.25 Tp (Tp = {:.1} min); the unit hydrograph is poorly resolved and peaks are smoothed - set a smaller `step` on the record",
                step_h * 60.0,
                tp_h * 60.0
            ),
            Warning::RecordStepCoarserThanGauge {
                record,
                step_h,
                interval_h,
            } => write!(
                f,
                "record \"{record}\": the step of {:.1} min is coarser than the gauge interval of {:.1} min, so the rain of several intervals is lumped and peaks are lower than the gauge supports - set `step` to the gauge interval or a divisor of it",
                step_h * 60.0,
                interval_h * 60.0
            ),
            // The other families are written by their own functions.
            _ => Ok(()),
        }
    }

    /// Points, conditions, areas and sizing.
    fn fmt_network(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::PointNotReached { point, condition } => write!(
                f,
                "point \"{point}\": nothing in condition \"{condition}\" drains to it; its flow there is zero"
            ),
            Warning::ChannelMassBalance {
                channel,
                run,
                condition,
                error,
            } => write!(
                f,
                "channel \"{channel}\" ({condition}, {run}): routed at sub-steps, its outflow sampled at the step is off the inflow volume by {:.2} % (more than 0.1 %); the reach is short for the step - use a smaller `step`",
                error * 100.0
            ),
            Warning::ChannelNoInflow { channel, condition } => write!(
                f,
                "channel \"{channel}\": nothing in condition \"{condition}\" drains to it, so it carries no flow there; point an element's `to` at it, or limit the channel's `condition`"
            ),
            Warning::NoBaseline {
                point,
                what,
                baseline,
                condition,
            } => write!(
                f,
                "point \"{point}\": {what} the baseline condition \"{baseline}\", which has no element (every element belongs to \"{condition}\"), so it is reported \"not checked: no baseline\" - add the {baseline} catchments to compare, or give the point a limit in flow units such as \"12 cfs\""
            ),
            Warning::OneCondition {
                point,
                what,
                condition,
            } => write!(
                f,
                "point \"{point}\": {what} conditions, but every element belongs to the one condition \"{condition}\", so it is reported \"not checked: one condition only\" (limits in flow units are checked on \"{condition}\") - give the site's elements `condition = \"existing\"` or `\"proposed\"` to compare them, or give the point a limit in flow units such as \"12 cfs\" or \"0.1 cfs/ac\", or `limit = \"none\"`"
            ),
            Warning::AreaMismatch {
                point,
                condition,
                area,
                baseline,
                baseline_area,
                difference_pct,
            } => write!(
                f,
                "point \"{point}\": {area} drains to it in {condition} but {baseline_area} in {baseline}{}; peaks from different areas are rarely comparable - check that each catchment belongs to the conditions it should (an element without `condition` belongs to all)",
                if difference_pct.is_finite() {
                    format!(" ({difference_pct:+.1} %, more than 5 %)")
                } else {
                    String::new()
                }
            ),
            Warning::SizingInfeasible {
                pond,
                outlet,
                field,
                range,
                reason,
                written_at,
            } => write!(
                f,
                "sizing of pond \"{pond}\", {outlet} {field}: no value from {range} meets every limit: {reason}; the results are written at {written_at} - widen the range, change another outlet or the pond, or review the limit"
            ),
            // The other families are written by their own functions.
            _ => Ok(()),
        }
    }

    /// Plausibility of input values (legal but almost always a slip), and free notes.
    fn fmt_input(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Warning::SlopeSteep {
                at,
                value,
                percent,
                usual,
                likely,
            } => write!(
                f,
                "{at}: {value} is a {} % slope; did you mean {likely}? ({usual}; a bare slope is a ratio, so write \"%\" for a percentage)",
                crate::util::units::short(*percent, 4)
            ),
            Warning::ManningNUnusual {
                at,
                value,
                usual,
                hint,
            } => write!(
                f,
                "{at}: Manning n = {value} is outside the usual {usual}; {hint}"
            ),
            Warning::P2Unusual { value, usual, hint } => write!(
                f,
                "p2: a 2-year 24-hour rainfall of {value} is outside the usual {usual}; {hint}"
            ),
            Warning::StormDepthUnusual {
                storm,
                value,
                usual,
                hint,
            } => write!(
                f,
                "storm \"{storm}\", depth: {value} is outside the usual design-storm depth of {usual}; {hint}"
            ),
            Warning::DiameterBare {
                at,
                value,
                usual,
                likely,
                explicit,
            } => write!(
                f,
                "{at}: a bare number is in the scenario's length unit, so this opening is {value} across ({usual}); did you mean {likely}? If {value} is meant, write {explicit}"
            ),
            Warning::CoefficientUnusual {
                at,
                value,
                usual,
                hint,
            } => write!(f, "{at}: {value} is outside the usual {usual}; {hint}"),
            Warning::TcLong { at, value, hint } => write!(
                f,
                "{at}: Tc = {value} is longer than 24 h, far beyond the small-watershed times the TR-55 method is meant for; {hint}"
            ),
            Warning::Note(s) => f.write_str(s),
            // The other families are written by their own functions.
            _ => Ok(()),
        }
    }
}
