//! A pond's outlet works: its outlets, the barrels some of them drain
//! through, and the tailwater downstream.
//!
//! An outlet that names a barrel (`into`) discharges into a riser box that
//! the barrel drains: the structure passes the lesser of what its openings
//! pass (free, into the box) and what the barrel passes at the pond's
//! stage ([`Barrel::flow_cfs`], which sees the tailwater). When the barrel
//! governs, each opening's share is its free flow scaled down in
//! proportion (the openings are then drowned by the water in the box). A
//! barrel that no outlet names is a culvert straight from the pond. Other
//! outlets discharge to the tailwater ([`submerged::flow_under_tailwater`]).
//!
//! A tailwater table gives the downstream water surface against the pond's
//! total outflow; the total is then the flow `Q` with
//! `Q = F(stage, TW(Q))`, found by [`solve_rising`] (`F` falls as the
//! tailwater rises, so the root is unique).

use super::culvert::{Barrel, Control};
use super::not_positive;
use super::{Outlet, solve_rising, submerged};

/// The water surface downstream of a pond.
#[derive(Debug, Clone, PartialEq)]
pub enum Tailwater {
    /// A fixed elevation, ft.
    Fixed(f64),
    /// `(flow cfs, elevation ft)` rows, flows rising: the downstream water
    /// surface against the pond's total outflow.
    Table(Vec<(f64, f64)>),
}

impl Tailwater {
    /// Tailwater elevation (ft) at a pond outflow of `q_cfs`: the fixed
    /// elevation, or linear interpolation in the table (the first row's
    /// elevation below it, the last segment extended above it).
    pub fn elevation_ft(&self, q_cfs: f64) -> f64 {
        match self {
            Tailwater::Fixed(e) => *e,
            Tailwater::Table(rows) => match rows.as_slice() {
                [] => f64::NEG_INFINITY,
                [(_, e)] => *e,
                _ => {
                    let k = rows.partition_point(|&(q, _)| q <= q_cfs);
                    if k == 0 {
                        return rows[0].1;
                    }
                    let k = k.min(rows.len() - 1);
                    let (q0, e0) = rows[k - 1];
                    let (q1, e1) = rows[k];
                    e0 + (e1 - e0) * (q_cfs - q0) / (q1 - q0)
                }
            },
        }
    }

    /// The tailwater with no outflow (ft).
    pub fn still_ft(&self) -> f64 {
        self.elevation_ft(0.0)
    }
}

/// What governs a barrel's flow at a stage.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Governs {
    /// No flow.
    Dry,
    /// The openings draining into the barrel pass less than it could.
    Openings,
    /// The barrel, in inlet control.
    Inlet,
    /// The barrel, in outlet control.
    Outlet,
}

impl Governs {
    /// The word reports print.
    pub fn word(self) -> &'static str {
        match self {
            Governs::Dry => "dry",
            Governs::Openings => "openings",
            Governs::Inlet => "inlet",
            Governs::Outlet => "outlet",
        }
    }
}

/// Every device's flow at one stage.
#[derive(Debug, Clone, PartialEq)]
pub struct DeviceFlows {
    /// Each outlet's flow (count included), cfs, in the outlets' order.
    pub outlets_cfs: Vec<f64>,
    /// Each barrel's flow, cfs.
    pub barrels_cfs: Vec<f64>,
    /// What governs each barrel.
    pub governs: Vec<Governs>,
    /// The tailwater elevation used, ft (None without tailwater).
    pub tailwater_ft: Option<f64>,
    /// True when the tailwater reduced some device's flow.
    pub tailwater_acts: bool,
    /// The structure's total, cfs.
    pub total_cfs: f64,
}

/// A pond's outlet works (borrowed from the pond).
#[derive(Debug, Clone, Copy)]
pub struct Works<'a> {
    /// The outlets.
    pub outlets: &'a [Outlet],
    /// Identical copies of each outlet (empty: one of each).
    pub counts: &'a [u32],
    /// The barrel each outlet drains into (empty: none).
    pub into: &'a [Option<usize>],
    /// The barrels.
    pub barrels: &'a [Barrel],
    /// The tailwater, if any.
    pub tailwater: Option<&'a Tailwater>,
    /// Outlets blocked (failure check; empty: none).
    pub blocked_outlets: &'a [bool],
    /// Barrels blocked (empty: none).
    pub blocked_barrels: &'a [bool],
}

impl<'a> Works<'a> {
    /// Outlets alone, free outfall, in parallel.
    pub fn free(outlets: &'a [Outlet]) -> Self {
        Works {
            outlets,
            counts: &[],
            into: &[],
            barrels: &[],
            tailwater: None,
            blocked_outlets: &[],
            blocked_barrels: &[],
        }
    }

    fn count(&self, i: usize) -> f64 {
        f64::from(self.counts.get(i).copied().unwrap_or(1))
    }

    fn drains_into(&self, i: usize) -> Option<usize> {
        self.into.get(i).copied().flatten()
    }

