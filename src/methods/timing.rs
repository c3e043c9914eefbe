//! Time of concentration by the TR-55 velocity method: the travel times of
//! sheet, shallow concentrated and channel flow segments, summed.
//!
//! Source: USDA-SCS (1986) TR-55, chapter 3 (eq. 3-1 to 3-4 and Worksheet 3);
//! the 100-ft sheet-flow guidance of NRCS NEH 630 chapter 15 (2010). The
//! equations are in US customary units, as published.

/// Manning's constant for US customary units, ft^(1/3)/s (TR-55 eq. 3-4).
pub const MANNING_K_US: f64 = 1.49;

/// Sheet flow length (ft) beyond which NEH 630 ch. 15 (2010) says sheet
/// flow has usually become shallow concentrated flow.
pub const SHEET_FLOW_GUIDANCE_FT: f64 = 100.0;

/// Sheet flow travel time (h).
///
/// # Formula
/// TR-55 eq. 3-3: `Tt = 0.007 (n L)^0.8 / (P2^0.5 s^0.4)`, with `n` the
/// Manning roughness for sheet flow, `L` the length (ft), `P2` the 2-year
/// 24-hour rainfall (in) and `s` the slope (ft/ft).
pub fn sheet_flow_time_h(n: f64, length_ft: f64, p2_in: f64, slope: f64) -> f64 {
    0.007 * (n * length_ft).powf(0.8) / (p2_in.sqrt() * slope.powf(0.4))
}

/// Shallow concentrated flow velocity (ft/s).
///
/// # Formula
/// TR-55 Appendix F: `V = k s^0.5` with `k` = 16.1345 (unpaved) or 20.3282
/// (paved), `s` the slope (ft/ft).
pub fn shallow_velocity_fps(k: f64, slope: f64) -> f64 {
    k * slope.sqrt()
}

/// Manning velocity in an open channel or pipe (ft/s).
///
/// # Formula
/// TR-55 eq. 3-4: `V = 1.49 r^(2/3) s^(1/2) / n`, with `r = a / pw` the
/// hydraulic radius (ft), `a` the flow area (ft2), `pw` the wetted perimeter
/// (ft), `s` the slope (ft/ft).
pub fn manning_velocity_fps(n: f64, hydraulic_radius_ft: f64, slope: f64) -> f64 {
    MANNING_K_US * hydraulic_radius_ft.powf(2.0 / 3.0) * slope.sqrt() / n
}

/// Travel time (h) over a length at a velocity.
///
/// # Formula
/// TR-55 eq. 3-1: `Tt = L / (3600 V)`, L in ft, V in ft/s.
pub fn travel_time_h(length_ft: f64, velocity_fps: f64) -> f64 {
    length_ft / (3600.0 * velocity_fps)
}

/// A channel cross-section at bankfull, from which the hydraulic radius follows.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Section {
    /// Trapezoid: bottom width (ft), side slope (horizontal per vertical), depth (ft).
    Trapezoid {
        /// Bottom width, ft.
        bottom_ft: f64,
        /// Side slope, horizontal per vertical.
        side_h_per_v: f64,
        /// Flow depth, ft.
        depth_ft: f64,
    },
    /// Circular pipe flowing full.
    PipeFull {
        /// Inside diameter, ft.
        diameter_ft: f64,
    },
    /// Flow area and wetted perimeter given directly.
    Given {
        /// Flow area, ft2.
        area_ft2: f64,
        /// Wetted perimeter, ft.
        perimeter_ft: f64,
    },
}

impl Section {
    /// Flow area (ft2) and wetted perimeter (ft).
    ///
    /// # Formula
    /// Trapezoid: `a = (b + z y) y`, `pw = b + 2 y sqrt(1 + z^2)`;
    /// pipe flowing full: `a = pi D^2 / 4`, `pw = pi D` (so `r = D / 4`).
    pub fn area_and_perimeter(&self) -> (f64, f64) {
        match *self {
            Section::Trapezoid {
                bottom_ft,
                side_h_per_v,
                depth_ft,
            } => (
                (bottom_ft + side_h_per_v * depth_ft) * depth_ft,
                bottom_ft + 2.0 * depth_ft * (1.0 + side_h_per_v * side_h_per_v).sqrt(),
            ),
            Section::PipeFull { diameter_ft } => (
                std::f64::consts::PI * diameter_ft * diameter_ft / 4.0,
                std::f64::consts::PI * diameter_ft,
            ),
            Section::Given {
                area_ft2,
                perimeter_ft,
            } => (area_ft2, perimeter_ft),
        }
    }

    /// Hydraulic radius r = a / pw (ft).
    pub fn hydraulic_radius_ft(&self) -> f64 {
        let (a, p) = self.area_and_perimeter();
        if p > 0.0 { a / p } else { 0.0 }
    }
}

