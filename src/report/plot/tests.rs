//! Tests of the figures (PNG size, colours, empty and odd input) and of the helpers they
//! share.

use super::axes::*;
use super::draw::*;
use super::record::*;
use super::style::*;
use super::*;
use super::{pond::*, storm::*};
use crate::util::calendar;
use plotters::prelude::*;

const PNG_SIGNATURE: [u8; 8] = [0x89, b'P', b'N', b'G', 0x0D, 0x0A, 0x1A, 0x0A];

/// Checks the PNG signature, decodes the image and checks its size; returns the RGB bytes.
fn decoded(png: &[u8]) -> Vec<u8> {
    assert_eq!(png.get(..8), Some(&PNG_SIGNATURE[..]), "PNG signature");
    let img = image::load_from_memory_with_format(png, image::ImageFormat::Png)
        .expect("the bytes decode as PNG")
        .into_rgb8();
    assert!(
        img.width() >= 1600 && img.height() >= 1000,
        "{}x{}",
        img.width(),
        img.height()
    );
    img.into_raw()
}

/// Checks the PNG signature and the size in the header (IHDR) without decoding.
fn header_ok(png: &[u8]) {
    assert_eq!(png.get(..8), Some(&PNG_SIGNATURE[..]), "PNG signature");
    assert_eq!(png.get(12..16), Some(&b"IHDR"[..]), "IHDR first");
    let be = |r: std::ops::Range<usize>| {
        png.get(r)
            .and_then(|b| <[u8; 4]>::try_from(b).ok())
            .map_or(0, u32::from_be_bytes)
    };
    assert!(
        be(16..20) >= 1600 && be(20..24) >= 1000,
        "{}x{}",
        be(16..20),
        be(20..24)
    );
}

/// Checks that a drawn (not encoded) figure has its full size and something on it.
fn drawn(c: &Canvas) {
    assert_eq!(c.rgb.len(), WIDTH_PX as usize * HEIGHT_PX as usize * 3);
    assert!(c.rgb.iter().any(|&b| b < 128), "nothing dark was drawn");
}

/// Whether each colour appears exactly in two 32-pixel-wide vertical strips of the image
/// (at a third and at half of its width). A line across the plot, solid or dashed, crosses
/// both strips; scanning only the strips keeps the test fast in debug builds.
fn colours_present(rgb: &[u8], colours: &[RGBColor]) -> Vec<bool> {
    let w = WIDTH_PX as usize;
    let mut seen = vec![false; colours.len()];
    for row in rgb.chunks_exact(w * 3) {
        for x0 in [w / 3, w / 2] {
            for px in row
                .get(x0 * 3..(x0 + 32) * 3)
                .unwrap_or(&[])
                .chunks_exact(3)
            {
                for (s, c) in seen.iter_mut().zip(colours) {
                    *s |= px == [c.0, c.1, c.2];
                }
            }
        }
    }
    seen
}

/// Invented demo data: a smooth single-peaked hydrograph.
fn bump(n: usize, peak_at: usize, height: f64) -> Vec<f64> {
    (0..n)
        .map(|k| {
            let x = (k as f64 - peak_at as f64) / 12.0;
            height * (-x * x).exp()
        })
        .collect()
}

fn storm(hydrographs: Vec<Series>, rain: Vec<f64>) -> StormPointPlot {
    StormPointPlot {
        title: "Outfall to Tansy Creek - 10-yr storm".to_string(),
        subtitle: "Orchard Row (demo) - 24-h storm, 5.1 in".to_string(),
        step_h: 0.1,
        rain,
        rain_unit: "in".to_string(),
        flow_unit: "cfs".to_string(),
        hydrographs,
        limit: Some(("allowed (existing peak)".to_string(), 12.0)),
        window_h: None,
    }
}

fn series(label: &str, values: Vec<f64>) -> Series {
    Series {
        label: label.to_string(),
        values,
    }
}

