//! Report workbooks from templates: Results, grouped statistics, forcing-efficiency
//! regressions, charts, About and Rejected sheets; CSV, Parquet or NetCDF side output
//! ([`side`]).
//!
//! Entry points: [`template::load`] (a built-in name or a TOML file), [`write_report`]
//! (or [`write_report_with`] for a smaller worksheet row limit) and [`write_side_output`].
//!
//! - The workbook is written to a temporary file in the target folder and renamed into place
//!   only when complete, so a failed run never leaves a partial report.
//! - The same inputs and [`About::created_utc`] give a byte-identical workbook.
//! - Numbers in the workbook carry [`xlsx::SIGNIFICANT_DIGITS`] significant digits; the side
//!   output carries full precision.
//!
//! ```no_run
//! # fn demo(ingested: &hazebook::ingest::Ingested,
//! #         results: &[hazebook::physics::ObservationResult],
//! #         settings: &hazebook::physics::Settings) -> Result<(), hazebook::report::ReportError> {
//! use hazebook::report::{self, About, ReportInput, SideFormat, template};
//! let tpl = template::load("full")?; // or a path to a copied and edited template
//! let input = ReportInput {
//!     ingested,
//!     results,
//!     settings,
//!     mapping: &ingested.mapping,
//!     about: About { job_name: "campaign".into(), ..About::default() },
//! };
//! report::write_report(std::path::Path::new("campaign-report.xlsx"), &tpl, &input)?;
//! report::write_side_output(std::path::Path::new("campaign-results.parquet"), SideFormat::Parquet, &input)?;
//! # Ok(()) }
//! ```

use std::io::{BufWriter, Write};
use std::path::Path;

use chrono::{Datelike, Timelike};
use polars::prelude::*;

use crate::ingest::{Ingested, MappedColumn};
use crate::physics::{ObservationResult, Settings};

pub mod about;
pub mod charts;
pub mod charts_daily;
pub mod days;
pub mod frame;
pub mod quotable;
pub mod side;
pub mod stats;
pub mod template;
pub mod xlsx;

use frame::{Row, Value};
pub use side::{
    SideFormat, SideMeta, results_frame, side_files, write_side_output, write_side_output_with,
    write_side_staged,
};
use template::{SheetKind, Template};
use xlsx::{EfficiencyBlock, Group, Styles};

/// Provenance and context shown on the About sheet.
#[derive(Debug, Clone, Default)]
pub struct About {
    /// Job name (job file stem, or the workbook stem when run without a job file).
    pub job_name: String,
    /// hazebook version (`CARGO_PKG_VERSION`).
    pub version: String,
    /// Text of the job file, if one was used.
    pub job_text: Option<String>,
    /// Template name or path.
    pub template_name: String,
    /// Selected period label, if any.
    pub period: Option<String>,
    /// Deterministic creation timestamp of the document (from `SOURCE_DATE_EPOCH` or the
    /// latest observation time), ISO 8601 UTC.
    pub created_utc: chrono::DateTime<chrono::Utc>,
    /// Extra lines describing settings that came from the job file or the command line.
    pub notes: Vec<String>,
}

/// Everything a report is written from.
pub struct ReportInput<'a> {
    pub ingested: &'a Ingested,
    /// One result per accepted row of `ingested` (same order).
    pub results: &'a [ObservationResult],
    pub settings: &'a Settings,
    pub mapping: &'a [MappedColumn],
    pub about: About,
}

/// A problem writing a report.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    #[error("{path}: cannot write the report: {reason}")]
    Write { path: String, reason: String },
    #[error("template {name}: {message}")]
    Template { name: String, message: String },
    /// The inputs of the report do not fit together (a program error, not a user error).
    #[error("report input: {message}")]
    Input { message: String },
}

/// Rows per worksheet that Excel allows (header and units rows included).
pub const EXCEL_MAX_ROWS: u32 = 1_048_576;

/// Quantities of a summary sheet that names none, and of the summary side file (those the
/// settings computed).
const DEFAULT_SUMMARY_QUANTITIES: [&str; 7] = [
    "dre_toa_24h",
    "dre_sfc_24h",
    "dre_atm_24h",
    "dre_toa",
    "dre_sfc",
    "dre_atm",
    "aod_550",
];