/// One travel-time segment of a flow path, validated.
#[derive(Debug, Clone, PartialEq)]
pub enum Segment {
    /// Sheet flow (TR-55 eq. 3-3).
    Sheet {
        /// Manning n for sheet flow.
        n: f64,
        /// Length, ft.
        length_ft: f64,
        /// Slope, ft/ft.
        slope: f64,
    },
    /// Shallow concentrated flow (TR-55 Appendix F).
    Shallow {
        /// Velocity coefficient k in `V = k s^0.5`, ft/s.
        k_fps: f64,
        /// Surface name for the report.
        surface: String,
        /// Length, ft.
        length_ft: f64,
        /// Slope, ft/ft.
        slope: f64,
    },
    /// Open channel or pipe flow by Manning (TR-55 eq. 3-4).
    Channel {
        /// Manning n.
        n: f64,
        /// Length, ft.
        length_ft: f64,
        /// Slope, ft/ft.
        slope: f64,
        /// Bankfull cross-section.
        section: Section,
    },
}

/// Travel time of one segment with its velocity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SegmentTime {
    /// Average velocity over the segment, ft/s.
    pub velocity_fps: f64,
    /// Travel time, h.
    pub time_h: f64,
}

impl Segment {
    /// Segment length, ft.
    pub fn length_ft(&self) -> f64 {
        match self {
            Segment::Sheet { length_ft, .. }
            | Segment::Shallow { length_ft, .. }
            | Segment::Channel { length_ft, .. } => *length_ft,
        }
    }

    /// Slope, ft/ft.
    pub fn slope(&self) -> f64 {
        match self {
            Segment::Sheet { slope, .. }
            | Segment::Shallow { slope, .. }
            | Segment::Channel { slope, .. } => *slope,
        }
    }

    /// Kind as written in scenarios.
    pub fn kind(&self) -> &'static str {
        match self {
            Segment::Sheet { .. } => "sheet",
            Segment::Shallow { .. } => "shallow",
            Segment::Channel { .. } => "channel",
        }
    }

    /// Travel time and velocity; `p2_in` is the 2-year 24-hour rainfall (in),
    /// read by sheet flow only. Sheet flow without it has no time (NaN):
    /// no depth is ever assumed.
    pub fn travel(&self, p2_in: Option<f64>) -> SegmentTime {
        match self {
            Segment::Sheet {
                n,
                length_ft,
                slope,
            } => {
                let t = p2_in.map_or(f64::NAN, |p2| sheet_flow_time_h(*n, *length_ft, p2, *slope));
                SegmentTime {
                    velocity_fps: if t > 0.0 {
                        length_ft / (3600.0 * t)
                    } else {
                        0.0
                    },
                    time_h: t,
                }
            }
            Segment::Shallow {
                k_fps,
                length_ft,
                slope,
                ..
            } => {
                let v = shallow_velocity_fps(*k_fps, *slope);
                SegmentTime {
                    velocity_fps: v,
                    time_h: travel_time_h(*length_ft, v),
                }
            }
            Segment::Channel {
                n,
                length_ft,
                slope,
                section,
            } => {
                let v = manning_velocity_fps(*n, section.hydraulic_radius_ft(), *slope);
                SegmentTime {
                    velocity_fps: v,
                    time_h: travel_time_h(*length_ft, v),
                }
            }
        }
    }
}

/// Time of concentration (h) as the sum of the segments' travel times
/// (TR-55 eq. 3-2: `Tc = Tt1 + Tt2 + ... + Ttm`). `p2_in` is needed by
/// sheet flow only; a sheet segment without it makes the sum NaN (the
/// scenario refuses such a path before it gets here).
pub fn time_of_concentration_h(segments: &[Segment], p2_in: Option<f64>) -> f64 {
    segments.iter().map(|s| s.travel(p2_in).time_h).sum()
}

/// Watershed lag (h) from the time of concentration: `L = 0.6 Tc`
/// (NEH 630 ch. 15; SCS: Tc = 1.67 L).
pub fn lag_h(tc_h: f64) -> f64 {
    0.6 * tc_h
}

/// Time of concentration (h) from a watershed lag: `Tc = L / 0.6`, the
/// inverse of [`lag_h`] (SCS: Tc = 1.67 L, Bedient, Huber & Vieux).
pub fn tc_from_lag_h(lag_h: f64) -> f64 {
    lag_h / 0.6
}

