//! Measurement times: date-time cells, Excel serial numbers (1900 and 1904 date systems),
//! ISO 8601 text with or without an offset, and separate date and time columns.

use calamine::{ExcelDateTime, ExcelDateTimeType};
use chrono::{DateTime, FixedOffset, NaiveDate, NaiveDateTime, NaiveTime, TimeDelta, Timelike};

use super::cells::{Cell, FillValues};

/// A time as written: the clock reading and, when the cell says, its offset from UTC.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct ParsedTime {
    pub naive: NaiveDateTime,
    /// Offset written in the cell [min east of UTC].
    pub offset_minutes: Option<i32>,
    /// False for a date without a time of day.
    pub has_time: bool,
}

/// Years accepted as measurement times (wider would let an hour or a day count pass as a
/// 1900 date). Common practice for campaign data.
pub(crate) const YEARS: std::ops::RangeInclusive<i32> = 1950..=2100;

/// Date-time formats without an offset, tried in order.
const NAIVE_FORMATS: &[&str] = &[
    "%Y-%m-%dT%H:%M:%S%.f",
    "%Y-%m-%d %H:%M:%S%.f",
    "%Y-%m-%dT%H:%M",
    "%Y-%m-%d %H:%M",
    "%Y/%m/%d %H:%M:%S%.f",
    "%Y/%m/%d %H:%M",
    "%Y%m%dT%H%M%S",
    "%Y%m%dT%H%M",
];

/// Date-time formats with an offset, tried in order.
const OFFSET_FORMATS: &[&str] = &[
    "%Y-%m-%dT%H:%M:%S%.f%:z",
    "%Y-%m-%dT%H:%M:%S%.f%z",
    "%Y-%m-%d %H:%M:%S%.f%:z",
    "%Y-%m-%d %H:%M:%S%.f%z",
    "%Y-%m-%dT%H:%M%:z",
    "%Y-%m-%d %H:%M%:z",
    "%Y-%m-%dT%H:%M:%S%.f %:z",
    "%Y-%m-%d %H:%M:%S%.f %:z",
];

const DATE_FORMATS: &[&str] = &["%Y-%m-%d", "%Y/%m/%d", "%Y%m%d"];

/// Parse ISO 8601 date-time text, with or without an offset (`Z`, `+08:00`, `-0300`,
/// a trailing `UTC`), or a date alone.
pub(crate) fn parse_datetime_text(text: &str) -> Option<ParsedTime> {
    let t = text.trim();
    if t.len() < 8 || !t.starts_with(|c: char| c.is_ascii_digit()) {
        return None;
    }
    let mut owned = t.to_string();
    for suffix in [" UTC", " utc", " GMT", "UTC", "Z", "z"] {
        if let Some(stripped) = t.strip_suffix(suffix) {
            owned = format!("{}+00:00", stripped.trim_end());
            break;
        }
    }
    let s = owned.as_str();
    for f in OFFSET_FORMATS {
        if let Ok(d) = DateTime::<FixedOffset>::parse_from_str(s, f) {
            return Some(ParsedTime {
                naive: d.naive_local(),
                offset_minutes: Some(d.offset().local_minus_utc() / 60),
                has_time: true,
            });
        }
    }
    for f in NAIVE_FORMATS {
        if let Ok(d) = NaiveDateTime::parse_from_str(s, f) {
            return Some(ParsedTime {
                naive: d,
                offset_minutes: None,
                has_time: true,
            });
        }
    }
    for f in DATE_FORMATS {
        if let Ok(d) = NaiveDate::parse_from_str(s, f) {
            return Some(ParsedTime {
                naive: d.and_time(NaiveTime::MIN),
                offset_minutes: None,
                has_time: false,
            });
        }
    }
    None
}

/// Excel serial date-time to a clock reading. `is_1904` selects the 1904 date system
/// (ECMA-376 Part 1, §18.17.4.1; days from 1904-01-01 instead of 1899-12-30/31).
pub(crate) fn excel_serial(value: f64, is_1904: bool) -> Option<NaiveDateTime> {
    if !value.is_finite() || !(0.0..2_958_466.0).contains(&value) {
        return None;
    }
    ExcelDateTime::new(value, ExcelDateTimeType::DateTime, is_1904).as_datetime()
}