/// Options of [`write_report_with`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct WriteOptions {
    /// Most rows of one worksheet, header and units rows included; a longer Results or
    /// Rejected table continues on the next sheet. Default [`EXCEL_MAX_ROWS`].
    pub max_rows_per_sheet: u32,
    /// Zip (deflate) level 0–9 of the workbook's parts; default 6. Lower is faster and
    /// larger (see `cargo bench --bench report`).
    pub compression_level: u8,
}

impl Default for WriteOptions {
    fn default() -> Self {
        Self {
            max_rows_per_sheet: EXCEL_MAX_ROWS,
            compression_level: 6,
        }
    }
}

/// Write the report workbook to `path`: to a temporary file in the same folder first, renamed
/// into place only when complete.
///
/// Errors: [`ReportError::Write`] when the folder is not writable or the workbook cannot be
/// assembled; [`ReportError::Input`] when the results do not line up with the accepted rows.
pub fn write_report(
    path: &Path,
    template: &template::Template,
    input: &ReportInput,
) -> Result<(), ReportError> {
    write_report_with(path, template, input, &WriteOptions::default())
}

fn write_error(path: &Path, e: impl std::fmt::Display) -> ReportError {
    ReportError::Write {
        path: path.display().to_string(),
        reason: e.to_string(),
    }
}

/// [`write_report`] with options (the worksheet row limit).
pub fn write_report_with(
    path: &Path,
    template: &template::Template,
    input: &ReportInput,
    options: &WriteOptions,
) -> Result<(), ReportError> {
    let rows = build_rows(input)?;
    let mut tmp = temp_beside(path).map_err(|e| write_error(path, e))?;
    let mut wb = build_workbook(path, template, input, &rows, options)?;
    {
        let mut w = BufWriter::new(tmp.as_file_mut());
        wb.save_to_writer(&mut w)
            .map_err(|e| write_error(path, e))?;
        w.flush().map_err(|e| write_error(path, e))?;
    }
    tmp.as_file().sync_all().map_err(|e| write_error(path, e))?;
    tmp.persist(path).map_err(|e| write_error(path, e.error))?;
    Ok(())
}

/// A temporary file in the folder of `path`, created with the permissions an ordinary new
/// file gets (0o666 less the umask on Unix), so the renamed report is as readable as any other
/// file the user writes.
fn temp_beside(path: &Path) -> std::io::Result<tempfile::NamedTempFile> {
    let mut b = tempfile::Builder::new();
    b.prefix(".hazebook-").suffix(".part");
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        b.permissions(std::fs::Permissions::from_mode(0o666));
    }
    b.tempfile_in(target_dir(path))
}

fn target_dir(path: &Path) -> &Path {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    }
}

/// Pair every accepted row with its result, checking that they line up.
pub fn build_rows<'a>(input: &'a ReportInput<'a>) -> Result<Vec<Row<'a>>, ReportError> {
    let ing = input.ingested;
    let n = input.results.len();
    if ing.observations.len() != n || ing.origins.len() != n || ing.sites.len() != n {
        return Err(ReportError::Input {
            message: format!(
                "{n} results but {} observations, {} origins and {} site names; they must line up one to one",
                ing.observations.len(),
                ing.origins.len(),
                ing.sites.len()
            ),
        });
    }
    let mut rows: Vec<Row<'a>> = (0..n)
        .map(|i| Row {
            origin: &ing.origins[i],
            // The report shows `Full Name (KEY)` where the site table gives a full name.
            site: ing.site_label(&ing.sites[i]),
            obs: &ing.observations[i],
            res: &input.results[i],
            warnings: ing.row_warnings.get(i).map(Vec::as_slice).unwrap_or(&[]),
            day: 0,
        })
        .collect();
    days::number_days(&mut rows);
    Ok(rows)
}

