//! Campaign workbooks (xlsx, xlsm, xls, ods through calamine; csv and parquet through polars)
//! into typed observations, with every input row accounted for.
//!
//! Entry point: [`read_inputs`]. The result, [`Ingested`], holds the accepted rows as a
//! polars frame of canonical columns (aligned with their origins, warnings and resolved
//! physics observations), the rejected rows with their reasons and cells, the column
//! mapping that was used and the assumptions that applied.
//!
//! # Layout
//! The header row is the row (among the first 60) that names the most known quantities,
//! so title and note rows above it are skipped; a row of units right under it is recognised.
//! Fully empty rows are skipped; rows after the last one holding a measurement are notes
//! (said in [`Ingested::warnings`], not counted). Headers are matched case- and
//! separator-insensitively, with the wavelength read from them (`aod_500`, `AOD 440 nm`,
//! `SSA(675)`, `asymmetry 870nm`).
//!
//! Every header column is accounted for: read ([`Ingested::mapping`],
//! [`Ingested::site_columns`]) or ignored with the reason ([`Ingested::ignored`]); see
//! [`Ingested::column_accounts`]. Every row gets a site: from its site column (joined with the
//! site table; full names become [`Ingested::site_labels`]), else by one place, fixed places
//! or a moving platform, as [`Ingested::site_rules`] says.
//!
//! # Required and optional quantities
//! Required: time, AOD, SSA, g, and a location (latitude and longitude in the row, or a site
//! column whose sites the site sheet or the job file locates). The Ångström exponent comes from
//! an `angstrom` column; else it is fitted to AOD at two or more wavelengths
//! ([`fit_angstrom`]); else the job default (`defaults.angstrom`) is used and recorded as an
//! assumption. With AOD at several wavelengths, the reference is the one nearest 550 nm.
//! Optional values come from the row, else the site, else the job defaults, else the built-in
//! defaults; every non-row value is an [`Assumption`].
//!
//! # Canonical frame columns
//! `file`, `sheet`, `row` (origin), `site`, `time_utc` (datetime, ms, UTC), `latitude_deg`,
//! `longitude_deg` (east, −180–180), `altitude_m`, `pressure_hpa` (null: from altitude),
//! `aod`, `aod_wavelength_nm`, `angstrom`, `aod_at_550`, `ssa_at_550`, `asymmetry_at_550`
//! (the spectral model evaluated at 550 nm), `surface` (`land`/`ocean`), `albedo` (null for
//! ocean), `ozone_du`, `water_cm`, `layer_base_km`, `layer_top_km`, `n_warnings`, and the
//! values as measured: `aod_<λ>nm`, `ssa_<λ>nm`, `asymmetry_<λ>nm` (null where a row or file
//! has none).

mod accounting;
mod cells;
mod detect;
mod metadata;
mod read;
mod resolve;
mod row;
mod sigma_headers;
mod sites;
mod sources;
mod time;
mod types;
mod validate;

use std::path::Path;

use polars::prelude::*;

pub use accounting::{ColumnAccount, strict_problems};
pub use read::{NO_TIME_OF_DAY, blank_instantaneous, lacks_time_of_day};
pub use resolve::{fit_angstrom, interpolate_ln_wavelength};
pub use sites::{SITE_TOLERANCE_KM, distance_km};
pub use validate::check_job_value;