/// Offset text such as `UTC+8`, `utc-03:30`, `+05:30`, `-3`, `8` → hours east of UTC.
pub(crate) fn parse_offset_hours(text: &str) -> Option<f64> {
    let mut t = text.trim().to_lowercase();
    for p in ["utc", "gmt"] {
        if let Some(s) = t.strip_prefix(p) {
            t = s.trim().to_string();
        }
    }
    if t.is_empty() {
        return Some(0.0);
    }
    let (sign, body) = match t.as_bytes()[0] {
        b'+' => (1.0, &t[1..]),
        b'-' => (-1.0, &t[1..]),
        _ => (1.0, t.as_str()),
    };
    let body = body.trim();
    let hours = if let Some((h, m)) = body.split_once(':') {
        h.parse::<f64>().ok()? + m.parse::<f64>().ok()? / 60.0
    } else if body.len() == 4 && body.chars().all(|c| c.is_ascii_digit()) {
        body[..2].parse::<f64>().ok()? + body[2..].parse::<f64>().ok()? / 60.0
    } else {
        body.parse::<f64>().ok()?
    };
    let v = sign * hours;
    (-14.0..=14.0).contains(&v).then_some(v)
}

/// A time cell, interpreted.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum TimeRead {
    Missing,
    Value(ParsedTime),
    Bad(String),
}

/// Largest UTC offset in use [min]: +14:00 (Line Islands) and −12:00; ±14 h is the range
/// accepted (common practice).
pub(crate) const MAX_OFFSET_MINUTES: i32 = 14 * 60;

fn check_year(p: ParsedTime) -> TimeRead {
    use chrono::Datelike;
    if let Some(m) = p.offset_minutes
        && m.abs() > MAX_OFFSET_MINUTES
    {
        let sign = if m < 0 { '-' } else { '+' };
        return TimeRead::Bad(format!(
            "expected a UTC offset within ±14:00 (the largest in use), found {sign}{:02}:{:02}",
            m.abs() / 60,
            m.abs() % 60
        ));
    }
    if YEARS.contains(&p.naive.year()) {
        TimeRead::Value(p)
    } else {
        TimeRead::Bad(format!(
            "expected a measurement time between {} and {} (read as {})",
            YEARS.start(),
            YEARS.end(),
            p.naive.format("%Y-%m-%d %H:%M:%S")
        ))
    }
}

/// Read a time cell: a date-time cell, an Excel serial number in the workbook's date system,
/// ISO 8601 text, or (parquet) a typed date-time.
pub(crate) fn read_time(cell: &Cell<'_>, is_1904: bool, fill: &FillValues) -> TimeRead {
    if fill.is_missing(cell) {
        return TimeRead::Missing;
    }
    match cell {
        // calamine carries the workbook's date system in each date-time cell
        Cell::Excel(d) if d.is_datetime() => match d.as_datetime() {
            Some(n) => check_year(ParsedTime { naive: n, offset_minutes: None, has_time: true }),
            None => TimeRead::Bad("expected a date-time (the date serial is invalid)".into()),
        },
        Cell::Excel(_) => TimeRead::Bad("expected a date-time, not a duration".into()),
        Cell::Number(v) => match excel_serial(*v, is_1904) {
            Some(n) => check_year(ParsedTime {
                naive: n,
                offset_minutes: None,
                has_time: v.fract() != 0.0,
            }),
            None => TimeRead::Bad("expected a date-time (a date cell, an Excel serial or ISO 8601 text)".into()),
        },
        Cell::EpochMs(ms) => match DateTime::from_timestamp_millis(*ms) {
            Some(d) => check_year(ParsedTime {
                naive: d.naive_utc(),
                offset_minutes: None,
                has_time: true,
            }),
            None => TimeRead::Bad("expected a date-time".into()),
        },
        Cell::Text(s) => match parse_datetime_text(s) {
            Some(p) => check_year(p),
            None => TimeRead::Bad(
                "expected a date-time (a date cell, an Excel serial or ISO 8601 text such as 2024-05-01T10:30:00+08:00)"
                    .into(),
            ),
        },
        _ => TimeRead::Bad("expected a date-time".into()),
    }
}

