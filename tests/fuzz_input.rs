//! Property tests: no input makes runnel panic. Scenario contract, "Command
//! line" (bad input is exit code 2, "never a Rust panic or backtrace").
//!
//! (a) Scenarios assembled from the contract's keys and tables, then broken
//! by a few edits (values replaced by zero, negative, huge, NaN or infinite
//! numbers, strings with wrong or no units, wrong types; lines deleted,
//! repeated or inserted), are loaded with `scenario::load`; when one loads,
//! it is analysed and its records run as `runnel run` would. (b) Random
//! bytes are loaded as scenarios. (c) Random bytes and mutated valid CSVs
//! are read as gauge files, directly and through scenarios (as a storm's
//! rain, a long record, an inflow hydrograph file). Errors are fine; a
//! panic fails the test (proptest reports it).

use proptest::prelude::*;
use proptest::sample::select;
use proptest::test_runner::TestRunner;
use runnel::input::gauge::{GaugeOptions, parse_gauge};
use std::cell::Cell;
use std::path::{Path, PathBuf};

/// Memory cap for one fuzzed run, so that a case that loads but would need
/// a huge series is refused as `runnel run` refuses it, only sooner.
const FUZZ_MEMORY_LIMIT_BYTES: u64 = 256 * 1024 * 1024;

const GOOD_CSV: &str = "time,depth\n2024-06-03 00:15,0.00\n2024-06-03 00:30,0.10\n\
2024-06-03 00:45,0.35\n2024-06-03 01:00,0.20\n2024-06-03 01:15,0.05\n2024-06-03 01:30,0.00\n";

const SPARSE_CSV: &str = "time,cumulative\r\n2024-06-03T00:15:00Z,0.0\r\n\
2024-06-03T00:30:00Z,0.4\r\n2024-06-03T02:00:00Z,1.1\r\n";

/// An inflow hydrograph file (`time_h,flow`), mutated like the gauges.
const HYDRO_CSV: &str = "time_h,flow\n0.0,0.0\n0.5,3.5\n1.0,8.0\n2.0,1.0\n3.0,0.0\n";

/// Values that break something: zero, negative, huge, tiny, NaN and
/// infinity, strings with wrong or no units, wrong types, bad tables.
const JUNK: &[&str] = &[
    "0",
    "-1",
    "-0.0",
    "1e300",
    "-1e300",
    "1e-300",
    "nan",
    "inf",
    "-inf",
    "0.5",
    "3",
    "1e9",
    "9223372036854775807",
    "-9223372036854775808",
    "true",
    "[]",
    "[1, 2]",
    "{}",
    "[[]]",
    "{ min = 1, max = 0 }",
    "{ min = \"2 in\", max = \"24 in\" }",
    "{ min = 0, max = 1e300 }",
    "\"\"",
    "\"abc\"",
    "\"5 ft\"",
    "\"5\"",
    "\"-5 in\"",
    "\"nan ac\"",
    "\"inf h\"",
    "\"1e400 ft\"",
    "\"2 %\"",
    "\"12 min\"",
    "\"1e9 h\"",
    "\"0 s\"",
    "\"1e-9 s\"",
    "\"3 d\"",
    "\"5 acers\"",
    "\"é\"",
    "1979-05-27T07:32:00",
    "[[0.0, 0.0], [1.0, 1.0]]",
    "[[1.0, 0.0], [0.5, 2.0]]",
    "[[0.0, nan], [1.0, inf]]",
    "[[100.0, -1.0], [101.0, 0.0]]",
    "[[100.0]]",
    "[\"existing\", 3]",
];

type Pool = &'static [&'static str];

fn pick(pool: Pool) -> BoxedStrategy<String> {
    select(pool).prop_map(str::to_string).boxed()
}