fn pond(inflow: Vec<f64>, outflow: Vec<f64>, stage: Vec<f64>, peak_stage: f64) -> PondPlot {
    PondPlot {
        title: "Basin B - 10-yr storm".to_string(),
        subtitle: "Orchard Row (demo)".to_string(),
        step_h: 0.1,
        flow_unit: "cfs".to_string(),
        stage_unit: "ft".to_string(),
        inflow,
        outflow,
        stage,
        peak_stage,
        references: vec![
            ("orifice invert".to_string(), 50.0),
            ("weir crest".to_string(), 52.5),
            ("top of embankment".to_string(), 54.0),
        ],
        window_h: None,
    }
}

#[test]
fn storm_plot_is_a_png_of_at_least_1600_by_1000_with_every_condition_in_its_colour() {
    let p = storm(
        vec![
            series("existing", bump(120, 40, 12.0)),
            series("proposed", bump(120, 35, 18.0)),
        ],
        bump(60, 30, 0.4),
    );
    let rgb = decoded(&storm_point_png(&p).expect("storm plot"));
    // Both conditions' lines, the rain bars and the limit line, each in its own colour.
    let seen = colours_present(&rgb, &[colour_of(0), colour_of(1), RAIN_FILL, LIMIT]);
    assert_eq!(seen, [true; 4]);
}

#[test]
fn title_band_has_rendered_text() {
    let p = storm(vec![series("existing", bump(50, 20, 3.0))], vec![0.1; 20]);
    let c = draw_storm_point(&p, Target::Png)
        .expect("storm plot")
        .canvas();
    let dark = c
        .rgb
        .chunks_exact(3)
        .enumerate()
        .filter(|(i, px)| {
            let (x, y) = (*i as u32 % WIDTH_PX, *i as u32 / WIDTH_PX);
            y < TITLE_BAND_PX && x < WIDTH_PX / 2 && px.iter().all(|&b| b < 128)
        })
        .count();
    // A title of ~35 glyphs at 34 px leaves thousands of dark pixels; a missing font none.
    assert!(dark > 500, "only {dark} dark pixels in the title band");
}

#[test]
fn pond_plot_is_a_png_of_at_least_1600_by_1000_with_stage_and_reference_lines() {
    let inflow = bump(150, 50, 30.0);
    let outflow = bump(150, 65, 8.0);
    let stage: Vec<f64> = outflow.iter().map(|q| 50.0 + 3.6 * (q / 8.0)).collect();
    let rgb = decoded(&pond_png(&pond(inflow, outflow, stage, 53.6)).expect("pond plot"));
    // inflow, outflow, stage, reference lines
    let seen = colours_present(&rgb, &[colour_of(0), colour_of(1), colour_of(2), REFERENCE]);
    assert_eq!(seen, [true; 4]);
}

#[test]
fn flow_duration_plot_is_a_png_of_at_least_1600_by_1000() {
    let curve: Vec<(f64, f64)> = (1..=200)
        .map(|i| {
            let f = f64::from(i) / 201.0;
            (f, 0.4 * f.powf(-0.8))
        })
        .collect();
    let p = DurationPlot {
        title: "Flow duration, demo record".to_string(),
        flow_unit: "m³/s".to_string(),
        curves: vec![("existing".to_string(), curve)],
        control: None,
    };
    let rgb = decoded(&flow_duration_png(&p).expect("duration plot"));
    assert_eq!(colours_present(&rgb, &[colour_of(0)]), [true]);
}