/// Read a time-of-day cell (for a separate time column) → seconds after midnight, and the
/// offset if written. A full date-time in the cell is returned as `Err(Some(..))`.
pub(crate) fn read_time_of_day(
    cell: &Cell<'_>,
    is_1904: bool,
    fill: &FillValues,
) -> Result<Option<(f64, Option<i32>)>, Option<TimeRead>> {
    if fill.is_missing(cell) {
        return Ok(None);
    }
    match cell {
        Cell::Excel(d) => {
            let v = d.as_f64();
            if d.is_duration() && !(0.0..1.0).contains(&v) {
                return Err(Some(TimeRead::Bad(
                    "expected a time of day below 24:00, not a duration of a day or more (the cell is formatted as a duration, such as [h]:mm)"
                        .into(),
                )));
            }
            if (0.0..1.0).contains(&v) || d.is_duration() {
                Ok(Some((
                    (v.fract() * 86_400.0 * 1000.0).round() / 1000.0,
                    None,
                )))
            } else {
                Err(Some(read_time(cell, is_1904, fill)))
            }
        }
        Cell::Number(v) if (0.0..1.0).contains(v) => Ok(Some((v * 86_400.0, None))),
        Cell::Number(_) | Cell::EpochMs(_) => Err(Some(read_time(cell, is_1904, fill))),
        Cell::Text(s) => {
            let t = s.trim();
            if let Some(p) = parse_datetime_text(t)
                && p.has_time
            {
                return Err(Some(check_year(p)));
            }
            // ISO 8601 duration from ods (PT10H30M00S)
            if let Some(rest) = t.strip_prefix("PT") {
                return match parse_iso_duration(rest) {
                    Some(s) if s < 86_400.0 => Ok(Some((s, None))),
                    Some(_) => Err(Some(TimeRead::Bad(
                        "expected a time of day below 24:00, not a duration of a day or more"
                            .into(),
                    ))),
                    None => Err(None),
                };
            }
            let (clock, offset) = split_clock_offset(t);
            for f in ["%H:%M:%S%.f", "%H:%M"] {
                if let Ok(tm) = NaiveTime::parse_from_str(clock, f) {
                    let secs = tm.signed_duration_since(NaiveTime::MIN).as_seconds_f64();
                    return Ok(Some((secs, offset)));
                }
            }
            Err(None)
        }
        _ => Err(None),
    }
}

fn parse_iso_duration(s: &str) -> Option<f64> {
    let mut total = 0.0;
    let mut num = String::new();
    for c in s.chars() {
        match c {
            '0'..='9' | '.' => num.push(c),
            'H' => total += num.parse::<f64>().ok()? * 3600.0,
            'M' => total += num.parse::<f64>().ok()? * 60.0,
            'S' => total += num.parse::<f64>().ok()?,
            _ => return None,
        }
        if c.is_ascii_alphabetic() {
            num.clear();
        }
    }
    (0.0..86_400.0 * 2.0).contains(&total).then_some(total)
}

fn split_clock_offset(t: &str) -> (&str, Option<i32>) {
    if let Some(c) = t.strip_suffix('Z') {
        return (c, Some(0));
    }
    if let Some(pos) = t.rfind(['+', '-'])
        && pos >= 4
        && let Some(h) = parse_offset_hours(&t[pos..])
    {
        return (&t[..pos], Some((h * 60.0).round() as i32));
    }
    (t, None)
}

/// Read a date cell (for a separate date column).
pub(crate) fn read_date(cell: &Cell<'_>, is_1904: bool, fill: &FillValues) -> TimeRead {
    match read_time(cell, is_1904, fill) {
        TimeRead::Value(p) => TimeRead::Value(ParsedTime {
            naive: p.naive.date().and_time(NaiveTime::MIN),
            offset_minutes: p.offset_minutes,
            has_time: false,
        }),
        other => other,
    }
}

/// A leap second (`23:59:60`, which chrono reads as a second 59 of a second's length more)
/// is read as the following instant (`00:00:00` of the next day). Returns true when the time
/// was one. Without this the solar position of such an instant is not a number.
pub(crate) fn leap_second_read_as_next(p: &mut ParsedTime) -> bool {
    let ns = p.naive.nanosecond();
    if ns < 1_000_000_000 {
        return false;
    }
    match p.naive.with_nanosecond(ns - 1_000_000_000) {
        Some(n) => {
            p.naive = n + TimeDelta::seconds(1);
            true
        }
        None => false,
    }
}