/// Assembles `[[HEADER]]` tables from bodies, giving the i-th table the
/// i-th name of `names` (so that `to`, `storm` and `limits` can find them).
fn tables(
    header: &'static str,
    names: Pool,
    body: BoxedStrategy<String>,
    count: std::ops::RangeInclusive<usize>,
) -> BoxedStrategy<String> {
    proptest::collection::vec(body, count)
        .prop_map(move |v| {
            v.into_iter()
                .enumerate()
                .map(|(i, b)| {
                    let name = names.get(i).copied().unwrap_or("extra");
                    format!("[[{header}]]\nname = \"{name}\"\n{b}")
                })
                .collect()
        })
        .boxed()
}

const STORMS: Pool = &["10-yr", "2-yr", "burst"];
const CATCHMENTS: Pool = &["A", "B", "C"];
const PONDS: Pool = &["Pond 1", "Pond 2"];
const INFLOWS: Pool = &["In 1", "In 2"];
const POINTS: Pool = &["out", "P2"];
const RECORDS: Pool = &["rec", "rec-2"];

const CONDITIONS: Pool = &[
    "",
    "",
    "",
    "condition = \"existing\"\n",
    "condition = \"proposed\"\n",
    "condition = [\"existing\", \"proposed\"]\n",
];
const TARGETS: Pool = &[
    "to = \"out\"\n",
    "to = \"out\"\n",
    "to = \"out\"\n",
    "to = \"out\"\n",
    "to = \"out\"\n",
    "to = \"P2\"\n",
    "to = \"Pond 1\"\n",
    "to = \"Pond 1\"\n",
    "to = \"Pond 2\"\n",
];

const TOP: Pool = &[
    "title = \"fuzz site\"\n",
    "units = \"si\"\n",
    "units = \"us\"\n",
    "step = \"2 min\"\n",
    "step = \"6 min\"\n",
    "baseline = \"proposed\"\n",
    "memory_limit = \"1 GB\"\n",
];

const STORM_BODIES: Pool = &[
    "pattern = \"nrcs-type-ii\"\ndepth = \"4.8 in\"\n",
    "pattern = \"nrcs-type-ia\"\ndepth = \"60 mm\"\nduration = \"24 h\"\n",
    "pattern = \"nrcs-type-iii\"\ndepth = 3\n",
    "pattern = \"uniform\"\ndepth = \"1 in\"\nduration = \"2 h\"\n",
    "pattern = \"table\"\ntable = [[0.0, 0.0], [0.5, 0.7], [1.0, 1.0]]\ndepth = \"40 mm\"\nduration = \"6 h\"\n",
    "gauge = \"rain.csv\"\n",
    "gauge = \"sparse.csv\"\nmissing = \"zero\"\n",
    "gauge = \"rain.csv\"\ninterval = \"5 min\"\nmissing = \"zero\"\n",
];

const RUNOFF: Pool = &[
    "cn = 70\n",
    "cn = 98\nlambda = 0.05\n",
    "[[catchment.cover]]\ncn = 98\narea = \"3 ac\"\n[[catchment.cover]]\nland = \"open-space-good\"\nsoil = \"C\"\narea = \"2 ac\"\n",
    "[[catchment.cover]]\nland = \"woods-good\"\nsoil = \"b\"\narea = \"5 ac\"\n",
];

const TIMING: Pool = &[
    "tc = \"12 min\"\n",
    "tc = \"1.5 h\"\n",
    "[[catchment.flow]]\nkind = \"sheet\"\nn = 0.15\nlength = \"80 ft\"\nslope = 0.02\n[[catchment.flow]]\nkind = \"shallow\"\nsurface = \"paved\"\nlength = \"300 ft\"\nslope = \"1.5 %\"\n",
    "[[catchment.flow]]\nkind = \"channel\"\nn = 0.013\nlength = \"400 ft\"\nslope = 0.006\nsection = { shape = \"pipe\", diameter = \"18 in\" }\n",
    "[[catchment.flow]]\nkind = \"channel\"\nn = 0.035\nlength = \"900 ft\"\nslope = 0.012\nsection = { shape = \"trapezoid\", bottom = \"2 ft\", side = 3.0, depth = \"1 ft\" }\n",
];

