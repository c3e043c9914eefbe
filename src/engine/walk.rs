//! The one walk of a condition's network, shared by design storms
//! ([`crate::engine::network`], and so sizing) and long records
//! ([`crate::engine::records`]): every element of the condition in
//! upstream-first order, each one's outflow lagged by its `lag` into what
//! it drains to. What an element *does* with what reaches it is the
//! caller's [`ElementSim`]; how flow passes between elements is here,
//! once.

use crate::engine::network::add_lagged;
use crate::engine::topology::Topology;
use crate::model::Target;

/// What a walk asks of its caller at each element.
pub trait ElementSim {
    /// What stops the walk.
    type Error;
    /// A zeroed series of the run's length, to sum what reaches a target.
    fn zeroed(&mut self) -> Vec<f64>;
    /// Element `i`'s outflow (cfs) from its inflow (cfs; empty when
    /// nothing reaches it).
    ///
    /// # Errors
    /// Whatever stops the run at this element.
    fn simulate(&mut self, i: usize, inflow_cfs: Vec<f64>) -> Result<Vec<f64>, Self::Error>;
    /// Element `i`'s outflow back, once it has been added into its target:
    /// to keep with the element's result or to reuse. Empty when the walk
    /// moved the outflow on instead (see [`ElementSim::keeps_outflows`]).
    fn done(&mut self, i: usize, outflow_cfs: Vec<f64>);
    /// Whether [`ElementSim::done`] must have every outflow back. When not,
    /// an outflow that is the first to reach its target, unlagged and of
    /// the run's length (that of [`ElementSim::zeroed`]), becomes the
    /// target's sum as it is, without a zeroed buffer and a pass to add
    /// it: on a long record each such pass is a walk over millions of
    /// values.
    fn keeps_outflows(&self) -> bool {
        true
    }
    /// The run's length in steps (the length of [`ElementSim::zeroed`]).
    fn run_len(&self) -> usize;
}

