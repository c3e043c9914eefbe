//! The shape of a study's drainage network, worked out once per study:
//! for every condition the elements in upstream-first order, what each
//! element drains to, the catchment area draining to each element and
//! point, and which point each element finally reaches.
//!
//! Storms ([`crate::engine::network`]), sizing ([`crate::engine::sizing`])
//! and the checks of [`crate::engine::analysis`] read the network from a
//! [`Topology`] instead of walking `to` links themselves. Sizing changes
//! outlet dimensions only, so one topology serves every trial.

use crate::model::{Element, ElementKind, Study, Target};

/// The network of a study, per condition. Built by [`Topology::new`]; its
/// tables always have one row per element, point and condition of the
/// study it was built from.
#[derive(Debug, Clone, PartialEq)]
pub struct Topology {
    /// What each element drains to.
    targets: Vec<Target>,
    /// Each element's own `lag` on the way to its target, h.
    lag_h: Vec<f64>,
    /// The elements each element's flow passes through, itself first, down
    /// to its point.
    through: Vec<Vec<usize>>,
    /// The point each element finally drains to (None on a loop, which
    /// validation refuses).
    point_of: Vec<Option<usize>>,
    /// Sum of the `lag`s (h) from each element down to its point, its own
    /// included, with channels' recession allowances ([`path_lag_h`]).
    path_lag_h: Vec<f64>,
    /// One entry per condition of the study.
    conditions: Vec<ConditionTopology>,
}

/// The network of one condition.
#[derive(Debug, Clone, PartialEq)]
struct ConditionTopology {
    /// Elements of the condition, upstream first.
    order: Vec<usize>,
    /// Catchment area of the condition draining through each element, ac
    /// (a catchment's own area included).
    area_to_element_ac: Vec<f64>,
    /// Catchment area of the condition draining to each point, ac.
    area_to_point_ac: Vec<f64>,
}

/// Walks from element `i` down its `to` links, calling `visit` on every
/// element passed (`i` first); returns the point reached, or None when the
/// walk does not end within one step per element (a loop).
fn walk(elements: &[Element], i: usize, mut visit: impl FnMut(usize)) -> Option<usize> {
    let mut at = i;
    for _ in 0..=elements.len() {
        visit(at);
        match elements[at].to {
            Target::Point(p) => return Some(p),
            Target::Element(j) => at = j,
        }
    }
    None
}

/// Elements of a condition in upstream-first order (Kahn's algorithm; an
/// element on a loop is left out).
pub(crate) fn upstream_first(elements: &[Element], condition: usize) -> Vec<usize> {
    let members: Vec<usize> = (0..elements.len())
        .filter(|&i| elements[i].conditions[condition])
        .collect();
    let mut indeg = vec![0usize; elements.len()];
    for &i in &members {
        if let Target::Element(j) = elements[i].to {
            indeg[j] += 1;
        }
    }
    let mut ready: Vec<usize> = members.iter().copied().filter(|&i| indeg[i] == 0).collect();
    let mut out = Vec::with_capacity(members.len());
    while let Some(i) = ready.pop() {
        out.push(i);
        if let Target::Element(j) = elements[i].to {
            indeg[j] -= 1;
            if indeg[j] == 0 {
                ready.push(j);
            }
        }
    }
    out
}

/// Catchment area of an element, ac (None for other kinds).
fn own_area_ac(e: &Element) -> Option<f64> {
    match &e.kind {
        ElementKind::Catchment(c) => Some(c.area_ac),
        ElementKind::Pond(_) | ElementKind::Inflow(_) | ElementKind::Channel(_) => None,
    }
}

/// Catchment area of condition `c` over the elements `i` for which
/// `drains(i)`, ac, summed in element order.
fn area_ac(elements: &[Element], c: usize, drains: impl Fn(usize) -> bool) -> f64 {
    elements
        .iter()
        .enumerate()
        .filter(|(_, e)| e.conditions[c])
        .filter_map(|(i, e)| own_area_ac(e).filter(|_| drains(i)))
        .sum()
}

/// Sum of the `lag`s (h) from element `i` down to its point, its own
/// included, with the recession allowance of every channel passed
/// ([`Element::run_allowance_h`]): the time a run must allow after the rain
/// for that element's water to reach its point.
pub(crate) fn path_lag_h(elements: &[Element], i: usize) -> f64 {
    let mut lag = 0.0;
    walk(elements, i, |at| lag += elements[at].run_allowance_h());
    lag
}

