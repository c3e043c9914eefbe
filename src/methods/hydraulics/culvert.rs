//! Barrels: a culvert pipe or box leading from a pond (or from a riser box)
//! to the outfall, by FHWA HDS-5, *Hydraulic Design of Highway Culverts*,
//! 3rd ed. (2012).
//!
//! A barrel passes the flow whose governing headwater reaches the pond's
//! stage: the higher of the inlet-control headwater (HDS-5 Appendix A,
//! unsubmerged form 1 and the submerged form, interpolated between them)
//! and the outlet-control headwater (full-flow energy equation with
//! entrance, friction and exit losses; outlet depth the greater of the
//! tailwater and `(dc + D)/2`). US units: ft, cfs, `g = 32.174 ft/s2`.
//!
//! The constants K, M, c, Y and Ks are those of HDS-5 Table A.1
//! (transcribed: the reference file's section 13b, and a transcription of
//! the HDS-5 table found by search for the box M values). The entrance-loss
//! coefficients ke are those of the 2001 edition of HDS-5
//! (FHWA-NHI-01-020), Table 12, "Entrance Loss Coefficients, Outlet
//! Control, Full or Partly Full", read in a public copy of that
//! publication (the 2012 edition's Table C.2 was not seen); the row for
//! box wingwalls parallel to the barrel is cut off in that copy and was
//! read in the same table as reproduced in the Urban Stormwater Management
//! Manual for Malaysia (MSMA, 2nd ed.), Design Chart 27.2.

use super::G_FT_PER_S2;
use super::not_positive;
use std::f64::consts::PI;

/// Cross-section of a barrel.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum BarrelShape {
    /// Circular pipe of inside diameter `diameter_ft`.
    Circular {
        /// Inside diameter, ft.
        diameter_ft: f64,
    },
    /// Rectangular box, span `width_ft`, rise `height_ft`.
    Box {
        /// Inside span, ft.
        width_ft: f64,
        /// Inside rise, ft.
        height_ft: f64,
    },
}

impl BarrelShape {
    /// The rise D (ft): the diameter or the box height.
    pub fn rise_ft(&self) -> f64 {
        match *self {
            BarrelShape::Circular { diameter_ft } => diameter_ft,
            BarrelShape::Box { height_ft, .. } => height_ft,
        }
    }

    /// Full cross-section area, ft2.
    pub fn area_ft2(&self) -> f64 {
        match *self {
            BarrelShape::Circular { diameter_ft } => PI * diameter_ft * diameter_ft / 4.0,
            BarrelShape::Box {
                width_ft,
                height_ft,
            } => width_ft * height_ft,
        }
    }

    /// Hydraulic radius flowing full, ft.
    pub fn full_hydraulic_radius_ft(&self) -> f64 {
        match *self {
            BarrelShape::Circular { diameter_ft } => diameter_ft / 4.0,
            BarrelShape::Box {
                width_ft,
                height_ft,
            } => width_ft * height_ft / (2.0 * (width_ft + height_ft)),
        }
    }

    /// Flow area (ft2) and top width (ft) at depth `y` (0 < y < rise).
    fn area_and_top_width(&self, y: f64) -> (f64, f64) {
        match *self {
            BarrelShape::Circular { diameter_ft: d } => {
                let r = d / 2.0;
                let y = y.clamp(0.0, d);
                let c = ((r - y) / r).clamp(-1.0, 1.0);
                let a = r * r * c.acos() - (r - y) * (2.0 * r * y - y * y).max(0.0).sqrt();
                let t = 2.0 * (2.0 * r * y - y * y).max(0.0).sqrt();
                (a.max(0.0), t)
            }
            BarrelShape::Box { width_ft, .. } => (width_ft * y, width_ft),
        }
    }