#[test]
fn frequency_plot_is_a_png_of_at_least_1600_by_1000() {
    let observed: Vec<(f64, f64)> = (1..=20)
        .map(|m| (21.0 / f64::from(m), 5.0 + f64::from(21 - m)))
        .collect();
    let fitted: Vec<(f64, f64)> = [1.01, 2.0, 10.0, 100.0, 500.0]
        .iter()
        .map(|&t: &f64| (t, 6.0 + 4.0 * t.ln()))
        .collect();
    let p = FrequencyPlot {
        title: "Annual peaks, demo record".to_string(),
        flow_unit: "cfs".to_string(),
        observed: vec![("existing".to_string(), observed)],
        fitted: vec![("existing".to_string(), fitted)],
    };
    let rgb = decoded(&frequency_png(&p).expect("frequency plot"));
    assert_eq!(colours_present(&rgb, &[colour_of(0)]), [true]);
}

#[test]
fn overview_plot_is_a_png_of_at_least_1600_by_1000() {
    let days: Vec<f64> = (0..800).map(|d| f64::from(d % 37) * 0.5).collect();
    let p = OverviewPlot {
        title: "Daily highest flow, demo record".to_string(),
        flow_unit: "cfs".to_string(),
        day_labels_start: (2003, 10, 1),
        daily_max: vec![
            ("existing".to_string(), days.clone()),
            (
                "proposed".to_string(),
                days.iter().map(|q| q * 0.7).collect(),
            ),
        ],
    };
    let rgb = decoded(&overview_png(&p).expect("overview plot"));
    assert_eq!(
        colours_present(&rgb, &[colour_of(0), colour_of(1)]),
        [true, true]
    );
}

#[test]
fn empty_storm_and_empty_hydrograph_give_a_plot_not_an_error() {
    header_ok(&storm_point_png(&storm(Vec::new(), Vec::new())).expect("empty storm"));
    let s = storm(vec![series("existing", Vec::new())], Vec::new());
    header_ok(&storm_point_png(&s).expect("empty hydrograph"));
}

#[test]
fn empty_pond_gives_a_plot_not_an_error() {
    let mut p = pond(Vec::new(), Vec::new(), Vec::new(), f64::NAN);
    p.references.clear();
    header_ok(&pond_png(&p).expect("empty pond"));
}

#[test]
fn empty_duration_curves_give_a_plot_not_an_error() {
    let d = DurationPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        curves: vec![("existing".to_string(), Vec::new())],
        control: None,
    };
    header_ok(&flow_duration_png(&d).expect("empty duration"));
}

#[test]
fn empty_frequency_data_give_a_plot_not_an_error() {
    let f = FrequencyPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        observed: Vec::new(),
        fitted: Vec::new(),
    };
    header_ok(&frequency_png(&f).expect("empty frequency"));
}

#[test]
fn empty_record_gives_an_overview_not_an_error() {
    let o = OverviewPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        day_labels_start: (2000, 2, 29),
        daily_max: Vec::new(),
    };
    header_ok(&overview_png(&o).expect("empty overview"));
}

#[test]
fn all_zero_storm_and_pond_flows_give_a_plot_not_an_error() {
    let mut s = storm(vec![series("existing", vec![0.0; 100])], vec![0.0; 50]);
    s.limit = None;
    header_ok(&storm_point_png(&s).expect("zero storm"));
    let p = pond(vec![0.0; 80], vec![0.0; 80], vec![50.0; 80], 50.0);
    header_ok(&pond_png(&p).expect("zero pond"));
}

#[test]
fn all_zero_duration_and_record_flows_give_a_plot_not_an_error() {
    let d = DurationPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        curves: vec![("existing".to_string(), vec![(0.5, 0.0), (1.0, 0.0)])],
        control: None,
    };
    header_ok(&flow_duration_png(&d).expect("zero duration"));
    let o = OverviewPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        day_labels_start: (2010, 1, 1),
        daily_max: vec![("existing".to_string(), vec![0.0; 400])],
    };
    header_ok(&overview_png(&o).expect("zero overview"));
}