    fn outlet_blocked(&self, i: usize) -> bool {
        self.blocked_outlets.get(i).copied().unwrap_or(false)
    }

    fn barrel_blocked(&self, b: usize) -> bool {
        self.blocked_barrels.get(b).copied().unwrap_or(false)
    }

    /// True when some outlet drains into barrel `b`.
    pub fn barrel_has_openings(&self, b: usize) -> bool {
        (0..self.outlets.len()).any(|i| self.drains_into(i) == Some(b))
    }

    /// Every device's flow at `stage_ft` with the tailwater at
    /// `tailwater_ft` (None: free outfall).
    pub fn flows_with_tailwater(&self, stage_ft: f64, tailwater_ft: Option<f64>) -> DeviceFlows {
        let mut acts = false;
        let mut outlets_cfs: Vec<f64> = Vec::with_capacity(self.outlets.len());
        for (i, o) in self.outlets.iter().enumerate() {
            let q = if self.outlet_blocked(i) {
                0.0
            } else if self.drains_into(i).is_some() {
                o.flow_cfs(stage_ft)
            } else {
                let (q, a) = submerged::flow_under_tailwater(o, stage_ft, tailwater_ft);
                acts |= a;
                q
            };
            outlets_cfs.push(q * self.count(i));
        }
        let mut barrels_cfs = Vec::with_capacity(self.barrels.len());
        let mut governs = Vec::with_capacity(self.barrels.len());
        for (b, barrel) in self.barrels.iter().enumerate() {
            let members: Vec<usize> = (0..self.outlets.len())
                .filter(|&i| self.drains_into(i) == Some(b))
                .collect();
            let openings: f64 = members.iter().map(|&i| outlets_cfs[i]).sum();
            if self.barrel_blocked(b) || (!members.is_empty() && openings <= 0.0) {
                members.iter().for_each(|&i| outlets_cfs[i] = 0.0);
                barrels_cfs.push(0.0);
                governs.push(Governs::Dry);
                continue;
            }
            let (cap, control) = barrel.flow_cfs(stage_ft, tailwater_ft);
            let tw_here = control == Control::Outlet
                && tailwater_ft.is_some_and(|t| {
                    let d = barrel.shape.rise_ft();
                    t - barrel.outlet_invert_ft > (barrel.shape.critical_depth_ft(cap) + d) / 2.0
                });
            let (q, g) = if members.is_empty() {
                acts |= tw_here;
                (cap, governs_of(control))
            } else if openings <= cap {
                (openings, Governs::Openings)
            } else {
                acts |= tw_here;
                let f = cap / openings;
                members.iter().for_each(|&i| outlets_cfs[i] *= f);
                (cap, governs_of(control))
            };
            barrels_cfs.push(q);
            governs.push(g);
        }
        let free: f64 = (0..self.outlets.len())
            .filter(|&i| self.drains_into(i).is_none())
            .map(|i| outlets_cfs[i])
            .sum();
        let total_cfs = free + barrels_cfs.iter().sum::<f64>();
        DeviceFlows {
            outlets_cfs,
            barrels_cfs,
            governs,
            tailwater_ft,
            tailwater_acts: acts,
            total_cfs,
        }
    }

    /// Every device's flow at `stage_ft` (ft), the tailwater resolved: a
    /// fixed elevation as given; a table at the total outflow it produces
    /// (see the module doc).
    pub fn flows(&self, stage_ft: f64) -> DeviceFlows {
        match self.tailwater {
            None => self.flows_with_tailwater(stage_ft, None),
            Some(Tailwater::Fixed(e)) => self.flows_with_tailwater(stage_ft, Some(*e)),
            Some(tw) => {
                let total = |q: f64| {
                    self.flows_with_tailwater(stage_ft, Some(tw.elevation_ft(q)))
                        .total_cfs
                };
                let q_max = total(0.0);
                if not_positive(q_max) || !q_max.is_finite() {
                    return self.flows_with_tailwater(stage_ft, Some(tw.still_ft()));
                }
                // g(q) = q - F(TW(q)) rises from -F(TW(0)) < 0 to >= 0 at q_max
                let q = solve_rising(|q| q - total(q), 0.0, 0.0, q_max);
                self.flows_with_tailwater(stage_ft, Some(tw.elevation_ft(q)))
            }
        }
    }

    /// The structure's total flow at `stage_ft`, cfs.
    pub fn total_cfs(&self, stage_ft: f64) -> f64 {
        if self.barrels.is_empty() && self.tailwater.is_none() && self.counts.is_empty() {
            // the plain parallel outlets, without allocating
            return self
                .outlets
                .iter()
                .enumerate()
                .filter(|(i, _)| !self.outlet_blocked(*i))
                .map(|(_, o)| o.flow_cfs(stage_ft))
                .sum();
        }
        self.flows(stage_ft).total_cfs
    }