/// Groups of the result rows for each set of keys, computed once and shared by every sheet
/// that groups by those keys (summary, efficiency and paper sheets).
pub struct Groupings<'r, 'a> {
    rows: &'r [Row<'a>],
    done: std::cell::RefCell<Vec<KeyedGroups<'a>>>,
}

/// The keys of a grouping and its groups.
type KeyedGroups<'a> = (Vec<String>, std::sync::Arc<Vec<Group<'a>>>);

impl<'r, 'a> Groupings<'r, 'a> {
    pub fn new(rows: &'r [Row<'a>]) -> Self {
        Self {
            rows,
            done: std::cell::RefCell::new(Vec::new()),
        }
    }

    /// The groups of [`group_rows`] by `keys`, grouped on first use.
    pub fn get(&self, keys: &[String]) -> Result<std::sync::Arc<Vec<Group<'a>>>, ReportError> {
        if let Some((_, g)) = self.done.borrow().iter().find(|(k, _)| k == keys) {
            return Ok(g.clone());
        }
        let g = std::sync::Arc::new(group_rows(self.rows, keys)?);
        self.done.borrow_mut().push((keys.to_vec(), g.clone()));
        Ok(g)
    }
}

/// Group rows by keys with polars `group_by`, groups sorted by their key values (seasons in
/// DJF, MAM, JJA, SON order). No keys: one group of every row.
pub fn group_rows<'a>(rows: &[Row<'a>], keys: &[String]) -> Result<Vec<Group<'a>>, ReportError> {
    if rows.is_empty() {
        return Ok(Vec::new());
    }
    if keys.is_empty() {
        return Ok(vec![Group {
            keys: Vec::new(),
            rows: (0..rows.len()).collect(),
        }]);
    }
    let polars_err = |e: PolarsError| ReportError::Input {
        message: format!("grouping rows: {e}"),
    };
    let mut cols: Vec<Column> = Vec::new();
    for k in keys {
        let c = match k.as_str() {
            "year" | "month" => {
                let v: Vec<i32> = rows
                    .iter()
                    .map(|r| match frame::group_value(k, r) {
                        Value::Num(x) => x as i32,
                        _ => 0,
                    })
                    .collect();
                Column::new(k.as_str().into(), v)
            }
            _ => {
                let v: Vec<String> = rows
                    .iter()
                    .map(|r| match frame::group_value(k, r) {
                        Value::Text(s) => s.into_owned(),
                        _ => String::new(),
                    })
                    .collect();
                Column::new(k.as_str().into(), v)
            }
        };
        cols.push(c);
    }
    let df = DataFrame::new(rows.len(), cols).map_err(polars_err)?;
    let gb = df
        .group_by_stable(keys.iter().map(String::as_str))
        .map_err(polars_err)?;
    let mut groups: Vec<Group<'a>> = gb
        .get_groups()
        .iter()
        .map(|g| {
            let idx: Vec<usize> = match g {
                GroupsIndicator::Idx((_, all)) => all.iter().map(|&i| i as usize).collect(),
                GroupsIndicator::Slice([first, len]) => {
                    (first as usize..(first + len) as usize).collect()
                }
            };
            let first = &rows[idx[0]];
            Group {
                keys: keys.iter().map(|k| frame::group_value(k, first)).collect(),
                rows: idx,
            }
        })
        .collect();
    groups.sort_by(|a, b| {
        for (k, (x, y)) in keys.iter().zip(a.keys.iter().zip(&b.keys)) {
            let o = match (x, y) {
                (Value::Num(p), Value::Num(q)) => p.total_cmp(q),
                (Value::Text(p), Value::Text(q)) if k == "season" => {
                    frame::season_rank(p).cmp(&frame::season_rank(q))
                }
                (Value::Text(p), Value::Text(q)) => p.cmp(q),
                _ => std::cmp::Ordering::Equal,
            };
            if o.is_ne() {
                return o;
            }
        }
        std::cmp::Ordering::Equal
    });
    Ok(groups)
}

