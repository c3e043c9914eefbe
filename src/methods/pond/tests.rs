use super::*;
use approx::assert_relative_eq;
use proptest::prelude::*;

const STEP_FT: f64 = 0.01;

fn example_area_rows() -> Vec<(f64, f64)> {
    vec![
        (100.0, 4000.0),
        (102.0, 6200.0),
        (104.0, 8800.0),
        (106.0, 11800.0),
    ]
}

/// Ponce's linear reservoir (K = 2 h) as a table: stage numerically
/// equal to O (cfs), S = K O (ft3), and a rating outlet O = stage.
fn linear_reservoir(k_s: f64, max_o: usize) -> (StageStorage, Vec<Outlet>) {
    let storage_rows: Vec<(f64, f64)> = (0..=max_o).map(|o| (o as f64, k_s * o as f64)).collect();
    let rating: Vec<(f64, f64)> = (0..=max_o).map(|o| (o as f64, o as f64)).collect();
    (
        StageStorage::from_stage_volume(&storage_rows).unwrap(),
        vec![Outlet::Rating { table: rating }],
    )
}

fn trapezoid(q: &[f64], dt_s: f64) -> f64 {
    q.windows(2).map(|w| 0.5 * (w[0] + w[1])).sum::<f64>() * dt_s
}

#[test]
fn linear_reservoir_routing_reproduces_the_ponce_example() {
    // Ponce (1989) linear reservoir example (onlinecalc.sdsu.edu): K = 2 h, dt = 1 h,
    // steady start at O = 100, inflow held at 100 after hour 15.
    let (storage, outlets) = linear_reservoir(2.0 * 3600.0, 2000);
    let mut inflow = vec![
        100.0, 150.0, 250.0, 400.0, 800.0, 1000.0, 900.0, 700.0, 550.0, 400.0, 300.0, 250.0, 200.0,
        150.0, 120.0, 100.0,
    ];
    inflow.resize(26, 100.0);
    let dt = 3600.0;
    let bound = storage.volume_ft3(100.0) + trapezoid(&inflow, dt);
    let table = PondTable::build(&storage, &outlets, None, dt, 1.0, bound).unwrap();
    let routed = route(&table, &inflow, 100.0);
    let expected = [
        (0, 100.0),
        (1, 110.0),
        (2, 146.0),
        (3, 217.6),
        (4, 370.56),
        (5, 582.336),
        (6, 729.402),
        (7, 757.641),
        (8, 704.585),
        (9, 612.751),
        (10, 507.65),
        (11, 414.59),
        (12, 338.754),
        (13, 273.252),
        (14, 217.951),
        (15, 174.771),
        (16, 144.863),
        (20, 105.814),
        (25, 100.452),
    ];
    for (h, o) in expected {
        // published to 3 decimals: half a unit of the last place
        assert!(
            (routed.outflow_cfs[h] - o).abs() <= 5e-4,
            "hour {h}: {} vs {o}",
            routed.outflow_cfs[h]
        );
    }
    // storage-indication column 2S/dt + O of the same example
    for (h, x) in [
        (0, 500.0),
        (1, 550.0),
        (2, 730.0),
        (3, 1088.0),
        (4, 1852.8),
        (5, 2911.68),
    ] {
        let ind = 2.0 * routed.storage_ft3[h] / dt + routed.outflow_cfs[h];
        assert!((ind - x).abs() <= 5e-4, "hour {h}: {ind} vs {x}");
    }
    let summary = summarize(&table, &inflow, &routed, dt, 100.0, None);
    assert!((summary.peak_outflow_cfs - 757.641).abs() <= 5e-4);
    assert_eq!(summary.peak_time_h, 7.0);
    assert!(summary.mass_balance_error.abs() < 1e-12);
}

#[test]
fn stage_area_volume_follows_the_conic_frustum_rule() {
    // Frustum volume V = (h/3)(A1 + A2 + sqrt(A1 A2)), elementary geometry (from memory):
    // 100 -> 102 ft, 4000 and 6200 ft2: (2/3)(4000 + 6200 + 4979.9598) = 10119.9732 ft3.
    let s = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    assert_relative_eq!(s.volume_ft3(102.0), 10_119.973_226, max_relative = 1e-10);
    // half way, sqrt(A) linear: sqrt(A) = (63.245553 + 78.740079)/2 = 70.992816, A = 5039.9799 ft2;
    // V = (1/3)(4000 + 5039.9799 + sqrt(4000 * 5039.9799)) = 4509.9866 ft3
    assert_relative_eq!(s.area_at_ft2(101.0), 5_039.979_92, max_relative = 1e-9);
    assert_relative_eq!(s.volume_ft3(101.0), 4_509.986_613, max_relative = 1e-9);
    assert_eq!(s.volume_ft3(100.0), 0.0);
    assert_eq!(s.volume_ft3(95.0), 0.0);
    assert_eq!(s.bottom_ft(), 100.0);
    let rows = s.rows();
    assert_eq!(rows.len(), 4);
    assert_relative_eq!(rows[1].1, 10_119.973_226, max_relative = 1e-10);
}

#[test]
fn stage_area_table_keeps_its_last_area_above_the_last_row() {
    // contract (scenario-format.md, Ponds): a stage_area table keeps its last area
    let s = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    assert_relative_eq!(
        s.volume_ft3(108.0) - s.volume_ft3(106.0),
        2.0 * 11_800.0,
        max_relative = 1e-12
    );
    assert_eq!(s.area_at_ft2(107.0), 11_800.0);
    assert_eq!(s.area_at_ft2(99.0), 0.0);
}