    /// The lowest stage at which some device can pass water (ft): the
    /// lowest unblocked outlet's [`Outlet::lowest_ft`] and the inlet invert
    /// of each barrel acting alone.
    pub fn lowest_ft(&self) -> Option<f64> {
        let outlets = self
            .outlets
            .iter()
            .enumerate()
            .filter(|(i, _)| !self.outlet_blocked(*i))
            .map(|(_, o)| o.lowest_ft());
        let barrels = self
            .barrels
            .iter()
            .enumerate()
            .filter(|(b, _)| !self.barrel_has_openings(*b) && !self.barrel_blocked(*b))
            .map(|(_, b)| b.inlet_invert_ft);
        outlets
            .chain(barrels)
            .filter(|s| s.is_finite())
            .min_by(f64::total_cmp)
    }

    /// Stages (ft) where the structure's curve changes form: the outlets'
    /// key stages, each barrel's inlet invert and crown, and a fixed
    /// tailwater.
    pub fn key_stages_ft(&self) -> Vec<f64> {
        let mut v: Vec<f64> = self
            .outlets
            .iter()
            .flat_map(Outlet::key_stages_ft)
            .collect();
        for b in self.barrels {
            v.push(b.inlet_invert_ft);
            v.push(b.inlet_invert_ft + b.shape.rise_ft());
        }
        if let Some(Tailwater::Fixed(e)) = self.tailwater {
            v.push(*e);
        }
        v.retain(|s| s.is_finite());
        v
    }
}

fn governs_of(c: Control) -> Governs {
    match c {
        Control::Dry => Governs::Dry,
        Control::Inlet => Governs::Inlet,
        Control::Outlet => Governs::Outlet,
    }
}

#[cfg(test)]
mod tests {
    use super::super::culvert::{BarrelShape, entrance};
    use super::*;
    use approx::assert_relative_eq;

    fn riser() -> Outlet {
        Outlet::Riser {
            crest_ft: 104.0,
            diameter_ft: 4.0,
            weir_coefficient: 3.33,
            cd: 0.61,
        }
    }

    fn small_barrel() -> Barrel {
        Barrel {
            shape: BarrelShape::Circular { diameter_ft: 1.5 },
            length_ft: 60.0,
            inlet_invert_ft: 100.0,
            outlet_invert_ft: 99.4,
            n: 0.013,
            entrance: entrance("concrete-square-edge").unwrap(),
        }
    }

    #[test]
    fn a_riser_through_a_small_barrel_is_limited_by_the_barrel_above_where_it_fills() {
        // FHWA HDS-5 (2012): the structure passes the lesser of openings and barrel.
        let outlets = [riser()];
        let barrels = [small_barrel()];
        let into = [Some(0)];
        let w = Works {
            into: &into,
            barrels: &barrels,
            ..Works::free(&outlets)
        };
        let low = w.flows(104.2);
        assert_eq!(low.governs[0], Governs::Openings);
        assert_relative_eq!(low.total_cfs, riser().flow_cfs(104.2), max_relative = 1e-12);
        let high = w.flows(106.0);
        assert_ne!(high.governs[0], Governs::Openings);
        assert!(high.total_cfs < riser().flow_cfs(106.0));
        assert_relative_eq!(high.total_cfs, barrels[0].flow_cfs(106.0, None).0);
        assert_relative_eq!(high.outlets_cfs[0], high.total_cfs, max_relative = 1e-12);
        // continuity where the barrel takes over
        let mut last = 0.0;
        for i in 0..3000 {
            let s = 104.0 + i as f64 * 0.001;
            let q = w.total_cfs(s);
            assert!(
                q >= last - 1e-9 && q - last < 0.2,
                "stage {s}: {last} -> {q}"
            );
            last = q;
        }
    }

    #[test]
    fn tailwater_table_is_solved_with_the_outflow() {
        // Consistency of the implicit tailwater (project rule): the tailwater used is the
        // table's elevation at the total outflow found.
        let outlets = [Outlet::CircularOrifice {
            invert_ft: 100.0,
            diameter_ft: 1.0,
            cd: 0.61,
        }];
        let tw = Tailwater::Table(vec![(0.0, 99.0), (10.0, 102.0)]);
        let w = Works {
            tailwater: Some(&tw),
            ..Works::free(&outlets)
        };
        let f = w.flows(104.0);
        let t = f.tailwater_ft.unwrap();
        assert_relative_eq!(t, tw.elevation_ft(f.total_cfs), max_relative = 1e-9);
        assert!(f.total_cfs < outlets[0].flow_cfs(104.0));
        assert!(f.tailwater_acts);
    }

    #[test]
    fn blocked_outlets_pass_nothing() {
        // common practice, no published source: a clogged opening passes no flow.
        let outlets = [riser(), riser()];
        let blocked = [true, false];
        let w = Works {
            blocked_outlets: &blocked,
            ..Works::free(&outlets)
        };
        assert_relative_eq!(w.total_cfs(105.0), riser().flow_cfs(105.0));
        assert_eq!(w.flows(105.0).outlets_cfs[0], 0.0);
    }
}
