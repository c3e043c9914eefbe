//! Writes an invented hourly rainfall record for the demo site with a
//! Poisson rectangular-pulse model: storms arrive as a Poisson process,
//! each with an exponentially distributed duration and a constant,
//! exponentially distributed intensity (the rectangular pulses of
//! Rodriguez-Iturbe, Cox & Isham 1987 in their simplest form; from memory).
//! Pulses may overlap and add. The parameters are invented and vary by
//! month to give a wetter summer; the output is demo data only.
//!
//! `cargo run --release --example rain_generator -- OUT.csv [YEARS] [SEED]`
//! writes `time,depth` rows (inches per hour, END of each hour), only for
//! rainy hours plus the first and the last: read it with `missing = "zero"`.

use runnel::util::calendar::{civil_from_days, day_number};
use std::io::Write;

/// Day number of a date the generator knows exists.
fn days_from_civil(y: i32, m: u32, d: u32) -> i64 {
    day_number(y, m, d).unwrap_or_else(|| panic!("{y}-{m}-{d}"))
}

/// SplitMix64: a small, well-known generator (Steele, Lea & Flood 2014).
struct Rng(u64);

impl Rng {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in (0, 1).
    fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    /// Exponential with the given mean.
    fn exponential(&mut self, mean: f64) -> f64 {
        -mean * self.uniform().ln()
    }
}

/// Invented monthly parameters: (mean hours between storm arrivals,
/// mean storm duration h, mean intensity in/h).
const MONTHLY: [(f64, f64, f64); 12] = [
    (110.0, 9.0, 0.045),
    (105.0, 9.0, 0.048),
    (95.0, 8.0, 0.054),
    (85.0, 7.0, 0.063),
    (80.0, 5.0, 0.083),
    (75.0, 4.0, 0.112),
    (72.0, 3.0, 0.143),
    (75.0, 3.0, 0.135),
    (85.0, 4.0, 0.105),
    (95.0, 6.0, 0.068),
    (105.0, 8.0, 0.053),
    (110.0, 9.0, 0.045),
];

fn main() -> std::io::Result<()> {
    let args: Vec<String> = std::env::args().collect();
    let out = args
        .get(1)
        .cloned()
        .unwrap_or_else(|| "examples/rain/wrenfield-hourly.csv".into());
    let years: i64 = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(30);
    let seed: u64 = args
        .get(3)
        .and_then(|s| s.parse().ok())
        .unwrap_or(20_261_201);
    let start_day = days_from_civil(1995, 1, 1);
    let hours = (days_from_civil(1995 + years as i32, 1, 1) - start_day) as usize * 24;
    let mut rain = vec![0.0f64; hours];
    let mut rng = Rng(seed);
    let mut t = 0.0f64;
    loop {
        let day = start_day + (t / 24.0) as i64;
        let month = civil_from_days(day).1 as usize;
        let (gap, dur, inten) = MONTHLY[month - 1];
        t += rng.exponential(gap);
        if t >= hours as f64 {
            break;
        }
        let d = rng.exponential(dur).max(0.25);
        let i = rng.exponential(inten);
        // Spread the pulse over the hours it covers, in proportion to overlap.
        let (a, b) = (t, (t + d).min(hours as f64));
        let mut h = a.floor() as usize;
        while (h as f64) < b && h < hours {
            let overlap = (b.min(h as f64 + 1.0) - a.max(h as f64)).max(0.0);
            rain[h] += i * overlap;
            h += 1;
        }
    }
    let mut w = std::io::BufWriter::new(std::fs::File::create(&out)?);
    writeln!(w, "time,depth")?;
    let mut rows = 0usize;
    for (h, r) in rain.iter().enumerate() {
        let r = (r * 1000.0).round() / 1000.0;
        if r > 0.0 || h == 0 || h + 1 == hours {
            let end = (h + 1) as i64;
            let (y, m, d) = civil_from_days(start_day + end.div_euclid(24));
            writeln!(
                w,
                "{y:04}-{m:02}-{d:02} {:02}:00,{r:.3}",
                end.rem_euclid(24)
            )?;
            rows += 1;
        }
    }
    let total: f64 = rain.iter().sum();
    eprintln!(
        "wrote {out}: {years} years, {rows} rows, mean annual rain {:.1} in",
        total / years as f64
    );
    Ok(())
}