#[test]
fn stage_volume_table_extends_its_last_slope_and_counts_from_its_first_row() {
    // contract (scenario-format.md, Ponds): a stage_volume table extends its last slope
    let s = StageStorage::from_stage_volume(&[(10.0, 50.0), (11.0, 150.0), (12.0, 350.0)]).unwrap();
    assert_eq!(s.rows(), vec![(10.0, 0.0), (11.0, 100.0), (12.0, 300.0)]);
    assert_relative_eq!(s.volume_ft3(10.5), 50.0, max_relative = 1e-12);
    assert_relative_eq!(s.volume_ft3(13.0), 500.0, max_relative = 1e-12);
    assert_eq!(s.area_at_ft2(10.2), 100.0);
    assert_eq!(s.area_at_ft2(12.5), 200.0);
    assert_relative_eq!(s.stage_for_volume_ft(500.0), 13.0, max_relative = 1e-12);
    assert_relative_eq!(s.stage_for_volume_ft(50.0), 10.5, max_relative = 1e-12);
}

#[test]
fn stage_for_volume_inverts_the_frustum_volume() {
    let s = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    for h in [100.3, 101.0, 103.7, 105.99, 110.0] {
        assert_relative_eq!(
            s.stage_for_volume_ft(s.volume_ft3(h)),
            h,
            max_relative = 1e-12
        );
    }
    assert_eq!(s.stage_for_volume_ft(0.0), 100.0);
}

#[test]
fn table_errors_name_the_row_and_what_was_expected() {
    let e = StageStorage::from_stage_area(&[(100.0, 4000.0), (102.0, 5000.0), (101.5, 6000.0)])
        .unwrap_err();
    assert_eq!(
        e.to_string(),
        "row 3: stage 101.5 is not above the previous stage 102.0; stages must increase strictly"
    );
    let e = StageStorage::from_stage_area(&[(100.0, 4000.0), (101.0, 4000.0), (101.0, 5000.0)])
        .unwrap_err();
    assert!(matches!(e, PondError::StageNotIncreasing { row: 3, .. }));
    let e = StageStorage::from_stage_area(&[(100.0, 0.0), (101.0, -5.0)]).unwrap_err();
    assert_eq!(
        e.to_string(),
        "row 2: area -5.0 is negative; areas must be 0 or more"
    );
    let e = StageStorage::from_stage_area(&[(100.0, 500.0), (101.0, 400.0)]).unwrap_err();
    assert_eq!(
        e.to_string(),
        "row 2: area 400.0 is less than the previous area 500.0; areas must not decrease as the stage rises"
    );
    let e = StageStorage::from_stage_volume(&[(0.0, 0.0), (1.0, 100.0), (2.0, 50.0)]).unwrap_err();
    assert_eq!(
        e,
        PondError::Decreasing {
            row: 3,
            column: "volume",
            value: 50.0,
            previous: 100.0
        }
    );
    let e = StageStorage::from_stage_volume(&[(0.0, -1.0), (1.0, 100.0)]).unwrap_err();
    assert!(matches!(
        e,
        PondError::Negative {
            row: 1,
            column: "volume",
            ..
        }
    ));
    let e = StageStorage::from_stage_volume(&[(0.0, 0.0)]).unwrap_err();
    assert_eq!(
        e.to_string(),
        "the stage-volume table has 1 row(s); it needs at least 2 rows"
    );
    assert!(matches!(
        StageStorage::from_stage_area(&[]),
        Err(PondError::TooFewRows { found: 0, .. })
    ));
    let e = StageStorage::from_stage_volume(&[(0.0, 0.0), (f64::NAN, 1.0)]).unwrap_err();
    assert!(matches!(
        e,
        PondError::NotFinite {
            row: 2,
            column: "stage",
            ..
        }
    ));
}

#[test]
fn basin_rows_follow_the_side_slope_and_reach_the_top() {
    // A(h) = (L + 2 z h)(W + 2 z h), elementary geometry; L = 50, W = 20, z = 3, depth 4.2 ft:
    // top area (50 + 25.2)(20 + 25.2) = 3399.04 ft2.
    let rows = basin_stage_area(100.0, 50.0, 20.0, 3.0, 4.2).unwrap();
    assert_eq!(rows[0], (100.0, 1000.0));
    let top = *rows.last().unwrap();
    assert_eq!(top.0, 104.2);
    assert_relative_eq!(top.1, 3399.04, max_relative = 1e-12);
    assert!(rows.windows(2).all(|w| w[1].0 - w[0].0 <= 0.5 + 1e-12));
    // exact prismoid V = L W d + z (L + W) d^2 + (4/3) z^2 d^3 (elementary geometry, from memory):
    // 4200 + 3704.4 + 889.056 = 8793.456 ft3; the frustum rule on these rows is within 0.1 %.
    let s = StageStorage::from_stage_area(&rows).unwrap();
    let v = s.volume_ft3(104.2);
    assert!((v - 8793.456).abs() / 8793.456 < 1e-3, "{v}");
    assert!(basin_stage_area(100.0, 0.0, 20.0, 3.0, 4.0).is_err());
    assert!(basin_stage_area(100.0, 50.0, 20.0, -1.0, 4.0).is_err());
    assert!(basin_stage_area(f64::NAN, 50.0, 20.0, 3.0, 4.0).is_err());
    assert!(basin_stage_area(100.0, 50.0, 20.0, 3.0, 1e9).is_err());
}

fn many_outlets() -> Vec<Outlet> {
    vec![
        Outlet::CircularOrifice {
            invert_ft: 100.37,
            diameter_ft: 0.5,
            cd: 0.61,
        },
        Outlet::RectangularOrifice {
            invert_ft: 101.013,
            width_ft: 1.0,
            height_ft: 0.333,
            cd: 0.6,
        },
        Outlet::SharpCrestedWeir {
            crest_ft: 103.2,
            length_ft: 4.0,
            coefficient: 3.33,
            contractions: 0,
        },
        Outlet::Riser {
            crest_ft: 104.13,
            diameter_ft: 2.0,
            weir_coefficient: 3.33,
            cd: 0.6,
        },
        Outlet::Rating {
            table: vec![(104.5, 0.0), (105.0, 12.0), (106.0, 60.0)],
        },
    ]
}