const STORAGE: Pool = &[
    "stage_area = [[100.0, 4000.0], [102.0, 6000.0], [104.0, 8500.0]]\ntop = 104.0\n",
    "stage_volume = [[100.0, 0.0], [102.0, 9000.0], [104.0, 24000.0]]\nmin_freeboard = \"0.5 ft\"\ntop = 104.5\n",
    "basin = { bottom = 100.0, length = \"80 ft\", width = \"40 ft\", side = 3.0, depth = \"6 ft\" }\nmax_drain_time = \"72 h\"\n",
    "stage_area = [[100.0, 400.0], [101.0, 500.0]]\nstart = 100.5\n",
];

const OUTLETS: Pool = &[
    "kind = \"orifice\"\ninvert = 100.0\ndiameter = \"6 in\"\n",
    "kind = \"orifice\"\ninvert = 100.0\ndiameter = { min = \"2 in\", max = \"24 in\" }\n",
    "kind = \"weir\"\ncrest = 102.5\nlength = \"3 ft\"\ncontractions = 2\n",
    "kind = \"weir\"\ncrest = { min = 101.0, max = 103.0 }\nlength = \"3 ft\"\n",
    "kind = \"spillway\"\ncrest = 103.5\nlength = \"10 ft\"\n",
    "kind = \"riser\"\ncrest = 102.0\ndiameter = \"3 ft\"\n",
    "kind = \"v-notch\"\ncrest = 101.0\nangle = 90\n",
    "kind = \"rectangular-orifice\"\ninvert = 100.5\nwidth = \"1 ft\"\nheight = \"0.5 ft\"\n",
    "kind = \"rating\"\ntable = [[101.0, 0.0], [102.0, 4.0], [104.0, 30.0]]\n",
];

const INFLOW_BODIES: Pool = &[
    "table = [[0.0, 0.0], [0.5, 12.0], [1.0, 30.0], [3.0, 0.0]]\n",
    "storm = \"10-yr\"\ntable = [[0.0, 0.0], [1.0, 2.0], [2.0, 0.0]]\nlag = \"10 min\"\n",
];

const LIMITS: Pool = &[
    "",
    "limit = \"existing\"\n",
    "limit = \"50% existing\"\n",
    "limit = \"12 cfs\"\n",
    "limit = \"0.1 cfs/ac\"\n",
    "limit = \"none\"\n",
    "limit = \"existing 10-yr\"\n",
    "limits = { \"10-yr\" = \"existing\", \"2-yr\" = \"1 cfs\" }\n",
];

const RECORD_BODIES: Pool = &[
    "gauge = \"rain.csv\"\n",
    "gauge = \"sparse.csv\"\nmissing = \"zero\"\ndry_gap = \"30 min\"\n",
    "gauge = \"rain.csv\"\nantecedent = \"amc\"\nstep = \"5 min\"\n",
];

fn catchment() -> BoxedStrategy<String> {
    (
        pick(CONDITIONS),
        pick(&[
            "area = \"5 ac\"\n",
            "area = \"5 ac\"\n",
            "area = \"2.0234 ha\"\n",
        ]),
        pick(TARGETS),
        pick(RUNOFF),
        pick(TIMING),
    )
        // Keys first, then the [[catchment.cover]] / [[catchment.flow]] tables.
        .prop_map(|(c, a, t, r, tm)| {
            let (rk, rt) = r.split_at(r.find("[[").unwrap_or(r.len()));
            let (tk, tt) = tm.split_at(tm.find("[[").unwrap_or(tm.len()));
            format!("{c}{a}{t}{rk}{tk}{rt}{tt}")
        })
        .boxed()
}

fn pond() -> BoxedStrategy<String> {
    (
        pick(CONDITIONS),
        pick(&[
            "to = \"out\"\n",
            "to = \"out\"\n",
            "to = \"out\"\n",
            "to = \"Pond 2\"\n",
            "to = \"P2\"\n",
        ]),
        pick(STORAGE),
        proptest::collection::vec(pick(OUTLETS), 1..=3),
    )
        .prop_map(|(c, t, s, outlets)| {
            let o: String = outlets
                .iter()
                .map(|o| format!("[[pond.outlet]]\n{o}"))
                .collect();
            format!("{c}{t}{s}{o}")
        })
        .boxed()
}