    /// Critical depth dc (ft) for flow `q_cfs`, at most the rise.
    ///
    /// # Formula
    /// Critical flow `Q^2 T / (g A^3) = 1` (elementary open-channel
    /// hydraulics); for a box `dc = (q^2/g)^(1/3)`, `q = Q/B`. Solved by
    /// bisection for the circle (the left side falls with depth).
    pub fn critical_depth_ft(&self, q_cfs: f64) -> f64 {
        let d = self.rise_ft();
        if not_positive(q_cfs) {
            return 0.0;
        }
        match *self {
            BarrelShape::Box { width_ft, .. } => {
                let q = q_cfs / width_ft;
                (q * q / G_FT_PER_S2).cbrt().min(d)
            }
            BarrelShape::Circular { .. } => {
                let f = |y: f64| {
                    let (a, t) = self.area_and_top_width(y);
                    q_cfs * q_cfs * t - G_FT_PER_S2 * a * a * a
                };
                let (mut lo, mut hi) = (0.0, d);
                for _ in 0..60 {
                    let mid = 0.5 * (lo + hi);
                    if f(mid) > 0.0 {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                    if hi - lo < 1e-10 * d {
                        break;
                    }
                }
                0.5 * (lo + hi)
            }
        }
    }

    /// Specific head at critical depth `Hc = dc + Vc^2/(2g)` (ft).
    pub fn critical_head_ft(&self, q_cfs: f64) -> f64 {
        let dc = self.critical_depth_ft(q_cfs);
        if dc <= 0.0 {
            return 0.0;
        }
        let (a, _) = self.area_and_top_width(dc.min(self.rise_ft() * (1.0 - 1e-9)));
        if a <= 0.0 {
            return dc;
        }
        let v = q_cfs / a;
        dc + v * v / (2.0 * G_FT_PER_S2)
    }
}

/// Inlet-control constants (HDS-5 Table A.1, form 1) and the entrance-loss
/// coefficient of one entrance type.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Entrance {
    /// Unsubmerged K.
    pub k: f64,
    /// Unsubmerged exponent M.
    pub m: f64,
    /// Submerged c.
    pub c: f64,
    /// Submerged Y.
    pub y: f64,
    /// Slope correction Ks (-0.5; +0.7 for mitered inlets).
    pub ks: f64,
    /// Entrance-loss coefficient ke (outlet control): FHWA HDS-5 (2001)
    /// Table 12.
    pub ke: f64,
    /// Whether the entrance is for a box (false: circular).
    pub for_box: bool,
}

/// The entrance types a barrel may name: `(keyword, constants, description)`.
/// K, M, c, Y, Ks: FHWA HDS-5 (2012) Table A.1 (transcribed); ke: FHWA
/// HDS-5 (2001) Table 12 (see the module's note).
pub const ENTRANCES: [(&str, Entrance, &str); 9] = [
    (
        "concrete-square-edge",
        Entrance {
            k: 0.0098,
            m: 2.0,
            c: 0.0398,
            y: 0.67,
            ks: -0.5,
            ke: 0.5,
            for_box: false,
        },
        "circular concrete, square edge with headwall",
    ),
    (
        "concrete-groove-headwall",
        Entrance {
            k: 0.0018,
            m: 2.0,
            c: 0.0292,
            y: 0.74,
            ks: -0.5,
            ke: 0.2,
            for_box: false,
        },
        "circular concrete, groove end with headwall",
    ),
    (
        "concrete-groove-projecting",
        Entrance {
            k: 0.0045,
            m: 2.0,
            c: 0.0317,
            y: 0.69,
            ks: -0.5,
            ke: 0.2,
            for_box: false,
        },
        "circular concrete, groove end projecting",
    ),
    (
        "metal-headwall",
        Entrance {
            k: 0.0078,
            m: 2.0,
            c: 0.0379,
            y: 0.69,
            ks: -0.5,
            ke: 0.5,
            for_box: false,
        },
        "circular corrugated metal, headwall",
    ),
    (
        "metal-mitered",
        Entrance {
            k: 0.0210,
            m: 1.33,
            c: 0.0463,
            y: 0.75,
            ks: 0.7,
            ke: 0.7,
            for_box: false,
        },
        "circular corrugated metal, mitered to the slope",
    ),
    (
        "metal-projecting",
        Entrance {
            k: 0.0340,
            m: 1.50,
            c: 0.0553,
            y: 0.54,
            ks: -0.5,
            ke: 0.9,
            for_box: false,
        },
        "circular corrugated metal, projecting",
    ),
    (
        "box-wingwall-30-75",
        Entrance {
            k: 0.026,
            m: 1.0,
            c: 0.0347,
            y: 0.81,
            ks: -0.5,
            ke: 0.4,
            for_box: true,
        },
        "concrete box, wingwalls flared 30 to 75 degrees",
    ),
    (
        "box-wingwall-90-15",
        Entrance {
            k: 0.061,
            m: 0.75,
            c: 0.0400,
            y: 0.80,
            ks: -0.5,
            ke: 0.5,
            for_box: true,
        },
        "concrete box, wingwalls flared 90 or 15 degrees",
    ),
    (
        "box-wingwall-0",
        Entrance {
            k: 0.061,
            m: 0.75,
            c: 0.0423,
            y: 0.82,
            ks: -0.5,
            ke: 0.7,
            for_box: true,
        },
        "concrete box, wingwalls parallel (0 degrees)",
    ),
];