#[test]
fn grid_contains_every_invert_crest_and_table_row_within_the_step() {
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let outlets = many_outlets();
    let bank = Embankment {
        top_ft: 106.5,
        crest_length_ft: 30.0,
        coefficient: 2.6,
    };
    // the water can reach 106.6 ft, above every key stage
    let reach = storage.volume_ft3(106.6);
    for step in [STEP_FT, 0.003 / 0.3048] {
        let table = PondTable::build(&storage, &outlets, Some(&bank), 60.0, step, reach).unwrap();
        let stages: Vec<f64> = table.rows().map(|r| r.0).collect();
        let mut keys: Vec<f64> = outlets.iter().flat_map(Outlet::key_stages_ft).collect();
        keys.extend([100.0, 102.0, 104.0, 106.0, 106.5]);
        for k in keys {
            assert!(stages.contains(&k), "step {step}: stage {k} missing");
        }
        assert!(
            stages
                .windows(2)
                .all(|w| w[1] > w[0] && w[1] - w[0] <= step + 1e-9),
            "spacing exceeds {step}"
        );
        // at least one step above the top
        assert!(*stages.last().unwrap() >= 106.5 + step - 1e-9);
        assert_eq!(table.bottom_ft(), 100.0);
        assert_eq!(table.lowest_outlet_ft(), Some(100.37));
        assert_eq!(table.lowest_orifice_ft(), Some((100.37, 100.87)));
    }
}

#[test]
fn grid_reaches_the_storage_bound() {
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let bound = storage.volume_ft3(109.123);
    let table = PondTable::build(&storage, &many_outlets(), None, 60.0, STEP_FT, bound).unwrap();
    let (h, s, _) = table.rows().last().unwrap();
    assert!(s >= bound && h < 109.123 + STEP_FT + 1e-9, "{h} {s}");
    assert_eq!(table.row_count(), table.rows().count());
    assert_eq!(table.indicator_cfs().len(), table.row_count());
}

#[test]
fn table_outflow_is_the_sum_of_outlets_and_embankment() {
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let outlets = many_outlets();
    let bank = Embankment {
        top_ft: 106.0,
        crest_length_ft: 30.0,
        coefficient: 2.6,
    };
    let table = PondTable::build(&storage, &outlets, Some(&bank), 60.0, STEP_FT, 2e5).unwrap();
    for (h, s, o) in table.rows() {
        assert_eq!(o, total_flow_cfs(&outlets, h) + bank.flow_cfs(h));
        assert_eq!(s, storage.volume_ft3(h));
    }
}

#[test]
fn flat_storage_without_outflow_is_rejected_at_its_stage() {
    let storage =
        StageStorage::from_stage_volume(&[(0.0, 0.0), (1.0, 100.0), (2.0, 100.0), (3.0, 200.0)])
            .unwrap();
    let outlets = vec![Outlet::CircularOrifice {
        invert_ft: 5.0,
        diameter_ft: 0.5,
        cd: 0.61,
    }];
    let e = PondTable::build(&storage, &outlets, None, 60.0, STEP_FT, 150.0).unwrap_err();
    match e {
        PondError::IndicatorNotIncreasing {
            stage_ft,
            previous_ft,
            ..
        } => {
            assert_relative_eq!(stage_ft, 1.01, max_relative = 1e-9);
            assert_eq!(previous_ft, 1.0);
        }
        other => panic!("unexpected {other:?}"),
    }
}

#[test]
fn impossible_tables_give_errors_not_panics() {
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let o = many_outlets();
    // a step of 1e-7 ft: the fine grid stops after FINE_GRID_ROWS rows
    // and the spacing then grows with depth, so the table stays bounded
    let t = PondTable::build(&storage, &o, None, 60.0, 1e-7, 1e5).unwrap();
    assert!(t.row_count() < FINE_GRID_ROWS + 20_000, "{}", t.row_count());
    let (_, s_last, _) = t.rows().last().unwrap();
    assert!(s_last >= 1e5);
    assert!(matches!(
        PondTable::build(&storage, &o, None, 0.0, STEP_FT, 1e5),
        Err(PondError::InvalidParameter { .. })
    ));
    assert!(matches!(
        PondTable::build(&storage, &o, None, 60.0, f64::NAN, 1e5),
        Err(PondError::InvalidParameter { .. })
    ));
    assert!(matches!(
        PondTable::build(&storage, &o, None, 60.0, STEP_FT, f64::INFINITY),
        Err(PondError::InvalidParameter { .. })
    ));
    let flat = StageStorage::from_stage_volume(&[(0.0, 0.0), (1.0, 100.0), (2.0, 100.0)]).unwrap();
    assert!(matches!(
        PondTable::build(&flat, &o, None, 60.0, STEP_FT, 200.0),
        Err(PondError::StorageBoundUnreachable { .. })
    ));
    let bad_bank = Embankment {
        top_ft: 106.0,
        crest_length_ft: 0.0,
        coefficient: 2.6,
    };
    assert!(PondTable::build(&storage, &o, Some(&bad_bank), 60.0, STEP_FT, 1e5).is_err());
}