/// The longest [`path_lag_h`] of any element, h (0 without elements).
pub(crate) fn max_path_lag_h(elements: &[Element]) -> f64 {
    (0..elements.len())
        .map(|i| path_lag_h(elements, i))
        .fold(0.0, f64::max)
}

impl Topology {
    /// The topology of a validated study.
    pub fn new(study: &Study) -> Self {
        Self::of(&study.elements, study.points.len(), study.conditions.len())
    }

    /// The topology of `elements` draining to `points` points, with
    /// `conditions` conditions (each element's `conditions` has that length).
    pub fn of(elements: &[Element], points: usize, conditions: usize) -> Self {
        let n = elements.len();
        let mut through: Vec<Vec<usize>> = Vec::with_capacity(n);
        let mut point_of = Vec::with_capacity(n);
        for i in 0..n {
            let mut path = Vec::new();
            point_of.push(walk(elements, i, |at| path.push(at)));
            through.push(path);
        }
        let conditions = (0..conditions)
            .map(|c| ConditionTopology {
                order: upstream_first(elements, c),
                area_to_element_ac: (0..n)
                    .map(|j| area_ac(elements, c, |i| through[i].contains(&j)))
                    .collect(),
                area_to_point_ac: (0..points)
                    .map(|p| area_ac(elements, c, |i| point_of[i] == Some(p)))
                    .collect(),
            })
            .collect();
        Topology {
            targets: elements.iter().map(|e| e.to).collect(),
            lag_h: elements.iter().map(|e| e.lag_h).collect(),
            path_lag_h: (0..n).map(|i| path_lag_h(elements, i)).collect(),
            through,
            point_of,
            conditions,
        }
    }

    /// Elements of condition `c`, upstream first (empty for a condition
    /// the study does not have).
    pub fn order(&self, c: usize) -> &[usize] {
        self.conditions.get(c).map_or(&[], |t| &t.order)
    }

    /// What element `i` drains to.
    pub fn target(&self, i: usize) -> Target {
        self.targets[i]
    }

    /// Element `i`'s own `lag` on the way to its target, h.
    pub fn lag_h(&self, i: usize) -> f64 {
        self.lag_h[i]
    }

    /// Number of elements of the study.
    pub fn elements(&self) -> usize {
        self.targets.len()
    }

    /// The point element `i` finally drains to.
    pub fn point_of(&self, i: usize) -> Option<usize> {
        self.point_of[i]
    }

    /// Whether element `i` drains (eventually) to point `p`.
    pub fn reaches(&self, i: usize, p: usize) -> bool {
        self.point_of[i] == Some(p)
    }

    /// Whether element `i`'s flow passes through element `j` on its way
    /// down (true for `i == j`).
    pub fn reaches_through(&self, i: usize, j: usize) -> bool {
        self.through[i].contains(&j)
    }

    /// Catchment area of condition `c` draining to point `p`, ac.
    pub fn area_to_point_ac(&self, p: usize, c: usize) -> f64 {
        self.conditions[c].area_to_point_ac[p]
    }

    /// Catchment area of condition `c` draining through element `j`, ac
    /// (its own area for a catchment).
    pub fn area_to_element_ac(&self, j: usize, c: usize) -> f64 {
        self.conditions[c].area_to_element_ac[j]
    }

    /// Sum of the `lag`s (h) from element `i` down to its point, its own
    /// included, with channels' recession allowances.
    pub fn path_lag_h(&self, i: usize) -> f64 {
        self.path_lag_h[i]
    }