#[test]
fn storm_with_single_nan_and_huge_values_is_drawn_without_error() {
    let s = storm(
        vec![
            series("one value", vec![3.0]),
            series(
                "with gaps",
                vec![0.0, 1.0, f64::NAN, 4.0, f64::INFINITY, 2.0],
            ),
            series("huge", vec![0.0, 1e300, 0.0]),
        ],
        vec![f64::NAN, -1.0, 0.2, 1e300],
    );
    drawn(
        &draw_storm_point(&s, Target::Png)
            .expect("storm with odd values")
            .canvas(),
    );
    let s = storm(
        vec![series("largest float", vec![0.0, f64::MAX])],
        Vec::new(),
    );
    drawn(
        &draw_storm_point(&s, Target::Png)
            .expect("storm at f64::MAX")
            .canvas(),
    );
}

#[test]
fn pond_duration_and_frequency_with_nan_and_huge_values_are_drawn_without_error() {
    let p = pond(
        vec![f64::NAN, 2.0],
        vec![1e12],
        vec![50.0, f64::NAN, 51.0],
        f64::NAN,
    );
    drawn(
        &draw_pond(&p, Target::Png)
            .expect("pond with odd values")
            .canvas(),
    );
    let d = DurationPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        control: None,
        curves: vec![(
            "odd".to_string(),
            vec![(0.0, 5.0), (f64::NAN, 1.0), (0.3, 1e200), (1.5, 1e-200)],
        )],
    };
    drawn(
        &draw_flow_duration(&d, Target::Png)
            .expect("duration with odd values")
            .canvas(),
    );
    let f = FrequencyPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        observed: vec![(
            "a".to_string(),
            vec![(-2.0, 1.0), (0.0, 2.0), (f64::NAN, 3.0), (5.0, 1e15)],
        )],
        fitted: vec![("a".to_string(), vec![(1e9, 4.0)])],
    };
    drawn(
        &draw_frequency(&f, Target::Png)
            .expect("frequency with odd values")
            .canvas(),
    );
    let d = DurationPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        control: None,
        curves: vec![(
            "max".to_string(),
            vec![(1e-300, f64::MAX), (1.0, f64::MIN_POSITIVE)],
        )],
    };
    drawn(
        &draw_flow_duration(&d, Target::Png)
            .expect("duration at the float limits")
            .canvas(),
    );
    let f = FrequencyPlot {
        title: String::new(),
        flow_unit: "cfs".to_string(),
        observed: vec![("max".to_string(), vec![(f64::MAX, f64::MAX)])],
        fitted: Vec::new(),
    };
    drawn(
        &draw_frequency(&f, Target::Png)
            .expect("frequency at the float limits")
            .canvas(),
    );
}

#[test]
fn a_time_step_that_is_not_a_positive_number_is_an_input_error() {
    for step in [0.0, -0.1, f64::NAN, f64::INFINITY] {
        let mut s = storm(vec![series("existing", vec![1.0, 2.0])], Vec::new());
        s.step_h = step;
        assert!(
            matches!(storm_point_png(&s), Err(PlotError::Input { .. })),
            "step {step}"
        );
        let mut p = pond(vec![1.0], vec![1.0], vec![50.0], 50.0);
        p.step_h = step;
        assert!(
            matches!(pond_png(&p), Err(PlotError::Input { .. })),
            "step {step}"
        );
    }
    let mut s = storm(vec![series("existing", vec![0.0; 10])], Vec::new());
    s.step_h = f64::MAX;
    let err = storm_point_png(&s).expect_err("time axis overflows");
    assert!(err.to_string().contains("too long a time axis"), "{err}");
}

#[test]
fn a_day_zero_that_is_not_a_calendar_date_is_an_input_error() {
    for start in [(2001, 2, 29), (2001, 13, 1), (2001, 4, 31), (2001, 1, 0)] {
        let o = OverviewPlot {
            title: "record".to_string(),
            flow_unit: "cfs".to_string(),
            day_labels_start: start,
            daily_max: vec![("existing".to_string(), vec![1.0])],
        };
        let err = overview_png(&o).expect_err("bad date");
        assert!(
            err.to_string().contains("expected a calendar date"),
            "{err}"
        );
    }
}