/// The entrance a keyword names.
pub fn entrance(word: &str) -> Option<Entrance> {
    ENTRANCES.iter().find(|e| e.0 == word).map(|e| e.1)
}

/// Upper end of the unsubmerged inlet-control range, `Q/(A D^0.5)`
/// (HDS-5 Appendix A; US units).
pub const UNSUBMERGED_MAX: f64 = 3.5;
/// Lower end of the submerged inlet-control range, `Q/(A D^0.5)`.
pub const SUBMERGED_MIN: f64 = 4.0;

/// Friction constant of the full-flow outlet-control equation, US units
/// (HDS-5: `29 n^2 L / R^1.33`; from memory).
pub const OUTLET_FRICTION_US: f64 = 29.0;

/// Which control sets a barrel's flow.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Control {
    /// No flow: the stage is at or below the inlet invert or the tailwater.
    Dry,
    /// Inlet control.
    Inlet,
    /// Outlet control.
    Outlet,
}

impl Control {
    /// The word reports print.
    pub fn word(self) -> &'static str {
        match self {
            Control::Dry => "dry",
            Control::Inlet => "inlet",
            Control::Outlet => "outlet",
        }
    }
}

/// A barrel (culvert) with its inlet and outlet inverts.
#[derive(Debug, Clone, PartialEq)]
pub struct Barrel {
    /// Cross-section.
    pub shape: BarrelShape,
    /// Length, ft.
    pub length_ft: f64,
    /// Inlet invert, ft.
    pub inlet_invert_ft: f64,
    /// Outlet invert, ft.
    pub outlet_invert_ft: f64,
    /// Manning n.
    pub n: f64,
    /// Entrance constants.
    pub entrance: Entrance,
}

impl Barrel {
    /// Barrel slope So (ft/ft), positive falling to the outlet.
    pub fn slope(&self) -> f64 {
        (self.inlet_invert_ft - self.outlet_invert_ft) / self.length_ft
    }

