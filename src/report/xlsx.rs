//! Writing the report workbook: shared formats, the Results, summary, efficiency and Rejected
//! sheets. The About sheet is in `about`, charts in `charts`.

use std::collections::HashMap;

use rust_xlsxwriter::{
    Color, ConditionalFormat3ColorScale, ConditionalFormatType, Format, FormatBorder, Workbook,
    Worksheet, XlsxError,
};

use super::frame::{self, Class, ColumnDef, Row, Value};
use super::stats;
use super::template::{SheetSpec, Template};

/// Significant digits carried by the numbers written to the workbook (the Parquet/CSV side
/// output carries full precision).
pub const SIGNIFICANT_DIGITS: i32 = 6;

/// Diverging colour scale for DRE cells: cooling (negative) blue, zero white, warming orange.
pub const DRE_NEGATIVE: u32 = 0x2F6DB5;
pub const DRE_ZERO: u32 = 0xFFFFFF;
pub const DRE_POSITIVE: u32 = 0xE8893A;

const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Round to [`SIGNIFICANT_DIGITS`] significant digits. Dividing (or multiplying) a whole
/// number by an exact power of ten gives the double nearest to the decimal, so the number is
/// written with at most that many digits.
pub fn round_sig(x: f64) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let e = x.abs().log10().floor() as i32;
    let k = SIGNIFICANT_DIGITS - 1 - e;
    if (0..=22).contains(&k) {
        let s = POW10[k as usize];
        (x * s).round() / s
    } else if (-22..0).contains(&k) {
        let s = POW10[(-k) as usize];
        (x / s).round() * s
    } else {
        x
    }
}

/// Excel date serial (1900 date system, days) of a Unix time [ms].
pub fn excel_serial(unix_millis: i64) -> f64 {
    unix_millis as f64 / 86_400_000.0 + 25_569.0
}

/// Most characters Excel holds in one cell.
pub const MAX_CELL_CHARS: usize = 32_767;

/// Text cut to what one cell can hold (longer text would make the whole write fail).
pub fn clip(s: &str) -> std::borrow::Cow<'_, str> {
    if s.len() <= MAX_CELL_CHARS {
        return std::borrow::Cow::Borrowed(s);
    }
    let cut: String = s.chars().take(MAX_CELL_CHARS - 1).collect();
    std::borrow::Cow::Owned(format!("{cut}…"))
}

/// Formats built once per workbook and reused for every cell.
pub struct Styles {
    pub header: Format,
    pub unit: Format,
    pub title: Format,
    pub section: Format,
    pub label: Format,
    pub wrap: Format,
    pub mono: Format,
    classes: HashMap<ClassKey, Format>,
    decimals: HashMap<ClassKey, usize>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
struct ClassKey(u8);

fn class_key(c: Class) -> ClassKey {
    ClassKey(c as u8)
}

fn decimals_of(num_format: &str) -> usize {
    num_format
        .split_once('.')
        .map(|(_, d)| d.chars().take_while(|c| *c == '0' || *c == '#').count())
        .unwrap_or(0)
}

impl Styles {
    pub fn new(t: &Template) -> Self {
        let f = &t.formats;
        let pairs: [(Class, &str); 14] = [
            (Class::Text, "@"),
            (Class::Time, &f.datetime),
            (Class::Count, &f.count),
            (Class::Dre, &f.dre),
            (Class::Flux, &f.flux),
            (Class::Aod, &f.aod),
            (Class::Ssa, &f.ssa),
            (Class::Asymmetry, &f.asymmetry),
            (Class::Efficiency, &f.efficiency),
            (Class::Heating, &f.heating),
            (Class::Angle, &f.angle),
            (Class::Coordinate, &f.coordinate),
            (Class::General, &f.general),
            (Class::Fraction, &f.fraction),
        ];
        let mut classes = HashMap::new();
        let mut decimals = HashMap::new();
        for (c, nf) in pairs {
            classes.insert(class_key(c), Format::new().set_num_format(nf));
            decimals.insert(class_key(c), decimals_of(nf));
        }
        let rule = Color::RGB(0x7F7F7F);
        Self {
            header: Format::new()
                .set_bold()
                .set_background_color(Color::RGB(0xE9EEF4))
                .set_border_top(FormatBorder::Thin)
                .set_border_top_color(rule),
            unit: Format::new()
                .set_italic()
                .set_font_color(Color::RGB(0x505050))
                .set_background_color(Color::RGB(0xE9EEF4))
                .set_border_bottom(FormatBorder::Thin)
                .set_border_bottom_color(rule),
            title: Format::new().set_bold().set_font_size(14),
            section: Format::new()
                .set_bold()
                .set_font_size(12)
                .set_border_bottom(FormatBorder::Thin)
                .set_border_bottom_color(rule),
            label: Format::new().set_bold(),
            wrap: Format::new()
                .set_text_wrap()
                .set_align(rust_xlsxwriter::FormatAlign::Top),
            mono: Format::new().set_font_name("Consolas"),
            classes,
            decimals,
        }
    }

