//! Selecting rows by time: `YYYY-MM`, `YYYY` or `previous-month`.

use chrono::{Datelike, NaiveDate, TimeZone, Utc};

use crate::ingest::Period;

/// Parse a period argument. `today` is the reference date for `previous-month`.
///
/// Errors: a message saying what was expected.
pub fn parse_period(text: &str, today: NaiveDate) -> Result<Period, String> {
    let t = text.trim();
    let (year, month) = if t.eq_ignore_ascii_case("previous-month") {
        if today.month() == 1 {
            (today.year() - 1, Some(12))
        } else {
            (today.year(), Some(today.month() - 1))
        }
    } else if t.eq_ignore_ascii_case("current-month") {
        (today.year(), Some(today.month()))
    } else if let Some((y, m)) = t.split_once('-') {
        let year = parse_year(y, text)?;
        let month: u32 = m
            .parse()
            .ok()
            .filter(|m| (1..=12).contains(m))
            .ok_or_else(|| expected(text))?;
        (year, Some(month))
    } else {
        (parse_year(t, text)?, None)
    };
    let start_date =
        NaiveDate::from_ymd_opt(year, month.unwrap_or(1), 1).ok_or_else(|| expected(text))?;
    let end_date = match month {
        Some(12) | None => NaiveDate::from_ymd_opt(year + 1, 1, 1),
        Some(m) => NaiveDate::from_ymd_opt(year, m + 1, 1),
    }
    .ok_or_else(|| expected(text))?;
    let label = match month {
        Some(m) => format!("{year:04}-{m:02}"),
        None => format!("{year:04}"),
    };
    Ok(Period {
        label,
        start: Utc.from_utc_datetime(&start_date.and_hms_opt(0, 0, 0).expect("midnight")),
        end: Utc.from_utc_datetime(&end_date.and_hms_opt(0, 0, 0).expect("midnight")),
    })
}

/// The reference date of `--today` (YYYY-MM-DD), or today in UTC.
///
/// Errors: a message saying what was expected.
pub fn parse_today(text: Option<&str>) -> Result<NaiveDate, String> {
    match text {
        Some(t) => NaiveDate::parse_from_str(t, "%Y-%m-%d")
            .map_err(|_| format!("--today {t:?}: expected a date YYYY-MM-DD")),
        None => Ok(Utc::now().date_naive()),
    }
}

fn parse_year(y: &str, text: &str) -> Result<i32, String> {
    if y.len() != 4 {
        return Err(expected(text));
    }
    y.parse::<i32>()
        .ok()
        .filter(|y| (1900..=2200).contains(y))
        .ok_or_else(|| expected(text))
}

fn expected(text: &str) -> String {
    format!(
        "--period {text:?}: expected YYYY-MM (e.g. 2026-11), YYYY (e.g. 2026) or previous-month"
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(y: i32, m: u32, day: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, day).unwrap()
    }

    #[test]
    fn previous_month_wraps_the_year() {
        let p = parse_period("previous-month", d(2027, 1, 5)).unwrap();
        assert_eq!(p.label, "2026-12");
        assert_eq!(p.start, Utc.with_ymd_and_hms(2026, 12, 1, 0, 0, 0).unwrap());
        assert_eq!(p.end, Utc.with_ymd_and_hms(2027, 1, 1, 0, 0, 0).unwrap());
    }

    #[test]
    fn month_and_year() {
        let p = parse_period("2026-02", d(2026, 12, 1)).unwrap();
        assert_eq!(p.end, Utc.with_ymd_and_hms(2026, 3, 1, 0, 0, 0).unwrap());
        let y = parse_period("2026", d(2026, 12, 1)).unwrap();
        assert_eq!(y.label, "2026");
        assert_eq!(y.end, Utc.with_ymd_and_hms(2027, 1, 1, 0, 0, 0).unwrap());
    }

    #[test]
    fn nonsense_is_refused_with_the_forms() {
        for bad in ["2026-13", "26-01", "last", "2026-1x", ""] {
            let e = parse_period(bad, d(2026, 12, 1)).unwrap_err();
            assert!(e.contains("YYYY-MM"), "{e}");
        }
    }
}
