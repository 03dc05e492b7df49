//! Step 3 of reading a row: checks. The range of each number as it is read, the row's
//! place in time, the quantities a row cannot do without, and the empty cells the job file
//! does not allow to fall back.

use chrono::TimeDelta;

use super::super::cells::{Cell, Grid, format_number};
use super::super::detect::Kind;
use super::super::read::{Mapped, SheetContext};
use super::super::time::{
    ParsedTime, TimeRead, combine, leap_second_read_as_next, read_date, read_time, read_time_of_day,
};
use super::super::types::RowWarning;
use super::super::validate::{Check, check};
use super::typed::RowValues;
use super::{MissingCell, Problem, first_col};

/// With a period selected, whether the row's time can be read and lies outside the period
/// whatever the offset of its clock: more than 14 h (the largest UTC offset in use) beyond
/// the period when the time carries no offset. Such a row is counted outside the period, not
/// rejected for faults in cells that a run of this period would never use — so a monthly
/// rerun lists only its own month's bad rows.
pub(crate) fn clearly_outside_period(ctx: &SheetContext<'_>, r: usize) -> bool {
    let Some(p) = &ctx.spec.period else {
        return false;
    };
    let (grid, fill) = (ctx.grid, ctx.fill);
    let (mut time, mut date, mut time_of_day) = (None, None, None);
    for m in &ctx.layout.columns {
        match m.kind {
            Kind::Time => {
                let cell = grid.cell(r, m.col);
                if ctx.layout.split_date_time {
                    match read_time_of_day(&cell, ctx.is_1904, fill) {
                        Ok(t) => time_of_day = t,
                        Err(Some(TimeRead::Value(pt))) => time = Some(pt),
                        Err(_) => return false,
                    }
                } else if let TimeRead::Value(pt) = read_time(&cell, ctx.is_1904, fill) {
                    time = Some(pt);
                } else {
                    return false;
                }
            }
            Kind::Date => match read_date(&grid.cell(r, m.col), ctx.is_1904, fill) {
                TimeRead::Value(pt) => date = Some(pt),
                _ => return false,
            },
            _ => {}
        }
    }
    let parsed = match (time, date, time_of_day) {
        (Some(pt), _, _) => pt,
        (None, Some(d), Some((secs, off))) => combine(d, secs, off),
        _ => return false,
    };
    let (t, slack) = match parsed.offset_minutes {
        Some(min) => (
            parsed.naive - TimeDelta::minutes(i64::from(min)),
            TimeDelta::zero(),
        ),
        None => (parsed.naive, TimeDelta::hours(14)),
    };
    let t = t.and_utc();
    t + slack < p.start || t - slack >= p.end
}

/// Check the range of number `x` (canonical units) read from `cell` of column `m`: a
/// warning is added to `warnings`, a value outside the physical range rejects the row. The
/// message text is built only for a rejection.
pub(crate) fn check_number(
    grid: &Grid,
    r: usize,
    m: &Mapped,
    cell: &Cell<'_>,
    x: f64,
    warnings: &mut Vec<RowWarning>,
) -> Result<(), Problem> {
    let kind = m.kind;
    match check(kind, x, "") {
        Check::Ok => {}
        Check::Warn(w) => warnings.push(RowWarning {
            cell: grid.a1(r, m.col),
            message: w,
        }),
        Check::Reject(_) => {
            let found = if m.scale != 1.0 {
                format!("{} {} (= {})", cell.display(), m.unit, format_number(x))
            } else {
                cell.display()
            };
            let why = match check(kind, x, &found) {
                Check::Reject(why) => why,
                _ => found,
            };
            return Err(Problem::at(m, cell, why));
        }
    }
    Ok(())
}

/// The rejection of a row that lacks `what` (the column of `kind`, if the sheet has one).
pub(crate) fn missing(ctx: &SheetContext<'_>, kind: Kind, what: &str) -> Problem {
    let m = first_col(ctx, kind);
    Problem {
        col: m.map(|m| m.col),
        column: m.map(|m| m.name()).unwrap_or_else(|| kind.name().into()),
        value: String::new(),
        reason: format!("{what} is missing (empty or a fill value); the row cannot be computed"),
    }
}

/// When a row is: its time as read, and, for a row with a readable date and no readable time
/// of day, the time column and what it held (the row is then placed on its date).
pub(crate) struct Placed {
    pub parsed: ParsedTime,
    pub date_only: Option<(usize, String)>,
}

