//! Rain-gauge CSV reading (scenario contract, "Rainfall CSV").
//!
//! The caller reads the file; [`parse_gauge`] turns its bytes into a dense
//! series of rain depths per interval. The byte parser is written by hand
//! (no CSV library in the hot loop) so that a century of 5-minute data
//! parses in well under a second. Dates are checked and counted by
//! [`crate::util::calendar`] (chrono), once per calendar day of rows: a
//! cache keeps the day of the last date seen, and the rows of one hour read
//! only their minutes.
//!
//! # File format as read here
//!
//! - The first non-blank line is the header: exactly two comma-separated
//!   names, `time` and either `depth` or `cumulative`, in either order
//!   (case-insensitive, surrounding spaces ignored, a UTF-8 byte-order mark
//!   accepted). Extra columns are not allowed.
//! - Each further non-blank line is a row with exactly two fields. Fields
//!   may be surrounded by spaces or tabs and by one pair of double quotes.
//!   Blank lines are skipped (line numbers in errors stay those of the
//!   file); LF and CRLF line ends are accepted, with or without a final one.
//! - `time` is the END of the interval: `YYYY-MM-DD HH:MM` or
//!   `YYYY-MM-DDTHH:MM`, optionally followed by `:SS`, then optionally by a
//!   fraction of a second that must be zero (`.000`), then optionally by a UTC
//!   offset `Z`, `+HH:MM`, `+HHMM`, `-HH:MM` or `-HHMM`. Fields have fixed
//!   widths (two-digit month, day, hour, minute). Month 1-12, the day within
//!   its month (Gregorian leap years), hour 0-23, minute and second 0-59;
//!   `24:00` is refused. A time with an offset is converted to UTC; a time
//!   without one is taken as it is. Mixing the two in one file is refused.
//! - `depth` is the rain of the interval; `cumulative` a running total that
//!   is differenced, taken as zero at the start of the first interval (so the
//!   first row's value is the first interval's rain; begin the column at 0 to
//!   start with a dry interval). Values must be finite and non-negative; a
//!   decreasing total is an error.
//! - Times must increase strictly. The interval is the one given in the
//!   options or else the smallest gap between consecutive rows; every gap
//!   must be a whole multiple of it. A gap longer than one interval is an
//!   error unless missing intervals are zero-filled (`missing_zero`); with a
//!   cumulative column the missing intervals then get no rain and each row's
//!   increase goes to that row's own interval.

use std::fmt;

/// Which kind of value the second column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DepthColumn {
    /// Rain depth in each interval (`depth`).
    Depth,
    /// Running total of rain depth (`cumulative`).
    Cumulative,
}

/// A dense, regular rain series read from a gauge CSV.
#[derive(Debug, Clone, PartialEq)]
pub struct GaugeSeries {
    /// Start of the first interval (the first row's time minus the interval),
    /// seconds since 1970-01-01T00:00; UTC when the file gives offsets,
    /// otherwise naive local time as written.
    pub start_s: i64,
    /// Interval length in seconds.
    pub interval_s: i64,
    /// Rain per interval in the file's depth unit, one value per interval
    /// from `start_s` on; intervals without a row are 0 (only with
    /// `missing_zero`).
    pub depth: Vec<f64>,
    /// The kind of column the file had.
    pub column: DepthColumn,
    /// Number of data rows read.
    pub rows: usize,
}

/// Options for [`parse_gauge`], from the storm or record in the scenario.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct GaugeOptions {
    /// Interval length in seconds; `None` infers it as the smallest gap
    /// between consecutive rows.
    pub interval_s: Option<i64>,
    /// Fill intervals that have no row with zero rain (`missing = "zero"`).
    pub missing_zero: bool,
    /// Largest dense series accepted, in intervals; a longer one is refused
    /// with an error naming the count.
    pub max_intervals: usize,
}

impl Default for GaugeOptions {
    /// Inferred interval, no zero filling, at most 50 million intervals
    /// (about 475 years of 5-minute data, 400 MB of depths).
    fn default() -> Self {
        GaugeOptions {
            interval_s: None,
            missing_zero: false,
            max_intervals: 50_000_000,
        }
    }
}

/// What went wrong in a gauge file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GaugeErrorKind {
    /// An option is invalid (a non-positive interval).
    BadOption,
    /// The file holds no header (it is empty or blank).
    Empty,
    /// The header is not `time,depth` or `time,cumulative`.
    BadHeader,
    /// No data rows follow the header.
    NoRows,
    /// A row does not have exactly two comma-separated fields.
    FieldCount,
    /// A time cannot be read or is not a valid date and time of day.
    BadTime,
    /// Some times carry a UTC offset and others do not.
    MixedOffsets,
    /// A value is not a finite number.
    BadValue,
    /// A value is negative.
    NegativeValue,
    /// A cumulative total is smaller than the one before it.
    CumulativeDecreases,
    /// A time is earlier than the one on the previous row.
    OutOfOrder,
    /// A time equals the one on the previous row.
    DuplicateTime,
    /// A gap between rows is not a whole multiple of the interval.
    MixedInterval,
    /// Intervals have no row and `missing_zero` is off.
    MissingIntervals,
    /// A single row and no interval given: the interval is unknown.
    UnknownInterval,
    /// The dense series would be longer than `max_intervals`.
    TooLong,
    /// The file could not be read to its end.
    Unreadable,
    /// A line is longer than [`MAX_LINE_BYTES`] (not a gauge row).
    LineTooLong,
}

/// Longest line a gauge file may have, in bytes: a row is a time and a
/// depth, well under 100 bytes; a longer line is not a row.
pub const MAX_LINE_BYTES: usize = 4096;

/// An error in a gauge file, with where it is and what was expected.
///
/// Displayed as `line N: what is wrong; expected ...` (without the line
/// part when `line` is 0).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub struct GaugeError {
    /// What kind of problem it is.
    pub kind: GaugeErrorKind,
    /// 1-based line in the file (the header is line 1 unless blank lines
    /// precede it); 0 when the problem is not tied to one line.
    pub line: usize,
    /// 1-based byte column of the offending field in its line, when known.
    pub column: Option<usize>,
    /// What is wrong.
    pub message: String,
    /// What was expected instead.
    pub expected: String,
}

impl fmt::Display for GaugeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.line > 0 {
            write!(f, "line {}: ", self.line)?;
        }
        write!(f, "{}; expected {}", self.message, self.expected)
    }
}

impl GaugeError {
    fn new(
        kind: GaugeErrorKind,
        line: usize,
        column: Option<usize>,
        message: impl Into<String>,
        expected: impl Into<String>,
    ) -> Self {
        GaugeError {
            kind,
            line,
            column,
            message: message.into(),
            expected: expected.into(),
        }
    }
}

const EXPECTED_HEADER: &str = "a header row `time,depth` or `time,cumulative`";
const EXPECTED_TIME: &str = "a time like `2024-06-03 14:15`, `2024-06-03T14:15:00` or \
                             `2024-06-03T14:15:00+02:00` (offset `Z`, `+HH:MM` or `+HHMM`)";
const EXPECTED_ROW: &str = "two fields per row, `time,value`, in the header's order";

// ---------------------------------------------------------------------------
// Calendar
// ---------------------------------------------------------------------------

// The calendar lives in `util::calendar`; these names stay here for the
// callers that reach it through the gauge module.
use crate::util::calendar;

// ---------------------------------------------------------------------------
// Field parsers
// ---------------------------------------------------------------------------

/// A timestamp as read: seconds (converted to UTC if an offset was given)
/// and whether an offset was given.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Stamp {
    seconds: i64,
    has_offset: bool,
}

fn digit(b: &[u8], i: usize) -> Option<i64> {
    match b.get(i) {
        Some(c) if c.is_ascii_digit() => Some(i64::from(c - b'0')),
        _ => None,
    }
}

fn two_digits(b: &[u8], i: usize) -> Option<i64> {
    Some(digit(b, i)? * 10 + digit(b, i + 1)?)
}

fn show(field: &[u8]) -> String {
    let s = String::from_utf8_lossy(field);
    if s.chars().count() > 40 {
        let cut: String = s.chars().take(40).collect();
        format!("`{cut}...`")
    } else {
        format!("`{s}`")
    }
}

/// Cache of the last date seen (its 10 bytes and day number), so that the
/// many rows of one day convert their date once.
#[derive(Default)]
struct DateCache {
    key: [u8; 10],
    days: i64,
    valid: bool,
    /// The fast path's last `YYYY-MM-DD HH` (the first 14 bytes of a
    /// 16-byte time) and the seconds at its minute 00: rows of one hour
    /// then read only their minutes.
    hour_key: [u8; 14],
    hour_s: i64,
    hour_valid: bool,
}