    /// The number format of a class.
    pub fn class(&self, c: Class) -> &Format {
        &self.classes[&class_key(c)]
    }

    /// Decimals shown for a class (for fitting column widths).
    pub fn decimals(&self, c: Class) -> usize {
        self.decimals[&class_key(c)]
    }
}

/// Width needed to show `x` with `decimals` decimals [characters].
pub fn number_width(x: f64, decimals: usize) -> usize {
    if !x.is_finite() {
        return 0;
    }
    let int_digits = if x.abs() < 1.0 {
        1
    } else {
        x.abs().log10().floor() as usize + 1
    };
    usize::from(x < 0.0) + int_digits + if decimals > 0 { decimals + 1 } else { 0 }
}

/// Tracks the widest content per column while a sheet is written.
#[derive(Debug, Default)]
pub struct Widths {
    w: Vec<usize>,
}

impl Widths {
    pub fn see(&mut self, col: usize, chars: usize) {
        if self.w.len() <= col {
            self.w.resize(col + 1, 0);
        }
        self.w[col] = self.w[col].max(chars);
    }
    /// Number of columns seen.
    pub fn len(&self) -> usize {
        self.w.len()
    }
    pub fn is_empty(&self) -> bool {
        self.w.is_empty()
    }
    pub fn see_text(&mut self, col: usize, s: &str) {
        self.see(col, s.chars().count());
    }
    /// Set the fitted widths on the sheet, within the template's limits.
    pub fn apply(
        &self,
        ws: &mut Worksheet,
        t: &Template,
        fixed: Option<f64>,
    ) -> Result<(), XlsxError> {
        for (c, w) in self.w.iter().enumerate() {
            let width =
                fixed.unwrap_or_else(|| (*w as f64 + 2.0).clamp(t.widths.min, t.widths.max));
            ws.set_column_width(c as u16, width)?;
        }
        Ok(())
    }
}

/// Write a number, or nothing when it is not finite.
pub fn put_number(ws: &mut Worksheet, r: u32, c: u16, x: f64, f: &Format) -> Result<(), XlsxError> {
    if x.is_finite() {
        ws.write_number_with_format(r, c, round_sig(x), f)?;
    }
    Ok(())
}

/// Write an optional number (empty when `None` or not finite).
pub fn put_opt(
    ws: &mut Worksheet,
    r: u32,
    c: u16,
    x: Option<f64>,
    f: &Format,
) -> Result<(), XlsxError> {
    match x {
        Some(v) => put_number(ws, r, c, v, f),
        None => Ok(()),
    }
}

/// Header row and units row at the top of a table, with the widths seen.
pub fn put_header(
    ws: &mut Worksheet,
    styles: &Styles,
    headers: &[(&str, &str)],
    widths: &mut Widths,
) -> Result<(), XlsxError> {
    for (c, (h, u)) in headers.iter().enumerate() {
        ws.write_string_with_format(0, c as u16, *h, &styles.header)?;
        ws.write_string_with_format(1, c as u16, *u, &styles.unit)?;
        widths.see_text(c, h);
        widths.see_text(c, u);
    }
    Ok(())
}

/// Frozen header, autofilter on the units row (so units stay out of the filter lists).
pub fn finish_table(
    ws: &mut Worksheet,
    ncols: usize,
    last_row: u32,
    freeze_cols: u16,
) -> Result<(), XlsxError> {
    ws.set_freeze_panes(2, freeze_cols)?;
    if ncols > 0 {
        ws.autofilter(1, 0, last_row.max(1), (ncols - 1) as u16)?;
    }
    Ok(())
}

/// Diverging 3-colour scale centred on zero, symmetric limits ±`limit`.
pub fn dre_scale(limit: f64) -> ConditionalFormat3ColorScale {
    let m = if limit.is_finite() && limit > 0.0 {
        round_sig(limit)
    } else {
        1.0
    };
    ConditionalFormat3ColorScale::new()
        .set_minimum(ConditionalFormatType::Number, -m)
        .set_midpoint(ConditionalFormatType::Number, 0.0)
        .set_maximum(ConditionalFormatType::Number, m)
        .set_minimum_color(Color::RGB(DRE_NEGATIVE))
        .set_midpoint_color(Color::RGB(DRE_ZERO))
        .set_maximum_color(Color::RGB(DRE_POSITIVE))
}

/// Name of the `k`-th (0-based) sheet of a table that continues over several sheets.
pub fn continued_name(base: &str, k: usize) -> String {
    if k == 0 {
        return base.to_string();
    }
    let suffix = format!(" ({})", k + 1);
    let keep = 31usize.saturating_sub(suffix.chars().count());
    let head: String = base.chars().take(keep).collect();
    format!("{head}{suffix}")
}

/// Number of Results sheets for `n` rows at `max_rows` rows per sheet (header and units rows
/// included); one sheet when there are no rows.
pub fn results_sheet_count(n: usize, max_rows: u32) -> usize {
    n.div_ceil((max_rows.max(3) - 2) as usize).max(1)
}

/// The Results sheets: one row per computed observation, continued on further sheets when
/// longer than `max_rows` (header and units rows included). Returns the sheet names. Written
/// into worksheets made beforehand with
/// `Workbook::new_worksheet_with_low_memory`, [`results_sheet_count`] of them, so that they can
/// be written on their own thread while the other sheets are built (they use the workbook's
/// shared strings and formats, which no other sheet of the report adds to before saving).
pub fn write_results_into(
    sheets: &mut [Worksheet],
    t: &Template,
    spec: &SheetSpec,
    styles: &Styles,
    cols: &[&ColumnDef],
    rows: &[Row],
    max_rows: u32,
) -> Result<Vec<String>, XlsxError> {
    let per_sheet = (max_rows.max(3) - 2) as usize;
    // One pass for widths and the colour-scale limits.
    let mut width = vec![0usize; cols.len()];
    let mut max_abs = vec![0f64; cols.len()];
    for (j, c) in cols.iter().enumerate() {
        width[j] = c.header.chars().count().max(c.unit.chars().count());
        match c.class {
            Class::Time => width[j] = width[j].max(19),
            Class::Text => {
                for r in rows {
                    if let Value::Text(s) = c.value(r) {
                        width[j] = width[j].max(s.chars().count());
                    }
                }
            }
            _ => {
                let d = styles.decimals(c.class);
                let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
                for r in rows {
                    let x = c.number(r);
                    if x.is_finite() {
                        lo = lo.min(x);
                        hi = hi.max(x);
                    }
                }
                if lo.is_finite() {
                    width[j] = width[j].max(number_width(lo, d)).max(number_width(hi, d));
                    max_abs[j] = lo.abs().max(hi.abs());
                }
            }
        }
    }
    let chunks: Vec<&[Row]> = if rows.is_empty() {
        vec![&[]]
    } else {
        rows.chunks(per_sheet).collect()
    };
    let mut names = Vec::new();
    let freeze = cols
        .iter()
        .take_while(|c| c.group == "identity")
        .count()
        .min(2) as u16;
    assert_eq!(
        chunks.len(),
        sheets.len(),
        "one worksheet per Results chunk"
    );
    for ((k, chunk), ws) in chunks.iter().enumerate().zip(sheets.iter_mut()) {
        let name = continued_name(&spec.name, k);
        ws.set_name(&name)?;
        for (j, w) in width.iter().enumerate() {
            let w = spec
                .column_width
                .unwrap_or_else(|| (*w as f64 + 2.0).clamp(t.widths.min, t.widths.max));
            ws.set_column_width(j as u16, w)?;
            // The number format goes on the column: unformatted cells take it (as in Excel),
            // which saves a format lookup per cell.
            if cols[j].class != Class::Text {
                ws.set_column_format(j as u16, styles.class(cols[j].class))?;
            }
        }
        // Constant-memory sheets are written row by row: the whole header row, then units.
        for (j, c) in cols.iter().enumerate() {
            ws.write_string_with_format(0, j as u16, &c.header, &styles.header)?;
        }
        for (j, c) in cols.iter().enumerate() {
            ws.write_string_with_format(1, j as u16, c.unit, &styles.unit)?;
        }
        for (i, row) in chunk.iter().enumerate() {
            let r = (i + 2) as u32;
            for (j, c) in cols.iter().enumerate() {
                let col = j as u16;
                match c.value(row) {
                    Value::Num(x) => {
                        if x.is_finite() {
                            ws.write_number(r, col, round_sig(x))?;
                        }
                    }
                    Value::Time(s) => {
                        ws.write_number(r, col, excel_serial(s))?;
                    }
                    Value::Text(s) => {
                        if !s.is_empty() {
                            ws.write_string(r, col, clip(&s).as_ref())?;
                        }
                    }
                    Value::Empty => {}
                }
            }
        }
        let last = (chunk.len() + 1) as u32;
        if !chunk.is_empty() {
            for (j, c) in cols.iter().enumerate() {
                if c.class == Class::Dre {
                    ws.add_conditional_format(2, j as u16, last, j as u16, &dre_scale(max_abs[j]))?;
                }
            }
        }
        finish_table(ws, cols.len(), last, freeze)?;
        names.push(name);
    }
    Ok(names)
}

/// Rows of one group, with its key values.
pub struct Group<'a> {
    pub keys: Vec<Value<'a>>,
    pub rows: Vec<usize>,
}

