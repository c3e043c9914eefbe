//! Property tests: no input makes runnel panic. Scenario contract, "Command
//! line" (bad input is exit code 2, "never a Rust panic or backtrace").
//!
//! (a) TOML documents assembled from the contract's keys with random values
//! (good ones, zero, negative, huge, NaN and infinity, strings with and
//! without units, wrong types) are loaded with `scenario::load`; when one
//! loads, it is analysed (and sized, and its records run) as `runnel run`
//! would. (b) Random bytes are loaded as scenarios. (c) Random bytes and
//! mutated valid CSVs are read as gauge files, directly and through a
//! scenario. Errors are fine; a panic fails the test (proptest reports it).

use proptest::prelude::*;
use proptest::sample::select;
use runnel::gauge::{GaugeOptions, parse_gauge};
use std::path::{Path, PathBuf};

/// Memory cap for one fuzzed run, so that a case that loads but would need
/// a huge series is refused as `runnel run` refuses it, only sooner.
const FUZZ_MEMORY_LIMIT_BYTES: u64 = 256 * 1024 * 1024;

const GOOD_CSV: &str = "time,depth\n2024-06-03 00:15,0.00\n2024-06-03 00:30,0.10\n\
2024-06-03 00:45,0.35\n2024-06-03 01:00,0.20\n2024-06-03 01:15,0.05\n2024-06-03 01:30,0.00\n";

const SPARSE_CSV: &str = "time,cumulative\r\n2024-06-03T00:15:00Z,0.0\r\n\
2024-06-03T00:30:00Z,0.4\r\n2024-06-03T02:00:00Z,1.1\r\n";

/// Values that break something: zero, negative, huge, tiny, NaN and
/// infinity, strings with wrong or no units, wrong types, bad tables.
const JUNK: &[&str] = &[
    "0", "-1", "-0.0", "1e300", "-1e300", "1e-300", "nan", "inf", "-inf", "0.5", "3", "1e9",
    "9223372036854775807", "-9223372036854775808", "true", "[]", "[1, 2]", "{}", "[[]]",
    "{ min = 1, max = 0 }", "{ min = \"2 in\", max = \"24 in\" }", "{ min = 0, max = 1e300 }",
    "\"\"", "\"abc\"", "\"5 ft\"", "\"5\"", "\"-5 in\"", "\"nan ac\"", "\"inf h\"",
    "\"1e400 ft\"", "\"2 %\"", "\"12 min\"", "\"1e9 h\"", "\"0 s\"", "\"1e-9 s\"", "\"3 d\"",
    "\"5 acers\"", "\"é\"", "1979-05-27T07:32:00", "[[0.0, 0.0], [1.0, 1.0]]",
    "[[1.0, 0.0], [0.5, 2.0]]", "[[0.0, nan], [1.0, inf]]", "[[100.0, -1.0], [101.0, 0.0]]",
    "[[100.0]]", "[\"existing\", 3]",
];

type Pool = &'static [&'static str];