/// Parses a time field. Errors carry a message; the caller adds the line.
fn parse_time(field: &[u8], cache: &mut DateCache) -> Result<Stamp, String> {
    let bad_form = || format!("cannot read the time {}", show(field));
    if field.len() < 16 {
        return Err(bad_form());
    }
    let date: Option<[u8; 10]> = field.get(..10).and_then(|d| d.try_into().ok());
    let days = match date {
        Some(date) if cache.valid && date == cache.key => cache.days,
        _ => {
            let y = (|| Some(two_digits(field, 0)? * 100 + two_digits(field, 2)?))()
                .ok_or_else(bad_form)?;
            if field.get(4) != Some(&b'-') || field.get(7) != Some(&b'-') {
                return Err(bad_form());
            }
            let m = two_digits(field, 5).ok_or_else(bad_form)?;
            let d = two_digits(field, 8).ok_or_else(bad_form)?;
            if !(1..=12).contains(&m) {
                return Err(format!("month {m:02} in {} is not 01 to 12", show(field)));
            }
            // Four digits each: y in 0..=9999, m in 1..=12, d in 0..=99.
            let (y, m, d) = (y as i32, m as u32, d as u32);
            let Some(days) = calendar::day_number(y, m, d) else {
                let dim = calendar::days_in_month(y, m).unwrap_or(0);
                let name = calendar::month_name(m);
                return Err(format!(
                    "day {d:02} in {} does not exist ({name} {y} has {dim} days)",
                    show(field)
                ));
            };
            if let Some(date) = date {
                cache.key = date;
                cache.days = days;
                cache.valid = true;
            }
            days
        }
    };
    if !matches!(field.get(10), Some(b' ' | b'T')) || field.get(13) != Some(&b':') {
        return Err(bad_form());
    }
    let hh = two_digits(field, 11).ok_or_else(bad_form)?;
    let mm = two_digits(field, 14).ok_or_else(bad_form)?;
    let mut pos = 16;
    let mut ss = 0;
    if field.get(pos) == Some(&b':') {
        ss = two_digits(field, pos + 1).ok_or_else(bad_form)?;
        pos += 3;
        if field.get(pos) == Some(&b'.') {
            pos += 1;
            let frac_start = pos;
            let mut nonzero = false;
            while let Some(c) = field.get(pos).filter(|c| c.is_ascii_digit()) {
                nonzero |= *c != b'0';
                pos += 1;
            }
            if pos == frac_start {
                return Err(bad_form());
            }
            if nonzero {
                return Err(format!(
                    "the time {} has a fraction of a second, which is not supported",
                    show(field)
                ));
            }
        }
    }
    if hh == 24 {
        return Err(format!(
            "hour 24 in {} is not allowed (write 00:00 of the next day)",
            show(field)
        ));
    }
    if hh > 23 {
        return Err(format!("hour {hh} in {} is not 00 to 23", show(field)));
    }
    if mm > 59 {
        return Err(format!("minute {mm} in {} is not 00 to 59", show(field)));
    }
    if ss > 59 {
        return Err(format!("second {ss} in {} is not 00 to 59", show(field)));
    }
    let mut seconds = days * 86_400 + hh * 3_600 + mm * 60 + ss;
    let rest = field.get(pos..).unwrap_or(&[]);
    let has_offset = !rest.is_empty();
    if has_offset {
        let offset_s = match rest {
            [b'Z' | b'z'] => 0,
            [sign @ (b'+' | b'-'), ..] => {
                let (oh, om) = match rest.len() {
                    6 if rest.get(3) == Some(&b':') => (two_digits(rest, 1), two_digits(rest, 4)),
                    5 => (two_digits(rest, 1), two_digits(rest, 3)),
                    _ => (None, None),
                };
                let (Some(oh), Some(om)) = (oh, om) else {
                    return Err(format!("cannot read the UTC offset in {}", show(field)));
                };
                if oh > 23 || om > 59 {
                    return Err(format!("the UTC offset in {} is out of range", show(field)));
                }
                let o = oh * 3_600 + om * 60;
                if *sign == b'-' { -o } else { o }
            }
            _ => return Err(bad_form()),
        };
        // Local time = UTC + offset, so UTC = local - offset.
        seconds -= offset_s;
    }
    Ok(Stamp {
        seconds,
        has_offset,
    })
}

/// Why a value field was refused.
enum ValueError {
    NotNumber,
    NotFinite,
    Negative,
}

const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Parses a non-negative finite number. Plain decimals (`12`, `0.25`, `.5`,
/// `+3.0`) with at most 15 significant digits take an exact fast path
/// (integer mantissa divided by an exact power of ten, correctly rounded);
/// anything else goes through `str::parse::<f64>`.
fn parse_value(field: &[u8]) -> Result<f64, ValueError> {
    let digits = match field.first() {
        Some(b'+') => field.get(1..).unwrap_or(&[]),
        _ => field,
    };
    let mut mantissa: u64 = 0;
    let mut n_digits = 0usize;
    let mut frac_digits = 0usize;
    let mut seen_point = false;
    let mut plain = !digits.is_empty();
    for &c in digits {
        if c.is_ascii_digit() {
            mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(c - b'0'));
            n_digits += 1;
            if seen_point {
                frac_digits += 1;
            }
        } else if c == b'.' && !seen_point {
            seen_point = true;
        } else {
            plain = false;
            break;
        }
    }
    if plain
        && n_digits > 0
        && n_digits <= 15
        && let Some(p) = POW10.get(frac_digits)
    {
        // mantissa < 10^15 < 2^53 and p is exact: one correctly rounded division.
        return Ok(mantissa as f64 / p);
    }
    let s = std::str::from_utf8(field).map_err(|_| ValueError::NotNumber)?;
    let v: f64 = s.parse().map_err(|_| ValueError::NotNumber)?;
    if !v.is_finite() {
        return Err(ValueError::NotFinite);
    }
    if v < 0.0 {
        return Err(ValueError::Negative);
    }
    // Turn -0 into +0.
    Ok(v + 0.0)
}

/// Trims spaces and tabs, then one pair of surrounding double quotes.
fn trim_field(mut f: &[u8]) -> &[u8] {
    while let [b' ' | b'\t', rest @ ..] = f {
        f = rest;
    }
    while let [rest @ .., b' ' | b'\t'] = f {
        f = rest;
    }
    if let [b'"', inner @ .., b'"'] = f {
        f = inner;
    }
    f
}

fn is_blank(line: &[u8]) -> bool {
    line.iter().all(|c| matches!(c, b' ' | b'\t' | b'\r'))
}

/// Lines of the text without their line ends, with 1-based line numbers
/// and the byte position of the next line.
struct Lines<'a> {
    text: &'a [u8],
    pos: usize,
    line_no: usize,
}

impl<'a> Lines<'a> {
    /// Moves past one line that ends just before byte `next`.
    fn skip_to(&mut self, next: usize) {
        self.pos = next;
        self.line_no += 1;
    }
}