/// Place row `r` in time from its time, date and time-of-day values; a leap second is read
/// as the following instant (with a warning).
pub(crate) fn place_in_time(
    ctx: &SheetContext<'_>,
    r: usize,
    v: &RowValues,
    mut bad_time_of_day: Option<Problem>,
    warnings: &mut Vec<RowWarning>,
) -> Result<Placed, Problem> {
    let grid = ctx.grid;
    // Time.
    // A readable date without a readable time of day: the row is placed on its date, its
    // 24-hour values computed and its instantaneous values left empty.
    let mut date_only: Option<(usize, String)> = None;
    let mut parsed = match (v.time, v.date, v.time_of_day) {
        (Some((p, _)), _, _) => p,
        (None, Some(d), Some((secs, off))) if bad_time_of_day.is_none() => combine(d, secs, off),
        (None, Some(d), _) => {
            // A time cell that holds a definite wrong value (a duration of a day or more, an
            // offset beyond ±14 h) is a fault of the cell, not a missing time: reject the row.
            if let Some(p) = bad_time_of_day
                .take_if(|p| p.reason.contains("duration") || p.reason.contains("UTC offset"))
            {
                return Err(p);
            }
            let time_col = first_col(ctx, Kind::Time).map(|m| m.col);
            let found = match &bad_time_of_day {
                Some(p) if !p.value.is_empty() => format!("\"{}\"", p.value),
                _ => "an empty cell".into(),
            };
            date_only = time_col.map(|c| (c, found));
            if date_only.is_none() {
                return Err(missing(ctx, Kind::Time, "the time of day"));
            }
            d
        }
        (None, None, _) => {
            return Err(if ctx.layout.split_date_time {
                missing(ctx, Kind::Date, "the date")
            } else {
                missing(ctx, Kind::Time, "the measurement time")
            });
        }
    };
    if leap_second_read_as_next(&mut parsed) {
        warnings.push(RowWarning {
            cell: v.time_col.map(|c| grid.a1(r, c)).unwrap_or_default(),
            message: format!(
                "second 60 (a leap second) is read as the following instant, {}",
                parsed.naive.format("%Y-%m-%d %H:%M:%S")
            ),
        });
    }
    Ok(Placed { parsed, date_only })
}

/// Reject a row without AOD, single-scattering albedo or asymmetry factor.
pub(crate) fn require_aerosol(ctx: &SheetContext<'_>, v: &RowValues) -> Result<(), Problem> {
    if v.aod.is_empty() {
        return Err(missing(ctx, Kind::Aod, "AOD"));
    }
    if v.ssa.is_empty() {
        return Err(missing(ctx, Kind::Ssa, "the single-scattering albedo"));
    }
    if v.asymmetry.is_empty() {
        return Err(missing(ctx, Kind::Asymmetry, "the asymmetry factor"));
    }
    Ok(())
}

/// Warn when the row gives SSA or g at fewer wavelengths than the sheet has columns for.
pub(crate) fn partial_spectra(
    ctx: &SheetContext<'_>,
    v: &RowValues,
    warnings: &mut Vec<RowWarning>,
) {
    for (kind, have) in [
        (Kind::Ssa, v.ssa.len()),
        (Kind::Asymmetry, v.asymmetry.len()),
    ] {
        let n = ctx.layout.columns.iter().filter(|m| m.kind == kind).count();
        if have < n {
            warnings.push(RowWarning {
                cell: String::new(),
                message: format!(
                    "{} given at {have} of {n} wavelengths; the others are missing",
                    kind.name()
                ),
            });
        }
    }
}

/// The `[input] fallback` name of a quantity whose empty cells can take a value from
/// elsewhere; `None` for the others (time, site, location, surface and UTC offset have rules
/// of their own).
pub(crate) fn fallback_quantity(kind: Kind) -> Option<&'static str> {
    match kind {
        Kind::Angstrom
        | Kind::Aod
        | Kind::Ssa
        | Kind::Asymmetry
        | Kind::Ozone
        | Kind::Water
        | Kind::Pressure
        | Kind::Altitude
        | Kind::Albedo
        | Kind::LayerTop => Some(kind.name()),
        _ => None,
    }
}

/// Reject the row at the first empty or fill-value cell whose quantity the job file does not
/// allow to fall back (a measured value is never replaced by a default unasked).
pub(crate) fn refuse_unallowed_fallback(
    ctx: &SheetContext<'_>,
    missing: &[MissingCell],
) -> Result<(), Problem> {
    let Some((q, col, _, found)) = missing.iter().find(|m| !ctx.spec.allows_fallback(m.0)) else {
        return Ok(());
    };
    let m = ctx.layout.columns.iter().find(|m| m.col == *col);
    Err(Problem {
        col: Some(*col),
        column: m.map(|m| m.name()).unwrap_or_else(|| q.to_string()),
        value: if found == "an empty cell" {
            String::new()
        } else {
            found.trim_matches('"').to_string()
        },
        reason: format!(
            "expected a number, found {found} (empty or a fill value) in a column the workbook provides; a measured {q} is not replaced by a default unless the job file allows it: fill the cell, or add \"{q}\" to [input] fallback"
        ),
    })
}