#[test]
fn a_tall_top_does_not_lengthen_the_table() {
    // common practice, no published source: the table need reach only
    // as high as the water can go. A top typed as 10310.97 ft for a pond
    // near 103 ft gives the same table as a top of 107 ft.
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let o = many_outlets();
    let bound = storage.volume_ft3(105.0);
    let bank = |top_ft| Embankment {
        top_ft,
        crest_length_ft: 30.0,
        coefficient: 2.6,
    };
    let low = PondTable::build(&storage, &o, Some(&bank(107.0)), 60.0, STEP_FT, bound).unwrap();
    let tall =
        PondTable::build(&storage, &o, Some(&bank(10_310.97)), 60.0, STEP_FT, bound).unwrap();
    assert_eq!(low.row_count(), tall.row_count());
    assert!(tall.row_count() < 700, "{}", tall.row_count());
    // and when the water could reach such a top, the rows grow with the
    // logarithm of the depth, not with the depth
    let deep = storage.volume_ft3(10_400.0);
    let t = PondTable::build(&storage, &o, Some(&bank(10_310.97)), 60.0, STEP_FT, deep).unwrap();
    // 50 000 rows to 500 ft of depth, then ln(10 300 / 500) / ln(1.001) = 3027 more
    assert!(t.row_count() < FINE_GRID_ROWS + 3_200, "{}", t.row_count());
    let top_row = t.rows().map(|r| r.0).find(|&h| h == 10_310.97);
    assert_eq!(top_row, Some(10_310.97));
}

#[test]
fn areas_typed_in_acres_are_routed_on_a_bounded_table() {
    // common practice, no published source: a stage-area table in acres
    // (0.5 and 1.2 "ft2") under a 100-cfs, 2-hour inflow: the orifice
    // passes 100 cfs only about 10 800 ft up (orifice equation, Bedient,
    // Huber & Vieux ch. 4), so the table must reach that far, in bounded
    // rows. The pond holds next to nothing, so the outflow is the inflow;
    // the step is far above 2 dS/dO, and the mass balance is off by more
    // than 0.1 %, which the analysis warns about.
    let storage = StageStorage::from_stage_area(&[(100.0, 0.5), (106.0, 1.2)]).unwrap();
    let o = vec![Outlet::CircularOrifice {
        invert_ft: 100.0,
        diameter_ft: 0.5,
        cd: 0.61,
    }];
    let dt = 300.0;
    let inflow: Vec<f64> = (0..=48).map(|k| if k < 24 { 100.0 } else { 0.0 }).collect();
    let bound = trapezoid(&inflow, dt) * 1.02 + 1.0;
    let table = PondTable::build(&storage, &o, None, dt, STEP_FT, bound).unwrap();
    assert!(
        table.row_count() < FINE_GRID_ROWS + 20_000,
        "{}",
        table.row_count()
    );
    let routed = route(&table, &inflow, 100.0);
    let s = summarize(&table, &inflow, &routed, dt, 100.0, None);
    assert!(
        (s.peak_outflow_cfs - 100.0).abs() < 5.0 && s.peak_stage_ft > 1000.0,
        "{s:?}"
    );
    assert!(
        s.mass_balance_error.is_finite() && s.mass_balance_error.abs() > 0.001,
        "{}",
        s.mass_balance_error
    );
}

#[test]
fn drain_time_counts_from_the_peak_until_one_percent_of_the_rise_remains() {
    // Ponce (1989) linear reservoir (onlinecalc.sdsu.edu): with K = 2 h and dt = 1 h and no inflow,
    // storage falls by C2 = (2 - dt/K)/(2 + dt/K) = 0.6 each hour. A pulse [0, 100, 0, ...] from empty
    // peaks at hour 2 (O = 32: x1 = 100 -> O1 = 20; x2 = 100 + 100 - 40 = 160 -> O2 = 32);
    // 0.6^9 = 0.01008 >= 0.01 and 0.6^10 = 0.00605 < 0.01, so the drain time is 10 h
    // (drain-time rule of the scenario-format contract).
    let (storage, outlets) = linear_reservoir(7200.0, 200);
    let mut inflow = vec![0.0, 100.0];
    inflow.resize(30, 0.0);
    let dt = 3600.0;
    let table =
        PondTable::build(&storage, &outlets, None, dt, 1.0, trapezoid(&inflow, dt)).unwrap();
    let routed = route(&table, &inflow, 0.0);
    assert_relative_eq!(routed.outflow_cfs[1], 20.0, max_relative = 1e-12);
    assert_relative_eq!(routed.outflow_cfs[2], 32.0, max_relative = 1e-12);
    assert_relative_eq!(routed.outflow_cfs[3], 19.2, max_relative = 1e-12);
    let s = summarize(&table, &inflow, &routed, dt, 0.0, None);
    assert_eq!(s.peak_stage_time_h, 2.0);
    assert_eq!(s.drain_time_h, Some(10.0));
    // cut before it drains: no drain time
    let short = &inflow[..11];
    let r = route(&table, short, 0.0);
    assert_eq!(
        summarize(&table, short, &r, dt, 0.0, None).drain_time_h,
        None
    );
}