/// One key: its name, how often it is present, and its plausible values.
type Key = (&'static str, f64, Pool);

fn value(pool: Pool) -> BoxedStrategy<String> {
    if pool.is_empty() {
        select(JUNK).prop_map(str::to_string).boxed()
    } else {
        prop_oneof![
            3 => select(pool).prop_map(str::to_string),
            1 => select(JUNK).prop_map(str::to_string),
        ]
        .boxed()
    }
}

/// The `key = value` lines of one table.
fn lines(keys: &'static [Key]) -> BoxedStrategy<String> {
    let parts: Vec<BoxedStrategy<Option<String>>> = keys
        .iter()
        .map(|&(k, p, pool)| {
            proptest::option::weighted(p, value(pool))
                .prop_map(move |v| v.map(|v| format!("{k} = {v}\n")))
                .boxed()
        })
        .collect();
    (parts, proptest::option::weighted(0.05, select(&["nmae", "aera", "depht", "knid"][..])))
        .prop_map(|(parts, typo)| {
            let mut s: String = parts.into_iter().flatten().collect();
            if let Some(t) = typo {
                s.push_str(&format!("{t} = 1\n"));
            }
            s
        })
        .boxed()
}

/// `[[HEADER]]` tables, each with its lines, `0..max` of them.
fn tables(header: &'static str, body: BoxedStrategy<String>, max: usize) -> BoxedStrategy<String> {
    proptest::collection::vec(body, 0..max)
        .prop_map(move |v| v.into_iter().map(|b| format!("[[{header}]]\n{b}")).collect())
        .boxed()
}

const NAMES: Pool = &["\"A\"", "\"B\"", "\"Pond 1\"", "\"out\""];
const TARGETS: Pool = &["\"out\"", "\"out\"", "\"Pond 1\"", "\"Pond 2\"", "\"A\"", "\"nowhere\""];
const CONDITIONS: Pool = &[
    "\"existing\"",
    "\"proposed\"",
    "[\"existing\", \"proposed\"]",
];

const TOP: &[Key] = &[
    ("title", 0.5, &["\"fuzz site\""]),
    ("units", 0.4, &["\"us\"", "\"si\""]),
    ("step", 0.4, &["\"1 min\"", "\"2 min\"", "\"6 min\""]),
    ("baseline", 0.2, &["\"existing\"", "\"proposed\""]),
    ("p2", 0.7, &["\"3.2 in\"", "\"80 mm\"", "3"]),
    ("memory_limit", 0.05, &["\"1 GB\"", "\"12 MB\""]),
];

const STORM: &[Key] = &[
    ("name", 0.95, &["\"10-yr\"", "\"2-yr\"", "\"burst\""]),
    ("pattern", 0.8, &["\"nrcs-type-ii\"", "\"nrcs-type-ia\"", "\"uniform\"", "\"table\""]),
    ("depth", 0.8, &["\"4.8 in\"", "\"40 mm\"", "2"]),
    ("duration", 0.4, &["\"24 h\"", "\"6 h\"", "\"1 h\""]),
    ("table", 0.3, &["[[0.0, 0.0], [0.5, 0.7], [1.0, 1.0]]"]),
    ("gauge", 0.15, &["\"rain.csv\"", "\"sparse.csv\"", "\"missing.csv\""]),
    ("interval", 0.05, &["\"15 min\"", "\"5 min\""]),
    ("missing", 0.1, &["\"zero\"", "\"error\""]),
];

const CATCHMENT: &[Key] = &[
    ("name", 0.95, NAMES),
    ("condition", 0.6, CONDITIONS),
    ("area", 0.8, &["\"5 ac\"", "\"2 ha\"", "3.5"]),
    ("to", 0.9, TARGETS),
    ("cn", 0.6, &["70", "98", "55.5"]),
    ("tc", 0.5, &["\"12 min\"", "\"1 h\"", "\"0.2 h\""]),
    ("lambda", 0.1, &["0.2", "0.05"]),
    ("lag", 0.1, &["\"5 min\"", "\"0 min\""]),
    ("prf", 0.05, &["484", "300"]),
];

const COVER: &[Key] = &[
    ("cn", 0.5, &["98", "74"]),
    ("land", 0.4, &["\"open-space-good\"", "\"impervious\"", "\"woods-good\""]),
    ("soil", 0.4, &["\"B\"", "\"C\"", "\"d\""]),
    ("area", 0.8, &["\"2.5 ac\"", "\"1 ha\"", "1"]),
];

const FLOW: &[Key] = &[
    ("kind", 0.9, &["\"sheet\"", "\"shallow\"", "\"channel\""]),
    ("n", 0.6, &["0.15", "0.013", "\"smooth\"", "\"grass-dense\""]),
    ("surface", 0.4, &["\"paved\"", "\"unpaved\""]),
    ("length", 0.8, &["\"100 ft\"", "\"30 m\"", "400"]),
    ("slope", 0.8, &["0.02", "\"1.5 %\""]),
    (
        "section",
        0.4,
        &[
            "{ shape = \"pipe\", diameter = \"18 in\" }",
            "{ shape = \"trapezoid\", bottom = \"2 ft\", side = 3.0, depth = \"1 ft\" }",
            "{ flow_area = 4.5, perimeter = 6.1 }",
            "{ shape = \"trapezoid\", bottom = 0, side = 0, depth = 1 }",
        ],
    ),
];

const POND: &[Key] = &[
    ("name", 0.95, &["\"Pond 1\"", "\"Pond 2\""]),
    ("condition", 0.5, CONDITIONS),
    ("to", 0.9, TARGETS),
    (
        "stage_area",
        0.6,
        &["[[100.0, 4000.0], [102.0, 6000.0], [104.0, 8500.0]]", "[[10.0, 0.0], [11.0, 50.0]]"],
    ),
    ("stage_volume", 0.2, &["[[100.0, 0.0], [102.0, 9000.0], [104.0, 24000.0]]"]),
    (
        "basin",
        0.1,
        &["{ bottom = 100.0, length = \"80 ft\", width = \"40 ft\", side = 3.0, depth = \"6 ft\" }"],
    ),
    ("start", 0.1, &["100.0", "101.5"]),
    ("top", 0.4, &["104.0", "106.0"]),
    ("top_length", 0.05, &["\"20 ft\""]),
    ("min_freeboard", 0.1, &["\"1 ft\"", "\"0.5 ft\""]),
    ("max_drain_time", 0.1, &["\"72 h\""]),
];

const OUTLET: &[Key] = &[
    (
        "kind",
        0.9,
        &[
            "\"orifice\"",
            "\"weir\"",
            "\"spillway\"",
            "\"riser\"",
            "\"v-notch\"",
            "\"rectangular-orifice\"",
            "\"rating\"",
        ],
    ),
    ("invert", 0.5, &["100.0", "101.0", "{ min = 100.0, max = 103.0 }"]),
    ("crest", 0.4, &["102.5", "103.0"]),
    ("diameter", 0.4, &["\"6 in\"", "{ min = \"2 in\", max = \"24 in\" }"]),
    ("width", 0.1, &["\"1 ft\""]),
    ("height", 0.1, &["\"0.5 ft\""]),
    ("length", 0.3, &["\"3 ft\"", "{ min = 1, max = 20 }"]),
    ("angle", 0.1, &["90", "{ min = 20, max = 120 }"]),
    ("cd", 0.1, &["0.61", "0.6"]),
    ("coefficient", 0.1, &["3.33", "2.6"]),
    ("contractions", 0.1, &["0", "2"]),
    ("table", 0.1, &["[[103.0, 0.0], [104.0, 12.0], [105.0, 60.0]]"]),
];

const INFLOW: &[Key] = &[
    ("name", 0.95, &["\"In 1\"", "\"In 2\""]),
    ("condition", 0.4, CONDITIONS),
    ("to", 0.9, TARGETS),
    ("storm", 0.3, &["\"10-yr\"", "\"2-yr\""]),
    ("table", 0.8, &["[[0.0, 0.0], [0.5, 12.0], [1.0, 30.0], [3.0, 0.0]]"]),
    ("lag", 0.1, &["\"10 min\""]),
];

const POINT: &[Key] = &[
    ("name", 0.95, &["\"out\"", "\"P2\""]),
    (
        "limit",
        0.6,
        &["\"existing\"", "\"50% existing\"", "\"12 cfs\"", "\"0.1 cfs/ac\"", "\"none\"", "\"existing 10-yr\""],
    ),
    ("limits", 0.2, &["{ \"10-yr\" = \"existing\" }", "{ \"2-yr\" = \"1 cfs\" }"]),
    ("durations", 0.05, &["{ from = \"10% Q2\", to = \"Q10\" }"]),
];

const RECORD: &[Key] = &[
    ("name", 0.95, &["\"rec\"", "\"rec-2\""]),
    ("gauge", 0.9, &["\"rain.csv\"", "\"sparse.csv\""]),
    ("missing", 0.4, &["\"zero\""]),
    ("moisture", 0.3, &["\"event\"", "\"continuous\""]),
    ("dry_gap", 0.2, &["\"6 h\"", "\"30 min\""]),
    ("step", 0.1, &["\"15 min\"", "\"5 min\""]),
    ("antecedent", 0.1, &["\"amc\"", "\"none\""]),
];

fn catchment() -> BoxedStrategy<String> {
    (lines(CATCHMENT), tables("catchment.cover", lines(COVER), 3), tables("catchment.flow", lines(FLOW), 4))
        .prop_map(|(a, b, c)| format!("{a}{b}{c}"))
        .boxed()
}

fn pond() -> BoxedStrategy<String> {
    (lines(POND), tables("pond.outlet", lines(OUTLET), 4))
        .prop_map(|(a, b)| format!("{a}{b}"))
        .boxed()
}

fn scenario_text() -> impl Strategy<Value = String> {
    (
        lines(TOP),
        tables("storm", lines(STORM), 3),
        tables("catchment", catchment(), 4),
        tables("pond", pond(), 3),
        tables("inflow", lines(INFLOW), 2),
        tables("point", lines(POINT), 3),
        tables("record", lines(RECORD), 2),
    )
        .prop_map(|(top, s, c, p, i, pt, r)| format!("{top}{s}{c}{p}{i}{pt}{r}"))
}

/// A folder with the rain files the scenarios may name.
fn workdir() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    for (name, text) in [("rain.csv", GOOD_CSV), ("sparse.csv", SPARSE_CSV)] {
        std::fs::write(dir.path().join(name), text).unwrap_or_else(|e| panic!("{e}"));
    }
    dir
}

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, bytes).unwrap_or_else(|e| panic!("{e}"));
    p
}

