//! Reading one data row, in the steps a reader of the code expects:
//!
//! 1. cells and 2. typed values ([`typed`]): each mapped cell read as its column's quantity;
//! 3. checks ([`checks`]): ranges, the row's place in time, the quantities it cannot do
//!    without, empty cells the job file does not allow to fall back;
//! 4. resolution of defaults and fallbacks ([`defaults`]): site, coordinates, atmosphere,
//!    surface, UTC offset and Ångström exponent from the row, else the site table, else the
//!    job file or built-in defaults, each recorded as an assumption;
//! 5. observation ([`observation`]): the accepted row assembled.
//!
//! Each step takes the sheet's [`SheetContext`] and returns its values or the [`Problem`]
//! that rejects the row; [`read_row`] runs them in order.

mod checks;
mod defaults;
mod observation;
#[cfg(test)]
mod tests;
mod typed;

use super::cells::{Cell, clip};
use super::detect::Kind;
use super::read::{Accepted, Mapped, SheetContext, Val};
use super::types::ValueSource;

/// What rejects a row: the column (grid index and name), the value as found, and why.
pub(crate) struct Problem {
    pub col: Option<usize>,
    pub column: String,
    pub value: String,
    pub reason: String,
}

impl Problem {
    pub(crate) fn at(m: &Mapped, cell: &Cell<'_>, reason: String) -> Self {
        Problem {
            col: Some(m.col),
            column: m.name(),
            value: cell
                .text()
                .map(|t| clip(&t).into_owned())
                .unwrap_or_default(),
            reason,
        }
    }
}

/// An empty or fill-value cell of a provided column: (quantity, column, wavelength [nm],
/// the cell as found).
pub(crate) type MissingCell = (&'static str, usize, f64, String);

/// A value taken from elsewhere than the row: (quantity key, value, where from).
pub(crate) type Assumed = (&'static str, Val, ValueSource);

/// The sheet's first column of `kind`.
pub(crate) fn first_col<'a>(ctx: &SheetContext<'a>, kind: Kind) -> Option<&'a Mapped> {
    ctx.layout.columns.iter().find(|m| m.kind == kind)
}

/// Read, check and resolve one row. `Ok(None)`: outside the selected period.
pub(crate) fn read_row(ctx: &SheetContext<'_>, r: usize) -> Result<Option<Accepted>, Problem> {
    if checks::clearly_outside_period(ctx, r) {
        return Ok(None);
    }
    // Cells → typed values (each number's range checked as it is read).
    let typed::TypedRow {
        values: mut v,
        mut warnings,
        missing_cells,
        bad_time_of_day,
    } = typed::read_cells(ctx, r)?;
    // Checks of the row as a whole.
    let placed = checks::place_in_time(ctx, r, &v, bad_time_of_day, &mut warnings)?;
    checks::require_aerosol(ctx, &v)?;
    checks::refuse_unallowed_fallback(ctx, &missing_cells)?;
    // Defaults and fallbacks.
    let mut assumptions: Vec<Assumed> = Vec::with_capacity(12);
    let location = defaults::resolve_location(ctx, r, &mut v, &mut assumptions, &mut warnings)?;
    let atmosphere = defaults::resolve_atmosphere(ctx, &v, &location, &mut assumptions)?;
    let time_utc = defaults::resolve_time_utc(
        ctx,
        r,
        &v,
        &location,
        &placed,
        &mut assumptions,
        &mut warnings,
    );
    if let Some(p) = &ctx.spec.period
        && (time_utc < p.start || time_utc >= p.end)
    {
        return Ok(None);
    }
    let aerosol = defaults::resolve_aerosol(ctx, r, &mut v, &mut assumptions, &mut warnings);
    checks::partial_spectra(ctx, &v, &mut warnings);
    defaults::fallback_warnings(ctx, r, &missing_cells, &assumptions, &mut warnings);
    // Observation.
    Ok(Some(observation::assemble_observation(
        ctx.spec.defaults.layer_base_km,
        ctx.spec.defaults.albedo,
        observation::Resolved {
            values: v,
            location,
            atmosphere,
            aerosol,
            time_utc,
            warnings,
            assumptions,
        },
    )))
}