/// Move the rows whose radiative transfer gave no finite result (a solar position that
/// cannot be computed, a non-finite flux) from the computed rows to the rejected ones, so
/// that no row is reported with empty forcing as if it were computed. `results` are aligned
/// with `ing.observations`; returns the results of the rows kept.
pub fn reject_uncomputable(
    ing: &mut Ingested,
    results: Vec<crate::physics::ObservationResult>,
    settings: &crate::physics::Settings,
) -> Vec<crate::physics::ObservationResult> {
    let faults: Vec<Option<&'static str>> = results
        .iter()
        .enumerate()
        .map(|(k, r)| {
            let i = &r.instantaneous;
            let d = &r.daily;
            // A row placed by its date alone has its instantaneous part left empty on
            // purpose (`read::blank_instantaneous`); only its 24-hour values must be finite.
            let date_only = ing
                .row_warnings
                .get(k)
                .is_some_and(|w| lacks_time_of_day(w));
            if date_only {
                if !r.aod_550.is_finite() {
                    Some("AOD(550 nm) is not a finite number")
                } else if settings.daily_mean
                    && ![d.dre_toa, d.dre_sfc, d.dre_atm]
                        .iter()
                        .all(|x| x.is_finite())
                {
                    Some("the 24-hour mean radiative effect is not a finite number")
                } else {
                    None
                }
            } else if !r.solar_zenith_deg.is_finite() {
                Some("the solar position cannot be computed for this time and place")
            } else if !r.aod_550.is_finite() {
                Some("AOD(550 nm) is not a finite number")
            } else if ![i.dre_toa, i.dre_sfc, i.dre_atm]
                .iter()
                .all(|x| x.is_finite())
            {
                Some("the instantaneous radiative effect is not a finite number")
            } else if settings.daily_mean
                && ![d.dre_toa, d.dre_sfc, d.dre_atm]
                    .iter()
                    .all(|x| x.is_finite())
            {
                Some("the 24-hour mean radiative effect is not a finite number")
            } else {
                None
            }
        })
        .collect();
    if faults.iter().all(Option::is_none) || faults.len() != ing.observations.len() {
        return results;
    }
    let keep: Vec<bool> = faults.iter().map(Option::is_none).collect();
    for (k, why) in faults.iter().enumerate() {
        if let Some(why) = why {
            let o = &ing.origins[k];
            ing.rejected.push(Rejection {
                file: o.file.clone(),
                sheet: o.sheet.clone(),
                row: o.row,
                cell: String::new(),
                column: String::new(),
                value: String::new(),
                reason: format!("{why}; the row cannot be computed"),
            });
        }
    }
    fn pick<T>(v: Vec<T>, keep: &[bool]) -> Vec<T> {
        v.into_iter()
            .zip(keep)
            .filter(|(_, k)| **k)
            .map(|(x, _)| x)
            .collect()
    }
    let removed = keep.iter().filter(|k| !**k).count();
    if ing.frame.height() == keep.len()
        && let Ok(f) = ing
            .frame
            .filter(&BooleanChunked::from_slice("keep".into(), &keep))
    {
        ing.frame = f;
    }
    ing.sites = pick(std::mem::take(&mut ing.sites), &keep);
    ing.origins = pick(std::mem::take(&mut ing.origins), &keep);
    ing.observations = pick(std::mem::take(&mut ing.observations), &keep);
    ing.row_warnings = pick(std::mem::take(&mut ing.row_warnings), &keep);
    ing.counts.computed -= removed;
    ing.counts.rejected += removed;
    pick(results, &keep)
}

/// A site name as sites are compared (case and runs of blanks do not matter).
pub fn site_name_key(name: &str) -> String {
    resolve::site_key(name).into_owned()
}
pub use types::*;
pub use validate::check_observation;

use cells::FillValues;
use read::{Rows, SheetContext, place};
use resolve::SiteTable;
use sources::FileKind;

/// Wavelength as used in names: `500`, `532.5`.
pub(crate) fn format_wavelength(w: f64) -> String {
    cells::format_number((w * 10.0).round() / 10.0)
}

/// A header as header detection reads it.
#[derive(Debug, Clone, PartialEq)]
pub struct HeaderReading {
    /// Quantity, as the job file names it without wavelength: `aod`, `angstrom`, `site`.
    pub quantity: &'static str,
    /// Wavelength written in the header [nm].
    pub wavelength_nm: Option<f64>,
    /// For the Ångström exponent: the wavelength pair written in the header [nm].
    pub wavelength_pair_nm: Option<(f64, f64)>,
    /// Unit written in the header (normalised), or empty.
    pub unit: String,
}

/// How header detection reads one header text (`AOD 500 nm`, `Ångström exp. 440/870`,
/// `stn`); `None` when it names no quantity.
pub fn read_header(text: &str) -> Option<HeaderReading> {
    detect::parse_header(text).map(|m| HeaderReading {
        quantity: m.kind.name(),
        wavelength_nm: m.wavelength_nm,
        wavelength_pair_nm: m.pair_nm,
        unit: m.unit,
    })
}