#[test]
fn value_axis_of_all_zeros_or_no_data_runs_from_zero_to_one() {
    // runnel's own layout rule, no published source
    assert_eq!(value_range([0.0, 0.0], 1.6), Ok((0.0, 1.0)));
    assert_eq!(value_range([], 1.6), Ok((0.0, 1.0)));
    assert_eq!(value_range([f64::NAN], 1.6), Ok((0.0, 1.0)));
}

#[test]
fn value_axis_puts_the_headroom_factor_over_the_highest_value() {
    // runnel's own layout rule (flow axis 1.6 x the peak), no published source
    let (lo, hi) = value_range([1.0, 10.0, f64::NAN], 1.6).expect("range");
    assert_eq!(lo, 0.0);
    assert!((hi - 16.0).abs() < 1e-12);
    let (_, hi) = value_range([f64::MAX], 1.6).expect("range at f64::MAX");
    assert_eq!(hi, f64::MAX);
    assert!(value_range([-f64::MAX, f64::MAX], 1.6).is_err());
}

#[test]
fn lines_break_at_values_that_are_not_finite() {
    let r = runs(timed(
        &[1.0, 2.0, f64::NAN, 3.0, f64::INFINITY, f64::NAN, 4.0, 5.0],
        0.5,
    ));
    assert_eq!(
        r,
        vec![
            vec![(0.0, 1.0), (0.5, 2.0)],
            vec![(1.5, 3.0)],
            vec![(3.0, 4.0), (3.5, 5.0)]
        ]
    );
}

#[test]
fn label_values_carry_report_precision() {
    assert_eq!(fmt_value(0.0), "0");
    assert_eq!(fmt_value(0.1234), "0.123");
    assert_eq!(fmt_value(7.126), "7.13");
    assert_eq!(fmt_value(27.46), "27.5");
    assert_eq!(fmt_value(250.4), "250");
    assert_eq!(fmt_value(1.5e9), "1.500e9");
    assert_eq!(fmt_hours(12.1333), "12.13");
    assert_eq!(fmt_hours(13.0), "13.00");
    assert_eq!(fmt_step(0.1), "6-min");
    assert_eq!(fmt_step(1.0), "1-h");
    assert_eq!(fmt_log_tick(&0.0005), "0.0005");
    assert_eq!(fmt_log_tick(&20.0), "20");
}

#[test]
fn log_axis_ends_fall_on_one_two_five_values() {
    assert_eq!(log_range([0.03, 42.0], (0.1, 1.0)), (0.02, 50.0));
    assert_eq!(log_range([5.0], (0.1, 1.0)), (2.0, 10.0));
    assert_eq!(log_range([0.0, -1.0, f64::NAN], (0.1, 1.0)), (0.1, 1.0));
    // Ends that cannot be rounded out stay at the data.
    let (l, h) = log_range([1.0, f64::MAX], (0.1, 1.0));
    assert!(l == 1.0 && h == f64::MAX);
    let t = log_ticks(0.02, 50.0, &[1.0, 2.0, 5.0]);
    // 0.02 0.05 0.1 0.2 0.5 1 2 5 10 20 50
    assert_eq!(t.len(), 11);
    assert!((t[0] - 0.02).abs() < 1e-15 && (t[10] - 50.0).abs() < 1e-12);
}

/// Day number of a date the test knows exists.
fn days_from_civil(y: i32, m: u32, d: u32) -> i64 {
    calendar::day_number(y, m, d).unwrap_or_else(|| panic!("{y}-{m}-{d}"))
}