#[test]
fn embankment_weir_engages_above_the_top_and_overtopping_is_flagged() {
    // Broad-crested weir Q = C L H^1.5 (from memory) over the top, plus the orifice equation
    // (Bedient, Huber & Vieux ch.4): at 104.5 ft, orifice D = 0.25 ft, h = 4.5 ft:
    // 0.61 * 0.04908739 * sqrt(2*32.174*4.375) = 0.61 * 0.04908739 * 16.778632 = 0.502408 cfs;
    // weir 2.6 * 20 * 0.5^1.5 = 18.384776 cfs; total 18.887184 cfs.
    let storage = StageStorage::from_stage_area(&[(100.0, 1000.0), (104.0, 2000.0)]).unwrap();
    let outlets = vec![Outlet::CircularOrifice {
        invert_ft: 100.0,
        diameter_ft: 0.25,
        cd: 0.61,
    }];
    let bank = Embankment {
        top_ft: 104.0,
        crest_length_ft: 20.0,
        coefficient: 2.6,
    };
    let dt = 60.0;
    // triangle, 50 cfs peak at 1 h, back to 0 at 2 h, then 4 h of nothing
    let inflow: Vec<f64> = (0..=360)
        .map(|k| {
            let t = k as f64 / 60.0;
            if t < 1.0 {
                50.0 * t
            } else {
                (50.0 * (2.0 - t)).max(0.0)
            }
        })
        .collect();
    let bound = trapezoid(&inflow, dt);
    let table = PondTable::build(&storage, &outlets, Some(&bank), dt, STEP_FT, bound).unwrap();
    assert_relative_eq!(
        table.outflow_at_stage_cfs(104.5),
        18.887_184,
        max_relative = 1e-6
    );
    let routed = route(&table, &inflow, 100.0);
    let s = summarize(&table, &inflow, &routed, dt, 100.0, Some(104.0));
    assert!(s.overtopped);
    assert!(s.peak_stage_ft > 104.0);
    assert!(s.freeboard_ft.unwrap() < 0.0);
    assert!(s.peak_outflow_cfs > table.outflow_at_stage_cfs(104.0));
    assert_eq!(s.lowest_orifice_submerged, Some(true));
    assert!(!s.never_filled_above_lowest_outlet);
    assert!(s.mass_balance_error.abs() < 1e-9);
    // the same pond with a fiftieth of the inflow (3600 ft3; 5885 ft3 below the top) stays below it
    let small: Vec<f64> = inflow.iter().map(|q| q * 0.02).collect();
    let r = route(&table, &small, 100.0);
    let s = summarize(&table, &small, &r, dt, 100.0, Some(104.0));
    assert!(!s.overtopped && s.freeboard_ft.unwrap() > 0.0);
}

#[test]
fn a_pond_that_stays_below_its_outlets_is_reported() {
    // storage-indication, Bedient, Huber & Vieux eq. 4-13: with no outflow all inflow is stored
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let outlets = vec![Outlet::CircularOrifice {
        invert_ft: 101.0,
        diameter_ft: 0.5,
        cd: 0.61,
    }];
    let inflow = vec![0.0, 1.0, 2.0, 1.0, 0.0, 0.0];
    let dt = 60.0;
    let table = PondTable::build(
        &storage,
        &outlets,
        None,
        dt,
        STEP_FT,
        trapezoid(&inflow, dt),
    )
    .unwrap();
    let routed = route(&table, &inflow, 100.0);
    let s = summarize(&table, &inflow, &routed, dt, 100.0, None);
    assert!(s.never_filled_above_lowest_outlet);
    assert_eq!(s.lowest_orifice_submerged, Some(false));
    assert_eq!(s.peak_outflow_cfs, 0.0);
    // all inflow stays: 240 ft3 (trapezoid of 0,1,2,1,0 cfs at 60 s)
    assert_relative_eq!(s.end_storage_ft3, 240.0, max_relative = 1e-9);
    assert_eq!(s.drain_time_h, None);
    assert!(s.mass_balance_error.abs() < 1e-12);
}

#[test]
fn routing_past_the_table_top_extrapolates_without_failing() {
    // storage-indication, Bedient, Huber & Vieux eq. 4-13, continued on the last table segment
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let outlets = vec![Outlet::CircularOrifice {
        invert_ft: 100.0,
        diameter_ft: 0.5,
        cd: 0.61,
    }];
    let dt = 300.0;
    // bound far too small on purpose: the table stops one step above the bottom
    let table = PondTable::build(&storage, &outlets, None, dt, STEP_FT, 0.0).unwrap();
    let inflow = vec![0.0, 50.0, 100.0, 50.0, 0.0, 0.0, 0.0];
    let routed = route(&table, &inflow, 100.0);
    let last_row = table.rows().last().unwrap().0;
    assert!(routed.stage_ft.iter().any(|&h| h > last_row));
    assert!(
        routed
            .outflow_cfs
            .iter()
            .all(|q| q.is_finite() && *q >= 0.0)
    );
    let s = summarize(&table, &inflow, &routed, dt, 100.0, None);
    assert!(s.mass_balance_error.abs() < 1e-9);
}

#[test]
fn small_heads_over_an_outlet_are_not_overstated_by_the_grid() {
    // Accuracy of the table, not a published value: the interpolated
    // outflow a few thousandths of a foot over an orifice invert and a
    // weir crest against the outlet equations themselves (circular
    // orifice and sharp-crested weir forms of the scenario contract).
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let outlets = vec![
        Outlet::CircularOrifice {
            invert_ft: 100.0,
            diameter_ft: 5.0 / 12.0,
            cd: 0.61,
        },
        Outlet::SharpCrestedWeir {
            crest_ft: 103.0,
            length_ft: 4.0,
            coefficient: 3.33,
            contractions: 0,
        },
    ];
    let table = PondTable::build(&storage, &outlets, None, 300.0, STEP_FT, 200_000.0).unwrap();
    for (h0, over) in [
        (100.0, 0.0019),
        (100.0, 0.0041),
        (103.0, 0.0007),
        (103.0, 0.0033),
    ] {
        let h = h0 + over;
        let exact = total_flow_cfs(&outlets, h) - total_flow_cfs(&outlets, h0);
        let (_, _, _, o) = table.state_at_stage(h);
        let from_table = o - table.state_at_stage(h0).3;
        assert!(
            ((from_table - exact) / exact).abs() < 0.05,
            "{over} ft over {h0}: table {from_table}, equation {exact}"
        );
    }
}