impl<'a> Iterator for Lines<'a> {
    type Item = (usize, &'a [u8]);

    fn next(&mut self) -> Option<Self::Item> {
        let rest = self.text.get(self.pos..).filter(|r| !r.is_empty())?;
        self.line_no += 1;
        let (mut line, advance) = match rest.iter().position(|&c| c == b'\n') {
            Some(i) => (rest.get(..i).unwrap_or(&[]), i + 1),
            None => (rest, rest.len()),
        };
        if let [head @ .., b'\r'] = line {
            line = head;
        }
        self.pos += advance;
        Some((self.line_no, line))
    }
}

fn describe_s(s: i64) -> String {
    if s % 3_600 == 0 {
        format!("{} h", s / 3_600)
    } else if s % 60 == 0 {
        format!("{} min", s / 60)
    } else {
        format!("{s} s")
    }
}

// ---------------------------------------------------------------------------
// The parser
// ---------------------------------------------------------------------------

/// Parses a gauge CSV (see the module documentation for the format) into a
/// dense series.
///
/// # Errors
///
/// A [`GaugeError`] for the first problem found, with its line (and field
/// column where it belongs to one field) and what was expected: an invalid
/// option, a missing or wrong header, no data rows, a row without exactly
/// two fields, an unreadable or impossible time, offsets on some rows only,
/// a value that is not a finite non-negative number, a decreasing
/// cumulative total, times out of order or repeated, mixed interval
/// lengths, missing intervals (without `missing_zero`), a single row with
/// no interval given, or a series longer than `max_intervals`.
pub fn parse_gauge(text: &[u8], opts: &GaugeOptions) -> Result<GaugeSeries, GaugeError> {
    parse_gauge_reader(text, Some(text.len() as u64), opts)
}

/// Bytes read from the source at a time by [`parse_gauge_reader`].
const CHUNK_BYTES: usize = 1 << 20;

/// [`parse_gauge`] reading from a stream in chunks of about a megabyte, so
/// that a file of hundreds of megabytes is never held whole. `size_hint`
/// (the file's length in bytes, if known) only sizes the output.
///
/// # Errors
///
/// As [`parse_gauge`], and [`GaugeErrorKind::Unreadable`] when reading
/// fails part way.
pub fn parse_gauge_reader<R: std::io::Read>(
    mut reader: R,
    size_hint: Option<u64>,
    opts: &GaugeOptions,
) -> Result<GaugeSeries, GaugeError> {
    use GaugeErrorKind as K;
    if let Some(g) = opts.interval_s
        && g <= 0
    {
        return Err(GaugeError::new(
            K::BadOption,
            0,
            None,
            format!("the interval is {g} s"),
            "a positive interval",
        ));
    }
    let mut buf: Vec<u8> = Vec::with_capacity(CHUNK_BYTES + 4096);
    let mut eof = false;
    let mut first_chunk = true;
    // Lines wholly consumed before `buf[0]`.
    let mut lines_before = 0usize;
    // (header line, times first) once the header has been read.
    let mut header: Option<(usize, bool)> = None;
    let mut row_state: Option<RowState> = None;
    let mut cache = DateCache::default();
    loop {
        // Fill up to a chunk (or to the end of the source).
        while !eof && buf.len() < CHUNK_BYTES {
            let want = CHUNK_BYTES - buf.len();
            eof = read_more(&mut reader, &mut buf, want, lines_before)?;
        }
        let skip = if first_chunk && buf.starts_with(b"\xEF\xBB\xBF") {
            3
        } else {
            0
        };
        first_chunk = false;
        // Whole lines only, except at the end of the source.
        let usable = if eof {
            buf.len()
        } else {
            match buf.iter().rposition(|&c| c == b'\n') {
                Some(i) => i + 1,
                None => {
                    // A whole chunk without a line end: not a gauge row.
                    return Err(GaugeError::new(
                        K::LineTooLong,
                        lines_before + 1,
                        Some(1),
                        format!(
                            "the line is longer than {MAX_LINE_BYTES} bytes ({} bytes read without a line end)",
                            buf.len()
                        ),
                        "rows of a time and a depth, one per line",
                    ));
                }
            }
        };
        let text = buf.get(skip..usable).unwrap_or(&[]);
        let mut cursor = Lines {
            text,
            pos: 0,
            line_no: lines_before,
        };
        // Header: the first non-blank line.
        if header.is_none() {
            for (line_no, l) in cursor.by_ref() {
                if is_blank(l) {
                    continue;
                }
                let (time_first, column) = parse_header(l).ok_or_else(|| {
                    GaugeError::new(
                        K::BadHeader,
                        line_no,
                        Some(1),
                        format!("bad header {}", show(l)),
                        EXPECTED_HEADER,
                    )
                })?;
                let first_len = text
                    .get(cursor.pos..)
                    .and_then(|r| r.iter().position(|&c| c == b'\n'))
                    .unwrap_or(0)
                    .max(8);
                let total =
                    size_hint.map_or(text.len(), |h| usize::try_from(h).unwrap_or(usize::MAX));
                let capacity = (total / first_len)
                    .saturating_add(16)
                    .min(opts.max_intervals.saturating_add(1));
                header = Some((line_no, time_first));
                row_state = Some(RowState::new(capacity, column, line_no));
                break;
            }
        }
        // Main pass: rows -> times and per-row depths. Plain rows in the
        // usual layout take the fast path; any other line, and any row that
        // would fail a check, goes through the general path, which words
        // the error.
        if let (Some((_, time_first)), Some(row_state)) = (header, row_state.as_mut()) {
            loop {
                if time_first
                    && let Some((t, v, next)) = fast_row(text, cursor.pos, &mut cache)
                    && row_state.try_fast(t, v, cursor.line_no + 1, opts.max_intervals)
                {
                    cursor.skip_to(next);
                    continue;
                }
                let Some((line_no, line)) = cursor.next() else {
                    break;
                };
                if is_blank(line) {
                    continue;
                }
                row_state.general_row(line_no, line, time_first, &mut cache, opts.max_intervals)?;
            }
        }
        lines_before = cursor.line_no;
        buf.drain(..usable);
        if eof {
            break;
        }
    }
    let (Some((header_line, _)), Some(row_state)) = (header, row_state) else {
        return Err(GaugeError::new(
            K::Empty,
            0,
            None,
            "the file is empty",
            EXPECTED_HEADER,
        ));
    };
    finish(row_state, header_line, opts)
}

/// Appends what one read of at most `want` bytes gives to `buf`; true at
/// the end of the source (an interrupted read reads nothing and is not the
/// end). `lines_before` words the error.
fn read_more<R: std::io::Read>(
    reader: &mut R,
    buf: &mut Vec<u8>,
    want: usize,
    lines_before: usize,
) -> Result<bool, GaugeError> {
    let old = buf.len();
    buf.resize(old + want.max(1), 0);
    match reader.read(&mut buf[old..]) {
        Ok(k) => {
            buf.truncate(old + k);
            Ok(k == 0)
        }
        Err(e) => {
            buf.truncate(old);
            if e.kind() == std::io::ErrorKind::Interrupted {
                return Ok(false);
            }
            Err(GaugeError::new(
                GaugeErrorKind::Unreadable,
                lines_before,
                None,
                format!("reading stopped after line {lines_before}: {e}"),
                "a readable file",
            ))
        }
    }
}

/// The checks and filling that need every row: the interval, the gaps,
/// the length limit and the dense series.
fn finish(
    mut row_state: RowState,
    header_line: usize,
    opts: &GaugeOptions,
) -> Result<GaugeSeries, GaugeError> {
    use GaugeErrorKind as K;
    let column = row_state.column;
    let rows = row_state.depth.len();
    if rows == 0 {
        return Err(GaugeError::new(
            K::NoRows,
            header_line,
            None,
            "no data rows after the header",
            "at least one row `time,value`",
        ));
    }
    let (interval, given) = match opts.interval_s {
        Some(g) => (g, true),
        None if rows >= 2 => (row_state.min_gap, false),
        None => {
            let line = row_state.row_lines(&[0]).first().copied().unwrap_or(0);
            return Err(GaugeError::new(
                K::UnknownInterval,
                line,
                None,
                "a single row does not show the interval",
                "at least two rows, or the interval given on the storm or record",
            ));
        }
    };
    let t_first = row_state.first_time;
    let t_last = row_state.prev_time;
    let min_gap_row = row_state.min_gap_row;
    let dense_already = !row_state.explicit && row_state.uniform_gap.is_none_or(|g| g == interval);
    let times = if dense_already {
        Vec::new()
    } else {
        row_state.take_times()
    };
    let depth = std::mem::take(&mut row_state.depth);

    // Gaps: every one a whole multiple of the interval; longer than one
    // interval only with zero filling.
    let mut any_missing = false;
    for (i, w) in times.windows(2).enumerate() {
        let (a, b) = match w {
            [a, b] => (*a, *b),
            _ => continue,
        };
        let gap = b - a;
        if gap == interval {
            continue;
        }
        if gap % interval != 0 {
            let lines = row_state.row_lines(&sorted_pair(i + 1, min_gap_row));
            let (this_line, other_line) = line_pair(&lines, i + 1, min_gap_row);
            let message = if given {
                format!(
                    "mixed interval lengths: the gap of {} before line {this_line} is not a whole multiple of the {} interval given",
                    describe_s(gap),
                    describe_s(interval)
                )
            } else {
                format!(
                    "mixed interval lengths: the gap of {} before line {this_line} is not a whole multiple of the {} gap before line {other_line} (the smallest)",
                    describe_s(gap),
                    describe_s(interval)
                )
            };
            return Err(GaugeError::new(
                K::MixedInterval,
                this_line,
                None,
                message,
                "one interval length, every gap a whole multiple of it",
            ));
        }
        if !opts.missing_zero {
            let lines = row_state.row_lines(&[i, i + 1]);
            let la = lines.first().copied().unwrap_or(0);
            let lb = lines.get(1).copied().unwrap_or(0);
            return Err(GaugeError::new(
                K::MissingIntervals,
                lb,
                None,
                format!(
                    "missing intervals between line {la} and line {lb} ({} intervals of {} without a row)",
                    gap / interval - 1,
                    describe_s(interval)
                ),
                "a row for every interval, or missing = \"zero\" to fill them with no rain",
            ));
        }
        any_missing = true;
    }

    let span = i128::from(t_last) - i128::from(t_first);
    let dense_len = span / i128::from(interval) + 1;
    if dense_len > opts.max_intervals as i128 {
        return Err(GaugeError::new(
            K::TooLong,
            0,
            None,
            format!(
                "the record spans {dense_len} intervals of {}, more than the limit of {}",
                describe_s(interval),
                opts.max_intervals
            ),
            format!("at most {} intervals", opts.max_intervals),
        ));
    }
    let depth = if any_missing {
        let len = usize::try_from(dense_len).unwrap_or(0);
        let mut dense = vec![0.0; len];
        for (&t, &d) in times.iter().zip(&depth) {
            let k = (t - t_first) / interval;
            if let Some(slot) = usize::try_from(k).ok().and_then(|k| dense.get_mut(k)) {
                *slot = d;
            }
        }
        dense
    } else {
        depth
    };
    Ok(GaugeSeries {
        start_s: t_first - interval,
        interval_s: interval,
        depth,
        column,
        rows,
    })
}

/// Rows accepted so far and what the checks need from them.
///
/// Times are not stored while every gap equals the first one (the usual
/// dense file): they are implied by `first_time` and that gap. The first
/// different gap turns `times` into the explicit list.
struct RowState {
    /// Explicit times of every row, filled only once the gaps differ.
    times: Vec<i64>,
    depth: Vec<f64>,
    column: DepthColumn,
    offsets: Option<bool>,
    first_time: i64,
    /// The common gap while all gaps are equal (`None` before the second
    /// row, and once they differ: see `explicit`).
    uniform_gap: Option<i64>,
    explicit: bool,
    prev_line: usize,
    prev_time: i64,
    prev_total: f64,
    min_gap: i64,
    min_gap_row: usize,
    /// (row index, line number) of every row that does not follow the
    /// previous row's line directly (the first row, rows after blank
    /// lines): the line of any row, for errors found after the main pass.
    line_breaks: Vec<(usize, usize)>,
}

impl RowState {
    fn new(capacity: usize, column: DepthColumn, header_line: usize) -> Self {
        RowState {
            times: Vec::new(),
            depth: Vec::with_capacity(capacity),
            column,
            offsets: None,
            first_time: 0,
            uniform_gap: None,
            explicit: false,
            prev_line: header_line,
            prev_time: i64::MIN,
            prev_total: 0.0,
            min_gap: i64::MAX,
            min_gap_row: 0,
            line_breaks: Vec::new(),
        }
    }