/// NRCS (SCS) watershed lag (h) by the curve-number method.
///
/// # Formula
/// Bedient, Huber & Vieux, *Hydrology and Floodplain Analysis*, 5th ed.,
/// eq. 2-18 and 2-19 (cited there to SCS):
/// `tp = L^0.8 (S + 1)^0.7 / (1900 y^0.5)`, `S = 1000/CN - 10`, with `tp`
/// the lag (h), `L` the length to the divide (ft), `y` the average
/// watershed slope (%), `S` in inches.
pub fn watershed_lag_h(length_ft: f64, slope_pct: f64, cn: f64) -> f64 {
    let s = 1000.0 / cn - 10.0;
    length_ft.powf(0.8) * (s + 1.0).powf(0.7) / (1900.0 * slope_pct.sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tr55_example_3_1_travel_times() {
        // TR-55 (1986) Example 3-1 (inputs and results from memory; arithmetic checked
        // in the reference file): P2 = 3.6 in.
        // Sheet 0.30 h, shallow 1.6 ft/s and 0.24 h, channel 2.05 ft/s and 0.99 h, Tc 1.53 h
        // (from memory), in `validation::timing_cases`, the list `runnel validate` reports.
        crate::validation::assert_group("tr55-example-3-1");
    }

    #[test]
    fn sheet_flow_follows_tr55_eq_3_3() {
        // TR-55 (1986) eq. 3-3 (verified in the reference file): hand value
        // 0.007 * (0.15*100)^0.8 / (3.0^0.5 * 0.02^0.4) = 0.1687 h
        let t = sheet_flow_time_h(0.15, 100.0, 3.0, 0.02);
        let hand = 0.007 * 15f64.powf(0.8) / (3f64.sqrt() * 0.02f64.powf(0.4));
        assert!((t - hand).abs() < 1e-12);
        // 0.1687 h within 0.0005 h: `validation::timing_cases`, which `runnel validate` reports.
        crate::validation::assert_group("tr55-eq-3-3");
    }

    #[test]
    fn pipe_flowing_full_has_radius_of_a_quarter_diameter() {
        // geometry of a circle; TR-55 (1986) eq. 3-4 uses r = a / pw
        let r = Section::PipeFull { diameter_ft: 1.5 }.hydraulic_radius_ft();
        assert!((r - 0.375).abs() < 1e-12);
        let (a, p) = Section::Trapezoid {
            bottom_ft: 3.0,
            side_h_per_v: 2.0,
            depth_ft: 1.5,
        }
        .area_and_perimeter();
        assert!((a - 9.0).abs() < 1e-12);
        assert!((p - (3.0 + 3.0 * 5f64.sqrt())).abs() < 1e-12);
    }

    #[test]
    fn lag_is_six_tenths_of_tc() {
        // NEH 630 ch.15 / SCS: Tc = 1.67 L (Bedient, Huber & Vieux, verified)
        assert!((lag_h(1.0) - 0.6).abs() < 1e-12);
    }

    #[test]
    fn watershed_lag_reproduces_bedient_example_2_6() {
        // Bedient, Huber & Vieux (5th ed.) Example 2-6 (eq. 2-18, cited to SCS):
        // L = 5 mi = 26,400 ft, y = 100 ft/mi = 1.9 %, CN 78 (S = 2.82 in) -> tp = 3.36 h
        // (tp within 0.005 h: `validation::timing_cases`, which `runnel validate` reports)
        crate::validation::assert_group("bedient-example-2-6");
        let tp = watershed_lag_h(26_400.0, 1.9, 78.0);
        assert!(((1000.0f64 / 78.0 - 10.0) - 2.82).abs() < 0.005);
        // and its Tc by SCS's Tc = 1.67 L (Bedient et al.; runnel uses L = 0.6 Tc)
        assert!((tc_from_lag_h(tp) - tp / 0.6).abs() < 1e-12);
        assert!((lag_h(tc_from_lag_h(tp)) - tp).abs() < 1e-12);
        // the example goes on: T_R = D/2 + tp = 1 + 3.36 = 4.36 h (eq. 2-17) and, for
        // 10 mi2, Qp = 484 A / T_R = 1,110 cfs (eq. 2-16)
        let qp = crate::methods::unit_hydrograph::peak_cfs_per_in(484.0, 6400.0, 2.0 / 2.0 + 3.36);
        assert!((qp - 1110.0).abs() < 1.0, "{qp}");
    }

    #[test]
    fn sheet_flow_without_p2_has_no_time_and_other_segments_ignore_it() {
        // TR-55 (1986) eq. 3-3 needs P2; shallow flow (TR-55 App. F) does not
        let sheet = Segment::Sheet {
            n: 0.24,
            length_ft: 100.0,
            slope: 0.01,
        };
        assert!(sheet.travel(None).time_h.is_nan());
        let shallow = Segment::Shallow {
            k_fps: 16.1345,
            surface: "unpaved".into(),
            length_ft: 1400.0,
            slope: 0.01,
        };
        assert_eq!(shallow.travel(None), shallow.travel(Some(3.6)));
        assert!(time_of_concentration_h(&[shallow], None).is_finite());
    }
}