/// Value of a row for a statistic: instantaneous quantities count only rows with the sun above
/// the horizon.
pub fn stat_value(c: &ColumnDef, row: &Row) -> f64 {
    if c.sunlit && row.res.flags.sun_below_horizon {
        f64::NAN
    } else {
        c.number(row)
    }
}

/// Write a key cell.
fn put_value(
    ws: &mut Worksheet,
    r: u32,
    c: u16,
    v: &Value,
    styles: &Styles,
    widths: &mut Widths,
) -> Result<(), XlsxError> {
    match v {
        Value::Num(x) => {
            put_number(ws, r, c, *x, styles.class(Class::Count))?;
            widths.see(c as usize, number_width(*x, 0));
        }
        Value::Text(s) => {
            ws.write_string(r, c, clip(s).as_ref())?;
            widths.see_text(c as usize, s);
        }
        Value::Time(s) => {
            ws.write_number_with_format(r, c, excel_serial(*s), styles.class(Class::Time))?;
            widths.see(c as usize, 19);
        }
        Value::Empty => {}
    }
    Ok(())
}

/// Statistics that are counts (days, observations, statistical units).
fn is_count_statistic(name: &str) -> bool {
    matches!(name, "count" | "days" | "observations")
}

/// Statistics that are spreads or uncertainties (no colour scale).
fn is_spread_statistic(name: &str) -> bool {
    matches!(name, "sd" | "se" | "u_random" | "u_systematic" | "u_total")
}