    /// Line numbers of the rows with the given 0-based indices.
    fn row_lines(&self, rows: &[usize]) -> Vec<usize> {
        rows.iter()
            .map(|&i| {
                let k = self.line_breaks.partition_point(|&(r, _)| r <= i);
                match k.checked_sub(1).and_then(|k| self.line_breaks.get(k)) {
                    Some(&(r, line)) => line + (i - r),
                    None => 0,
                }
            })
            .collect()
    }

    /// Time of every row, explicit or implied (leaves `times` empty).
    fn take_times(&mut self) -> Vec<i64> {
        if self.explicit {
            return std::mem::take(&mut self.times);
        }
        let g = self.uniform_gap.unwrap_or(0);
        (0..self.depth.len())
            .map(|i| self.first_time + i as i64 * g)
            .collect()
    }

    #[inline(always)]
    fn commit(&mut self, t: i64, has_offset: bool, v: f64, line_no: usize) {
        let n = self.depth.len();
        if n == 0 || line_no != self.prev_line + 1 {
            self.line_breaks.push((n, line_no));
        }
        if n == 0 {
            self.first_time = t;
        } else {
            let gap = t - self.prev_time;
            if gap < self.min_gap {
                self.min_gap = gap;
                self.min_gap_row = n;
            }
            if !self.explicit {
                match self.uniform_gap {
                    None => self.uniform_gap = Some(gap),
                    Some(g) if g == gap => {}
                    Some(_) => {
                        self.times = self.take_times();
                        self.explicit = true;
                        self.uniform_gap = None;
                    }
                }
            }
            if self.explicit {
                self.times.push(t);
            }
        }
        let d = match self.column {
            DepthColumn::Depth => v,
            DepthColumn::Cumulative => {
                let d = v - self.prev_total;
                self.prev_total = v;
                d
            }
        };
        self.offsets = Some(has_offset);
        self.depth.push(d);
        self.prev_time = t;
        self.prev_line = line_no;
    }

    /// Accepts a row read by the fast path (naive time) if it passes every
    /// check; otherwise changes nothing and returns false.
    #[inline]
    fn try_fast(&mut self, t: i64, v: f64, line_no: usize, max_rows: usize) -> bool {
        let ok = self.offsets != Some(true)
            && (self.depth.is_empty() || t > self.prev_time)
            && (self.column == DepthColumn::Depth || v >= self.prev_total)
            && self.depth.len() < max_rows;
        if ok {
            self.commit(t, false, v, line_no);
        }
        ok
    }

    /// Reads any non-blank data line, with full checks and error wording.
    fn general_row(
        &mut self,
        line_no: usize,
        line: &[u8],
        time_first: bool,
        cache: &mut DateCache,
        max_rows: usize,
    ) -> Result<(), GaugeError> {
        use GaugeErrorKind as K;
        if line.len() > MAX_LINE_BYTES {
            return Err(GaugeError::new(
                K::LineTooLong,
                line_no,
                Some(1),
                format!(
                    "the line is {} bytes long, more than {MAX_LINE_BYTES}",
                    line.len()
                ),
                "rows of a time and a depth, one per line",
            ));
        }
        let value_name = match self.column {
            DepthColumn::Depth => "depth",
            DepthColumn::Cumulative => "cumulative total",
        };
        let Some(comma) = line.iter().position(|&c| c == b',') else {
            return Err(GaugeError::new(
                K::FieldCount,
                line_no,
                None,
                format!("the row {} has one field", show(line)),
                EXPECTED_ROW,
            ));
        };
        let first = line.get(..comma).unwrap_or(&[]);
        let second = line.get(comma + 1..).unwrap_or(&[]);
        if let Some(extra) = second.iter().position(|&c| c == b',') {
            return Err(GaugeError::new(
                K::FieldCount,
                line_no,
                Some(comma + extra + 2),
                format!("the row {} has more than two fields", show(line)),
                EXPECTED_ROW,
            ));
        }
        let (time_raw, value_raw, time_col, value_col) = if time_first {
            (first, second, 1, comma + 2)
        } else {
            (second, first, comma + 2, 1)
        };
        let time_field = trim_field(time_raw);
        let value_field = trim_field(value_raw);

        let stamp = parse_time(time_field, cache)
            .map_err(|m| GaugeError::new(K::BadTime, line_no, Some(time_col), m, EXPECTED_TIME))?;
        if let Some(o) = self.offsets
            && o != stamp.has_offset
        {
            return Err(GaugeError::new(
                K::MixedOffsets,
                line_no,
                Some(time_col),
                format!(
                    "the time {} {} but earlier rows {}",
                    show(time_field),
                    if stamp.has_offset {
                        "has a UTC offset"
                    } else {
                        "has no UTC offset"
                    },
                    if o { "have one" } else { "do not" }
                ),
                "either every time with an offset or none",
            ));
        }
        let t = stamp.seconds;
        let prev_line = self.prev_line;
        if !self.depth.is_empty() {
            if t < self.prev_time {
                return Err(GaugeError::new(
                    K::OutOfOrder,
                    line_no,
                    Some(time_col),
                    format!(
                        "the time {} is earlier than the time on line {prev_line} (rows out of order)",
                        show(time_field)
                    ),
                    "rows in increasing time order",
                ));
            }
            if t == self.prev_time {
                return Err(GaugeError::new(
                    K::DuplicateTime,
                    line_no,
                    Some(time_col),
                    format!(
                        "the time {} repeats the time on line {prev_line}",
                        show(time_field)
                    ),
                    "one row per interval",
                ));
            }
        }
        let v = parse_value(value_field).map_err(|e| {
            let (kind, what) = match e {
                ValueError::NotNumber => (K::BadValue, "is not a number"),
                ValueError::NotFinite => (K::BadValue, "is not a finite number"),
                ValueError::Negative => (K::NegativeValue, "is negative"),
            };
            let shown = if value_field.is_empty() {
                "the empty field".to_string()
            } else {
                show(value_field)
            };
            GaugeError::new(
                kind,
                line_no,
                Some(value_col),
                format!("the {value_name} {shown} {what}"),
                format!("a {value_name} that is a number >= 0"),
            )
        })?;
        if self.column == DepthColumn::Cumulative && v < self.prev_total {
            return Err(GaugeError::new(
                K::CumulativeDecreases,
                line_no,
                Some(value_col),
                format!(
                    "cumulative total decreases at line {line_no} (from {} to {v})",
                    self.prev_total
                ),
                "a running total that never decreases",
            ));
        }
        if self.depth.len() >= max_rows {
            return Err(GaugeError::new(
                K::TooLong,
                line_no,
                None,
                format!("more than {max_rows} rows"),
                format!("at most {max_rows} intervals"),
            ));
        }
        self.commit(t, stamp.has_offset, v, line_no);
        Ok(())
    }
}

/// Fast path for a row in the usual layout, starting at byte `pos`:
/// `YYYY-MM-DD HH:MM[:SS],digits[.digits]` then LF, CRLF or the end of the
/// text, with no spaces, quotes or offset. Returns the time, the value and
/// the position of the next line, or `None` for anything else (the general
/// path then reads the line).
#[inline]
fn fast_row(text: &[u8], pos: usize, cache: &mut DateCache) -> Option<(i64, f64, usize)> {
    let rest = text.get(pos..)?;
    let time_len = if rest.get(16) == Some(&b',') {
        16
    } else if rest.get(19) == Some(&b',') {
        19
    } else {
        return None;
    };
    let hour: Option<&[u8; 14]> = rest.get(..14).and_then(|h| h.try_into().ok());
    let seconds = match hour {
        Some(h) if time_len == 16 && cache.hour_valid && *h == cache.hour_key => {
            let mm = two_digits(rest, 14).filter(|m| *m < 60)?;
            cache.hour_s + mm * 60
        }
        _ => {
            let stamp = parse_time(rest.get(..time_len)?, cache).ok()?;
            if stamp.has_offset {
                return None;
            }
            if time_len == 16
                && let (Some(h), Some(mm)) = (hour, two_digits(rest, 14))
            {
                cache.hour_key = *h;
                cache.hour_s = stamp.seconds - mm * 60;
                cache.hour_valid = true;
            }
            stamp.seconds
        }
    };
    let mut i = time_len + 1;
    let mut mantissa: u64 = 0;
    let mut n_digits = 0usize;
    let mut frac_digits = 0usize;
    let mut seen_point = false;
    let end = loop {
        match rest.get(i) {
            Some(&c) if c.is_ascii_digit() => {
                mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(c - b'0'));
                n_digits += 1;
                frac_digits += usize::from(seen_point);
            }
            Some(b'.') if !seen_point => seen_point = true,
            Some(b'\n') => break i + 1,
            Some(b'\r') if matches!(rest.get(i + 1), None | Some(b'\n')) => {
                break (i + 2).min(rest.len());
            }
            None => break i,
            Some(_) => return None,
        }
        i += 1;
    };
    if n_digits == 0 || n_digits > 15 {
        return None;
    }
    let p = POW10.get(frac_digits)?;
    Some((seconds, mantissa as f64 / p, pos + end))
}

