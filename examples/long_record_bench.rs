//! Speed and memory of a whole `runnel run` on a 100-year, 5-minute record
//! (10.5 million intervals, dense CSV): two conditions, three catchments,
//! one pond, one point, in event and in continuous soil-moisture mode
//! (the latter with a connected impervious share). Writes the invented CSV and scenarios into a
//! temporary folder, runs the release binary on each and prints the time of
//! the whole run, the intervals per second of each stage (reading, excess,
//! convolution, routing, statistics) and the peak memory.
//!
//! `cargo build --release && cargo run --release --example long_record_bench`

use std::fmt::Write as _;
use std::io::Write;
use std::time::Instant;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let dir = std::env::temp_dir().join(format!("runnel-long-record-{}", std::process::id()));
    std::fs::create_dir_all(&dir)?;
    let csv = dir.join("rain-5min-100yr.csv");
    let t0 = Instant::now();
    // Dense 5-minute record, 1925-2024, with invented storms every ~4 days.
    let start =
        runnel::util::calendar::day_number(1925, 1, 1).unwrap_or_else(|| panic!("a date")) * 86_400;
    let end =
        runnel::util::calendar::day_number(2025, 1, 1).unwrap_or_else(|| panic!("a date")) * 86_400;
    let n = ((end - start) / 300) as usize;
    let mut w = std::io::BufWriter::with_capacity(1 << 20, std::fs::File::create(&csv)?);
    writeln!(w, "time,depth")?;
    let mut line = String::with_capacity(32);
    let mut state: u64 = 12_345;
    for k in 1..=n {
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        let storm = (k / 1152) % 3 == 0 && (k % 1152) < 36;
        let d = if storm {
            ((state >> 40) % 40) as f64 / 1000.0
        } else {
            0.0
        };
        line.clear();
        let ts = runnel::util::calendar::format_timestamp(start + k as i64 * 300);
        let _ = write!(line, "{} {},{d:.3}", &ts[..10], &ts[11..16]);
        writeln!(w, "{line}")?;
    }
    w.flush()?;
    eprintln!("wrote {} rows in {:.1} s", n, t0.elapsed().as_secs_f64());
    let scenario = dir.join("long.toml");
    std::fs::write(
        &scenario,
        r#"title = "Long-record benchmark (invented)"
units = "us"

[[catchment]]
name = "field"
condition = "existing"
area = "12 ac"
cn = 68
tc = "40 min"
to = "outlet"

[[catchment]]
name = "roofs and lots"
condition = "proposed"
area = "8 ac"
cn = 92
tc = "15 min"
to = "basin"

[[catchment]]
name = "open strip"
condition = "proposed"
area = "4 ac"
cn = 70
tc = "25 min"
to = "outlet"

[[pond]]
name = "basin"
condition = "proposed"
to = "outlet"
stage_area = [[100.0, 9000.0], [102.0, 12000.0], [104.0, 15500.0], [106.0, 19500.0]]
top = 106.0
[[pond.outlet]]
kind = "orifice"
invert = 100.0
diameter = "5 in"
[[pond.outlet]]
kind = "weir"
crest = 103.0
length = "4 ft"

[[point]]
name = "outlet"
durations = { from = "10% Q2", to = "Q10", tolerance = "10%" }

[[record]]
name = "100 years"
gauge = "rain-5min-100yr.csv"
moisture = "event"
"#,
    )?;
    // The same study in continuous soil-moisture mode, with the roofs and
    // lots split into connected impervious cover and the rest.
    let continuous = dir.join("long-continuous.toml");
    let text = std::fs::read_to_string(&scenario)?
        .replace(
            "cn = 92\ntc = \"15 min\"\nto = \"basin\"\n",
            "tc = \"15 min\"\nto = \"basin\"\n[[catchment.cover]]\ncn = 98\narea = \"3 ac\"\n[[catchment.cover]]\ncn = 86\narea = \"5 ac\"\n",
        )
        .replace(
            "moisture = \"event\"\n",
            "moisture = \"continuous\"\npet = [\"0.6 mm\", \"0.9 mm\", \"1.7 mm\", \"2.8 mm\", \"3.9 mm\", \"4.6 mm\", \"5.0 mm\", \"4.3 mm\", \"3.1 mm\", \"1.9 mm\", \"0.9 mm\", \"0.5 mm\"]\n",
        );
    std::fs::write(&continuous, text)?;
    let exe = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/release/runnel");
    for (label, scenario) in [("event", &scenario), ("continuous", &continuous)] {
        println!("{label} soil moisture:");
        run_once(&exe, scenario, &dir.join(format!("out-{label}")), n);
    }
    if std::env::var_os("KEEP").is_some() {
        eprintln!("kept {}", dir.display());
    } else {
        let _ = std::fs::remove_dir_all(&dir);
    }
    Ok(())
}

/// Runs the release binary on one scenario and prints its time, memory and stages.
fn run_once(exe: &std::path::Path, scenario: &std::path::Path, out: &std::path::Path, n: usize) {
    let t1 = Instant::now();
    let status = std::process::Command::new("/usr/bin/time")
        .env("RUNNEL_TIMINGS", "1")
        .arg("-v")
        .arg(exe)
        .args([
            "run",
            &scenario.to_string_lossy(),
            "--out",
            &out.to_string_lossy(),
            "--quiet",
        ])
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::piped())
        .output();
    let wall = t1.elapsed().as_secs_f64();
    match status {
        Ok(o) if !matches!(o.status.code(), Some(0 | 1)) => {
            println!(
                "the run failed ({}):\n{}",
                o.status,
                String::from_utf8_lossy(&o.stderr)
            );
        }
        Ok(o) => {
            let err = String::from_utf8_lossy(&o.stderr);
            let rss = err
                .lines()
                .find(|l| l.contains("Maximum resident set size"))
                .unwrap_or("");
            println!(
                "whole run: {wall:.2} s for {n} intervals ({:.1} million intervals/s); {}",
                n as f64 / wall / 1e6,
                rss.trim()
            );
            // Per stage (intervals of the record per second of that stage).
            for l in err.lines().filter(|l| l.starts_with("timings:")) {
                println!("{l}");
            }
        }
        Err(e) => println!("could not run {}: {e}", exe.display()),
    }
}