/// Every (quantity, spelling) of the header table, as normalised names (lower case, words
/// separated by one space).
pub fn header_spellings() -> Vec<(&'static str, &'static str)> {
    detect::spellings().map(|(k, n)| (k.name(), n)).collect()
}

/// Read every input of `spec`.
///
/// Files are read in order; for each the data sheet (the one `spec.sheet` names, else the
/// first whose header names AOD or SSA) and the site sheet (`spec.site_sheet`, else another
/// sheet whose header names sites and their metadata).
///
/// Errors: [`IngestError::Unreadable`] for a file that cannot be opened (missing, empty,
/// encrypted, truncated, foreign format); [`IngestError::Layout`] when no header is found, a
/// required column is missing, the job file's mapping names no column, or the site table
/// holds a bad value. Nothing is returned in part.
pub fn read_inputs(spec: &InputSpec) -> Result<Ingested, IngestError> {
    read_all(spec, &mut None)
}

/// What a workbook gives and lacks, for `hazebook init`: the inputs read as by
/// [`read_inputs`], except that a missing required column does not stop the reading; each
/// such problem is listed in [`Survey::missing`] (and the rows that need it are rejected).
#[derive(Debug, Clone, Default)]
pub struct Survey {
    pub ingested: Ingested,
    /// The messages of missing required columns (or locations), one per sheet.
    pub missing: Vec<String>,
}

/// Survey the inputs of `spec` (see [`Survey`]).
///
/// Errors: as [`read_inputs`], except a missing required column.
pub fn survey(spec: &InputSpec) -> Result<Survey, IngestError> {
    let mut missing = Some(Vec::new());
    let ingested = read_all(spec, &mut missing)?;
    Ok(Survey {
        ingested,
        missing: missing.unwrap_or_default(),
    })
}

fn read_all(spec: &InputSpec, missing: &mut Option<Vec<String>>) -> Result<Ingested, IngestError> {
    if spec.paths.is_empty() {
        return Err(IngestError::Layout {
            path: String::new(),
            message: "no input file given: expected a workbook (xlsx, xlsm, xls, ods), csv or parquet file".into(),
        });
    }
    let fill = FillValues::new(&spec.fill_values);
    let mut rows = Rows::default();
    let mut out = Ingested::default();
    let (paths, repeated) = distinct_paths(&spec.paths);
    out.warnings.extend(repeated);
    for path in paths {
        read_file(path, spec, &fill, &mut rows, &mut out, missing)
            .map_err(without_repeated_path)?;
    }
    finish(rows, out)
}

/// A missing required column stops the reading, unless a survey collects it.
fn required(
    result: Result<(), IngestError>,
    missing: &mut Option<Vec<String>>,
) -> Result<(), IngestError> {
    match (result, missing) {
        (Err(e), Some(list)) => {
            list.push(without_repeated_path(e).to_string());
            Ok(())
        }
        (r, _) => r,
    }
}

/// The inputs with each file once (the same file named twice, by the same or another path,
/// or matched by two patterns, would give false duplicates of all its rows), and a warning
/// for each file named more than once.
fn distinct_paths(paths: &[std::path::PathBuf]) -> (Vec<&Path>, Vec<String>) {
    let mut keys: Vec<std::path::PathBuf> = Vec::with_capacity(paths.len());
    let mut kept: Vec<&Path> = Vec::with_capacity(paths.len());
    let mut extra: Vec<(usize, Vec<String>)> = Vec::new();
    for p in paths {
        let key = p.canonicalize().unwrap_or_else(|_| p.clone());
        match keys.iter().position(|k| *k == key) {
            Some(i) => match extra.iter_mut().find(|(j, _)| *j == i) {
                Some((_, names)) => names.push(p.display().to_string()),
                None => extra.push((i, vec![p.display().to_string()])),
            },
            None => {
                keys.push(key);
                kept.push(p.as_path());
            }
        }
    }
    let warnings = extra
        .into_iter()
        .map(|(i, names)| {
            format!(
                "{}: the file is listed {} times among the inputs (also as {}); it is read once",
                kept[i].display(),
                names.len() + 1,
                names
                    .iter()
                    .map(|n| format!("\"{n}\""))
                    .collect::<Vec<_>>()
                    .join(", ")
            )
        })
        .collect();
    (kept, warnings)
}