fn inflow() -> BoxedStrategy<String> {
    (pick(CONDITIONS), pick(TARGETS), pick(INFLOW_BODIES))
        .prop_map(|(c, t, b)| format!("{c}{t}{b}"))
        .boxed()
}

/// A plausible scenario: every table well formed, the network usually
/// (not always) consistent.
fn plausible() -> BoxedStrategy<String> {
    (
        proptest::collection::vec(pick(TOP), 0..3),
        pick(&["p2 = \"3.2 in\"\n", "p2 = \"80 mm\"\n", "p2 = 3\n", ""]),
        tables("storm", STORMS, pick(STORM_BODIES), 1..=3),
        tables("catchment", CATCHMENTS, catchment(), 1..=2),
        tables("pond", PONDS, pond(), 0..=2),
        tables("inflow", INFLOWS, inflow(), 0..=1),
        tables("point", POINTS, pick(LIMITS), 1..=2),
        tables("record", RECORDS, pick(RECORD_BODIES), 0..=1),
    )
        .prop_map(|(top, p2, s, c, p, i, pt, r)| {
            let mut top: Vec<String> = top;
            top.dedup();
            format!("{}{p2}{s}{c}{p}{i}{pt}{r}", top.concat())
        })
        .boxed()
}

/// Keys of the contract, for lines inserted with junk values.
const KEYS: Pool = &[
    "name",
    "area",
    "to",
    "cn",
    "tc",
    "depth",
    "duration",
    "pattern",
    "table",
    "gauge",
    "step",
    "slope",
    "length",
    "n",
    "diameter",
    "invert",
    "crest",
    "stage_area",
    "stage_volume",
    "top",
    "start",
    "limit",
    "condition",
    "lag",
    "lambda",
    "kind",
    "surface",
    "section",
    "missing",
    "interval",
    "moisture",
    "min_freeboard",
    "max_drain_time",
    "cd",
    "coefficient",
    "p2",
    "units",
    "baseline",
    "dry_gap",
    "nmae",
    "aera",
];

/// One edit of a scenario's text.
#[derive(Debug, Clone)]
enum Edit {
    /// Replace the value of the n-th `key = value` line.
    Value(usize, &'static str),
    /// Delete the n-th line.
    Delete(usize),
    /// Duplicate the n-th line.
    Duplicate(usize),
    /// Insert `key = value` before the n-th line.
    Insert(usize, &'static str, &'static str),
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        4 => (any::<usize>(), select(JUNK)).prop_map(|(n, v)| Edit::Value(n, v)),
        1 => any::<usize>().prop_map(Edit::Delete),
        1 => any::<usize>().prop_map(Edit::Duplicate),
        2 => (any::<usize>(), select(KEYS), select(JUNK)).prop_map(|(n, k, v)| Edit::Insert(n, k, v)),
    ]
}

fn apply(text: &str, edits: &[Edit]) -> String {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    for e in edits {
        if lines.is_empty() {
            break;
        }
        let len = lines.len();
        match *e {
            Edit::Value(n, v) => {
                let keyed: Vec<usize> = (0..len).filter(|&i| lines[i].contains(" = ")).collect();
                if let Some(&i) = keyed.get(n % keyed.len().max(1)) {
                    let key = lines[i].split(" = ").next().unwrap_or("").to_string();
                    lines[i] = format!("{key} = {v}");
                }
            }
            Edit::Delete(n) => {
                lines.remove(n % len);
            }
            Edit::Duplicate(n) => {
                let l = lines[n % len].clone();
                lines.insert(n % len, l);
            }
            Edit::Insert(n, k, v) => lines.insert(n % (len + 1), format!("{k} = {v}")),
        }
    }
    let mut out = lines.join("\n");
    out.push('\n');
    out
}