/// Walks condition `c` of `topology` at `step_h`, and returns the flow
/// (cfs) arriving at each of the study's `points` points (an empty series
/// where nothing arrives).
///
/// # Errors
/// The first error of [`ElementSim::simulate`].
pub fn walk<S: ElementSim>(
    topology: &Topology,
    c: usize,
    points: usize,
    step_h: f64,
    sim: &mut S,
) -> Result<Vec<Vec<f64>>, S::Error> {
    let mut inputs: Vec<Vec<f64>> = vec![Vec::new(); topology.elements()];
    let mut arriving: Vec<Vec<f64>> = vec![Vec::new(); points];
    for &i in topology.order(c) {
        let out = sim.simulate(i, std::mem::take(&mut inputs[i]))?;
        let target = match topology.target(i) {
            Target::Point(p) => arriving.get_mut(p),
            Target::Element(j) => inputs.get_mut(j),
        };
        let Some(target) = target else {
            sim.done(i, out);
            continue;
        };
        let lag_h = topology.lag_h(i);
        if target.is_empty() && lag_h == 0.0 && !sim.keeps_outflows() && out.len() == sim.run_len()
        {
            *target = out;
            sim.done(i, Vec::new());
            continue;
        }
        if target.is_empty() {
            *target = sim.zeroed();
        }
        add_lagged(target, &out, lag_h, step_h);
        sim.done(i, out);
    }
    Ok(arriving)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::topology::Topology;
    use crate::model::{Element, ElementKind, Inflow, Target};

    /// Elements of one condition draining to `to`, with lags (h).
    fn topology(links: &[(Target, f64)], points: usize) -> Topology {
        let elements: Vec<Element> = links
            .iter()
            .enumerate()
            .map(|(i, &(to, lag_h))| Element {
                name: format!("e{i}"),
                conditions: vec![true],
                to,
                lag_h,
                kind: ElementKind::Inflow(Inflow {
                    table: Vec::new(),
                    storm: None,
                    file: None,
                }),
            })
            .collect();
        Topology::of(&elements, points, 1)
    }

    /// A recording simulator: every element puts out `1 + index` cfs on
    /// every step plus what reaches it.
    struct Adder {
        len: usize,
        seen: Vec<usize>,
        returned: Vec<usize>,
        /// Elements whose outflow came back empty (moved on).
        moved: Vec<usize>,
        keeps: bool,
    }

    impl Adder {
        fn new(len: usize, keeps: bool) -> Self {
            Adder {
                len,
                seen: Vec::new(),
                returned: Vec::new(),
                moved: Vec::new(),
                keeps,
            }
        }
    }

    impl ElementSim for Adder {
        type Error = ();
        fn zeroed(&mut self) -> Vec<f64> {
            vec![0.0; self.len]
        }
        fn run_len(&self) -> usize {
            self.len
        }
        fn simulate(&mut self, i: usize, inflow: Vec<f64>) -> Result<Vec<f64>, ()> {
            self.seen.push(i);
            let mut out = vec![1.0 + i as f64; self.len];
            for (o, q) in out.iter_mut().zip(&inflow) {
                *o += q;
            }
            Ok(out)
        }
        fn done(&mut self, i: usize, out: Vec<f64>) {
            self.returned.push(i);
            if out.is_empty() {
                self.moved.push(i);
            }
        }
        fn keeps_outflows(&self) -> bool {
            self.keeps
        }
    }

    #[test]
    fn flow_passes_down_in_order_and_lagged() {
        // 0 -> 1 -> point 0; 2 -> point 0 with a one-step lag; nothing to point 1.
        let t = topology(
            &[
                (Target::Element(1), 0.0),
                (Target::Point(0), 0.0),
                (Target::Point(0), 1.0),
            ],
            2,
        );
        let mut sim = Adder::new(4, true);
        let at = walk(&t, 0, 2, 1.0, &mut sim).unwrap();
        // 0 before 1; every element handed back once.
        let pos = |i| sim.seen.iter().position(|&x| x == i).unwrap();
        assert!(pos(0) < pos(1));
        assert_eq!(sim.returned.len(), 3);
        // Point 0: element 1 (2 + 1 from element 0) plus element 2 (3) one step late.
        assert_eq!(at[0], vec![3.0, 6.0, 6.0, 6.0]);
        assert!(at[1].is_empty());
    }

    #[test]
    fn moving_outflows_on_changes_no_sum() {
        // 0 -> point 0 unlagged (moved: first in); 1 -> point 0 unlagged
        // (added: second in); 2 -> 3 lagged (added into zeros); 3 -> point 1.
        let t = topology(
            &[
                (Target::Point(0), 0.0),
                (Target::Point(0), 0.0),
                (Target::Element(3), 0.5),
                (Target::Point(1), 0.0),
            ],
            2,
        );
        let mut keeps = Adder::new(5, true);
        let mut moves = Adder::new(5, false);
        let kept = walk(&t, 0, 2, 1.0, &mut keeps).unwrap();
        let moved = walk(&t, 0, 2, 1.0, &mut moves).unwrap();
        assert_eq!(kept, moved);
        assert_eq!(moved[0], vec![3.0; 5]);
        assert_eq!(moved[1], vec![5.5, 7.0, 7.0, 7.0, 7.0]);
        assert!(keeps.moved.is_empty());
        let mut firsts = moves.moved.clone();
        firsts.sort_unstable();
        // The first unlagged series into each point; never the lagged one.
        assert_eq!(firsts.len(), 2);
        assert!(!firsts.contains(&2));
        assert_eq!(moves.returned.len(), 4);
    }

    #[test]
    fn an_error_stops_the_walk() {
        struct Fails;
        impl ElementSim for Fails {
            type Error = usize;
            fn zeroed(&mut self) -> Vec<f64> {
                vec![0.0; 2]
            }
            fn run_len(&self) -> usize {
                2
            }
            fn simulate(&mut self, i: usize, _: Vec<f64>) -> Result<Vec<f64>, usize> {
                Err(i)
            }
            fn done(&mut self, _: usize, _: Vec<f64>) {
                panic!("nothing is done after an error");
            }
        }
        let t = topology(&[(Target::Point(0), 0.0)], 1);
        assert_eq!(walk(&t, 0, 1, 1.0, &mut Fails), Err(0));
    }
}
