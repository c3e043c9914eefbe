//! The published checks: one list of cases (source, quantity, published value, tolerance,
//! and the function that computes runnel's value), which `runnel validate` reports and the
//! test suite asserts, so the two cannot drift apart. The method modules' own tests of these
//! tables iterate the same list ([`group`]).
//!
//! A case's `source` says where the published value comes from, with `(transcribed)` where
//! the reference file says the table was transcribed, and `from memory` where it was.

pub mod cases;
pub mod hydraulics_cases;
pub mod report;
pub mod routing_cases;
pub mod timing_cases;

/// One published value and how runnel computes it.
pub struct Case {
    /// The group of cases it belongs to (one published table or example).
    pub group: &'static str,
    /// Where the published value is printed.
    pub source: &'static str,
    /// What is compared, with its inputs.
    pub quantity: String,
    /// Unit of the value ("" for a number).
    pub unit: &'static str,
    /// The published value.
    pub published: f64,
    /// Largest difference accepted (the table's rounding, or as stated).
    pub tolerance: f64,
    /// Computes runnel's value.
    pub compute: Box<dyn Fn() -> f64 + Send + Sync>,
}

/// A case checked: runnel's value, the difference and the verdict.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// Runnel's value.
    pub value: f64,
    /// Runnel's value less the published one.
    pub difference: f64,
    /// Whether the difference is within the tolerance.
    pub pass: bool,
}

impl Case {
    /// Computes runnel's value and compares it with the published one.
    pub fn check(&self) -> Outcome {
        let value = (self.compute)();
        let difference = value - self.published;
        Outcome {
            value,
            difference,
            pass: difference.is_finite() && difference.abs() <= self.tolerance * (1.0 + 1e-12),
        }
    }
}

/// The cases of one group.
pub fn group(name: &str) -> Vec<Case> {
    cases::all()
        .into_iter()
        .filter(|c| c.group == name)
        .collect()
}

/// Asserts every case of a group (for the method modules' tests).
///
/// # Panics
/// When a case is off, naming it and its source.
pub fn assert_group(name: &str) {
    let cases = group(name);
    assert!(!cases.is_empty(), "no published cases in group {name}");
    assert_cases(&cases);
}

/// Asserts each case.
///
/// # Panics
/// When a case is off, naming it and its source.
pub fn assert_cases(cases: &[Case]) {
    for c in cases {
        let o = c.check();
        assert!(
            o.pass,
            "{} ({}): runnel {} against published {} (tolerance {})",
            c.quantity, c.source, o.value, c.published, c.tolerance
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_published_case_passes() {
        // Each case names its published source (see `cases.rs`).
        let all = cases::all();
        assert!(all.len() > 150, "{} cases", all.len());
        assert_cases(&all);
    }

    /// The number of cases of each group when it was last counted: a group may grow, never
    /// shrink or vanish without this table changing with it.
    const AT_LEAST: [(&str, usize); 31] = [
        ("tr55-table-2-1", 35),
        ("tr55-table-4-1", 5),
        ("hawkins-2002", 5),
        ("chow-amc", 2),
        ("tr55-table-2-2", 21),
        ("tr55-table-3-1", 10),
        ("tr55-appendix-f", 2),
        ("tr55-table-4-2", 5),
        ("neh630-table-16-5", 7),
        ("b17b-frequency-factors", 72),
        ("chow-table-14-4-1", 92),
        ("tr55-example-3-1", 6),
        ("tr55-eq-3-3", 1),
        ("bedient-example-2-6", 1),
        ("neh630-table-15-3", 13),
        ("tr55-table-f-1", 4),
        ("neh630-table-16-1", 1),
        ("tr55-table-f-2", 20),
        ("tr55-ch6-runoff-volume", 2),
        ("hds5-inlet-control", 4),
        ("hds5-outlet-control", 1),
        ("hds5-entrance-loss", 9),
        ("villemonte-1947", 8),
        ("usbr-contracted-weir", 4),
        ("mcenroe-1988-riser", 5),
        ("hb07-table-4-20", 4),
        ("bhv-problem-3-12", 3),
        ("usbr-v-notch", 181),
        ("hb07-table-4-21", 19),
        ("ponce-muskingum", 5),
        ("bhv-example-4-3", 22),
    ];

    #[test]
    fn no_published_case_disappears_silently() {
        let all = cases::all();
        let mut total = 0;
        for (name, n) in AT_LEAST {
            let have = all.iter().filter(|c| c.group == name).count();
            assert!(
                have >= n,
                "group {name}: {have} cases, at least {n} expected"
            );
            total += n;
        }
        assert!(
            all.len() >= total,
            "{} cases, at least {total} expected",
            all.len()
        );
        assert!(
            all.len() >= 560,
            "{} cases, at least 560 expected",
            all.len()
        );
    }

    #[test]
    fn every_case_names_its_source_and_a_positive_tolerance() {
        for c in cases::all() {
            assert!(!c.source.trim().is_empty() && !c.quantity.trim().is_empty());
            assert!(
                c.tolerance >= 0.0 && c.tolerance.is_finite(),
                "{}",
                c.quantity
            );
            assert!(c.published.is_finite(), "{}", c.quantity);
        }
    }

    #[test]
    fn a_case_off_by_more_than_its_tolerance_fails() {
        let c = Case {
            group: "test",
            source: "common practice, no published source",
            quantity: "a constant".into(),
            unit: "",
            published: 1.0,
            tolerance: 0.01,
            compute: Box::new(|| 1.02),
        };
        assert!(!c.check().pass);
        let nan = Case {
            compute: Box::new(|| f64::NAN),
            ..c
        };
        assert!(!nan.check().pass);
    }
}
