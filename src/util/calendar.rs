//! The one calendar of runnel: proleptic Gregorian dates, years, months and
//! time stamps, built on `chrono`.
//!
//! Times inside runnel are whole seconds since 1970-01-01T00:00 (naive
//! local time as the gauge file wrote it, or UTC when it gave an offset);
//! days are counted from the same origin. The functions here convert those
//! counts to and from calendar dates and text. chrono's dates span about
//! ±262,000 years; day counts beyond that are clamped to its first or last
//! date (gauge files, whose years have four digits, never come near).
//!
//! There is no hand-written fast path: the gauge parser converts a date once
//! per calendar day of rows (its own cache skips the rest), so the chrono
//! conversion does not show in its benchmark.

use chrono::{Datelike, Month, NaiveDate, NaiveDateTime, NaiveTime, SecondsFormat, Utc};

/// Seconds in a calendar day (runnel's times have no leap seconds).
pub const DAY_S: i64 = 86_400;

/// chrono's day number (days from 0001-01-01 = day 1) of 1970-01-01.
const EPOCH_DAYS_FROM_CE: i64 = 719_163;

/// The date of day `z`, counted from 1970-01-01 (day 0), clamped to
/// chrono's first and last dates.
pub fn date_of_day(z: i64) -> NaiveDate {
    let first = i64::from(NaiveDate::MIN.num_days_from_ce());
    let last = i64::from(NaiveDate::MAX.num_days_from_ce());
    let ce = z.saturating_add(EPOCH_DAYS_FROM_CE).clamp(first, last);
    i32::try_from(ce)
        .ok()
        .and_then(NaiveDate::from_num_days_from_ce_opt)
        .unwrap_or(if z < 0 {
            NaiveDate::MIN
        } else {
            NaiveDate::MAX
        })
}

/// Day number of `date`, counted from 1970-01-01 (day 0).
pub fn day_of_date(date: NaiveDate) -> i64 {
    i64::from(date.num_days_from_ce()) - EPOCH_DAYS_FROM_CE
}

/// Day number (from 1970-01-01) of the date `y-m-d`, or `None` when there
/// is no such date (month not 1-12, day not in its month, or beyond
/// chrono's range).
pub fn day_number(y: i32, m: u32, d: u32) -> Option<i64> {
    NaiveDate::from_ymd_opt(y, m, d).map(day_of_date)
}

/// (year, month 1-12, day 1-31) of day `z`, counted from 1970-01-01.
pub fn civil_from_days(z: i64) -> (i32, u32, u32) {
    let date = date_of_day(z);
    (date.year(), date.month(), date.day())
}

/// Calendar year of `s` seconds since 1970-01-01T00:00.
pub fn year_of(s: i64) -> i32 {
    date_of_day(s.div_euclid(DAY_S)).year()
}

/// Calendar month (1-12) of `s` seconds since 1970-01-01T00:00.
pub fn month_of(s: i64) -> u32 {
    date_of_day(s.div_euclid(DAY_S)).month()
}

/// Days in month `m` (1-12) of year `y`; `None` for a month outside 1-12.
pub fn days_in_month(y: i32, m: u32) -> Option<u32> {
    let month = Month::try_from(u8::try_from(m).ok()?).ok()?;
    month.num_days(y).map(u32::from)
}

/// English name of month `m` (1-12), or `""` outside 1-12.
pub fn month_name(m: u32) -> &'static str {
    u8::try_from(m)
        .ok()
        .and_then(|m| Month::try_from(m).ok())
        .map_or("", |month| month.name())
}

/// Fractional year of the start of day `z` (counted from 1970-01-01):
/// the year plus the days since its 1 January over the days in the year.
pub fn decimal_year(z: i64) -> f64 {
    let date = date_of_day(z);
    let len = if date.leap_year() { 366.0 } else { 365.0 };
    f64::from(date.year()) + f64::from(date.ordinal0()) / len
}

/// `YYYY-MM-DD` of day `z`, counted from 1970-01-01.
pub fn format_date(z: i64) -> String {
    date_of_day(z).format("%Y-%m-%d").to_string()
}

/// The date and time `s` seconds after 1970-01-01T00:00 (clamped like
/// [`date_of_day`]).
pub fn date_time_of(s: i64) -> NaiveDateTime {
    let sod = u32::try_from(s.rem_euclid(DAY_S)).unwrap_or(0);
    let time = NaiveTime::from_num_seconds_from_midnight_opt(sod, 0).unwrap_or(NaiveTime::MIN);
    date_of_day(s.div_euclid(DAY_S)).and_time(time)
}

/// `YYYY-MM-DDTHH:MM:SS` for `s` seconds since 1970-01-01T00:00 (naive).
pub fn format_timestamp(s: i64) -> String {
    date_time_of(s).format("%Y-%m-%dT%H:%M:%S").to_string()
}