#[test]
fn route_into_reuses_its_buffers_and_matches_route() {
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let outlets = many_outlets();
    let dt = 60.0;
    let inflow: Vec<f64> = (0..500)
        .map(|k| 20.0 * (k as f64 / 80.0).sin().abs())
        .collect();
    let table = PondTable::build(
        &storage,
        &outlets,
        None,
        dt,
        STEP_FT,
        trapezoid(&inflow, dt),
    )
    .unwrap();
    let expected = route(&table, &inflow, 100.0);
    let mut out = Routed::default();
    route_into(&table, &inflow, 100.0, &mut out);
    let ptrs = (
        out.outflow_cfs.as_ptr(),
        out.stage_ft.as_ptr(),
        out.storage_ft3.as_ptr(),
    );
    route_into(&table, &inflow, 100.0, &mut out);
    assert_eq!(out, expected);
    assert_eq!(
        ptrs,
        (
            out.outflow_cfs.as_ptr(),
            out.stage_ft.as_ptr(),
            out.storage_ft3.as_ptr()
        )
    );
    route_into(&table, &[], 100.0, &mut out);
    assert!(out.outflow_cfs.is_empty() && out.stage_ft.is_empty() && out.storage_ft3.is_empty());
    // The record form gives the same outflow and stage, and the storage
    // at both ends (same storage-indication step, BHV eq. 4-13).
    let mut q = Vec::new();
    let mut h = inflow.clone();
    let (s_first, s_last) = route_stage_in_place(&table, &mut h, 100.0, &mut q);
    assert_eq!(q, expected.outflow_cfs);
    assert_eq!(h, expected.stage_ft);
    assert_eq!(Some(&s_first), expected.storage_ft3.first());
    assert_eq!(Some(&s_last), expected.storage_ft3.last());
    assert_eq!(
        route_stage_in_place(&table, &mut [], 100.0, &mut q),
        (0.0, 0.0)
    );
    assert!(q.is_empty());
}

#[test]
fn a_pond_started_above_its_outlet_drains_with_no_inflow() {
    // storage-indication, Bedient, Huber & Vieux eq. 4-13; drain-time and mass-balance rules of
    // the scenario-format contract (nothing to drain above the starting storage: 0 h)
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let outlets = vec![Outlet::CircularOrifice {
        invert_ft: 100.0,
        diameter_ft: 0.5,
        cd: 0.61,
    }];
    let dt = 300.0;
    let start = 102.0;
    let table = PondTable::build(
        &storage,
        &outlets,
        None,
        dt,
        STEP_FT,
        storage.volume_ft3(start),
    )
    .unwrap();
    let inflow = vec![0.0; 200];
    let routed = route(&table, &inflow, start);
    assert_eq!(routed.stage_ft[0], start);
    assert!(routed.outflow_cfs[0] > 0.0);
    assert!(routed.stage_ft.windows(2).all(|w| w[1] <= w[0]));
    let s = summarize(&table, &inflow, &routed, dt, start, None);
    assert_eq!(s.mass_balance_error, 0.0);
    assert_eq!(s.drain_time_h, Some(0.0));
    assert_eq!(s.peak_stage_ft, start);
    // start below the bottom is held at the bottom
    let r = route(&table, &[0.0, 0.0], 90.0);
    assert_eq!(r.stage_ft, vec![100.0, 100.0]);
}

#[test]
fn stage_for_storage_interpolates_the_table() {
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let table = PondTable::build(&storage, &many_outlets(), None, 60.0, STEP_FT, 5e4).unwrap();
    for h in [100.0, 100.005, 101.37, 104.5] {
        let s = table.storage_at_stage_ft3(h);
        assert_relative_eq!(table.stage_for_storage_ft(s), h, max_relative = 1e-12);
    }
    assert_eq!(table.stage_for_storage_ft(-5.0), 100.0);
    assert_eq!(table.stage_for_storage_ft(f64::NAN), 100.0);
}

#[test]
fn a_larger_orifice_can_lower_the_peak_outflow_when_a_weir_sits_above_it() {
    // Storage-indication (Bedient, Huber & Vieux eq. 4-13). Found by the property tests and
    // confirmed by an independent RK4 solution of dS/dt = I - O(S) at 0.5 s (computed, no
    // published source): 0.989673 cfs for D = 0.05 ft against 0.989525 cfs for D = 0.13 ft.
    // The larger orifice keeps the pond lower, where the weir's dO/dS is smaller, so the
    // outflow peaks later on the falling limb and lower. Peak stage still falls.
    let storage = StageStorage::from_stage_area(&[(100.0, 2000.0), (100.5, 2000.0)]).unwrap();
    let tp_s = 1.429_030_855_964_026 * 3600.0;
    let dt = 5.0;
    let inflow: Vec<f64> = (0..(4.0 * 3600.0 / dt) as usize)
        .map(|k| {
            let r = k as f64 * dt / tp_s;
            r * (1.0 - r).exp()
        })
        .collect();
    let run = |d: f64| {
        let o = outlets_for(100.0, d, Some((100.33, 1.0, 0)));
        let t = PondTable::build(&storage, &o, None, dt, 0.001, 1e5).unwrap();
        let r = route(&t, &inflow, 100.0);
        summarize(&t, &inflow, &r, dt, 100.0, None)
    };
    let (small, large) = (run(0.05), run(0.13));
    assert!(
        (small.peak_outflow_cfs - 0.989_673).abs() < 2e-6,
        "{}",
        small.peak_outflow_cfs
    );
    assert!(
        (large.peak_outflow_cfs - 0.989_525).abs() < 2e-6,
        "{}",
        large.peak_outflow_cfs
    );
    assert!(large.peak_outflow_cfs < small.peak_outflow_cfs);
    assert!(large.peak_stage_ft < small.peak_stage_ft);
    assert!(large.peak_time_h > small.peak_time_h);
}