/// A date plus seconds after midnight.
pub(crate) fn combine(date: ParsedTime, seconds: f64, offset_minutes: Option<i32>) -> ParsedTime {
    let ms = (seconds * 1000.0).round() as i64;
    ParsedTime {
        naive: date.naive.date().and_time(NaiveTime::MIN) + TimeDelta::milliseconds(ms),
        offset_minutes: offset_minutes.or(date.offset_minutes),
        has_time: true,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ymdhms(s: &str) -> NaiveDateTime {
        NaiveDateTime::parse_from_str(s, "%Y-%m-%d %H:%M:%S").unwrap()
    }

    #[test]
    fn iso_text() {
        let p = parse_datetime_text("2024-05-01T10:30:00+08:00").unwrap();
        assert_eq!(p.naive, ymdhms("2024-05-01 10:30:00"));
        assert_eq!(p.offset_minutes, Some(480));
        let p = parse_datetime_text("2024-05-01 10:30:15.5Z").unwrap();
        assert_eq!(p.offset_minutes, Some(0));
        assert_eq!(p.naive.and_utc().timestamp_millis() % 1000, 500);
        let p = parse_datetime_text("2024-05-01 10:30").unwrap();
        assert_eq!(p.offset_minutes, None);
        assert_eq!(p.naive, ymdhms("2024-05-01 10:30:00"));
        let p = parse_datetime_text("2024-05-01T10:30:00-0330").unwrap();
        assert_eq!(p.offset_minutes, Some(-210));
        let p = parse_datetime_text("2024-05-01").unwrap();
        assert!(!p.has_time);
        assert!(parse_datetime_text("01/05/2024 10:30").is_none());
        assert!(parse_datetime_text("hello").is_none());
    }

    #[test]
    fn serials_both_systems() {
        // 2024-05-01 12:00 is serial 45413.5 in the 1900 system and 1462 days less in 1904
        // (ECMA-376 Part 1, §18.17.4.1).
        assert_eq!(
            excel_serial(45413.5, false),
            Some(ymdhms("2024-05-01 12:00:00"))
        );
        assert_eq!(
            excel_serial(45413.5 - 1462.0, true),
            Some(ymdhms("2024-05-01 12:00:00"))
        );
        assert_eq!(excel_serial(-1.0, false), None);
    }

    #[test]
    fn offsets() {
        assert_eq!(parse_offset_hours("UTC+8"), Some(8.0));
        assert_eq!(parse_offset_hours("utc-03:30"), Some(-3.5));
        assert_eq!(parse_offset_hours("+0530"), Some(5.5));
        assert_eq!(parse_offset_hours("-3"), Some(-3.0));
        assert_eq!(parse_offset_hours("UTC"), Some(0.0));
        assert_eq!(parse_offset_hours("+20"), None);
        assert_eq!(parse_offset_hours("abc"), None);
    }

    #[test]
    fn time_of_day() {
        let f = FillValues::new(&[]);
        assert_eq!(
            read_time_of_day(&Cell::Text("10:30"), false, &f),
            Ok(Some((37_800.0, None)))
        );
        assert_eq!(
            read_time_of_day(&Cell::Text("10:30:00+02:00"), false, &f),
            Ok(Some((37_800.0, Some(120))))
        );
        assert_eq!(
            read_time_of_day(&Cell::Number(0.5), false, &f),
            Ok(Some((43_200.0, None)))
        );
        assert_eq!(
            read_time_of_day(&Cell::Text("PT10H30M00S"), false, &f),
            Ok(Some((37_800.0, None)))
        );
        assert!(read_time_of_day(&Cell::Text("noon"), false, &f).is_err());
    }

    #[test]
    fn offsets_beyond_fourteen_hours_rejected() {
        let f = FillValues::new(&[]);
        for t in ["2027-06-22T12:00:00+15:00", "2027-06-22T12:00:00-23:59"] {
            match read_time(&Cell::Text(t), false, &f) {
                TimeRead::Bad(why) => assert!(why.contains("±14:00"), "{why}"),
                other => panic!("{t}: {other:?}"),
            }
        }
        assert!(matches!(
            read_time(&Cell::Text("2027-06-22T12:00:00+14:00"), false, &f),
            TimeRead::Value(_)
        ));
    }

    #[test]
    fn leap_second_is_the_following_instant() {
        let f = FillValues::new(&[]);
        let TimeRead::Value(mut p) = read_time(&Cell::Text("2027-06-22T11:59:60Z"), false, &f)
        else {
            panic!("not read")
        };
        assert!(leap_second_read_as_next(&mut p));
        assert_eq!(p.naive, ymdhms("2027-06-22 12:00:00"));
        assert!(!leap_second_read_as_next(&mut p));
    }

    #[test]
    fn durations_of_a_day_or_more_are_not_times_of_day() {
        let f = FillValues::new(&[]);
        let d = ExcelDateTime::new(25.0 / 24.0, ExcelDateTimeType::TimeDelta, false);
        assert!(matches!(
            read_time_of_day(&Cell::Excel(d), false, &f),
            Err(Some(TimeRead::Bad(_)))
        ));
        let d = ExcelDateTime::new(0.5, ExcelDateTimeType::TimeDelta, false);
        assert_eq!(
            read_time_of_day(&Cell::Excel(d), false, &f),
            Ok(Some((43_200.0, None)))
        );
        assert!(matches!(
            read_time_of_day(&Cell::Text("PT25H00M00S"), false, &f),
            Err(Some(TimeRead::Bad(_)))
        ));
    }

    #[test]
    fn implausible_years_rejected() {
        let f = FillValues::new(&[]);
        assert!(matches!(
            read_time(&Cell::Number(12.0), false, &f),
            TimeRead::Bad(_)
        ));
        assert!(matches!(
            read_time(&Cell::Number(45413.25), false, &f),
            TimeRead::Value(_)
        ));
    }
}