/// Loads a scenario and, when it loads, runs it the way `runnel run` does
/// (memory check, sizing, storms, records), without writing anything.
/// Returns whether it loaded.
fn load_and_run(path: &Path) -> bool {
    let mut study = match runnel::scenario::load(path) {
        Ok(s) => s,
        Err(e) => {
            // Every refusal is a message, never an empty one.
            assert!(!e.to_string().trim().is_empty());
            assert!(matches!(e.exit_code(), 2 | 3));
            return false;
        }
    };
    study.memory_limit_bytes = study.memory_limit_bytes.min(FUZZ_MEMORY_LIMIT_BYTES);
    if runnel::cli::run::check_memory(&study).is_err() {
        return true;
    }
    if runnel::sizing::solve(&mut study).is_err() {
        return true;
    }
    let a = runnel::analysis::analyse(&study);
    assert_eq!(a.storms.len(), study.storms.len());
    let _ = runnel::records::run(&study, false);
    true
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 110, failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn scenarios_built_from_the_contracts_keys_never_panic(text in scenario_text()) {
        let dir = workdir();
        let p = write(dir.path(), "scenario.toml", text.as_bytes());
        load_and_run(&p);
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 40, failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn random_bytes_as_a_scenario_never_panic(
        bytes in prop_oneof![
            proptest::collection::vec(any::<u8>(), 0..400),
            "[a-z_\\[\\]=\"{}, .0-9\n-]{0,300}".prop_map(String::into_bytes),
        ]
    ) {
        let dir = workdir();
        let p = write(dir.path(), "scenario.toml", &bytes);
        load_and_run(&p);
    }
}

/// A scenario whose one storm reads `gauge.csv` (`missing` as given).
fn gauge_scenario(missing_zero: bool) -> String {
    format!(
        "p2 = \"3 in\"\n[[storm]]\nname = \"g\"\ngauge = \"gauge.csv\"\n{}\
         [[catchment]]\nname = \"A\"\narea = \"4 ac\"\ncn = 80\ntc = \"20 min\"\nto = \"out\"\n\
         [[point]]\nname = \"out\"\n",
        if missing_zero { "missing = \"zero\"\n" } else { "" }
    )
}

fn mutate(mut bytes: Vec<u8>, edits: &[(usize, u8, u8)]) -> Vec<u8> {
    for &(pos, byte, op) in edits {
        let i = pos % (bytes.len() + 1);
        match op {
            0 => bytes.insert(i, byte),
            1 if i < bytes.len() => {
                bytes.remove(i);
            }
            2 if i < bytes.len() => bytes[i] = byte,
            // Duplicate a line-sized chunk, to make repeats and reorders.
            _ => {
                let end = (i + 18).min(bytes.len());
                let chunk: Vec<u8> = bytes.get(i..end).unwrap_or_default().to_vec();
                let at = (pos / 7) % (bytes.len() + 1);
                bytes.splice(at..at, chunk);
            }
        }
    }
    bytes
}

fn gauge_bytes() -> impl Strategy<Value = Vec<u8>> {
    prop_oneof![
        proptest::collection::vec(any::<u8>(), 0..300),
        (
            select(&[GOOD_CSV, SPARSE_CSV][..]),
            proptest::collection::vec((any::<usize>(), any::<u8>(), 0u8..4), 1..6),
        )
            .prop_map(|(csv, edits)| mutate(csv.as_bytes().to_vec(), &edits)),
        (
            select(&[GOOD_CSV, SPARSE_CSV][..]),
            proptest::collection::vec((any::<usize>(), select(&b"0123456789:-., T\n+Z"[..]), 0u8..4), 1..6),
        )
            .prop_map(|(csv, edits)| mutate(csv.as_bytes().to_vec(), &edits)),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 50, failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn random_and_mutated_gauge_files_never_panic(
        bytes in gauge_bytes(),
        interval_s in prop_oneof![Just(None), Just(Some(900i64)), Just(Some(7i64)), Just(Some(0i64)), Just(Some(-60i64))],
        missing_zero in any::<bool>(),
    ) {
        let opts = GaugeOptions { interval_s, missing_zero, max_intervals: 200_000 };
        match parse_gauge(&bytes, &opts) {
            Ok(s) => {
                prop_assert!(s.interval_s > 0);
                prop_assert!(!s.depth.is_empty() && s.depth.len() <= 200_000);
                prop_assert!(s.depth.iter().all(|d| d.is_finite() && *d >= 0.0));
            }
            Err(e) => prop_assert!(!e.message.is_empty()),
        }
        // The same file through a scenario: the error mapping (line, column,
        // snippet) must not panic either.
        let dir = workdir();
        write(dir.path(), "gauge.csv", &bytes);
        let p = write(dir.path(), "scenario.toml", gauge_scenario(missing_zero).as_bytes());
        load_and_run(&p);
    }
}
