//! Step 1 and 2 of reading a row: its cells, read into typed values (numbers in canonical
//! units, times, site names, surface types). A cell that cannot be read as its column's
//! quantity rejects the row here; the range of each number is checked by [`super::checks`].

use super::super::cells::{Cell, MAX_CELL_CHARS, NumberRead, read_number, too_long};
use super::super::detect::Kind;
use super::super::read::{SheetContext, parse_surface};
use super::super::time::{
    ParsedTime, TimeRead, parse_offset_hours, read_date, read_time, read_time_of_day,
};
use super::super::types::{RowWarning, SurfaceType};
use super::{MissingCell, Problem, checks};

/// The typed values of a row's mapped cells.
#[derive(Default)]
pub(crate) struct RowValues {
    pub time: Option<(ParsedTime, usize)>,
    pub date: Option<ParsedTime>,
    pub time_of_day: Option<(f64, Option<i32>)>,
    pub time_col: Option<usize>,
    pub site: Option<String>,
    pub site_full_name: Option<String>,
    pub latitude: Option<f64>,
    pub longitude: Option<f64>,
    pub altitude: Option<f64>,
    pub pressure: Option<f64>,
    pub albedo: Option<f64>,
    pub surface: Option<SurfaceType>,
    pub ozone: Option<f64>,
    pub water: Option<f64>,
    pub layer_top: Option<f64>,
    pub angstrom: Option<f64>,
    pub utc_offset: Option<f64>,
    pub aod: Vec<(f64, f64)>,
    pub ssa: Vec<(f64, f64)>,
    pub asymmetry: Vec<(f64, f64)>,
}

/// A row's cells read: the values, the warnings so far, the empty or fill-value cells of
/// provided columns, and a time-of-day cell that could not be read (decided by
/// [`super::checks::place_in_time`]).
pub(crate) struct TypedRow {
    pub values: RowValues,
    pub warnings: Vec<RowWarning>,
    pub missing_cells: Vec<MissingCell>,
    pub bad_time_of_day: Option<Problem>,
}

/// Read the mapped cells of grid row `r` into typed values.
pub(crate) fn read_cells(ctx: &SheetContext<'_>, r: usize) -> Result<TypedRow, Problem> {
    let grid = ctx.grid;
    let fill = ctx.fill;
    let mut v = RowValues::default();
    let mut warnings: Vec<RowWarning> = Vec::new();
    // Empty or fill-value cells of provided columns: (quantity, column, wavelength, as found).
    let mut missing_cells: Vec<MissingCell> = Vec::new();
    let mut bad_time_of_day: Option<Problem> = None;
    for m in &ctx.layout.columns {
        let cell = grid.cell(r, m.col);
        if let Cell::Text(t) = cell
            && let Some(n) = too_long(t)
        {
            return Err(Problem::at(
                m,
                &cell,
                format!(
                    "the text has {n} characters, more than the {MAX_CELL_CHARS} a worksheet cell holds (the report could not carry it)"
                ),
            ));
        }
        match m.kind {
            Kind::Time => {
                v.time_col = Some(m.col);
                if ctx.layout.split_date_time {
                    match read_time_of_day(&cell, ctx.is_1904, fill) {
                        Ok(t) => v.time_of_day = t,
                        Err(Some(TimeRead::Value(p))) => v.time = Some((p, m.col)),
                        // Placed by its date if the date is readable (decided below).
                        Err(Some(TimeRead::Bad(why))) => {
                            bad_time_of_day = Some(Problem::at(
                                m,
                                &cell,
                                format!("{why}, found {}", cell.display()),
                            ));
                        }
                        Err(_) => {
                            bad_time_of_day = Some(Problem::at(
                                m,
                                &cell,
                                format!(
                                    "expected a time of day (a time cell or text such as 10:30:00), found {}",
                                    cell.display()
                                ),
                            ));
                        }
                    }
                } else {
                    match read_time(&cell, ctx.is_1904, fill) {
                        TimeRead::Missing => {}
                        TimeRead::Value(p) => {
                            if !p.has_time {
                                warnings.push(RowWarning {
                                    cell: grid.a1(r, m.col),
                                    message: "the time cell holds a date without a time of day; 00:00 is used".into(),
                                });
                            }
                            v.time = Some((p, m.col));
                        }
                        TimeRead::Bad(why) => {
                            return Err(Problem::at(
                                m,
                                &cell,
                                format!("{why}, found {}", cell.display()),
                            ));
                        }
                    }
                }
            }
            Kind::Date => match read_date(&cell, ctx.is_1904, fill) {
                TimeRead::Missing => {}
                TimeRead::Value(p) => v.date = Some(p),
                TimeRead::Bad(why) => {
                    return Err(Problem::at(
                        m,
                        &cell,
                        format!("{why}, found {}", cell.display()),
                    ));
                }
            },
            Kind::Site => {
                if !fill.is_missing(&cell) {
                    v.site = cell.text();
                }
            }
            Kind::SiteName => {
                if !fill.is_missing(&cell) {
                    v.site_full_name = cell.text();
                }
            }
            Kind::Surface => {
                if !fill.is_missing(&cell) {
                    v.surface = Some(parse_surface(&cell).ok_or_else(|| {
                        Problem::at(
                            m,
                            &cell,
                            format!("expected land or ocean, found {}", cell.display()),
                        )
                    })?);
                }
            }
            Kind::UtcOffset if matches!(cell, Cell::Text(_)) && !fill.is_missing(&cell) => {
                let t = cell.text().unwrap_or_default();
                match parse_offset_hours(&t) {
                    Some(h) => v.utc_offset = Some(h),
                    None => {
                        return Err(Problem::at(
                            m,
                            &cell,
                            format!("expected a UTC offset such as +8 or UTC-03:30, found \"{t}\""),
                        ));
                    }
                }
            }
            kind => {
                let x = match read_number(&cell, fill) {
                    NumberRead::Missing => {
                        if let Some(q) = checks::fallback_quantity(kind) {
                            missing_cells.push((q, m.col, m.wavelength(), cell.display()));
                        }
                        continue;
                    }
                    NumberRead::Bad(why) => {
                        return Err(Problem::at(
                            m,
                            &cell,
                            format!("{why}, found {}", cell.display()),
                        ));
                    }
                    NumberRead::Value(x) => x * m.scale,
                };
                checks::check_number(grid, r, m, &cell, x, &mut warnings)?;
                let wl = m.wavelength();
                match kind {
                    Kind::Aod => v.aod.push((wl, x)),
                    Kind::Ssa => v.ssa.push((wl, x)),
                    Kind::Asymmetry => v.asymmetry.push((wl, x)),
                    Kind::Latitude => v.latitude = Some(x),
                    Kind::Longitude => v.longitude = Some(x),
                    Kind::Altitude => v.altitude = Some(x),
                    Kind::Pressure => v.pressure = Some(x),
                    Kind::Albedo => v.albedo = Some(x),
                    Kind::Ozone => v.ozone = Some(x),
                    Kind::Water => v.water = Some(x),
                    Kind::LayerTop => v.layer_top = Some(x),
                    Kind::Angstrom => v.angstrom = Some(x),
                    Kind::UtcOffset => v.utc_offset = Some(x),
                    _ => {}
                }
            }
        }
    }
    Ok(TypedRow {
        values: v,
        warnings,
        missing_cells,
        bad_time_of_day,
    })
}