/// Unit row entry of a statistic's column.
fn statistic_unit(name: &str) -> &'static str {
    match name {
        "count" => "days (24-h) or obs.",
        "days" | "observations" => "count",
        _ => "per row, see Unit",
    }
}

/// A grouped summary sheet: for each quantity and group, the statistics of the template.
#[allow(clippy::too_many_arguments)]
pub fn write_summary(
    wb: &mut Workbook,
    t: &Template,
    spec: &SheetSpec,
    styles: &Styles,
    rows: &[Row],
    groups: &[Group],
    keys: &[String],
    quantities: &[&ColumnDef],
) -> Result<(), XlsxError> {
    let mut stats_list = spec.statistics_list();
    // Uncertainty statistics only when uncertainties were propagated.
    if !rows.iter().any(|r| r.res.uncertainty.is_some()) {
        stats_list.retain(|s| !s.starts_with("u_"));
    }
    let ws = wb.add_worksheet();
    ws.set_name(&spec.name)?;
    let mut headers: Vec<(&str, &str)> = keys.iter().map(|k| frame::group_header(k)).collect();
    headers.push(("Quantity", ""));
    headers.push(("Unit", ""));
    for s in &stats_list {
        headers.push((stats::statistic_header(s), statistic_unit(s)));
    }
    let mut widths = Widths::default();
    put_header(ws, styles, &headers, &mut widths)?;
    let first_stat = keys.len() + 2;
    let mut r = 2u32;
    for q in quantities {
        let block_start = r;
        let f = styles.class(q.class);
        let d = styles.decimals(q.class);
        let mut max_abs = 0f64;
        for g in groups {
            for (j, v) in g.keys.iter().enumerate() {
                put_value(ws, r, j as u16, v, styles, &mut widths)?;
            }
            ws.write_string(r, keys.len() as u16, &q.header)?;
            widths.see_text(keys.len(), &q.header);
            ws.write_string(r, keys.len() as u16 + 1, q.unit)?;
            widths.see_text(keys.len() + 1, q.unit);
            let s = super::days::summarise_group(q, rows, &g.rows, t.min_observations_per_day);
            for (k, name) in stats_list.iter().enumerate() {
                let c = (first_stat + k) as u16;
                let v = s.get(name).filter(|x| x.is_finite());
                if is_count_statistic(name) {
                    put_opt(ws, r, c, v, styles.class(Class::Count))?;
                    widths.see(c as usize, number_width(v.unwrap_or(0.0), 0));
                } else {
                    put_opt(ws, r, c, v, f)?;
                    if let Some(x) = v {
                        widths.see(c as usize, number_width(x, d));
                        if !is_spread_statistic(name) {
                            max_abs = max_abs.max(x.abs());
                        }
                    }
                }
            }
            r += 1;
        }
        if q.class == Class::Dre && r > block_start {
            for (k, name) in stats_list.iter().enumerate() {
                if !is_count_statistic(name) && !is_spread_statistic(name) {
                    let c = (first_stat + k) as u16;
                    ws.add_conditional_format(block_start, c, r - 1, c, &dre_scale(max_abs))?;
                }
            }
        }
    }
    widths.apply(ws, t, spec.column_width)?;
    finish_table(
        ws,
        headers.len(),
        r.saturating_sub(1).max(1),
        (keys.len() + 1) as u16,
    )?;
    Ok(())
}