/// A plausible scenario with 0 to 3 edits that break it.
fn scenario_text() -> impl Strategy<Value = String> {
    (
        plausible(),
        prop_oneof![
            2 => Just(0usize),
            1 => Just(1usize),
            1 => 2usize..=3,
        ]
        .prop_flat_map(|k| proptest::collection::vec(edit(), k)),
    )
        .prop_map(|(text, edits)| apply(&text, &edits))
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
/// (memory check, storms, records; not sizing), without writing anything.
/// Returns whether it loaded.
fn load_and_run(path: &Path) -> bool {
    let mut study = match runnel::input::scenario::load(path) {
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
    // Sizing is left out: it repeats the analysis many times, and a
    // generated range can make it take far too long for a unit of fuzzing.
    match runnel::engine::analysis::analyse(&study) {
        Ok(a) => assert_eq!(a.storms.len(), study.storms.len()),
        // A storm that cannot be simulated is refused as input, with a message.
        Err(e) => {
            assert!(!e.to_string().trim().is_empty());
            assert_eq!(e.exit_code(), 2);
        }
    }
    let _ = runnel::engine::records::run(&study, &runnel::engine::records::Silent);
    true
}

#[test]
fn scenarios_built_from_the_contracts_keys_never_panic() {
    let mut runner = TestRunner::new(ProptestConfig {
        cases: 110,
        failure_persistence: None,
        ..ProptestConfig::default()
    });
    let loaded = Cell::new(0usize);
    let result = runner.run(&scenario_text(), |text| {
        let dir = workdir();
        let p = write(dir.path(), "scenario.toml", text.as_bytes());
        if load_and_run(&p) {
            loaded.set(loaded.get() + 1);
        }
        Ok(())
    });
    if let Err(e) = result {
        panic!("{e}");
    }
    // The generator must reach the simulation, not only the parser.
    assert!(
        loaded.get() >= 10,
        "only {} of 110 fuzzed scenarios loaded",
        loaded.get()
    );
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

/// Scenarios that read `gauge.csv`: as the rain of a storm, as a long
/// record (`missing` as given), and as an inflow hydrograph file.
fn gauge_scenarios(missing_zero: bool) -> [String; 3] {
    let missing = if missing_zero {
        "missing = \"zero\"\n"
    } else {
        ""
    };
    let rest = "[[catchment]]\nname = \"A\"\narea = \"4 ac\"\ncn = 80\ntc = \"20 min\"\n\
                to = \"out\"\n[[point]]\nname = \"out\"\n";
    let design = "[[storm]]\nname = \"d\"\npattern = \"uniform\"\ndepth = 2\nduration = \"3 h\"\n";
    [
        format!("[[storm]]\nname = \"g\"\ngauge = \"gauge.csv\"\n{missing}{rest}"),
        format!("[[record]]\nname = \"r\"\ngauge = \"gauge.csv\"\n{missing}{rest}"),
        format!("{design}[[inflow]]\nname = \"in\"\nto = \"out\"\nfile = \"gauge.csv\"\n{rest}"),
    ]
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
            select(&[GOOD_CSV, SPARSE_CSV, HYDRO_CSV][..]),
            proptest::collection::vec((any::<usize>(), any::<u8>(), 0u8..4), 1..6),
        )
            .prop_map(|(csv, edits)| mutate(csv.as_bytes().to_vec(), &edits)),
        (
            select(&[GOOD_CSV, SPARSE_CSV, HYDRO_CSV][..]),
            proptest::collection::vec(
                (any::<usize>(), select(&b"0123456789:-., T\n+Z"[..]), 0u8..4),
                1..6
            ),
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
        // The same file through scenarios: the error mapping (line, column,
        // snippet) and the runs must not panic either.
        let dir = workdir();
        write(dir.path(), "gauge.csv", &bytes);
        for text in gauge_scenarios(missing_zero) {
            let p = write(dir.path(), "scenario.toml", text.as_bytes());
            load_and_run(&p);
        }
    }
}