    /// Inlet-control headwater depth above the inlet invert (ft) at flow
    /// `q_cfs`.
    ///
    /// # Formula
    /// FHWA HDS-5 (2012) Appendix A, with `x = Ku Q/(A D^0.5)`, Ku = 1 (US):
    /// - unsubmerged form 1 (`x <= 3.5`): `HW/D = Hc/D + K x^M + Ks S`;
    /// - submerged (`x >= 4.0`): `HW/D = c x^2 + Y + Ks S`;
    /// - between, HW interpolated linearly in `x` between the two ends.
    ///
    /// `Hc` the specific head at critical depth (ft), D the rise (ft), A
    /// the full area (ft2), S the barrel slope.
    pub fn inlet_headwater_ft(&self, q_cfs: f64) -> f64 {
        if not_positive(q_cfs) {
            return 0.0;
        }
        let d = self.shape.rise_ft();
        let scale = self.shape.area_ft2() * d.sqrt();
        let x = q_cfs / scale;
        let e = &self.entrance;
        let s_term = e.ks * self.slope();
        let unsub = |x: f64| {
            let q = x * scale;
            self.shape.critical_head_ft(q) + d * (e.k * x.powf(e.m) + s_term)
        };
        let sub = |x: f64| d * (e.c * x * x + e.y + s_term);
        let hw = if x <= UNSUBMERGED_MAX {
            unsub(x)
        } else if x >= SUBMERGED_MIN {
            sub(x)
        } else {
            let a = unsub(UNSUBMERGED_MAX);
            let b = sub(SUBMERGED_MIN);
            a + (b - a) * (x - UNSUBMERGED_MAX) / (SUBMERGED_MIN - UNSUBMERGED_MAX)
        };
        hw.max(0.0)
    }

    /// Outlet-control headwater depth above the inlet invert (ft) at flow
    /// `q_cfs` with the tailwater at elevation `tailwater_ft` (None: free
    /// outfall).
    ///
    /// # Formula
    /// FHWA HDS-5 (2012) full-flow outlet control (from memory):
    /// `HW = H + ho - L So`, `H = [1 + ke + 29 n^2 L / R^1.33] V^2/(2g)`,
    /// `ho = max(TW, (dc + D)/2)` (TW the tailwater depth above the outlet
    /// invert), `V = Q/A` full (ft/s), R the full hydraulic radius (ft).
    pub fn outlet_headwater_ft(&self, q_cfs: f64, tailwater_ft: Option<f64>) -> f64 {
        let d = self.shape.rise_ft();
        let q = q_cfs.max(0.0);
        let v = q / self.shape.area_ft2();
        let r = self.shape.full_hydraulic_radius_ft();
        let loss = 1.0
            + self.entrance.ke
            + OUTLET_FRICTION_US * self.n * self.n * self.length_ft / r.powf(1.33);
        let h = loss * v * v / (2.0 * G_FT_PER_S2);
        let tw = tailwater_ft.map_or(f64::NEG_INFINITY, |t| t - self.outlet_invert_ft);
        let ho = tw.max((self.shape.critical_depth_ft(q) + d) / 2.0);
        h + ho - (self.inlet_invert_ft - self.outlet_invert_ft)
    }

    /// Whether the outlet-control form applies at flow `q_cfs`: its
    /// headwater submerges the inlet (HW >= D) or the tailwater stands at or
    /// above the outlet crown. Otherwise the barrel runs part full and the
    /// full-flow equation with `(dc + D)/2` (HDS-5 says it is valid for full
    /// or nearly full flow) would invent a headwater of about D/2 at a
    /// trickle; inlet control is then taken to govern (project rule).
    fn outlet_form_applies(&self, hw_out: f64, tailwater_ft: Option<f64>) -> bool {
        let d = self.shape.rise_ft();
        hw_out >= d || tailwater_ft.is_some_and(|t| t >= self.outlet_invert_ft + d)
    }

    /// Governing headwater depth above the inlet invert (ft) at flow
    /// `q_cfs`, and the control that sets it: the higher of inlet and
    /// outlet control (HDS-5), outlet control only where its full-flow form
    /// applies; never below the tailwater.
    pub fn headwater_ft(&self, q_cfs: f64, tailwater_ft: Option<f64>) -> (f64, Control) {
        let hi = self.inlet_headwater_ft(q_cfs);
        let ho = self.outlet_headwater_ft(q_cfs, tailwater_ft);
        let floor = tailwater_ft.map_or(0.0, |t| (t - self.inlet_invert_ft).max(0.0));
        if self.outlet_form_applies(ho, tailwater_ft) && ho > hi {
            (ho.max(floor), Control::Outlet)
        } else if floor > hi {
            (floor, Control::Outlet)
        } else {
            (hi, Control::Inlet)
        }
    }