/// Quantities regressed against AOD(550) on the efficiency sheet.
pub fn efficiency_quantities(daily_mean: bool) -> Vec<&'static ColumnDef> {
    let keys: &[&str] = if daily_mean {
        &["dre_toa_24h", "dre_sfc_24h", "dre_toa", "dre_sfc"]
    } else {
        &["dre_toa", "dre_sfc"]
    };
    keys.iter().filter_map(|k| frame::column(k)).collect()
}

/// Fit ΔF against AOD(550) over the given rows: over site-days for a 24-hour quantity (the
/// day means of AOD(550) and ΔF, days being the independent units), over observations
/// otherwise.
pub fn fit_rows(q: &ColumnDef, rows: &[Row], idx: &[usize]) -> stats::Fit {
    stats::ols(fit_points(q, rows, idx))
}

/// The (AOD(550), ΔF) points of [`fit_rows`].
pub fn fit_points(q: &ColumnDef, rows: &[Row], idx: &[usize]) -> Vec<(f64, f64)> {
    let aod = frame::column("aod_550").expect("aod_550 column exists");
    if !q.daily {
        return idx
            .iter()
            .map(|&i| (aod.number(&rows[i]), stat_value(q, &rows[i])))
            .collect();
    }
    let pairs = super::days::DayValues::gather(rows, idx, |r| {
        let (x, y) = (aod.number(r), stat_value(q, r));
        if x.is_finite() { y } else { f64::NAN }
    });
    pairs
        .counted(1)
        .map(|(_, _, v)| {
            let n = v.len() as f64;
            let x = v.iter().map(|&(_, i)| aod.number(&rows[i])).sum::<f64>() / n;
            let y = v.iter().map(|p| p.0).sum::<f64>() / n;
            (x, y)
        })
        .collect()
}