#[test]
fn year_ticks_are_whole_years_on_long_records_and_months_on_short_ones() {
    let long = calendar_ticks(days_from_civil(1991, 1, 1), days_from_civil(2021, 1, 1));
    let labels: Vec<&str> = long.iter().map(|(_, l)| l.as_str()).collect();
    assert_eq!(labels, ["1995", "2000", "2005", "2010", "2015", "2020"]);
    let short = calendar_ticks(days_from_civil(2003, 10, 1), days_from_civil(2004, 4, 1));
    let labels: Vec<&str> = short.iter().map(|(_, l)| l.as_str()).collect();
    assert_eq!(
        labels,
        [
            "2003-10", "2003-11", "2003-12", "2004", "2004-02", "2004-03", "2004-04"
        ]
    );
}

#[test]
fn thinning_keeps_every_extreme_in_time_order() {
    let pts: Vec<(f64, f64)> = (0..10_000)
        .map(|k| (f64::from(k), f64::from(k % 97)))
        .collect();
    let t = thin(&pts, 100);
    assert!(t.len() <= 400 && t.len() >= 100);
    assert!(t.windows(2).all(|w| w[0].0 < w[1].0), "time order");
    assert_eq!(t.iter().map(|p| p.1).fold(f64::MIN, f64::max), 96.0);
    assert_eq!(t.iter().map(|p| p.1).fold(f64::MAX, f64::min), 0.0);
    assert_eq!(t.first(), pts.first());
    assert_eq!(t.last(), pts.last());
}

#[test]
fn notes_for_the_same_point_do_not_overlap_and_stay_inside_the_plot() {
    let bounds = (100, 100, 900, 700);
    let mut crowd = Crowding::new(bounds);
    crowd.trace([(100, 650), (500, 300), (900, 650)]);
    let notes = [
        ((500, 300), (260, 30)),
        ((500, 300), (260, 30)),
        ((505, 302), (200, 30)),
    ];
    let boxes = place_notes(&notes, &mut crowd, bounds);
    assert_eq!(boxes.len(), 3);
    for (i, a) in boxes.iter().enumerate() {
        assert!(
            a.0 >= bounds.0 && a.1 >= bounds.1 && a.2 <= bounds.2 && a.3 <= bounds.3,
            "{a:?}"
        );
        assert!(
            !(a.0 <= 500 && 500 <= a.2 && a.1 <= 300 && 300 <= a.3),
            "box {a:?} covers its point"
        );
        for b in boxes.iter().skip(i + 1) {
            let overlap = a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3;
            assert!(!overlap, "{a:?} overlaps {b:?}");
        }
    }
}

#[test]
fn notes_anchored_close_together_at_the_edge_stand_apart() {
    // A pond's reference elevations: twelve notes anchored at the plot's right edge, a few
    // pixels apart (openings, a barrel, a tailwater and the embankment near one stage), more
    // than one column of boxes holds in the plot's height.
    let bounds = (100, 100, 900, 350);
    let mut crowd = Crowding::new(bounds);
    let notes: Vec<((i32, i32), (i32, i32))> =
        (0..12).map(|k| ((896, 180 + 8 * k), (230, 22))).collect();
    for &((_, y), _) in &notes {
        crowd.trace([(100, y), (900, y)]);
    }
    let boxes = place_notes(&notes, &mut crowd, bounds);
    for (i, a) in boxes.iter().enumerate() {
        assert!(a.0 >= bounds.0 && a.2 <= bounds.2, "{a:?}");
        for b in boxes.iter().skip(i + 1) {
            let overlap = a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3;
            assert!(!overlap, "{a:?} overlaps {b:?}");
        }
    }
}

#[test]
fn crowding_counts_the_marks_inside_a_rectangle() {
    let mut crowd = Crowding::new((0, 0, 400, 400));
    crowd.trace([(0, 200), (400, 200)]);
    crowd.finish();
    assert_eq!(crowd.count((0, 0, 400, 100)), 0);
    assert!(crowd.count((0, 190, 400, 210)) > 0);
    assert_eq!(
        crowd.count((0, 0, 400, 400)),
        crowd.count((0, 150, 400, 250))
    );
}