fn read_file(
    path: &Path,
    spec: &InputSpec,
    fill: &FillValues,
    rows: &mut Rows,
    out: &mut Ingested,
    missing: &mut Option<Vec<String>>,
) -> Result<(), IngestError> {
    let file = path.display().to_string();
    let kind = sources::file_kind(path)?;
    let (sha256, head) = sources::hash_file(path)?;
    let mut sheets_read = Vec::new();
    match kind {
        FileKind::Workbook => {
            let mut book = sources::open_workbook(path, &head)?;
            let mut grids: Vec<Option<cells::Grid>> = vec![None; book.names.len()];
            let names = book.names.clone();
            // Data sheet.
            let data_idx = match &spec.sheet {
                Some(s) => names.iter().position(|n| n == s || n.eq_ignore_ascii_case(s)).ok_or_else(|| {
                    IngestError::Layout {
                        path: file.clone(),
                        message: format!(
                            "{file}: the job file names sheet \"{s}\", but the workbook's sheets are {}",
                            quoted(&names)
                        ),
                    }
                })?,
                None => {
                    let mut found = None;
                    for (i, n) in names.iter().enumerate() {
                        let g = book.load(n)?;
                        let hit = detect::find_header_row(&g, true).is_some();
                        grids[i] = Some(g);
                        if hit {
                            found = Some(i);
                            break;
                        }
                    }
                    match found {
                        Some(i) => i,
                        None if names.is_empty() => {
                            return Err(IngestError::Layout { path: file.clone(), message: format!("{file}: the workbook has no sheets") });
                        }
                        // Let the layout step explain what the first sheet lacks.
                        None => 0,
                    }
                }
            };
            let data_name = names[data_idx].clone();
            let mut data_grid = match grids[data_idx].take() {
                Some(g) => g,
                None => book.load(&data_name)?,
            };
            let mut layout = read::data_layout(&data_grid, spec, &file, &data_name)?;
            fill_merged_sites(&mut book, &mut data_grid, &mut layout, &file, &data_name);
            // Site sheet.
            let mut sheet_sites = Vec::new();
            let site_idx = match &spec.site_sheet {
                Some(s) => Some(names.iter().position(|n| n == s || n.eq_ignore_ascii_case(s)).ok_or_else(|| IngestError::Layout {
                    path: file.clone(),
                    message: format!("{file}: the job file names site sheet \"{s}\", but the workbook's sheets are {}", quoted(&names)),
                })?),
                None => {
                    let mut found = None;
                    for (i, n) in names.iter().enumerate() {
                        if i == data_idx {
                            continue;
                        }
                        if grids[i].is_none() {
                            grids[i] = Some(book.load(n)?);
                        }
                        if grids[i].as_ref().and_then(|g| detect::find_header_row(g, false)).is_some() {
                            found = Some(i);
                            break;
                        }
                    }
                    found
                }
            };
            if let Some(i) = site_idx {
                let g = match grids[i].take() {
                    Some(g) => g,
                    None => book.load(&names[i])?,
                };
                let header = detect::find_header_row(&g, false).ok_or_else(|| IngestError::Layout {
                    path: file.clone(),
                    message: format!(
                        "{}: no header naming sites found: expected a row such as site, latitude, longitude, altitude, albedo, surface, utc_offset",
                        place(&file, &names[i])
                    ),
                })?;
                let site_sheet = read::read_site_sheet(&g, header, fill, &file, &names[i])?;
                sheet_sites = site_sheet.sites;
                out.site_columns.extend(site_sheet.mapped);
                out.ignored.extend(accounting::to_ignored_columns(
                    &site_sheet.ignored,
                    &file,
                    &names[i],
                    spec,
                ));
                sheets_read.push(names[i].clone());
            }
            if site_idx.is_none() {
                // One site per workbook: a key/value metadata sheet and lines above the header.
                let mut kv = None;
                for (i, n) in names.iter().enumerate() {
                    if i == data_idx {
                        continue;
                    }
                    if grids[i].is_none() {
                        grids[i] = Some(book.load(n)?);
                    }
                    if let Some(g) = grids[i]
                        .as_ref()
                        .filter(|g| metadata::is_key_value_sheet(g))
                    {
                        kv = Some(metadata::read_key_value_sheet(g, fill, &file, n)?);
                        sheets_read.push(n.clone());
                        break;
                    }
                }
                let lines = metadata::read_header_lines(
                    &data_grid,
                    layout.header_row,
                    fill,
                    &file,
                    &data_name,
                )?;
                if let Some(meta) = metadata::combine(kv, lines, &file, &mut out.warnings) {
                    if !meta.unused.is_empty() {
                        out.warnings.push(format!(
                            "{file}: metadata rows not used (no site quantity hazebook knows): {}",
                            meta.unused.join(", ")
                        ));
                    }
                    out.metadata.extend(meta.values.iter().cloned());
                    sheet_sites.push(meta.info);
                }
            }
            let sites = SiteTable::merge(&sheet_sites, &spec.sites);
            required(
                read::require_columns(&layout, &data_grid, &file, &data_name, &sites),
                missing,
            )?;
            sheets_read.insert(0, data_name.clone());
            let ctx = SheetContext {
                file: &file,
                sheet: &data_name,
                grid: &data_grid,
                layout: &layout,
                is_1904: book.is_1904,
                fill,
                sites: &sites,
                spec,
            };
            finish_sheet(&ctx, rows, out, site_idx.map(|i| names[i].as_str()));
        }
        FileKind::Csv | FileKind::Parquet => {
            let grid = if kind == FileKind::Csv {
                sources::read_csv(path, spec.header_row)?
            } else {
                sources::read_parquet(path)?
            };
            // The header is row 0 of a frame grid; the job file's header row applied already.
            let spec_here = InputSpec {
                header_row: Some(grid.row_number(0)),
                ..spec.clone()
            };
            let mut layout = read::data_layout(&grid, &spec_here, &file, "")?;
            if let cells::Grid::Frame(f) = &grid {
                layout.warnings.extend(f.warnings.iter().cloned());
            }
            let sites = SiteTable::merge(&[], &spec.sites);
            required(
                read::require_columns(&layout, &grid, &file, "", &sites),
                missing,
            )?;
            let ctx = SheetContext {
                file: &file,
                sheet: "",
                grid: &grid,
                layout: &layout,
                is_1904: false,
                fill,
                sites: &sites,
                spec,
            };
            finish_sheet(&ctx, rows, out, None);
        }
    }
    out.files.push(InputFile {
        path: file,
        sha256,
        sheets: sheets_read,
    });
    Ok(())
}