/// Mean incident TOA flux of the rows [W m⁻²] (24-hour or instantaneous, sun up).
fn mean_incident(daily: bool, rows: &[Row], idx: &[usize]) -> f64 {
    let v: Vec<f64> = idx
        .iter()
        .map(|&i| &rows[i])
        .filter(|r| daily || !r.res.flags.sun_below_horizon)
        .map(|r| {
            if daily {
                r.res.daily.clean.toa_down
            } else {
                r.res.instantaneous.clean.toa_down
            }
        })
        .filter(|x| x.is_finite())
        .collect();
    if v.is_empty() {
        f64::NAN
    } else {
        v.iter().sum::<f64>() / v.len() as f64
    }
}

/// The note of a fit whose rows span several seasons (insolation differs, so the slope mixes
/// seasonal insolation with AOD and is not one relation), or `None`.
pub fn pooled_note(rows: &[Row], idx: &[usize]) -> Option<&'static str> {
    let mut seasons: Vec<&str> = idx
        .iter()
        .map(|&i| frame::season(chrono::Datelike::month(&rows[i].obs.time_utc)))
        .collect();
    seasons.sort_unstable();
    seasons.dedup();
    (seasons.len() > 1).then_some(
        "pooled over seasons: insolation differs, so this slope mixes season with AOD; quote the per-season fits or the normalised slope",
    )
}

/// One block of regressions of the efficiency sheet: a grouping and its groups.
pub struct EfficiencyBlock<'a> {
    pub keys: Vec<String>,
    pub groups: std::sync::Arc<Vec<Group<'a>>>,
}

/// The forcing-efficiency sheet: OLS slope of ΔF against AOD(550) per group.
pub fn write_efficiency(
    wb: &mut Workbook,
    t: &Template,
    spec: &SheetSpec,
    styles: &Styles,
    rows: &[Row],
    blocks: &[EfficiencyBlock],
    daily_mean: bool,
) -> Result<(), XlsxError> {
    let ws = wb.add_worksheet();
    ws.set_name(&spec.name)?;
    let mut all_keys: Vec<String> = Vec::new();
    for b in blocks {
        for k in &b.keys {
            if !all_keys.contains(k) {
                all_keys.push(k.clone());
            }
        }
    }
    let mut headers: Vec<(&str, &str)> = all_keys.iter().map(|k| frame::group_header(k)).collect();
    let per_aod = "W m⁻² per AOD";
    headers.extend_from_slice(&[
        ("Quantity", "against AOD(550 nm)"),
        ("n", "count"),
        ("Slope (efficiency)", per_aod),
        ("Slope SE", per_aod),
        ("Intercept", "W m⁻²"),
        ("R²", "unitless"),
        ("Slope through origin", per_aod),
        ("Slope through origin SE", per_aod),
        ("AOD(550) min", "unitless"),
        ("AOD(550) max", "unitless"),
        ("Normalised slope", "per AOD, fraction of incident TOA flux"),
        ("Mean incident TOA flux", "W m⁻²"),
        ("Points", "site-days (24-h) or obs."),
        ("Note", ""),
    ]);
    let mut widths = Widths::default();
    put_header(ws, styles, &headers, &mut widths)?;
    let nk = all_keys.len();
    let eff = styles.class(Class::Efficiency);
    let d_eff = styles.decimals(Class::Efficiency);
    let mut r = 2u32;
    for b in blocks {
        for g in b.groups.iter() {
            for q in efficiency_quantities(daily_mean) {
                for (j, k) in all_keys.iter().enumerate() {
                    match b.keys.iter().position(|x| x == k) {
                        Some(p) => put_value(ws, r, j as u16, &g.keys[p], styles, &mut widths)?,
                        None => {
                            ws.write_string(r, j as u16, "all")?;
                        }
                    }
                }
                let fit = fit_rows(q, rows, &g.rows);
                let c0 = nk as u16;
                ws.write_string(r, c0, &q.header)?;
                widths.see_text(nk, &q.header);
                put_number(ws, r, c0 + 1, fit.n as f64, styles.class(Class::Count))?;
                let vals = [
                    (fit.slope, eff),
                    (fit.slope_se, eff),
                    (fit.intercept, styles.class(Class::Dre)),
                    (fit.r2, styles.class(Class::Fraction)),
                    (fit.slope_origin, eff),
                    (fit.slope_origin_se, eff),
                    (fit.x_min, styles.class(Class::Aod)),
                    (fit.x_max, styles.class(Class::Aod)),
                ];
                for (k, (v, f)) in vals.iter().enumerate() {
                    let c = c0 + 2 + k as u16;
                    put_opt(ws, r, c, *v, f)?;
                    if let Some(x) = v {
                        widths.see(c as usize, number_width(*x, d_eff.max(3)));
                    }
                }
                let incident = mean_incident(q.daily, rows, &g.rows);
                let c = c0 + 2 + vals.len() as u16;
                put_opt(
                    ws,
                    r,
                    c,
                    fit.slope.map(|b| b / incident),
                    styles.class(Class::Fraction),
                )?;
                put_number(ws, r, c + 1, incident, styles.class(Class::Flux))?;
                ws.write_string(r, c + 2, if q.daily { "site-days" } else { "observations" })?;
                if let Some(note) = pooled_note(rows, &g.rows) {
                    ws.write_string(r, c + 3, note)?;
                    widths.see(c as usize + 3, 40);
                }
                r += 1;
            }
        }
    }
    widths.apply(ws, t, spec.column_width)?;
    finish_table(
        ws,
        headers.len(),
        r.saturating_sub(1).max(1),
        (nk + 1) as u16,
    )?;
    Ok(())
}