    /// The longest [`Topology::path_lag_h`] of any element, h (0 without elements).
    pub fn max_path_lag_h(&self) -> f64 {
        self.path_lag_h.iter().copied().fold(0.0, f64::max)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An invented site: two conditions; "shared" belongs to both; in the
    /// proposed condition "lots" drains through two ponds in series, and
    /// "side" reaches a second point with a lag.
    const SITE: &str = r#"
title = "Topology test site"
units = "us"
step = "2 min"

[[storm]]
name = "10-yr"
pattern = "nrcs-type-ii"
depth = "4.0 in"

[[catchment]]
name = "shared"
area = "3 ac"
cn = 70
tc = "10 min"
to = "creek"

[[catchment]]
name = "meadow"
condition = "existing"
area = "9 ac"
cn = 65
tc = "20 min"
to = "creek"

[[catchment]]
name = "lots"
condition = "proposed"
area = "6 ac"
cn = 88
tc = "10 min"
to = "upper pond"
lag = "3 min"

[[catchment]]
name = "side"
condition = "proposed"
area = "2 ac"
cn = 80
tc = "10 min"
to = "ditch"
lag = "6 min"

[[pond]]
name = "upper pond"
condition = "proposed"
to = "lower pond"
stage_area = [[50.0, 4000.0], [52.0, 6000.0], [54.0, 8500.0]]
[[pond.outlet]]
kind = "orifice"
invert = 50.0
diameter = "10 in"

[[pond]]
name = "lower pond"
condition = "proposed"
to = "creek"
stage_area = [[40.0, 5000.0], [43.0, 9000.0]]
[[pond.outlet]]
kind = "orifice"
invert = 40.0
diameter = "12 in"

[[point]]
name = "creek"

[[point]]
name = "ditch"
limit = "none"
"#;

    fn site() -> Study {
        let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
        let path = dir.path().join("site.toml");
        std::fs::write(&path, SITE).unwrap_or_else(|e| panic!("{e}"));
        crate::input::scenario::load(&path).unwrap_or_else(|e| panic!("{e}"))
    }

    fn index(study: &Study, name: &str) -> usize {
        study
            .elements
            .iter()
            .position(|e| e.name == name)
            .unwrap_or_else(|| panic!("no element {name}"))
    }

    fn condition(study: &Study, name: &str) -> usize {
        study
            .conditions
            .iter()
            .position(|c| c == name)
            .unwrap_or_else(|| panic!("no condition {name}"))
    }

    fn point(study: &Study, name: &str) -> usize {
        study
            .points
            .iter()
            .position(|p| p.name == name)
            .unwrap_or_else(|| panic!("no point {name}"))
    }

    #[test]
    fn order_puts_every_element_of_a_condition_after_what_drains_into_it() {
        // runnel's network rule (scenario-format contract: upstream first), no published source
        let s = site();
        let t = Topology::new(&s);
        let (ex, pr) = (condition(&s, "existing"), condition(&s, "proposed"));
        let names = |c: usize| -> Vec<&str> {
            t.order(c)
                .iter()
                .map(|&i| s.elements[i].name.as_str())
                .collect()
        };
        let mut existing = names(ex);
        existing.sort_unstable();
        assert_eq!(existing, ["meadow", "shared"]);
        let proposed = names(pr);
        assert_eq!(proposed.len(), 5);
        let at = |n: &str| proposed.iter().position(|x| *x == n);
        assert!(at("lots") < at("upper pond"));
        assert!(at("upper pond") < at("lower pond"));
        assert!(at("shared").is_some() && at("side").is_some() && at("meadow").is_none());
        // the element in both conditions is in both orders
        assert!(t.order(ex).contains(&index(&s, "shared")));
        assert!(t.order(pr).contains(&index(&s, "shared")));
        // a condition the study does not have has no elements
        assert!(t.order(s.conditions.len()).is_empty());
    }

    #[test]
    fn areas_add_up_per_condition_at_every_element_and_point() {
        // sums of the invented areas above (6 + 3 = 9 ac to the creek when proposed)
        let s = site();
        let t = Topology::new(&s);
        let (ex, pr) = (condition(&s, "existing"), condition(&s, "proposed"));
        let (creek, ditch) = (point(&s, "creek"), point(&s, "ditch"));
        assert_eq!(t.area_to_point_ac(creek, ex), 12.0);
        assert_eq!(t.area_to_point_ac(ditch, ex), 0.0);
        assert_eq!(t.area_to_point_ac(creek, pr), 9.0);
        assert_eq!(t.area_to_point_ac(ditch, pr), 2.0);
        let (up, low) = (index(&s, "upper pond"), index(&s, "lower pond"));
        assert_eq!(t.area_to_element_ac(up, pr), 6.0);
        assert_eq!(t.area_to_element_ac(low, pr), 6.0);
        // the ponds are not in the existing condition: nothing drains through them there
        assert_eq!(t.area_to_element_ac(low, ex), 0.0);
        // a catchment's own area
        assert_eq!(t.area_to_element_ac(index(&s, "shared"), ex), 3.0);
        assert_eq!(t.area_to_element_ac(index(&s, "shared"), pr), 3.0);
    }

    #[test]
    fn reach_follows_the_targets_through_ponds_in_series() {
        // runnel's network rule (each element drains along one path to one point), no published source
        let s = site();
        let t = Topology::new(&s);
        let (creek, ditch) = (point(&s, "creek"), point(&s, "ditch"));
        let (lots, up, low, side) = (
            index(&s, "lots"),
            index(&s, "upper pond"),
            index(&s, "lower pond"),
            index(&s, "side"),
        );
        assert_eq!(t.target(lots), Target::Element(up));
        assert_eq!(t.target(up), Target::Element(low));
        assert_eq!(t.target(low), Target::Point(creek));
        assert_eq!(t.point_of(lots), Some(creek));
        assert!(t.reaches(lots, creek) && !t.reaches(lots, ditch));
        assert!(t.reaches(side, ditch) && !t.reaches(side, creek));
        assert!(t.reaches_through(lots, up) && t.reaches_through(lots, low));
        assert!(t.reaches_through(up, up));
        assert!(!t.reaches_through(low, up));
        assert!(!t.reaches_through(side, low));
    }

    #[test]
    fn path_lags_add_every_lag_down_to_the_point() {
        // invented lags above: 3 min from "lots" (the ponds have none), 6 min from "side"
        let s = site();
        let t = Topology::new(&s);
        let (lots, side) = (index(&s, "lots"), index(&s, "side"));
        assert!((t.path_lag_h(lots) - 3.0 / 60.0).abs() < 1e-12);
        assert!((t.path_lag_h(side) - 6.0 / 60.0).abs() < 1e-12);
        assert_eq!(t.path_lag_h(index(&s, "upper pond")), 0.0);
        assert_eq!(t.path_lag_h(index(&s, "shared")), 0.0);
        assert_eq!(t.max_path_lag_h(), t.path_lag_h(side));
        assert_eq!(max_path_lag_h(&s.elements), t.max_path_lag_h());
        for i in 0..s.elements.len() {
            assert_eq!(path_lag_h(&s.elements, i), t.path_lag_h(i));
        }
    }

    /// An invented site with a channel between a catchment and a pond.
    const CHANNEL_SITE: &str = r#"
title = "Topology test site with a gully"
units = "us"
step = "2 min"

[[storm]]
name = "10-yr"
pattern = "nrcs-type-ii"
depth = "4.0 in"

[[catchment]]
name = "uphill"
area = "5 ac"
cn = 75
tc = "20 min"
to = "gully"

[[catchment]]
name = "near"
area = "2 ac"
cn = 80
tc = "10 min"
to = "creek"

[[channel]]
name = "gully"
to = "basin"
k = "30 min"
x = 0.2

[[pond]]
name = "basin"
to = "creek"
stage_area = [[40.0, 5000.0], [43.0, 9000.0]]
[[pond.outlet]]
kind = "orifice"
invert = 40.0
diameter = "12 in"

[[point]]
name = "creek"
limit = "none"
"#;

    #[test]
    fn a_channel_passes_on_its_area_and_lengthens_the_run() {
        // runnel's network rule (a channel drains what reaches it along its
        // path), no published source; the 7 K allowance is ln 1000 rounded
        // up (derived: an emptying reach falls as exp(-t / (K (1 - X))))
        let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
        let path = dir.path().join("site.toml");
        std::fs::write(&path, CHANNEL_SITE).unwrap_or_else(|e| panic!("{e}"));
        let s = crate::input::scenario::load(&path).unwrap_or_else(|e| panic!("{e}"));
        let t = Topology::new(&s);
        let (up, gully, basin) = (index(&s, "uphill"), index(&s, "gully"), index(&s, "basin"));
        let creek = point(&s, "creek");
        let order = t.order(0);
        let at = |i: usize| order.iter().position(|&x| x == i);
        assert!(at(up) < at(gully) && at(gully) < at(basin));
        assert_eq!(t.area_to_element_ac(gully, 0), 5.0);
        assert_eq!(t.area_to_element_ac(basin, 0), 5.0);
        assert_eq!(t.area_to_point_ac(creek, 0), 7.0);
        assert!(t.reaches_through(up, gully) && t.reaches_through(up, basin));
        assert!(t.reaches(gully, creek));
        assert!((t.path_lag_h(up) - 7.0 * 0.5).abs() < 1e-12);
        assert!((t.path_lag_h(gully) - 7.0 * 0.5).abs() < 1e-12);
        assert_eq!(t.path_lag_h(basin), 0.0);
        assert_eq!(t.max_path_lag_h(), t.path_lag_h(up));
    }
}