/// Merged cells in the site column (one site written once beside several rows): every row
/// of a merged range takes the site of the range's top-left cell, as the spreadsheet shows
/// it, and a warning says so. The merges are read only when a site cell is empty.
fn fill_merged_sites(
    book: &mut sources::Workbook,
    grid: &mut cells::Grid,
    layout: &mut read::Layout,
    file: &str,
    sheet: &str,
) {
    let Some(col) = layout
        .columns
        .iter()
        .find(|m| m.kind == detect::Kind::Site)
        .map(|m| m.col)
    else {
        return;
    };
    let from = layout.data_start();
    if !(from..grid.height()).any(|r| matches!(grid.cell(r, col), cells::Cell::Empty)) {
        return;
    }
    let merges = book.merged(sheet);
    if merges.is_empty() {
        return;
    }
    let filled = grid.fill_merged(col, from, &merges);
    if filled.is_empty() {
        return;
    }
    let shown: Vec<&str> = filled.iter().take(5).map(String::as_str).collect();
    layout.warnings.push(format!(
        "{}: {} merged range(s) in the site column ({}{}): each row of a merged range takes the site of the range's top-left cell",
        read::place(file, sheet),
        filled.len(),
        shown.join(", "),
        if filled.len() > 5 { ", …" } else { "" }
    ));
}

