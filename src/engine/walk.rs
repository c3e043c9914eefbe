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
    /// to keep with the element's result or to reuse.
    fn done(&mut self, i: usize, outflow_cfs: Vec<f64>);
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
        if let Some(target) = target {
            if target.is_empty() {
                *target = sim.zeroed();
            }
            add_lagged(target, &out, topology.lag_h(i), step_h);
        }
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
    }

    impl ElementSim for Adder {
        type Error = ();
        fn zeroed(&mut self) -> Vec<f64> {
            vec![0.0; self.len]
        }
        fn simulate(&mut self, i: usize, inflow: Vec<f64>) -> Result<Vec<f64>, ()> {
            self.seen.push(i);
            let mut out = vec![1.0 + i as f64; self.len];
            for (o, q) in out.iter_mut().zip(&inflow) {
                *o += q;
            }
            Ok(out)
        }
        fn done(&mut self, i: usize, _out: Vec<f64>) {
            self.returned.push(i);
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
        let mut sim = Adder {
            len: 4,
            seen: Vec::new(),
            returned: Vec::new(),
        };
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
    fn an_error_stops_the_walk() {
        struct Fails;
        impl ElementSim for Fails {
            type Error = usize;
            fn zeroed(&mut self) -> Vec<f64> {
                vec![0.0; 2]
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