/// The Rejected sheet(s): every row not computed, with file, sheet, row, cell, column, value
/// and reason.
pub fn write_rejected(
    wb: &mut Workbook,
    t: &Template,
    spec: &SheetSpec,
    styles: &Styles,
    rejected: &[crate::ingest::Rejection],
    max_rows: u32,
) -> Result<Vec<String>, XlsxError> {
    let headers: [(&str, &str); 7] = [
        ("File", ""),
        ("Sheet", ""),
        ("Row", ""),
        ("Cell", ""),
        ("Column", "quantity"),
        ("Value", "as found"),
        ("Reason", ""),
    ];
    let per_sheet = (max_rows.max(3) - 2) as usize;
    let chunks: Vec<&[crate::ingest::Rejection]> = if rejected.is_empty() {
        vec![&[]]
    } else {
        rejected.chunks(per_sheet).collect()
    };
    let mut names = Vec::new();
    for (k, chunk) in chunks.iter().enumerate() {
        let name = continued_name(&spec.name, k);
        let ws = wb.add_worksheet();
        ws.set_name(&name)?;
        let mut widths = Widths::default();
        put_header(ws, styles, &headers, &mut widths)?;
        for (i, x) in chunk.iter().enumerate() {
            let r = (i + 2) as u32;
            let texts = [&x.file, &x.sheet, &x.cell, &x.column, &x.value, &x.reason];
            for (c, s) in [0u16, 1, 3, 4, 5, 6].into_iter().zip(texts) {
                if !s.is_empty() {
                    ws.write_string(r, c, clip(s).as_ref())?;
                    widths.see_text(c as usize, s);
                }
            }
            ws.write_number_with_format(r, 2, f64::from(x.row), styles.class(Class::Count))?;
            widths.see(2, number_width(f64::from(x.row), 0));
        }
        if rejected.is_empty() {
            ws.write_string(2, 0, "No rows were rejected.")?;
        }
        widths.apply(ws, t, spec.column_width)?;
        finish_table(ws, headers.len(), (chunk.len() + 1) as u32, 0)?;
        names.push(name);
    }
    Ok(names)
}