fn finish_sheet(
    ctx: &SheetContext<'_>,
    rows: &mut Rows,
    out: &mut Ingested,
    site_sheet: Option<&str>,
) {
    out.warnings.extend(ctx.layout.warnings.iter().cloned());
    out.mapping
        .extend(ctx.layout.mapped_columns(ctx.file, ctx.sheet));
    out.ignored.extend(accounting::to_ignored_columns(
        &ctx.layout.ignored,
        ctx.file,
        ctx.sheet,
        ctx.spec,
    ));
    let start = rows.accepted.len();
    read::read_rows(ctx, rows);
    let these = &mut rows.accepted[start..];
    let column_rule = sites::site_column_rule(ctx, these, site_sheet);
    let unsited_rule = sites::name_unsited(ctx, these);
    for rule in [column_rule, unsited_rule].into_iter().flatten() {
        out.site_rules.push(rule.line);
        out.warnings.extend(rule.warning);
    }
    sites::labels(ctx.sites, these, &mut out.site_labels);
}

/// Layout messages are written with their place first (`campaign.xlsx, sheet "x": ...`); the
/// error's own display already starts with the path, so say it once.
fn without_repeated_path(e: IngestError) -> IngestError {
    match e {
        IngestError::Layout { path, message } => {
            let message = match message.strip_prefix(path.as_str()) {
                Some(rest) if !path.is_empty() => {
                    rest.trim_start_matches([',', ':']).trim_start().to_string()
                }
                _ => message,
            };
            IngestError::Layout { path, message }
        }
        other => other,
    }
}

fn quoted(names: &[String]) -> String {
    names
        .iter()
        .map(|n| format!("\"{n}\""))
        .collect::<Vec<_>>()
        .join(", ")
}

fn finish(rows: Rows, mut out: Ingested) -> Result<Ingested, IngestError> {
    let Rows {
        accepted,
        rejected,
        counts,
        warnings,
        ..
    } = rows;
    out.warnings.extend(warnings);
    out.rejected = rejected;
    out.counts = counts;
    let (assumptions, frame) =
        rayon::join(|| tally_assumptions(&accepted), || build_frame(&accepted));
    out.assumptions = assumptions;
    accounting::resemblance_warnings(&mut out);
    out.frame = frame.map_err(|e| IngestError::Layout {
        path: String::new(),
        message: format!("cannot build the table of accepted rows: {e}"),
    })?;
    out.sites.reserve(accepted.len());
    out.origins.reserve(accepted.len());
    out.observations.reserve(accepted.len());
    out.row_warnings.reserve(accepted.len());
    for a in accepted {
        let a = *a;
        out.sites.push(a.site);
        out.origins.push(a.origin);
        out.observations.push(a.observation);
        out.row_warnings.push(a.warnings);
    }
    Ok(out)
}