/// The current UTC time as `YYYY-MM-DDTHH:MM:SSZ` (the run's time stamp).
pub fn now_utc() -> String {
    Utc::now().to_rfc3339_opts(SecondsFormat::Secs, true)
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Howard Hinnant's public-domain `days_from_civil` ("chrono-Compatible
    /// Low-Level Date Algorithms"), the hand-written conversion runnel used
    /// before chrono: kept here only as an independent check that the
    /// change of library moved no date.
    fn hinnant_days_from_civil(y: i64, m: i64, d: i64) -> i64 {
        let y = if m <= 2 { y - 1 } else { y };
        let era = y.div_euclid(400);
        let yoe = y - era * 400;
        let mp = (m + 9).rem_euclid(12);
        let doy = (153 * mp + 2) / 5 + d - 1;
        let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
        era * 146_097 + doe - 719_468
    }

    #[test]
    fn known_dates() {
        // Unix time convention (POSIX): 1970-01-01 is day 0,
        // 1_700_000_000 s is 2023-11-14T22:13:20; common practice, no
        // published hydrologic source.
        assert_eq!(day_number(1970, 1, 1), Some(0));
        assert_eq!(day_number(2000, 3, 1), Some(11_017));
        assert_eq!(day_number(1969, 12, 31), Some(-1));
        assert_eq!(civil_from_days(11_017), (2000, 3, 1));
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
        assert_eq!(format_timestamp(1_700_000_000), "2023-11-14T22:13:20");
        assert_eq!(format_timestamp(-1), "1969-12-31T23:59:59");
        assert_eq!(format_date(10_957), "2000-01-01");
        // POSIX.1 "Seconds Since the Epoch": 2000-01-01T00:00Z is
        // 946 684 800 s (from memory).
        assert_eq!(day_number(2000, 1, 1), Some(946_684_800 / DAY_S));
        assert_eq!(month_of(1_700_000_000), 11);
        assert_eq!(year_of(1_700_000_000), 2023);
        assert_eq!(year_of(-1), 1969);
    }

    #[test]
    fn months_and_leap_years() {
        // Gregorian rule: 2000 and 2024 are leap years, 1900 and 2023 are not.
        assert_eq!(days_in_month(2000, 2), Some(29));
        assert_eq!(days_in_month(1900, 2), Some(28));
        assert_eq!(days_in_month(2024, 2), Some(29));
        assert_eq!(days_in_month(2023, 2), Some(28));
        assert_eq!(days_in_month(2023, 4), Some(30));
        assert_eq!(days_in_month(2023, 12), Some(31));
        assert_eq!(days_in_month(2023, 0), None);
        assert_eq!(days_in_month(2023, 13), None);
        assert_eq!(day_number(2023, 2, 29), None);
        assert_eq!(day_number(2023, 13, 1), None);
        assert_eq!(month_name(1), "January");
        assert_eq!(month_name(12), "December");
        assert_eq!(month_name(13), "");
        assert!((decimal_year(0) - 1970.0).abs() < 1e-12);
        let z = day_number(2001, 7, 2).unwrap_or(0);
        assert!((decimal_year(z) - (2001.0 + 182.0 / 365.0)).abs() < 1e-12);
    }

    #[test]
    fn every_day_of_years_0_to_9999_matches_the_hand_written_conversion() {
        // Every date a gauge file can hold (four-digit years).
        let mut z = hinnant_days_from_civil(0, 1, 1);
        for y in 0..=9999 {
            for m in 1..=12u32 {
                let n = days_in_month(y, m).unwrap_or(0);
                for d in 1..=n {
                    let h = hinnant_days_from_civil(i64::from(y), i64::from(m), i64::from(d));
                    assert_eq!(h, z, "{y}-{m}-{d}");
                    assert_eq!(day_number(y, m, d), Some(h), "{y}-{m}-{d}");
                    assert_eq!(civil_from_days(h), (y, m, d));
                    z += 1;
                }
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        #[test]
        fn conversions_round_trip(z in -90_000_000i64..90_000_000) {
            let (y, m, d) = civil_from_days(z);
            prop_assert_eq!(
                hinnant_days_from_civil(i64::from(y), i64::from(m), i64::from(d)),
                z
            );
            prop_assert_eq!(day_number(y, m, d), Some(z));
            // The next day is the next calendar date.
            prop_assert!(civil_from_days(z + 1) > (y, m, d));
            let s = z * DAY_S + 45_296;
            prop_assert_eq!(month_of(s), m);
            prop_assert_eq!(year_of(s), y);
            if (0..=9999).contains(&y) {
                prop_assert_eq!(
                    format_timestamp(s),
                    format!("{y:04}-{m:02}-{d:02}T12:34:56")
                );
            }
        }
    }

    #[test]
    fn extremes_clamp_without_panicking() {
        assert_eq!(date_of_day(i64::MAX), NaiveDate::MAX);
        assert_eq!(date_of_day(i64::MIN), NaiveDate::MIN);
        let _ = format_timestamp(i64::MAX);
        let _ = format_timestamp(i64::MIN);
        let _ = decimal_year(i64::MIN);
        assert_eq!(day_number(i32::MAX, 12, 31), None);
        assert_eq!(day_number(2000, u32::MAX, u32::MAX), None);
        assert_eq!(days_in_month(2000, u32::MAX), None);
    }

    #[test]
    fn run_stamp_has_the_documented_form() {
        let s = now_utc();
        let b = s.as_bytes();
        assert_eq!(b.len(), 20, "{s}");
        assert_eq!(
            (b[4], b[7], b[10], b[13], b[16], b[19]),
            (b'-', b'-', b'T', b':', b':', b'Z')
        );
    }
}
