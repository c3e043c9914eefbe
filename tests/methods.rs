//! Checks of the published methods through the library's own pipeline
//! (rainfall pattern -> CN excess -> unit hydrograph -> convolution).

use runnel::methods::graphical_peak::{self, StormType};
use runnel::methods::rainfall::NrcsType;
use runnel::methods::runoff;
use runnel::methods::unit_hydrograph::{self, Shape};

/// Hydrograph (cfs) of one catchment in a Type II storm, with its step (h)
/// by the contract rule.
fn hydrograph(area_ac: f64, cn: f64, tc_h: f64, depth_in: f64) -> (Vec<f64>, f64) {
    let step_h = runnel::input::scenario::default_step_h(tc_h);
    let n = ((24.0 + 10.0 * tc_h + 2.0) / step_h).ceil() as usize;
    let rain = runnel::methods::rainfall::hyetograph(
        &NrcsType::II.mass_curve(),
        depth_in,
        24.0,
        step_h,
        n,
    );
    let excess = runoff::excess_per_step_in(&rain, runoff::retention_in(cn), 0.2);
    let tp = unit_hydrograph::time_to_peak_h(step_h, 0.6 * tc_h);
    let uh = unit_hydrograph::ordinates_cfs_per_in(Shape::Standard, area_ac, tp, step_h);
    (unit_hydrograph::convolve(&excess, &uh, n + 1), step_h)
}

/// Hydrograph peak (cfs) of one catchment in a Type II storm.
fn hydrograph_peak(area_ac: f64, cn: f64, tc_h: f64, depth_in: f64) -> f64 {
    hydrograph(area_ac, cn, tc_h, depth_in)
        .0
        .iter()
        .copied()
        .fold(0.0, f64::max)
}

#[test]
fn type_ii_hydrograph_peaks_lie_within_20_percent_of_the_tr55_graphical_method() {
    // TR-55 (1986) chapter 4, eq. 4-1 with Table F-1 coefficients (transcribed), Fp = 1,
    // against the NRCS unit hydrograph (NEH 630 ch.16 Table 16-1, transcribed) on the
    // Type II pattern (Chow, Maidment & Mays 1988 Table 14.4.1, transcribed).
    let mut worst: f64 = 0.0;
    let mut cases = 0;
    for &area in &[5.0, 40.0, 160.0, 640.0] {
        for &cn in &[70.0, 75.0, 80.0, 85.0, 90.0] {
            for &tc in &[0.1, 0.25, 0.5, 1.0, 2.0] {
                for &p in &[3.0, 4.0, 5.0, 6.0, 8.0] {
                    let s = runoff::retention_in(cn);
                    let ia_p = 0.2 * s / p;
                    if !(0.1..=0.5).contains(&ia_p) {
                        continue;
                    }
                    let q = runoff::runoff_depth_in(p, s, 0.2);
                    let qu = graphical_peak::unit_peak_csm_per_in(StormType::II, ia_p, tc);
                    let g = graphical_peak::peak_cfs(qu.qu_csm_per_in, area / 640.0, q, 1.0);
                    let h = hydrograph_peak(area, cn, tc, p);
                    let rel = (h - g).abs() / g;
                    worst = worst.max(rel);
                    cases += 1;
                    assert!(
                        rel <= 0.20,
                        "A={area} CN={cn} Tc={tc} P={p}: hydrograph {h:.2} vs graphical {g:.2} ({:.1} %)",
                        rel * 100.0
                    );
                }
            }
        }
    }
    assert!(cases > 150, "{cases}");
    eprintln!(
        "worst relative difference {:.1} % over {cases} cases",
        worst * 100.0
    );
}

#[test]
fn hydrograph_volume_equals_runoff_depth_over_the_area() {
    // TR-55 (1986) eq. 2-1 and NEH 630 ch.16: the unit hydrograph holds 1 in over the area.
    for &(area, cn, tc, p) in &[
        (5.0, 98.0, 0.1, 2.0),
        (80.0, 72.0, 0.6, 5.5),
        (640.0, 61.0, 1.8, 8.0),
    ] {
        let (q, step_h) = hydrograph(area, cn, tc, p);
        let vol = runnel::engine::network::volume_ft3(&q, step_h);
        let want =
            runoff::runoff_depth_in(p, runoff::retention_in(cn), 0.2) / 12.0 * area * 43_560.0;
        assert!((vol - want).abs() <= 0.005 * want, "{vol} vs {want}");
    }
}