/// The names every sheet will get, in order (continuations and chart-data sheets included).
fn plan_sheet_names(
    template: &Template,
    n_results: usize,
    n_rejected: usize,
    max_rows: u32,
) -> Vec<Vec<String>> {
    let per_sheet = (max_rows.max(3) - 2) as usize;
    let taken: Vec<String> = template
        .sheets
        .iter()
        .map(|s| s.name.to_lowercase())
        .collect();
    let mut all_lower: Vec<String> = taken.clone();
    template
        .sheets
        .iter()
        .map(|s| match s.kind {
            SheetKind::Results | SheetKind::Rejected => {
                let n = if s.kind == SheetKind::Results {
                    n_results
                } else {
                    n_rejected
                };
                let k = n.div_ceil(per_sheet).max(1);
                (0..k)
                    .map(|i| {
                        let name = xlsx::continued_name(&s.name, i);
                        if i > 0 {
                            all_lower.push(name.to_lowercase());
                        }
                        name
                    })
                    .collect()
            }
            SheetKind::Charts => {
                let base: String = s.name.chars().take(26).collect();
                let mut name = format!("{base} data");
                let mut i = 2;
                while all_lower.contains(&name.to_lowercase()) {
                    name = format!("{base} data{i}");
                    i += 1;
                }
                all_lower.push(name.to_lowercase());
                vec![s.name.clone(), name]
            }
            _ => vec![s.name.clone()],
        })
        .collect()
}