#[test]
fn a_series_summary_without_the_table_agrees_with_the_table_summary() {
    let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
    let outlets = many_outlets();
    let dt = 60.0;
    let inflow: Vec<f64> = (0..400)
        .map(|k| 30.0 * (k as f64 / 130.0).sin().max(0.0))
        .collect();
    let table = PondTable::build(
        &storage,
        &outlets,
        None,
        dt,
        STEP_FT,
        trapezoid(&inflow, dt),
    )
    .unwrap();
    let routed = route(&table, &inflow, 100.0);
    let a = summarize(&table, &inflow, &routed, dt, 100.0, Some(106.0));
    let b = summarize_series(&inflow, &routed, dt, 100.0, Some(106.0), &outlets);
    assert_eq!(a, b);
    let empty = summarize_series(&[], &Routed::default(), dt, 101.0, None, &outlets);
    assert_eq!(empty.peak_stage_ft, 101.0);
    assert_eq!(empty.mass_balance_error, 0.0);
}

// ---- property tests -------------------------------------------------

/// Random stage-area pond, bottom at 100 ft, areas 2000 ft2 and up.
fn pond_rows() -> impl Strategy<Value = Vec<(f64, f64)>> {
    (
        2000.0..20000.0f64,
        prop::collection::vec((0.5..3.0f64, 0.0..5000.0f64), 1..5),
    )
        .prop_map(|(a0, steps)| {
            let mut rows = vec![(100.0, a0)];
            let (mut s, mut a) = (100.0, a0);
            for (ds, da) in steps {
                s += ds;
                a += da;
                rows.push((s, a));
            }
            rows
        })
}

/// Single-peaked inflow `qp (t/tp)^m exp(m (1 - t/tp))` (cfs), 0 after 10 tp.
#[derive(Debug, Clone, Copy)]
struct Peak {
    qp_cfs: f64,
    tp_h: f64,
    m: f64,
}

fn peak() -> impl Strategy<Value = Peak> {
    (1.0..30.0f64, 0.25..2.0f64, 1.0..5.0f64).prop_map(|(qp_cfs, tp_h, m)| Peak { qp_cfs, tp_h, m })
}

fn sample(p: Peak, dt_s: f64) -> Vec<f64> {
    let end_s = 12.0 * p.tp_h * 3600.0;
    let n = (end_s / dt_s).ceil() as usize + 1;
    (0..n)
        .map(|k| {
            let r = k as f64 * dt_s / (p.tp_h * 3600.0);
            if r >= 10.0 {
                0.0
            } else {
                p.qp_cfs * r.powf(p.m) * (p.m * (1.0 - r)).exp()
            }
        })
        .collect()
}

/// `(height above the crown ft, length ft, end contractions)` of an optional weir.
type Weir = Option<(f64, f64, u8)>;

fn weir() -> impl Strategy<Value = Weir> {
    prop::option::of((0.2..3.0f64, 1.0..10.0f64, 0u8..=2))
}

/// An orifice and, optionally, a weir given as `(crest ft, length ft, contractions)`.
fn outlets_for(invert_ft: f64, diameter_ft: f64, weir: Option<(f64, f64, u8)>) -> Vec<Outlet> {
    let mut v = vec![Outlet::CircularOrifice {
        invert_ft,
        diameter_ft,
        cd: 0.61,
    }];
    if let Some((crest_ft, length_ft, contractions)) = weir {
        v.push(Outlet::SharpCrestedWeir {
            crest_ft,
            length_ft,
            coefficient: 3.33,
            contractions,
        });
    }
    v
}

/// Largest dt (s) with `2 dS/dt >= dO` on every grid segment.
fn largest_stable_dt_s(table: &PondTable) -> f64 {
    let rows: Vec<_> = table.rows().collect();
    rows.windows(2)
        .filter(|w| w[1].2 > w[0].2)
        .map(|w| 2.0 * (w[1].1 - w[0].1) / (w[1].2 - w[0].2))
        .fold(f64::INFINITY, f64::min)
}

fn condition_holds(table: &PondTable, dt_s: f64) -> bool {
    let rows: Vec<_> = table.rows().collect();
    rows.windows(2)
        .all(|w| 2.0 * (w[1].1 - w[0].1) / dt_s >= w[1].2 - w[0].2)
}

