//! Calendar date-times as ERP exports write them (`2026-03-02T06:15:00`, `2026-03-02 06:15`),
//! read strictly, for order traces mapped to simulated time by a start date-time.
//!
//! The forms are few and fixed, so a small strict parser does the job without a
//! date crate: `YYYY-MM-DD`, then `T` or one space, then `HH:MM` or `HH:MM:SS`
//! (seconds may carry a fraction), then optionally `Z` or an offset `±HH:MM` /
//! `±HHMM`. Anything else (a date alone, `06:15` alone, `2/3/2026`, `24:00`)
//! is refused with the forms accepted, because a guessed day/month order would
//! move an order by months without a word. Days are counted in the proleptic
//! Gregorian calendar with the days-from-civil algorithm of H. Hinnant's
//! "chrono-Compatible Low-Level Date Algorithms" (written from memory; the
//! tests check it against dates counted by hand).

/// The forms accepted, for messages.
pub const DATETIME_EXAMPLE: &str = "write e.g. 2026-03-02T06:15, 2026-03-02 06:15:30, \
     2026-03-02T06:15:00Z or 2026-03-02T06:15:00+01:00";

/// A wall-clock date-time with its UTC offset, if it was written with one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DateTime {
    /// Seconds from 1970-01-01 00:00 on the wall clock it was written in.
    pub local_s: f64,
    /// The written offset from UTC, seconds (`Z` is 0); `None` when none was written.
    pub offset_s: Option<i64>,
}

impl DateTime {
    /// The day of the week on its own wall clock: 0 = Monday … 6 = Sunday.
    pub fn weekday(&self) -> u32 {
        let days = (self.local_s / 86_400.0).floor() as i64;
        // 1970-01-01 was a Thursday (3 counting from Monday = 0).
        (days + 3).rem_euclid(7) as u32
    }

    /// Seconds since midnight on its own wall clock.
    pub fn second_of_day(&self) -> f64 {
        self.local_s.rem_euclid(86_400.0)
    }

    /// The same instant read on the wall clock of `offset_s` (its own when `None`).
    pub fn on_clock(&self, offset_s: Option<i64>) -> f64 {
        match (self.offset_s, offset_s) {
            (Some(own), Some(other)) => self.local_s - own as f64 + other as f64,
            _ => self.local_s,
        }
    }

    /// `YYYY-MM-DDTHH:MM` of the Monday 00:00 at or before this date-time (for hints).
    pub fn monday_before(&self) -> String {
        let days = (self.local_s / 86_400.0).floor() as i64;
        let monday = days - i64::from(self.weekday());
        let (y, m, d) = civil_from_days(monday);
        format!("{y:04}-{m:02}-{d:02}T00:00")
    }
}

/// Week-day names for messages, Monday first.
pub const WEEKDAYS: [&str; 7] =
    ["Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday"];

/// True when the text starts like a date (`dddd-`), so a cell can be told apart
/// from a duration such as `6.5 h` before it is parsed.
pub fn looks_like_date(text: &str) -> bool {
    let b = text.trim().as_bytes();
    b.len() >= 5 && b[..4].iter().all(u8::is_ascii_digit) && b[4] == b'-'
}

/// Parses one date-time in the forms of [`DATETIME_EXAMPLE`].
pub fn parse_datetime(text: &str) -> Result<DateTime, String> {
    let t = text.trim();
    let bad = |why: &str| format!("\"{t}\" is not a date-time ({why}); {DATETIME_EXAMPLE}");
    let b = t.as_bytes();
    if b.len() < 16 {
        return Err(bad("too short: a date and a time of day, at least YYYY-MM-DD HH:MM"));
    }
    let digits = |from: usize, n: usize| -> Option<u32> {
        let s = b.get(from..from + n)?;
        if s.iter().all(u8::is_ascii_digit) {
            Some(s.iter().fold(0u32, |a, &d| a * 10 + u32::from(d - b'0')))
        } else {
            None
        }
    };
    let (Some(year), Some(month), Some(day)) = (digits(0, 4), digits(5, 2), digits(8, 2)) else {
        return Err(bad("the date must be YYYY-MM-DD"));
    };
    if b[4] != b'-' || b[7] != b'-' {
        return Err(bad("the date must be YYYY-MM-DD"));
    }
    if !(b[10] == b'T' || b[10] == b' ') {
        return Err(bad("the date and the time are joined by T or one space"));
    }
    let (Some(hour), Some(minute)) = (digits(11, 2), digits(14, 2)) else {
        return Err(bad("the time must be HH:MM or HH:MM:SS"));
    };
    if b[13] != b':' {
        return Err(bad("the time must be HH:MM or HH:MM:SS"));
    }
    let mut i = 16;
    let mut second = 0.0;
    if b.get(i) == Some(&b':') {
        let Some(s) = digits(i + 1, 2) else {
            return Err(bad("seconds are two digits, HH:MM:SS"));
        };
        second = f64::from(s);
        i += 3;
        if b.get(i) == Some(&b'.') || b.get(i) == Some(&b',') {
            let start = i + 1;
            let mut end = start;
            while b.get(end).is_some_and(u8::is_ascii_digit) {
                end += 1;
            }
            if end == start {
                return Err(bad("a fraction of a second needs digits"));
            }
            let frac: f64 = format!("0.{}", &t[start..end]).parse().map_err(|_| bad("bad fraction"))?;
            second += frac;
            i = end;
        }
    }
    let offset_s = match &t[i..] {
        "" => None,
        "Z" | "z" => Some(0),
        rest => Some(parse_offset(rest).ok_or_else(|| bad("the offset must be Z, +HH:MM or -HHMM"))?),
    };
    if !(1..=12).contains(&month) {
        return Err(bad(&format!("there is no month {month}")));
    }
    if day < 1 || day > days_in_month(year, month) {
        return Err(bad(&format!("there is no day {day} in month {month} of {year}")));
    }
    if hour > 23 || minute > 59 || second >= 60.0 {
        return Err(bad("the time of day runs from 00:00 to 23:59:59"));
    }
    let days = days_from_civil(i64::from(year), month, day);
    let local_s = days as f64 * 86_400.0 + f64::from(hour * 3600 + minute * 60) + second;
    Ok(DateTime { local_s, offset_s })
}