fn build_workbook(
    path: &Path,
    template: &Template,
    input: &ReportInput,
    rows: &[Row],
    options: &WriteOptions,
) -> Result<rust_xlsxwriter::Workbook, ReportError> {
    let xerr = |e: rust_xlsxwriter::XlsxError| write_error(path, e);
    let mut wb = rust_xlsxwriter::Workbook::new();
    wb.set_zip_compression_level(options.compression_level.min(9));
    let c = &input.about.created_utc;
    let created =
        rust_xlsxwriter::ExcelDateTime::from_ymd(c.year() as u16, c.month() as u8, c.day() as u8)
            .and_then(|d| d.and_hms(c.hour() as u16, c.minute() as u8, f64::from(c.second())))
            .map_err(xerr)?;
    let props = rust_xlsxwriter::DocProperties::new()
        .set_title(format!(
            "Aerosol direct radiative effect: {}",
            input.about.job_name
        ))
        .set_subject("Clear-sky shortwave aerosol direct radiative effect")
        .set_author("hazebook")
        .set_comment(format!(
            "hazebook {}, template {}",
            input.about.version, input.about.template_name
        ))
        .set_custom_property(
            "Generator",
            format!("hazebook {}", input.about.version).as_str(),
        )
        .set_creation_datetime(&created);
    wb.set_properties(&props);
    let styles = Styles::new(template);
    let settings = input.settings;
    let names = plan_sheet_names(
        template,
        rows.len(),
        input.ingested.rejected.len(),
        options.max_rows_per_sheet,
    );
    let flat: Vec<String> = names.iter().flatten().cloned().collect();
    // The Results sheets are written on their own thread while the other sheets are built,
    // then put in their place in the sheet order. Only they add to the workbook's shared strings
    // and formats before saving (the other sheets' are collected at save), so the workbook is
    // the same as when written one sheet after the other.
    let mut results_jobs = Vec::new();
    for spec in template
        .sheets
        .iter()
        .filter(|s| s.kind == SheetKind::Results)
    {
        let wanted = spec.columns.clone().unwrap_or_else(|| vec!["all".into()]);
        let cols = frame::select_columns(&wanted).ok_or_else(|| ReportError::Template {
            name: template.name.clone(),
            message: format!("sheet \"{}\": unknown column", spec.name),
        })?;
        let cols = frame::drop_empty_uncertainty(frame::available(cols, settings), rows);
        let mut sheets = Vec::new();
        for _ in 0..xlsx::results_sheet_count(rows.len(), options.max_rows_per_sheet) {
            sheets.push(wb.new_worksheet_with_low_memory().map_err(xerr)?);
        }
        results_jobs.push((spec, cols, sheets));
    }
    let grouped = Groupings::new(rows);
    let mut results_at: Vec<usize> = Vec::new();
    let styles = &styles;
    let (built, written) = std::thread::scope(|scope| {
        let results = scope.spawn(move || {
            let mut done = Vec::new();
            for (spec, cols, mut sheets) in results_jobs {
                xlsx::write_results_into(
                    &mut sheets,
                    template,
                    spec,
                    styles,
                    &cols,
                    rows,
                    options.max_rows_per_sheet,
                )?;
                done.push(sheets);
            }
            Ok::<_, rust_xlsxwriter::XlsxError>(done)
        });
        let mut others = || -> Result<(), ReportError> {
            for (spec, these) in template.sheets.iter().zip(&names) {
                match spec.kind {
                    SheetKind::About => {
                        about::write_about(&mut wb, template, spec, styles, input, &flat)
                            .map_err(xerr)?
                    }
                    SheetKind::Results => {
                        // Written on their own thread; their place in the sheet order.
                        results_at.push(wb.worksheets().len());
                    }
                    SheetKind::Summary => {
                        let keys = spec.group_by.clone().unwrap_or_default();
                        let groups = grouped.get(&keys)?;
                        let qnames: Vec<String> = spec.quantities.clone().unwrap_or_else(|| {
                            DEFAULT_SUMMARY_QUANTITIES
                                .iter()
                                .map(|s| s.to_string())
                                .collect()
                        });
                        let qs: Vec<&frame::ColumnDef> = frame::available(
                            qnames.iter().filter_map(|q| frame::column(q)).collect(),
                            settings,
                        );
                        xlsx::write_summary(
                            &mut wb, template, spec, styles, rows, &groups, &keys, &qs,
                        )
                        .map_err(xerr)?;
                        if qs.is_empty() && !qnames.is_empty() {
                            // Every quantity named needs a setting that is off (e.g. the two-stream
                            // error columns): say so instead of leaving the sheet blank.
                            let ws = wb.worksheet_from_name(&spec.name).map_err(xerr)?;
                            ws.write_string(
                                2,
                                0,
                                format!(
                                    "Not computed in this run: {} (the two-stream error columns need \
                                     [solver] error_estimate = true; the 24-hour ones need daily means).",
                                    qnames.join(", ")
                                ),
                            )
                            .map_err(xerr)?;
                        }
                    }
                    SheetKind::Efficiency => {
                        let groupings = spec
                            .groupings
                            .clone()
                            .unwrap_or_else(|| vec![vec!["site".into()]]);
                        let mut blocks = Vec::new();
                        for keys in groupings {
                            let groups = grouped.get(&keys)?;
                            blocks.push(EfficiencyBlock { keys, groups });
                        }
                        xlsx::write_efficiency(
                            &mut wb,
                            template,
                            spec,
                            styles,
                            rows,
                            &blocks,
                            settings.daily_mean,
                        )
                        .map_err(xerr)?;
                    }
                    SheetKind::Charts => {
                        charts::write_charts(
                            &mut wb,
                            template,
                            spec,
                            styles,
                            rows,
                            &these[1],
                            settings.daily_mean,
                        )
                        .map_err(xerr)?;
                    }
                    SheetKind::Quotable => {
                        quotable::write_quotable(
                            &mut wb, template, spec, styles, input, rows, &grouped,
                        )?;
                    }
                    SheetKind::Rejected => {
                        xlsx::write_rejected(
                            &mut wb,
                            template,
                            spec,
                            styles,
                            &input.ingested.rejected,
                            options.max_rows_per_sheet,
                        )
                        .map_err(xerr)?;
                    }
                }
            }
            Ok(())
        };
        let built = others();
        let written = match results.join() {
            Ok(w) => w,
            Err(panic) => std::panic::resume_unwind(panic),
        };
        (built, written)
    });
    built?;
    let mut offset = 0;
    for (at, sheets) in results_at.into_iter().zip(written.map_err(xerr)?) {
        for ws in sheets {
            wb.worksheets_mut().insert(at + offset, ws);
            offset += 1;
        }
    }
    if let Some(first) = wb.worksheets_mut().first_mut() {
        first.set_active(true);
    }
    Ok(wb)
}