/// Builds the pond at a step no larger than 120 s and no larger than
/// `2 dS/dO` anywhere in its table (so the storage-indication recursion
/// is monotone and cannot overshoot the inflow).
fn stable_build(
    storage: &StageStorage,
    outlet_sets: &[&[Outlet]],
    p: Peak,
) -> Option<(f64, Vec<f64>, Vec<PondTable>)> {
    // bound: the inflow volume sampled at 10 s, with a margin
    let bound = 1.05 * trapezoid(&sample(p, 10.0), 10.0);
    let mut dt = 120.0f64;
    for o in outlet_sets {
        let t = PondTable::build(storage, o, None, 1.0, STEP_FT, bound).ok()?;
        dt = dt.min(largest_stable_dt_s(&t) * (1.0 - 1e-9));
    }
    if dt < 1.0 {
        return None;
    }
    let inflow = sample(p, dt);
    let bound = bound.max(trapezoid(&inflow, dt));
    let tables = outlet_sets
        .iter()
        .map(|o| PondTable::build(storage, o, None, dt, STEP_FT, bound).ok())
        .collect::<Option<Vec<_>>>()?;
    Some((dt, inflow, tables))
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn routed_ponds_attenuate_stay_physical_and_conserve_mass(
        rows in pond_rows(),
        invert_steps in 0u32..30,
        diameter_steps in 5u32..50,
        w in weir(),
        p in peak(),
    ) {
        // Storage-indication, Bedient, Huber & Vieux eq. 4-13: with dt <= 2 dS/dO everywhere,
        // 2S/dt - O never decreases with stage, so O_{n+1} <= max I whenever O_0 <= max I
        // (the outflow peak never exceeds the inflow peak).
        let storage = StageStorage::from_stage_area(&rows).unwrap();
        let invert = 100.0 + f64::from(invert_steps) * STEP_FT;
        let d = f64::from(diameter_steps) * STEP_FT;
        let outlets = outlets_for(invert, d, w.map(|(above, l, n)| (invert + d + above, l, n)));
        let built = stable_build(&storage, &[&outlets], p);
        prop_assume!(built.is_some());
        let (dt, inflow, tables) = built.unwrap();
        let table = &tables[0];
        prop_assert!(condition_holds(table, dt));
        let routed = route(table, &inflow, 100.0);
        let s = summarize(table, &inflow, &routed, dt, 100.0, None);
        prop_assert!(s.peak_inflow_cfs > 0.0);
        // rounding only
        prop_assert!(s.peak_outflow_cfs <= s.peak_inflow_cfs * (1.0 + 1e-12),
            "{} > {}", s.peak_outflow_cfs, s.peak_inflow_cfs);
        prop_assert!(routed.stage_ft.iter().all(|&h| h >= 100.0));
        prop_assert!(routed.storage_ft3.iter().all(|&v| v >= 0.0));
        prop_assert!(routed.outflow_cfs.iter().all(|&q| q >= 0.0 && q.is_finite()));
        prop_assert!(s.mass_balance_error.abs() < 1e-3, "mass balance {}", s.mass_balance_error);
    }

    #[test]
    fn a_larger_orifice_never_raises_the_peak_stage(
        rows in pond_rows(),
        invert_steps in 0u32..30,
        diameter_steps in 5u32..40,
        extra_steps in 1u32..30,
        w in weir(),
        p in peak(),
    ) {
        // Storage-indication (Bedient, Huber & Vieux eq. 4-13) comparison: with the same pond,
        // inflow and dt (<= 2 dS/dO for both), more outflow at every stage gives a lower or
        // equal stage at every step. Diameters and invert are whole multiples of the grid
        // step so both tables share one stage grid (up to rounding, hence 1e-9).
        let storage = StageStorage::from_stage_area(&rows).unwrap();
        let invert = 100.0 + f64::from(invert_steps) * STEP_FT;
        let d1 = f64::from(diameter_steps) * STEP_FT;
        let d2 = f64::from(diameter_steps + extra_steps) * STEP_FT;
        let crest = w.map(|(above, l, n)| (invert + d2 + above, l, n));
        let small = outlets_for(invert, d1, crest);
        let large = outlets_for(invert, d2, crest);
        let built = stable_build(&storage, &[&small, &large], p);
        prop_assume!(built.is_some());
        let (dt, inflow, tables) = built.unwrap();
        prop_assert!(condition_holds(&tables[0], dt) && condition_holds(&tables[1], dt));
        let r1 = route(&tables[0], &inflow, 100.0);
        let r2 = route(&tables[1], &inflow, 100.0);
        let s1 = summarize(&tables[0], &inflow, &r1, dt, 100.0, None);
        let s2 = summarize(&tables[1], &inflow, &r2, dt, 100.0, None);
        prop_assert!(
            s2.peak_stage_ft - 100.0 <= (s1.peak_stage_ft - 100.0) * (1.0 + 1e-9),
            "peak stage {} (D {}) > {} (D {})", s2.peak_stage_ft, d2, s1.peak_stage_ft, d1
        );
    }

    #[test]
    fn a_larger_lone_orifice_never_lowers_the_peak_outflow(
        rows in pond_rows(),
        invert_steps in 0u32..30,
        diameter_steps in 5u32..40,
        extra_steps in 1u32..30,
        p in peak(),
    ) {
        // Storage-indication (Bedient, Huber & Vieux eq. 4-13), a pond whose only outlet is one
        // circular orifice. (With a weir above the orifice this can fail; see
        // a_larger_orifice_can_lower_the_peak_outflow_when_a_weir_sits_above_it.)
        let storage = StageStorage::from_stage_area(&rows).unwrap();
        let invert = 100.0 + f64::from(invert_steps) * STEP_FT;
        let d1 = f64::from(diameter_steps) * STEP_FT;
        let d2 = f64::from(diameter_steps + extra_steps) * STEP_FT;
        let small = outlets_for(invert, d1, None);
        let large = outlets_for(invert, d2, None);
        let built = stable_build(&storage, &[&small, &large], p);
        prop_assume!(built.is_some());
        let (dt, inflow, tables) = built.unwrap();
        let r1 = route(&tables[0], &inflow, 100.0);
        let r2 = route(&tables[1], &inflow, 100.0);
        let s1 = summarize(&tables[0], &inflow, &r1, dt, 100.0, None);
        let s2 = summarize(&tables[1], &inflow, &r2, dt, 100.0, None);
        prop_assert!(
            s2.peak_outflow_cfs >= s1.peak_outflow_cfs * (1.0 - 1e-9),
            "peak outflow {} (D {}) < {} (D {})", s2.peak_outflow_cfs, d2, s1.peak_outflow_cfs, d1
        );
    }
}

#[test]
fn drain_index_is_the_first_step_after_the_peak_below_one_percent_of_the_rise() {
    // drain-time rule of the scenario-format contract (1 % of the peak rise above the start)
    let storage = [0.0, 10.0, 100.0, 60.0, 30.0, 0.5, 0.9, 0.2];
    assert_eq!(drain_index(&storage, 0.0, (100.0, 2)), Some(5));
    // the values before the peak do not count
    let early = [0.2, 10.0, 100.0, 60.0, 0.9];
    assert_eq!(drain_index(&early, 0.0, (100.0, 2)), Some(4));
    // still above 1 % at the end: not drained within the series
    assert_eq!(drain_index(&[0.0, 100.0, 50.0], 0.0, (100.0, 1)), None);
    // never above the start: drained at the peak itself
    assert_eq!(drain_index(&[5.0, 5.0, 4.0], 5.0, (5.0, 0)), Some(0));
    assert_eq!(drain_index(&[], 0.0, (f64::NEG_INFINITY, 0)), Some(0));
}