/// Assumptions, tallied over computed rows, spelled out once, in a fixed order.
fn tally_assumptions(accepted: &[Box<read::Accepted>]) -> Vec<Assumption> {
    // Rows mostly repeat one of a few assumption lists (one per site): equal lists are
    // counted together, then tallied once each.
    type List<'a> = &'a [(&'static str, read::Val, ValueSource)];
    let mut lists: Vec<(List<'_>, usize)> = Vec::new();
    let mut tally: Tally<'_> = Default::default();
    type Tally<'a> = std::collections::HashMap<
        (&'static str, &'a read::Val, ValueSource),
        usize,
        resolve::FxBuild,
    >;
    fn add<'a>(tally: &mut Tally<'a>, list: List<'a>, n: usize) {
        for (k, t) in list.iter().enumerate() {
            if list[..k].contains(t) {
                continue;
            }
            *tally.entry((t.0, &t.1, t.2)).or_insert(0) += n;
        }
    }
    for a in accepted {
        let list = a.assumptions.as_slice();
        match lists.iter().position(|(l, _)| *l == list) {
            Some(j) => lists[j].1 += 1,
            None => {
                if lists.len() == 16 {
                    let (l, n) = lists.remove(0);
                    add(&mut tally, l, n);
                }
                lists.push((list, 1));
            }
        }
    }
    for (l, n) in lists {
        add(&mut tally, l, n);
    }
    let mut assumptions: Vec<Assumption> = tally
        .into_iter()
        .map(|((quantity, value, source), rows)| Assumption {
            quantity: quantity.to_string(),
            value: value.text(),
            source,
            rows,
        })
        .collect();
    assumptions.sort_by(|a, b| {
        (&a.quantity, &a.value, a.source as u8).cmp(&(&b.quantity, &b.value, b.source as u8))
    });
    assumptions
}

type ColumnBuilder<'a> = Box<dyn Fn() -> PolarsResult<Column> + Send + Sync + 'a>;

fn build_frame(rows: &[Box<read::Accepted>]) -> PolarsResult<DataFrame> {
    use rayon::prelude::*;
    let n = rows.len();
    fn num<'a>(
        rows: &'a [Box<read::Accepted>],
        name: &'static str,
        g: fn(&read::Accepted) -> f64,
    ) -> ColumnBuilder<'a> {
        Box::new(move || {
            Ok(Column::new(
                name.into(),
                rows.iter().map(|r| g(r)).collect::<Vec<f64>>(),
            ))
        })
    }
    fn other(g: ColumnBuilder<'_>) -> ColumnBuilder<'_> {
        g
    }
    // Columns are built in parallel, each from all rows.
    let builders: Vec<ColumnBuilder<'_>> = vec![
        other(Box::new(|| {
            Ok(text_column(
                "file",
                rows.iter().map(|r| r.origin.file.as_str()),
                n,
            ))
        })),
        other(Box::new(|| {
            Ok(text_column(
                "sheet",
                rows.iter().map(|r| r.origin.sheet.as_str()),
                n,
            ))
        })),
        other(Box::new(|| {
            Ok(Column::new(
                "row".into(),
                rows.iter().map(|r| r.origin.row).collect::<Vec<u32>>(),
            ))
        })),
        other(Box::new(|| {
            Ok(Column::new(
                "site".into(),
                rows.iter().map(|r| r.site.as_str()).collect::<Vec<_>>(),
            ))
        })),
        other(Box::new(|| {
            Column::new(
                "time_utc".into(),
                rows.iter()
                    .map(|r| r.observation.time_utc.timestamp_millis())
                    .collect::<Vec<i64>>(),
            )
            .cast(&DataType::Datetime(TimeUnit::Milliseconds, None))
        })),
        num(rows, "latitude_deg", |r| r.observation.latitude_deg),
        num(rows, "longitude_deg", |r| r.observation.longitude_deg),
        num(rows, "altitude_m", |r| r.observation.altitude_m),
        other(Box::new(|| {
            Ok(Column::new(
                "pressure_hpa".into(),
                rows.iter()
                    .map(|r| r.observation.pressure_hpa)
                    .collect::<Vec<Option<f64>>>(),
            ))
        })),
        num(rows, "aod", |r| r.observation.aod),
        num(rows, "aod_wavelength_nm", |r| {
            r.observation.aod_wavelength_nm
        }),
        num(rows, "angstrom", |r| r.observation.angstrom),
        num(rows, "aod_at_550", |r| {
            let o = &r.observation;
            crate::physics::aerosol::aod_at_wavelength(
                o.aod,
                o.aod_wavelength_nm,
                o.angstrom,
                550.0,
            )
        }),
        num(rows, "ssa_at_550", |r| at_550(&r.observation.ssa)),
        num(rows, "asymmetry_at_550", |r| {
            at_550(&r.observation.asymmetry)
        }),
        other(Box::new(|| {
            Ok(Column::new(
                "surface".into(),
                rows.iter()
                    .map(|r| read::surface_name(r.surface))
                    .collect::<Vec<_>>(),
            ))
        })),
        other(Box::new(|| {
            Ok(Column::new(
                "albedo".into(),
                rows.iter().map(|r| r.albedo).collect::<Vec<Option<f64>>>(),
            ))
        })),
        num(rows, "ozone_du", |r| r.observation.ozone_du),
        num(rows, "water_cm", |r| r.observation.water_cm),
        num(rows, "layer_base_km", |r| r.observation.layer.base_km),
        num(rows, "layer_top_km", |r| r.observation.layer.top_km),
        other(Box::new(|| {
            Ok(Column::new(
                "n_warnings".into(),
                rows.iter()
                    .map(|r| r.warnings.len() as u32)
                    .collect::<Vec<u32>>(),
            ))
        })),
    ];
    let (cols, spectral) = rayon::join(
        || {
            builders
                .par_iter()
                .map(|b| b())
                .collect::<PolarsResult<Vec<Column>>>()
        },
        || spectral_columns(rows),
    );
    let mut cols = cols?;
    cols.extend(spectral);
    DataFrame::new_infer_height(cols)
}