    /// Flow (cfs) the barrel passes with the water at `stage_ft` upstream,
    /// and its control: the largest flow whose governing headwater
    /// ([`Barrel::headwater_ft`]) does not exceed the stage. 0 at or below
    /// the inlet invert and at or below the tailwater (no reverse flow).
    pub fn flow_cfs(&self, stage_ft: f64, tailwater_ft: Option<f64>) -> (f64, Control) {
        let depth = stage_ft - self.inlet_invert_ft;
        if not_positive(depth) || tailwater_ft.is_some_and(|t| stage_ft <= t) || !self.valid() {
            return (0.0, Control::Dry);
        }
        let hw = |q: f64| self.headwater_ft(q, tailwater_ft).0;
        // bracket: grow the upper flow until its headwater passes the stage
        let mut hi = self.shape.area_ft2() * self.shape.rise_ft().sqrt();
        let mut n = 0;
        while hw(hi) <= depth {
            hi *= 2.0;
            n += 1;
            if n > 200 || !hi.is_finite() {
                return (f64::INFINITY, Control::Inlet);
            }
        }
        let q = super::solve_rising(hw, depth, 0.0, hi);
        (q, self.headwater_ft(q, tailwater_ft).1)
    }

    /// True when every dimension is finite and positive.
    fn valid(&self) -> bool {
        let d = self.shape.rise_ft();
        let w = match self.shape {
            BarrelShape::Box { width_ft, .. } => width_ft,
            BarrelShape::Circular { diameter_ft } => diameter_ft,
        };
        [d, w, self.length_ft, self.n]
            .iter()
            .all(|x| x.is_finite() && *x > 0.0)
            && self.inlet_invert_ft.is_finite()
            && self.outlet_invert_ft.is_finite()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn pipe36(entrance_word: &str) -> Barrel {
        Barrel {
            shape: BarrelShape::Circular { diameter_ft: 3.0 },
            length_ft: 100.0,
            inlet_invert_ft: 101.0,
            outlet_invert_ft: 100.0,
            n: 0.012,
            entrance: entrance(entrance_word).unwrap(),
        }
    }

    #[test]
    fn entrance_loss_coefficients_are_hds5_table_12() {
        // FHWA HDS-5 (2001) Table 12 (read in a public copy; the parallel-wingwall
        // row as reproduced in MSMA 2nd ed. Design Chart 27.2).
        // (`validation::hydraulics_cases`, the list `runnel validate` reports)
        crate::validation::assert_group("hds5-entrance-loss");
        // every entrance keyword has its row there
        let listed = crate::validation::cases::all()
            .into_iter()
            .filter(|c| c.group == "hds5-entrance-loss")
            .count();
        assert_eq!(listed, ENTRANCES.len());
    }

    #[test]
    fn inlet_control_unsubmerged_36_in_concrete() {
        // FHWA HDS-5 (2012) App. A form 1 with Table A.1 constants (transcribed);
        // reference file section 13b [C]: 36 in square edge, S 0.01, Q 30 cfs -> HW 2.674 ft.
        // (`validation::hydraulics_cases`, the list `runnel validate` reports)
        crate::validation::assert_group("hds5-inlet-control");
    }

    #[test]
    fn inlet_control_submerged_36_in_concrete_and_metal() {
        // FHWA HDS-5 (2012) App. A submerged form, Table A.1 (transcribed); reference
        // file section 13b [C]: 60 cfs -> 4.863 ft, 100 cfs -> 9.961 ft; corrugated
        // metal projecting, 100 cfs -> 12.673 ft. Hand: x = 60/(7.0686*1.7321) = 4.9007,
        // HW = 3*(0.0398*24.017 + 0.67 - 0.005) = 4.8627 ft.
        // (`validation::hydraulics_cases`, the list `runnel validate` reports)
        crate::validation::assert_group("hds5-inlet-control");
    }

    #[test]
    fn inlet_control_is_continuous_through_the_transition() {
        // FHWA HDS-5 (2012) App. A: interpolation between x = 3.5 and 4.0 joins the forms.
        let b = pipe36("concrete-square-edge");
        let scale = b.shape.area_ft2() * 3f64.sqrt();
        for x in [UNSUBMERGED_MAX, SUBMERGED_MIN] {
            let below = b.inlet_headwater_ft(scale * (x - 1e-9));
            let above = b.inlet_headwater_ft(scale * (x + 1e-9));
            assert!(
                (below - above).abs() < 1e-6,
                "jump at x = {x}: {below} vs {above}"
            );
        }
    }

    #[test]
    fn outlet_control_full_flow_worked_value() {
        // FHWA HDS-5 (2012) full-flow outlet control (from memory); reference file
        // section 13b [C]: Q 100, D 3, L 100, n 0.012, ke 0.5, So 0.01, TW 2 ft:
        // H 6.570, ho 2.948, HW 8.518 ft; inlet control (9.961 ft) governs.
        let b = pipe36("concrete-square-edge");
        // (`validation::hydraulics_cases`, the list `runnel validate` reports)
        crate::validation::assert_group("hds5-outlet-control");
        let (g, c) = b.headwater_ft(100.0, Some(102.0));
        assert_eq!(c, Control::Inlet);
        assert_relative_eq!(g, 9.961, max_relative = 2e-4);
    }

    #[test]
    fn critical_depth_of_a_box_and_of_a_circle() {
        // Critical flow Q^2 T = g A^3 (elementary open-channel hydraulics; hand computation):
        // box 4 ft wide, 40 cfs: q = 10, dc = (100/32.174)^(1/3) = 1.4594 ft.
        let bx = BarrelShape::Box {
            width_ft: 4.0,
            height_ft: 3.0,
        };
        assert_relative_eq!(bx.critical_depth_ft(40.0), 1.4594, max_relative = 1e-4);
        // circle half full (D = 2): A = pi/2, T = 2 -> Q = sqrt(g A^3 / T) = 7.8927 cfs.
        let c = BarrelShape::Circular { diameter_ft: 2.0 };
        let q = (G_FT_PER_S2 * (PI / 2.0).powi(3) / 2.0).sqrt();
        assert_relative_eq!(c.critical_depth_ft(q), 1.0, max_relative = 1e-7);
    }

    #[test]
    fn flow_inverts_the_governing_headwater() {
        // FHWA HDS-5 (2012): the barrel passes the flow whose governing headwater
        // equals the stage; checked by round trip on the 36-in pipe.
        let b = pipe36("concrete-square-edge");
        for q in [5.0, 30.0, 45.0, 60.0, 100.0] {
            let (hw, _) = b.headwater_ft(q, None);
            let (back, _) = b.flow_cfs(b.inlet_invert_ft + hw, None);
            assert_relative_eq!(back, q, max_relative = 1e-6);
        }
        assert_eq!(b.flow_cfs(101.0, None), (0.0, Control::Dry));
        assert_eq!(b.flow_cfs(103.0, Some(103.5)).0, 0.0);
    }

    #[test]
    fn long_rough_barrel_goes_to_outlet_control_and_the_rating_stays_continuous() {
        // FHWA HDS-5 (2012): the higher headwater governs; a 300 ft, n 0.024 pipe at a
        // flat slope is in outlet control once full. Continuity: no jump in Q(stage).
        let mut b = pipe36("metal-headwall");
        b.length_ft = 300.0;
        b.n = 0.024;
        b.outlet_invert_ft = 100.9;
        let mut last = 0.0;
        let mut saw_outlet = false;
        for i in 1..=1200 {
            let s = 101.0 + i as f64 * 0.01;
            let (q, c) = b.flow_cfs(s, None);
            saw_outlet |= c == Control::Outlet;
            assert!(q >= last - 1e-9, "falls at {s}");
            assert!(q - last < 2.0, "jump at {s}: {last} -> {q}");
            last = q;
        }
        assert!(saw_outlet);
    }
}
