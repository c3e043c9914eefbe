//! Throughput benchmarks (`cargo bench`): the demo study, routing, gauge
//! parsing, sizing and a whole `runnel run` with its plots.

use std::path::{Path, PathBuf};

fn main() {
    divan::main();
}

fn example() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/wrenfield-commons.toml")
}

/// The demo study: 4 storms x 2 conditions, every series (no files written).
#[divan::bench(sample_count = 20)]
fn demo_study_compute(b: divan::Bencher) {
    let study = runnel::input::scenario::load(&example()).unwrap_or_else(|e| panic!("{e}"));
    b.bench_local(|| runnel::engine::analysis::analyse(divan::black_box(&study)));
}

/// The whole `runnel run` of the demo, PNGs and all, into a temporary folder.
#[divan::bench(sample_count = 5)]
fn demo_run_with_plots(b: divan::Bencher) {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("demo");
    b.bench_local(|| runnel::cli::run(&example(), Some(&out), false).map(|o| o.failed));
}

/// Storage-indication routing of 10 million steps through a 1000-row table.
#[divan::bench(sample_count = 5)]
fn route_10_million_steps(b: divan::Bencher) {
    let storage = runnel::methods::pond::StageStorage::from_stage_area(&[
        (100.0, 5000.0),
        (105.0, 15000.0),
        (110.0, 30000.0),
    ])
    .unwrap_or_else(|e| panic!("{e}"));
    let outlets = [
        runnel::methods::hydraulics::Outlet::CircularOrifice {
            invert_ft: 100.0,
            diameter_ft: 0.5,
            cd: 0.61,
        },
        runnel::methods::hydraulics::Outlet::SharpCrestedWeir {
            crest_ft: 103.0,
            length_ft: 4.0,
            coefficient: 3.33,
            contractions: 0,
        },
    ];
    let table =
        runnel::methods::pond::PondTable::build(&storage, &outlets, None, 300.0, 0.01, 250_000.0)
            .unwrap_or_else(|e| panic!("{e}"));
    let n: usize = 10_000_000;
    let inflow: Vec<f64> = (0..n)
        .map(|k| 20.0 * ((k as f64 / 5000.0).sin().max(0.0)).powi(4))
        .collect();
    let mut out = runnel::methods::pond::Routed::default();
    b.counter(divan::counter::ItemsCount::new(n))
        .bench_local(|| {
            runnel::methods::pond::route_into(&table, divan::black_box(&inflow), 100.0, &mut out)
        });
}

/// Parsing a dense 5-minute gauge CSV of 10.5 million rows (100 years).
#[divan::bench(sample_count = 3)]
fn parse_gauge_10_5_million_rows(b: divan::Bencher) {
    let mut text = String::from("time,depth\n");
    let n = 10_500_000usize;
    let start =
        runnel::util::calendar::day_number(1925, 1, 1).unwrap_or_else(|| panic!("a date")) * 86_400;
    for k in 1..=n {
        let t = start + k as i64 * 300;
        let d = if k % 97 < 5 { "0.02" } else { "0" };
        text.push_str(&runnel::util::calendar::format_timestamp(t)[..16].replace('T', " "));
        text.push(',');
        text.push_str(d);
        text.push('\n');
    }
    let opts = runnel::input::gauge::GaugeOptions {
        interval_s: None,
        missing_zero: false,
        max_intervals: 50_000_000,
    };
    b.counter(divan::counter::ItemsCount::new(n))
        .bench_local(|| {
            runnel::input::gauge::parse_gauge(divan::black_box(text.as_bytes()), &opts)
                .map(|s| s.depth.len())
        });
}

/// Sizing two outlet dimensions over four storms.
#[divan::bench(sample_count = 5)]
fn size_two_dimensions_four_storms(b: divan::Bencher) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/sizing-two-dims.toml");
    let study = runnel::input::scenario::load(&path).unwrap_or_else(|e| panic!("{e}"));
    b.bench_local(|| {
        let mut s = study.clone();
        runnel::engine::sizing::solve(&mut s).map(|z| z.outputs.len())
    });
}

/// A flow-duration table and curve (69 exceedance fractions) of a
/// 10.5-million-interval series shaped like a record's flows: storms every
/// 4 days with recessions, dry in between (invented).
#[divan::bench(sample_count = 10)]
fn flow_duration_10_5_million(b: divan::Bencher) {
    let n = 10_519_200;
    let flows: Vec<f64> = (0..n)
        .map(|k| {
            let phase = k % 3456;
            if phase < 1152 {
                let peak = 1.0 + ((k / 3456) % 17) as f64;
                peak * (-(phase as f64) / 90.0).exp()
            } else {
                0.0
            }
        })
        .collect();
    let fractions: Vec<f64> = (0..69)
        .map(|k| 10f64.powf(-4.0 + 4.0 * k as f64 / 68.0))
        .collect();
    b.bench_local(|| runnel::methods::stats::flow_duration(divan::black_box(&flows), &fractions));
}

/// Invented 5-minute rain for 100 years: a 3-hour storm every 4 days.
fn record_rain() -> Vec<f64> {
    (0..10_519_200usize)
        .map(|k| {
            if (k / 1152) % 3 == 0 && k % 1152 < 36 {
                0.002 + ((k * 7919) % 37) as f64 / 1000.0
            } else {
                0.0
            }
        })
        .collect()
}

/// Events split by 6 h of dry 5-minute intervals, no antecedent adjustment.
fn six_hour_events() -> runnel::methods::moisture::EventOptions {
    runnel::methods::moisture::EventOptions {
        dry_gap_steps: 72,
        antecedent: None,
    }
}

/// Event curve-number excess over 10.5 million 5-minute intervals (the
/// long record's excess stage alone).
#[divan::bench(sample_count = 10)]
fn event_excess_10_5_million(b: divan::Bencher) {
    let rain = record_rain();
    let opts = six_hour_events();
    let mut out = vec![0.0; rain.len()];
    b.bench_local(|| {
        runnel::methods::moisture::event_excess_into(
            divan::black_box(&rain),
            5.0 / 60.0,
            92.0,
            runnel::methods::runoff::Lambda::Standard,
            &opts,
            &|_| 6,
            &mut out,
        )
    });
}

/// Unit-hydrograph convolution of that excess (the convolution stage
/// alone): 8 acres, Tc 15 min, 5-minute step.
#[divan::bench(sample_count = 10)]
fn convolution_10_5_million(b: divan::Bencher) {
    let rain = record_rain();
    let opts = six_hour_events();
    let excess = runnel::methods::moisture::event_excess_in(
        &rain,
        5.0 / 60.0,
        92.0,
        runnel::methods::runoff::Lambda::Standard,
        &opts,
        &|_| 6,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let step_h = 5.0 / 60.0;
    let tp = runnel::methods::unit_hydrograph::time_to_peak_h(
        step_h,
        runnel::methods::timing::lag_h(0.25),
    );
    let uh = runnel::methods::unit_hydrograph::ordinates_cfs_per_in(
        runnel::methods::unit_hydrograph::Shape::Standard,
        8.0,
        tp,
        step_h,
    );
    let mut q = vec![0.0; excess.len() + 1];
    b.bench_local(|| {
        q.fill(0.0);
        runnel::methods::unit_hydrograph::convolve_into(divan::black_box(&excess), &uh, &mut q);
    });
}