/// The values as measured: one column per quantity and wavelength.
fn spectral_columns(rows: &[Box<read::Accepted>]) -> Vec<Column> {
    use rayon::prelude::*;
    type Visit = fn(&read::Accepted, &mut dyn FnMut(f64, f64));
    let quantities: [(&str, Visit); 3] = [
        ("aod", |r, f| {
            r.aod_measured.iter().for_each(|&(w, v)| f(w, v))
        }),
        ("ssa", |r, f| {
            r.observation
                .ssa
                .iter()
                .for_each(|s| f(s.wavelength_nm, s.value))
        }),
        ("asymmetry", |r, f| {
            r.observation
                .asymmetry
                .iter()
                .for_each(|s| f(s.wavelength_nm, s.value))
        }),
    ];
    let n = rows.len();
    let per_quantity: Vec<Vec<Column>> = quantities
        .par_iter()
        .map(|(name, visit)| {
            // Few wavelengths per quantity: a linear search beats hashing.
            let mut keys: Vec<i64> = Vec::new();
            let mut values: Vec<Vec<Option<f64>>> = Vec::new();
            for (i, r) in rows.iter().enumerate() {
                visit(r, &mut |w, v| {
                    let k = (w * 10.0).round() as i64;
                    let j = keys.iter().position(|&x| x == k).unwrap_or_else(|| {
                        keys.push(k);
                        values.push(vec![None; n]);
                        keys.len() - 1
                    });
                    values[j][i] = Some(v);
                });
            }
            let mut cols: Vec<(i64, Vec<Option<f64>>)> = keys.into_iter().zip(values).collect();
            cols.sort_by_key(|c| c.0);
            cols.into_iter()
                .map(|(k, v)| {
                    let label = format!("{name}_{}nm", format_wavelength(k as f64 / 10.0));
                    Column::new(label.into(), v)
                })
                .collect()
        })
        .collect();
    per_quantity.into_iter().flatten().collect()
}

fn at_550(values: &[crate::physics::SpectralValue]) -> f64 {
    let mut pts = [(0.0, 0.0); 16];
    if values.len() > pts.len() {
        let v: Vec<(f64, f64)> = values.iter().map(|s| (s.wavelength_nm, s.value)).collect();
        return interpolate_ln_wavelength(&v, 550.0);
    }
    for (p, s) in pts.iter_mut().zip(values) {
        *p = (s.wavelength_nm, s.value);
    }
    interpolate_ln_wavelength(&pts[..values.len()], 550.0)
}

/// A text column; one repeated value (one file, one sheet) is stored once.
fn text_column<'a>(name: &str, values: impl Iterator<Item = &'a str> + Clone, n: usize) -> Column {
    let first = values.clone().next();
    match first {
        Some(f) if values.clone().all(|v| v == f) => Column::new_scalar(
            name.into(),
            Scalar::new(DataType::String, AnyValue::StringOwned(f.into())),
            n,
        ),
        _ => Column::new(name.into(), values.collect::<Vec<_>>()),
    }
}

/// `1 row`, `2 rows`.
pub fn rows_text(n: usize) -> String {
    if n == 1 {
        "1 row".into()
    } else {
        format!("{n} rows")
    }
}