fn parse_offset(s: &str) -> Option<i64> {
    let b = s.as_bytes();
    let sign = match b.first()? {
        b'+' => 1,
        b'-' => -1,
        _ => return None,
    };
    let rest = &s[1..];
    let (h, m) = match rest.len() {
        5 if rest.as_bytes()[2] == b':' => (&rest[..2], &rest[3..]),
        4 => (&rest[..2], &rest[2..]),
        2 => (rest, "00"),
        _ => return None,
    };
    if !(h.bytes().all(|c| c.is_ascii_digit()) && m.bytes().all(|c| c.is_ascii_digit())) {
        return None;
    }
    let (h, m): (i64, i64) = (h.parse().ok()?, m.parse().ok()?);
    if h > 18 || m > 59 {
        return None;
    }
    Some(sign * (h * 3600 + m * 60))
}

fn is_leap(y: u32) -> bool {
    (y.is_multiple_of(4) && !y.is_multiple_of(100)) || y.is_multiple_of(400)
}

fn days_in_month(y: u32, m: u32) -> u32 {
    match m {
        2 if is_leap(y) => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

/// Days from 1970-01-01 to the given proleptic Gregorian date.
fn days_from_civil(y: i64, m: u32, d: u32) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let m = i64::from(m);
    let doy = (153 * (if m > 2 { m - 3 } else { m + 9 }) + 2) / 5 + i64::from(d) - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// The date of a day count from 1970-01-01 (the inverse of [`days_from_civil`]).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_the_iso_and_spreadsheet_forms() {
        let a = parse_datetime("2026-03-02T06:15").unwrap();
        let b = parse_datetime("2026-03-02 06:15:00").unwrap();
        assert_eq!(a, b);
        assert_eq!(a.offset_s, None);
        assert_eq!(a.second_of_day(), 6.0 * 3600.0 + 15.0 * 60.0);
        // 2026-03-02 is a Monday (a calendar read by hand).
        assert_eq!(a.weekday(), 0);
        assert_eq!(parse_datetime("1970-01-01 00:00").unwrap().local_s, 0.0);
        // 2000-03-01 is day 11 017 after 1970-01-01 (30 years of 365 days, 7 leap days to 1999, Jan+Feb 2000 = 60).
        assert_eq!(parse_datetime("2000-03-01 00:00").unwrap().local_s, 11_017.0 * 86_400.0);
        let z = parse_datetime("2026-03-02T06:15:00Z").unwrap();
        assert_eq!(z.offset_s, Some(0));
        let plus = parse_datetime("2026-03-02T07:15:00+01:00").unwrap();
        assert_eq!(plus.offset_s, Some(3600));
        assert_eq!(plus.on_clock(Some(0)), z.local_s);
        assert_eq!(parse_datetime("2026-03-02T06:15:30.5-0500").unwrap().offset_s, Some(-18_000));
        assert_eq!(parse_datetime("2026-03-04 10:00").unwrap().monday_before(), "2026-03-02T00:00");
        assert_eq!(parse_datetime("2024-02-29 00:00").unwrap().weekday(), 3, "a Thursday");
    }

    #[test]
    fn refuses_what_it_would_have_to_guess() {
        for bad in [
            "2026-03-02",
            "06:15",
            "02/03/2026 06:15",
            "2026-3-2 06:15",
            "2026-02-29 06:15",
            "2026-13-01 06:15",
            "2026-03-02 24:00",
            "2026-03-02 06:15 CET",
            "2026-03-02T06:15:00+1",
        ] {
            let e = parse_datetime(bad).unwrap_err();
            assert!(e.contains("2026-03-02T06:15"), "{bad}: {e}");
        }
        assert!(looks_like_date("2026-03-02 06:15"));
        assert!(!looks_like_date("6.5 h"));
    }
}