fn sorted_pair(a: usize, b: usize) -> Vec<usize> {
    if a <= b { vec![a, b] } else { vec![b, a] }
}

/// Lines of rows `a` and `b` from the result of `row_lines` on their sorted pair.
fn line_pair(lines: &[usize], a: usize, b: usize) -> (usize, usize) {
    let first = lines.first().copied().unwrap_or(0);
    let second = lines.get(1).copied().unwrap_or(first);
    if a <= b {
        (first, second)
    } else {
        (second, first)
    }
}

/// `(time column comes first, value column kind)` for a valid header.
fn parse_header(header: &[u8]) -> Option<(bool, DepthColumn)> {
    let comma = header.iter().position(|&c| c == b',')?;
    let a = trim_field(header.get(..comma)?);
    let b = trim_field(header.get(comma + 1..)?);
    let value_kind = |f: &[u8]| {
        if f.eq_ignore_ascii_case(b"depth") {
            Some(DepthColumn::Depth)
        } else if f.eq_ignore_ascii_case(b"cumulative") {
            Some(DepthColumn::Cumulative)
        } else {
            None
        }
    };
    if a.eq_ignore_ascii_case(b"time") {
        Some((true, value_kind(b)?))
    } else if b.eq_ignore_ascii_case(b"time") {
        Some((false, value_kind(a)?))
    } else {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::util::calendar::format_timestamp;
    use approx::assert_abs_diff_eq;
    use proptest::prelude::*;

    fn opts() -> GaugeOptions {
        GaugeOptions::default()
    }

    fn parse(text: &str) -> Result<GaugeSeries, GaugeError> {
        parse_gauge(text.as_bytes(), &opts())
    }

    fn err(text: &str, o: &GaugeOptions) -> GaugeError {
        match parse_gauge(text.as_bytes(), o) {
            Ok(s) => panic!("expected an error, got {s:?}"),
            Err(e) => e,
        }
    }

    fn ts(y: i32, m: u32, d: u32, hh: i64, mm: i64, ss: i64) -> i64 {
        let day = calendar::day_number(y, m, d).unwrap_or_else(|| panic!("{y}-{m}-{d}"));
        day * 86_400 + hh * 3_600 + mm * 60 + ss
    }

    // ---- reading in chunks (format rules of the scenario contract) ----

    /// A dense 5-minute file of `rows` rows (about 24 bytes each), every
    /// 7th interval with 0.01 of rain, CRLF line ends and a byte-order mark.
    fn long_text(rows: usize) -> String {
        let start = ts(2001, 1, 1, 0, 0, 0);
        let mut t = String::from("\u{feff}time,depth\r\n");
        for k in 1..=rows {
            let stamp = format_timestamp(start + k as i64 * 300);
            let d = if k % 7 == 0 { "0.01" } else { "0" };
            t.push_str(&format!("{} {},{d}\r\n", &stamp[..10], &stamp[11..16]));
        }
        t
    }

    #[test]
    fn an_overlong_line_is_refused_at_its_line_without_reading_on() {
        // contract (scenario-format.md, Rainfall CSV): one row per line. A
        // line of 3 MB, and one of 5 kB, are not rows; the reader stops
        // after the first megabyte of the long one.
        let mut text = b"time,depth\n2001-01-01 00:05,0\n".to_vec();
        text.extend(std::iter::repeat_n(b'7', 3 << 20));
        let mut served = 0usize;
        struct Counting<'a>(&'a [u8], &'a mut usize);
        impl std::io::Read for Counting<'_> {
            fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
                let k = out.len().min(self.0.len());
                out[..k].copy_from_slice(&self.0[..k]);
                self.0 = &self.0[k..];
                *self.1 += k;
                Ok(k)
            }
        }
        let e = parse_gauge_reader(Counting(&text, &mut served), None, &opts()).unwrap_err();
        assert_eq!((e.kind, e.line), (GaugeErrorKind::LineTooLong, 3));
        assert!(served <= 2 << 20, "read {served} bytes");
        let mut short = String::from("time,depth\n2001-01-01 00:05,0\n2001-01-01 00:10,");
        short.push_str(&"1".repeat(5000));
        short.push('\n');
        let e = parse(&short).unwrap_err();
        assert_eq!((e.kind, e.line), (GaugeErrorKind::LineTooLong, 3));
    }

    /// A reader that hands out at most `step` bytes per call.
    struct Trickle<'a>(&'a [u8], usize);
    impl std::io::Read for Trickle<'_> {
        fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
            let k = self.1.min(out.len()).min(self.0.len());
            out[..k].copy_from_slice(&self.0[..k]);
            self.0 = &self.0[k..];
            Ok(k)
        }
    }

    #[test]
    fn rows_across_chunk_boundaries_are_all_read() {
        let rows = 200_000; // about 4.6 MB: several chunks
        let text = long_text(rows);
        assert!(text.len() > 3 * CHUNK_BYTES);
        for s in [
            parse_gauge(text.as_bytes(), &opts()).unwrap(),
            parse_gauge_reader(Trickle(text.as_bytes(), 999_983), None, &opts()).unwrap(),
        ] {
            assert_eq!(s.depth.len(), rows);
            assert_eq!(s.interval_s, 300);
            assert_eq!(s.start_s, ts(2001, 1, 1, 0, 0, 0));
            let wet = s.depth.iter().filter(|d| **d > 0.0).count();
            assert_eq!(wet, rows / 7);
            assert_abs_diff_eq!(
                s.depth.iter().sum::<f64>(),
                0.01 * (rows / 7) as f64,
                epsilon = 1e-6
            );
        }
    }

    #[test]
    fn errors_after_the_main_pass_name_lines_past_the_first_chunk() {
        // Blank lines shift the line numbers; a 7-minute gap far into the
        // file is a mixed interval, reported on its own line.
        let text = long_text(150_000);
        let mut lines: Vec<&str> = text.split("\r\n").collect();
        lines.insert(10_000, "");
        lines.insert(20_000, "   ");
        let bad_line = 120_000; // 1-based line number of the changed row
        let changed = {
            let row = lines[bad_line - 1];
            let (time, value) = row.split_once(',').unwrap();
            let minute: i64 = time[14..16].parse().unwrap();
            format!("{}{:02},{value}", &time[..14], (minute + 2) % 60)
        };
        assert!(changed.len() > 10);
        let mut owned: Vec<String> = lines.iter().map(|l| l.to_string()).collect();
        owned[bad_line - 1] = changed;
        let text = owned.join("\r\n");
        let given = GaugeOptions {
            interval_s: Some(300),
            ..opts()
        };
        let e = parse_gauge_reader(Trickle(text.as_bytes(), 65_537), None, &given).unwrap_err();
        assert_eq!(e.kind, GaugeErrorKind::MixedInterval, "{e}");
        assert_eq!(e.line, bad_line, "{e}");
        // The same text read whole gives the same error.
        assert_eq!(parse_gauge(text.as_bytes(), &given).unwrap_err(), e);
    }

    #[test]
    fn a_read_failure_is_an_error_not_a_short_record() {
        struct Fails(usize);
        impl std::io::Read for Fails {
            fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
                if self.0 == 0 {
                    return Err(std::io::Error::other("device gone"));
                }
                let head = b"time,depth\n2001-01-01 00:05,0\n2001-01-01 00:10,0\n";
                let k = head.len().min(out.len());
                out[..k].copy_from_slice(&head[..k]);
                self.0 -= 1;
                Ok(k)
            }
        }
        let e = parse_gauge_reader(Fails(1), None, &opts()).unwrap_err();
        assert_eq!(e.kind, GaugeErrorKind::Unreadable);
        assert!(e.message.contains("device gone"), "{e}");
    }

    // ---- times against chrono ----

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        /// The hand-written time reader (its date cache and the fast row
        /// path's hour cache included) agrees with chrono on any time of
        /// years 0000 to 9999, with and without a UTC offset.
        #[test]
        fn times_are_read_as_chrono_reads_them(
            s in -62_167_219_200i64..253_402_300_800,
            offset_min in -1_439i32..=1_439,
            minute in 0i64..60,
        ) {
            use chrono::TimeZone;
            let naive = chrono::DateTime::from_timestamp(s, 0)
                .map(|t| t.naive_utc())
                .unwrap_or_default();
            let mut cache = DateCache::default();
            let plain = naive.format("%Y-%m-%d %H:%M:%S").to_string();
            let stamp = parse_time(plain.as_bytes(), &mut cache);
            prop_assert_eq!(stamp.map(|t| (t.seconds, t.has_offset)), Ok((s, false)));

            let offset = chrono::FixedOffset::east_opt(offset_min * 60)
                .unwrap_or_else(|| panic!("offset {offset_min} min"));
            let expected = offset
                .from_local_datetime(&naive)
                .single()
                .map(|t| t.timestamp());
            let zoned = format!("{}{}", naive.format("%Y-%m-%dT%H:%M:%S"), offset);
            let stamp = parse_time(zoned.as_bytes(), &mut DateCache::default());
            prop_assert_eq!(stamp.ok().map(|t| t.seconds), expected);

            // Fast rows: the first fills the hour cache, the second reads
            // only its minutes.
            let hour_start = s - s.rem_euclid(3_600);
            let mut cache = DateCache::default();
            for t in [hour_start + s.rem_euclid(3_600) / 60 * 60, hour_start + minute * 60] {
                let when = chrono::DateTime::from_timestamp(t, 0)
                    .map(|t| t.naive_utc())
                    .unwrap_or_default();
                let row = format!("{},0.25\n", when.format("%Y-%m-%d %H:%M"));
                let read = fast_row(row.as_bytes(), 0, &mut cache);
                prop_assert_eq!(read, Some((t, 0.25, row.len())));
            }
        }
    }

    // ---- timestamps ----

    #[test]
    fn every_timestamp_form_is_read() {
        let t0 = ts(2024, 6, 3, 14, 15, 0);
        let mut c = DateCache::default();
        let forms = [
            ("2024-06-03 14:15", t0),
            ("2024-06-03T14:15", t0),
            ("2024-06-03 14:15:00", t0),
            ("2024-06-03T14:15:07", t0 + 7),
            ("2024-06-03T14:15:00.000", t0),
            ("2024-06-03T14:15:00.0", t0),
        ];
        for (f, want) in forms {
            let s = parse_time(f.as_bytes(), &mut c).unwrap_or_else(|e| panic!("{f}: {e}"));
            assert_eq!(
                s,
                Stamp {
                    seconds: want,
                    has_offset: false
                },
                "{f}"
            );
        }
        let offset_forms = [
            ("2024-06-03T14:15Z", t0),
            ("2024-06-03T14:15:00Z", t0),
            ("2024-06-03 14:15+02:00", t0 - 7_200),
            ("2024-06-03T14:15:00+0200", t0 - 7_200),
            ("2024-06-03T14:15:00.000-05:00", t0 + 18_000),
            ("2024-06-03T14:15-0530", t0 + 19_800),
        ];
        for (f, want) in offset_forms {
            let s = parse_time(f.as_bytes(), &mut c).unwrap_or_else(|e| panic!("{f}: {e}"));
            assert_eq!(
                s,
                Stamp {
                    seconds: want,
                    has_offset: true
                },
                "{f}"
            );
        }
    }

    #[test]
    fn offset_times_are_converted_to_utc() {
        // 23:30 at UTC-05:00 is 04:30 UTC on the next day (ISO 8601 offsets).
        let text = "time,depth\n2024-12-31T23:30-05:00,0.1\n2025-01-01T00:30-05:00,0.2\n";
        let s = parse(text).expect("valid");
        assert_eq!(s.start_s, ts(2025, 1, 1, 3, 30, 0));
        assert_eq!(s.interval_s, 3_600);
    }

    #[test]
    fn leap_day_is_accepted_only_in_leap_years() {
        // Gregorian calendar rule: 2024 is a leap year, 2023 and 1900 are not, 2000 is.
        let mut c = DateCache::default();
        assert!(parse_time(b"2024-02-29 00:00", &mut c).is_ok());
        assert!(parse_time(b"2000-02-29 00:00", &mut c).is_ok());
        let e = parse_time(b"2023-02-29 00:00", &mut c).unwrap_err();
        assert!(e.contains("February 2023 has 28 days"), "{e}");
        assert!(parse_time(b"1900-02-29 00:00", &mut c).is_err());
        let e = err(
            "time,depth\n2023-02-28 23:00,0\n2023-02-29 00:00,0\n",
            &opts(),
        );
        assert_eq!(
            (e.kind, e.line, e.column),
            (GaugeErrorKind::BadTime, 3, Some(1))
        );
    }

    #[test]
    fn impossible_times_are_rejected_with_a_reason() {
        let mut c = DateCache::default();
        let cases = [
            ("2024-13-01 00:00", "month 13"),
            ("2024-00-10 00:00", "month 00"),
            ("2024-04-31 00:00", "April 2024 has 30 days"),
            ("2024-04-00 00:00", "day 00"),
            ("2024-06-03 24:00", "hour 24"),
            ("2024-06-03 23:60", "minute 60"),
            ("2024-06-03 23:59:60", "second 60"),
            ("2024-06-03 23:59:00.5", "fraction of a second"),
            ("2024-06-03 23:59+2:00", "UTC offset"),
            ("2024-06-03 23:59+25:00", "UTC offset"),
            ("2024-6-3 23:59", "cannot read"),
            ("2024/06/03 23:59", "cannot read"),
            ("2024-06-03", "cannot read"),
            ("2024-06-03 23:59 ", "cannot read"),
            ("2024-06-03 23:59:", "cannot read"),
            ("2024-06-03X23:59", "cannot read"),
        ];
        for (f, needle) in cases {
            match parse_time(f.as_bytes(), &mut c) {
                Ok(s) => panic!("{f} accepted as {s:?}"),
                Err(e) => assert!(e.contains(needle), "{f}: {e}"),
            }
        }
    }

    #[test]
    fn thirteenth_month_in_a_file_names_its_line() {
        let e = err(
            "time,depth\n2024-12-31 23:00,0\n2024-13-01 00:00,0\n",
            &opts(),
        );
        assert_eq!(e.kind, GaugeErrorKind::BadTime);
        assert_eq!(e.line, 3);
        assert!(e.to_string().starts_with("line 3: month 13"), "{e}");
        assert!(e.to_string().contains("; expected a time like"), "{e}");
    }

    #[test]
    fn mixing_offset_and_naive_times_is_refused() {
        let e = err(
            "time,depth\n2024-06-03 14:15,0\n2024-06-03 14:30Z,0\n",
            &opts(),
        );
        assert_eq!((e.kind, e.line), (GaugeErrorKind::MixedOffsets, 3));
    }

    // ---- headers and layout ----

    #[test]
    fn headers_are_case_insensitive_in_either_order() {
        let s = parse("\u{feff} Time , DEPTH \n2024-01-01 00:15,0.5\n2024-01-01 00:30,0\n")
            .expect("valid");
        assert_eq!(s.column, DepthColumn::Depth);
        assert_eq!(s.depth, vec![0.5, 0.0]);
        let s =
            parse("cumulative,time\n1.5,2024-01-01 00:15\n2.0,2024-01-01 00:30\n").expect("valid");
        assert_eq!(s.column, DepthColumn::Cumulative);
        assert_eq!(s.depth, vec![1.5, 0.5]);
    }

    #[test]
    fn bad_headers_say_what_was_expected() {
        for h in [
            "time,flow",
            "time,depth,extra",
            "date,depth",
            "time",
            "depth,cumulative",
        ] {
            let e = err(&format!("{h}\n2024-01-01 00:15,0\n"), &opts());
            assert_eq!((e.kind, e.line), (GaugeErrorKind::BadHeader, 1), "{h}");
            assert!(
                e.to_string().contains("`time,depth` or `time,cumulative`"),
                "{e}"
            );
        }
    }

    #[test]
    fn empty_and_header_only_files_are_errors() {
        let e = err("", &opts());
        assert_eq!((e.kind, e.line), (GaugeErrorKind::Empty, 0));
        assert!(!e.to_string().starts_with("line"), "{e}");
        let e = err("\n  \r\n", &opts());
        assert_eq!(e.kind, GaugeErrorKind::Empty);
        let e = err("time,depth\n", &opts());
        assert_eq!((e.kind, e.line), (GaugeErrorKind::NoRows, 1));
        let e = err("time,depth", &opts());
        assert_eq!(e.kind, GaugeErrorKind::NoRows);
    }

    #[test]
    fn blank_lines_crlf_and_missing_final_newline_are_handled() {
        let text = "\r\ntime,depth\r\n2024-01-01 00:15,0.1\r\n\r\n  \r\n2024-01-01 00:30,0.2\r\n2024-01-01 00:45,0.3";
        let s = parse(text).expect("valid");
        assert_eq!(s.depth, vec![0.1, 0.2, 0.3]);
        assert_eq!(s.rows, 3);
        // True line numbers survive the blank lines: the bad value is on line 7.
        let text = "\r\ntime,depth\r\n2024-01-01 00:15,0.1\r\n\r\n  \r\n2024-01-01 00:30,0.2\r\n2024-01-01 00:45,x\r\n";
        let e = err(text, &opts());
        assert_eq!(
            (e.kind, e.line, e.column),
            (GaugeErrorKind::BadValue, 7, Some(18))
        );
    }

    #[test]
    fn quoted_and_padded_fields_are_read() {
        let s = parse("time,depth\n\"2024-01-01 00:15\", \"0.25\"\n 2024-01-01 00:30 ,\t1e-1\n")
            .expect("valid");
        assert_eq!(s.depth, vec![0.25, 0.1]);
    }

    #[test]
    fn rows_need_exactly_two_fields() {
        let e = err(
            "time,depth\n2024-01-01 00:15,0.1\n2024-01-01 00:30\n",
            &opts(),
        );
        assert_eq!((e.kind, e.line), (GaugeErrorKind::FieldCount, 3));
        let e = err("time,depth\n2024-01-01 00:15,0.1,\n", &opts());
        assert_eq!(
            (e.kind, e.line, e.column),
            (GaugeErrorKind::FieldCount, 2, Some(21))
        );
    }

    // ---- values ----

    #[test]
    fn bad_depth_values_name_their_line() {
        let base = "time,depth\n2024-01-01 00:15,0.1\n2024-01-01 00:30,";
        for (v, kind) in [
            ("abc", GaugeErrorKind::BadValue),
            ("", GaugeErrorKind::BadValue),
            ("NaN", GaugeErrorKind::BadValue),
            ("inf", GaugeErrorKind::BadValue),
            ("1e999", GaugeErrorKind::BadValue),
            ("0.1.2", GaugeErrorKind::BadValue),
            ("-0.5", GaugeErrorKind::NegativeValue),
        ] {
            let e = err(&format!("{base}{v}\n"), &opts());
            assert_eq!((e.kind, e.line, e.column), (kind, 3, Some(18)), "{v}: {e}");
            assert!(
                e.to_string()
                    .contains("expected a depth that is a number >= 0"),
                "{e}"
            );
        }
    }

    #[test]
    fn decimal_values_are_read_exactly() {
        // Correct rounding of decimal strings (IEEE 754): the fast path must
        // agree with the standard library's parser.
        for s in [
            "0",
            "0.000",
            "12",
            "0.1",
            "0.3",
            "1.",
            ".5",
            "+2.25",
            "123456789012345",
            "0.000000000000001",
            "25.4",
            "-0",
            "-0.0",
        ] {
            let want: f64 = s.parse::<f64>().expect("number") + 0.0;
            match parse_value(s.as_bytes()) {
                Ok(v) => assert_eq!(v.to_bits(), want.to_bits(), "{s}"),
                Err(_) => panic!("{s} refused"),
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(256))]

        #[test]
        fn fast_value_parser_agrees_with_the_standard_parser(
            int in 0u64..10_000_000, frac in 0u64..100_000_000, width in 0usize..9,
        ) {
            let s = if width == 0 { int.to_string() } else { format!("{int}.{frac:0width$}") };
            let want: f64 = s.parse().expect("number");
            let got = parse_value(s.as_bytes()).ok();
            prop_assert_eq!(got.map(f64::to_bits), Some(want.to_bits()), "{}", s);
        }
    }

    #[test]
    fn cumulative_column_is_differenced() {
        // Scenario contract, "Rainfall CSV": `cumulative` gives a running total.
        let text = "time,cumulative\n2024-01-01 01:00,0.0\n2024-01-01 02:00,0.3\n2024-01-01 03:00,0.3\n2024-01-01 04:00,1.0\n";
        let s = parse(text).expect("valid");
        assert_eq!(s.column, DepthColumn::Cumulative);
        assert_eq!(s.start_s, ts(2024, 1, 1, 0, 0, 0));
        let expected = [0.0, 0.3, 0.0, 0.7];
        for (g, w) in s.depth.iter().zip(expected) {
            assert_abs_diff_eq!(*g, w, epsilon = 1e-12);
        }
        assert_abs_diff_eq!(s.depth.iter().sum::<f64>(), 1.0, epsilon = 1e-12);
    }

    #[test]
    fn decreasing_cumulative_total_is_an_error() {
        let text =
            "time,cumulative\n2024-01-01 01:00,0.5\n2024-01-01 02:00,0.7\n2024-01-01 03:00,0.6\n";
        let e = err(text, &opts());
        assert_eq!((e.kind, e.line), (GaugeErrorKind::CumulativeDecreases, 4));
        assert!(
            e.message.contains("cumulative total decreases at line 4"),
            "{e}"
        );
    }

    // ---- order and intervals ----

    #[test]
    fn out_of_order_and_duplicate_times_are_distinct_errors() {
        // Scenario contract, "Rainfall CSV": rows must be in time order.
        let text = "time,depth\n2024-01-01 00:15,0\n2024-01-01 00:30,0\n2024-01-01 00:20,0\n";
        let e = err(text, &opts());
        assert_eq!((e.kind, e.line), (GaugeErrorKind::OutOfOrder, 4));
        assert!(e.message.contains("line 3"), "{e}");
        let text = "time,depth\n2024-01-01 00:15,0\n2024-01-01 00:30,0\n2024-01-01 00:30,0\n";
        let e = err(text, &opts());
        assert_eq!((e.kind, e.line), (GaugeErrorKind::DuplicateTime, 4));
        assert!(e.message.contains("line 3"), "{e}");
    }

    #[test]
    fn interval_is_the_smallest_gap_when_not_given() {
        // Scenario contract, "Rainfall CSV" (default interval: the smallest
        // gap) and "Conventions" (t = 0 is the first row's time minus the interval).
        let text = "time,depth\n2024-01-01 01:00,1\n2024-01-01 01:15,2\n2024-01-01 01:30,3\n";
        let s = parse(text).expect("valid");
        assert_eq!(s.interval_s, 900);
        assert_eq!(s.start_s, ts(2024, 1, 1, 0, 45, 0));
        assert_eq!(s.depth, vec![1.0, 2.0, 3.0]);
        assert_eq!(s.rows, 3);
    }

    #[test]
    fn interval_given_explicitly_is_used_and_checked() {
        // Scenario contract, "Rainfall CSV": every gap a whole multiple of the interval.
        let text = "time,depth\n2024-01-01 01:00,1\n2024-01-01 02:00,2\n";
        // Given 30 min: hourly rows leave one 30-min interval missing.
        let o = GaugeOptions {
            interval_s: Some(1_800),
            ..opts()
        };
        let e = err(text, &o);
        assert_eq!((e.kind, e.line), (GaugeErrorKind::MissingIntervals, 3));
        let o = GaugeOptions {
            interval_s: Some(1_800),
            missing_zero: true,
            ..opts()
        };
        let s = parse_gauge(text.as_bytes(), &o).expect("valid");
        assert_eq!(s.interval_s, 1_800);
        assert_eq!(s.start_s, ts(2024, 1, 1, 0, 30, 0));
        assert_eq!(s.depth, vec![1.0, 0.0, 2.0]);
        // Given 25 min: the 60-min gap is no whole multiple.
        let o = GaugeOptions {
            interval_s: Some(1_500),
            ..opts()
        };
        let e = err(text, &o);
        assert_eq!((e.kind, e.line), (GaugeErrorKind::MixedInterval, 3));
        assert!(e.message.contains("25 min interval given"), "{e}");
        // A single row is fine with a given interval.
        let o = GaugeOptions {
            interval_s: Some(300),
            ..opts()
        };
        let s = parse_gauge(b"time,depth\n2024-01-01 01:00,1\n", &o).expect("valid");
        assert_eq!((s.start_s, s.depth.len()), (ts(2024, 1, 1, 0, 55, 0), 1));
        let e = err("time,depth\n2024-01-01 01:00,1\n", &opts());
        assert_eq!((e.kind, e.line), (GaugeErrorKind::UnknownInterval, 2));
        let o = GaugeOptions {
            interval_s: Some(0),
            ..opts()
        };
        assert_eq!(err(text, &o).kind, GaugeErrorKind::BadOption);
    }

    #[test]
    fn mixed_interval_lengths_name_the_line_and_both_gaps() {
        let text = "time,depth\n2024-01-01 01:00,1\n2024-01-01 01:10,2\n\n2024-01-01 01:16,3\n2024-01-01 01:20,4\n";
        let e = err(text, &opts());
        assert_eq!((e.kind, e.line), (GaugeErrorKind::MixedInterval, 3));
        assert!(
            e.message.contains("gap of 10 min before line 3")
                && e.message.contains("4 min gap before line 6"),
            "{e}"
        );
    }

    #[test]
    fn missing_intervals_are_an_error_without_zero_filling() {
        // Scenario contract, "Rainfall CSV": missing intervals are an error
        // unless missing = "zero".
        let text = "time,depth\n2024-01-01 01:00,1\n2024-01-01 01:05,2\n2024-01-01 01:20,3\n";
        let e = err(text, &opts());
        assert_eq!((e.kind, e.line), (GaugeErrorKind::MissingIntervals, 4));
        assert!(
            e.message
                .contains("missing intervals between line 3 and line 4"),
            "{e}"
        );
    }

    #[test]
    fn sparse_file_is_zero_filled_with_missing_zero() {
        // Scenario contract, "Rainfall CSV" and "Long records" (missing = "zero").
        let text = "time,depth\n2024-01-01 01:00,1\n2024-01-01 01:05,2\n2024-01-01 01:20,3\n";
        let o = GaugeOptions {
            missing_zero: true,
            ..opts()
        };
        let s = parse_gauge(text.as_bytes(), &o).expect("valid");
        assert_eq!(s.interval_s, 300);
        assert_eq!(s.depth, vec![1.0, 2.0, 0.0, 0.0, 3.0]);
        assert_eq!(s.rows, 3);
    }

    #[test]
    fn sparse_cumulative_file_puts_each_increase_in_its_own_interval() {
        let text =
            "time,cumulative\n2024-01-01 01:00,1\n2024-01-01 01:05,1.5\n2024-01-01 01:20,4\n";
        let o = GaugeOptions {
            missing_zero: true,
            ..opts()
        };
        let s = parse_gauge(text.as_bytes(), &o).expect("valid");
        assert_eq!(s.depth, vec![1.0, 0.5, 0.0, 0.0, 2.5]);
    }

    #[test]
    fn series_longer_than_the_limit_are_refused_with_the_count() {
        let text = "time,depth\n2024-01-01 00:05,1\n2024-01-01 00:10,1\n2024-02-01 00:00,1\n";
        let o = GaugeOptions {
            missing_zero: true,
            max_intervals: 1_000,
            ..opts()
        };
        let e = err(text, &o);
        assert_eq!(e.kind, GaugeErrorKind::TooLong);
        assert!(e.message.contains("8928 intervals"), "{e}");
        let o = GaugeOptions {
            max_intervals: 2,
            ..opts()
        };
        let e = err(text, &o);
        assert_eq!((e.kind, e.line), (GaugeErrorKind::TooLong, 4));
    }

    // ---- robustness ----

    const VALID: &str = "time,cumulative\r\n2024-02-28 23:00,0.0\r\n2024-02-28 23:30,0.2\r\n\r\n2024-02-29 00:30,1.5\r\n2024-02-29 01:00+00:00,1.7\r\n2024-02-29 01:30,2\r\n";

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(256))]

        #[test]
        fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..300), zero in any::<bool>()) {
            let o = GaugeOptions { missing_zero: zero, max_intervals: 10_000, ..GaugeOptions::default() };
            let _ = parse_gauge(&bytes, &o);
            let mut with_header = b"time,depth\n".to_vec();
            with_header.extend_from_slice(&bytes);
            let _ = parse_gauge(&with_header, &o);
        }

        #[test]
        fn mutated_valid_files_never_panic_and_stay_sane(
            edits in proptest::collection::vec((any::<usize>(), any::<u8>(), 0u8..3), 1..6),
            zero in any::<bool>(),
            interval in prop_oneof![Just(None), Just(Some(1_800i64)), Just(Some(7i64))],
        ) {
            let mut bytes = VALID.as_bytes().to_vec();
            for (pos, byte, op) in edits {
                let i = pos % (bytes.len() + 1);
                match op {
                    0 => bytes.insert(i, byte),
                    1 if i < bytes.len() => { bytes.remove(i); }
                    _ if i < bytes.len() => bytes[i] = byte,
                    _ => bytes.push(byte),
                }
            }
            let o = GaugeOptions { interval_s: interval, missing_zero: zero, max_intervals: 100_000 };
            match parse_gauge(&bytes, &o) {
                Ok(s) => {
                    prop_assert!(s.interval_s > 0);
                    prop_assert!(!s.depth.is_empty() && s.depth.len() <= 100_000);
                    prop_assert!(s.depth.iter().all(|d| d.is_finite() && *d >= 0.0));
                    prop_assert!(s.rows <= s.depth.len());
                }
                Err(e) => prop_assert!(!e.message.is_empty() && !e.expected.is_empty()),
            }
        }

        #[test]
        fn fast_and_general_row_paths_read_the_same_series(
            rows in proptest::collection::vec(
                (1i64..4, 0u32..100_000, 0usize..4, any::<bool>(), any::<bool>()),
                1..80,
            ),
            cumulative in any::<bool>(),
        ) {
            // The same rows as `time,value` (fast path where the layout
            // allows) and as `value,time` (always the general path).
            let name = if cumulative { "cumulative" } else { "depth" };
            let mut a = format!("time,{name}\n");
            let mut b = format!("{name},time\n");
            let mut t = ts(2023, 12, 31, 23, 0, 0);
            let mut total = 0u64;
            for (step, v, decimals, seconds, crlf) in rows {
                t += 300 * step;
                total += u64::from(v);
                let raw = if cumulative { total } else { u64::from(v) };
                let value = match decimals {
                    0 => raw.to_string(),
                    d => format!("{}.{:0d$}", raw / 10u64.pow(d as u32), raw % 10u64.pow(d as u32)),
                };
                let mut time = format_timestamp(t);
                if !seconds {
                    time.truncate(16);
                }
                let end = if crlf { "\r\n" } else { "\n" };
                a.push_str(&format!("{time},{value}{end}"));
                b.push_str(&format!("{value},{time}{end}"));
            }
            let o = GaugeOptions { missing_zero: true, ..GaugeOptions::default() };
            let ra = parse_gauge(a.as_bytes(), &o);
            let rb = parse_gauge(b.as_bytes(), &o);
            match (ra, rb) {
                (Ok(sa), Ok(sb)) => prop_assert_eq!(sa, sb),
                (Err(ea), Err(eb)) => prop_assert_eq!((ea.kind, ea.line), (eb.kind, eb.line)),
                (ra, rb) => prop_assert!(false, "{:?} vs {:?}", ra, rb),
            }
        }

        #[test]
        fn zero_filled_series_keep_every_row_at_its_interval(
            gaps in proptest::collection::vec(1i64..5, 1..60),
            depths in proptest::collection::vec(0u32..1000, 60),
        ) {
            // Obvious model: row k at minute 10 * (sum of gaps), dense index = that / 10.
            let mut text = String::from("time,depth\n");
            let mut minutes = 10i64;
            let mut model = std::collections::BTreeMap::new();
            for (i, g) in std::iter::once(&0).chain(gaps.iter()).enumerate() {
                minutes += 10 * g;
                let d = f64::from(depths[i]) / 100.0;
                model.insert(minutes, d);
                text.push_str(&format!("{},{d}\n", format_timestamp(minutes * 60).replace('T', " ")));
            }
            let o = GaugeOptions { missing_zero: true, interval_s: Some(600), ..GaugeOptions::default() };
            let s = parse_gauge(text.as_bytes(), &o).expect("valid");
            let first = *model.keys().next().unwrap();
            prop_assert_eq!(s.start_s, (first - 10) * 60);
            for (k, d) in s.depth.iter().enumerate() {
                let at = first + 10 * k as i64;
                prop_assert_eq!(*d, model.get(&at).copied().unwrap_or(0.0));
            }
        }
    }
}
