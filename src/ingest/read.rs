//! One sheet (or csv/parquet file) into accepted and rejected rows: the column layout, then
//! each row read, checked and resolved into an [`Observation`] (the steps of one row are in
//! [`super::row`]).

use std::collections::HashMap;
use std::sync::Arc;

use super::accounting::Ignored;
use super::cells::{
    Cell, FillValues, Grid, MAX_CELL_CHARS, NumberRead, clip, column_index, column_letter,
    format_number, read_number, too_long,
};
use super::detect::{self, Kind, closest_header, parse_header};
use super::resolve::{FxBuild, SiteTable};
use super::row::Problem;
use super::time::parse_offset_hours;
use super::types::*;
use super::validate::{Check, check};
use crate::physics::Observation;

/// Wavelength assumed for a spectral column whose header names none [nm].
pub(crate) const DEFAULT_WAVELENGTH_NM: f64 = 550.0;

/// One mapped column of a sheet.
#[derive(Debug, Clone)]
pub(crate) struct Mapped {
    pub col: usize,
    pub kind: Kind,
    pub wavelength_nm: Option<f64>,
    pub header: String,
    pub letter: String,
    pub unit: String,
    pub how: &'static str,
    /// Factor to canonical units (e.g. 0.1 for precipitable water in mm).
    pub scale: f64,
    /// For time columns: offset stated by the header or units row [h].
    pub stated_offset_hours: Option<f64>,
    /// For the Ångström exponent: the wavelength pair from the header or units row [nm].
    pub pair_nm: Option<(f64, f64)>,
}

impl Mapped {
    pub(crate) fn name(&self) -> String {
        match (self.kind.spectral(), self.wavelength_nm) {
            (true, Some(w)) => format!("{}_{}", self.kind.name(), super::format_wavelength(w)),
            _ => self.kind.name().to_string(),
        }
    }

    pub(crate) fn wavelength(&self) -> f64 {
        self.wavelength_nm.unwrap_or(DEFAULT_WAVELENGTH_NM)
    }
}

/// How a sheet is laid out.
#[derive(Debug, Clone)]
pub(crate) struct Layout {
    pub header_row: usize,
    pub units_row: Option<usize>,
    pub columns: Vec<Mapped>,
    pub warnings: Vec<String>,
    /// A date column and a time-of-day column.
    pub split_date_time: bool,
    /// Header columns that are not read, with the reason.
    pub ignored: Vec<super::accounting::Ignored>,
}

impl Layout {
    pub(crate) fn has(&self, kind: Kind) -> bool {
        self.columns.iter().any(|m| m.kind == kind)
    }

    pub(crate) fn data_start(&self) -> usize {
        self.units_row
            .map_or(self.header_row, |u| u.max(self.header_row))
            + 1
    }

    /// The mapping as recorded in [`Ingested::mapping`].
    pub(crate) fn mapped_columns(&self, file: &str, sheet: &str) -> Vec<MappedColumn> {
        self.columns
            .iter()
            .map(|m| MappedColumn {
                file: file.to_string(),
                sheet: sheet.to_string(),
                quantity: m.kind.name().to_string(),
                wavelength_nm: if m.kind.spectral() {
                    Some(m.wavelength())
                } else {
                    None
                },
                header: m.header.clone(),
                letter: m.letter.clone(),
                unit: m.unit.clone(),
                how: m.how.to_string(),
                wavelength_pair_nm: m.pair_nm.map(|(a, b)| [a, b]),
            })
            .collect()
    }
}

/// Where a sheet is, for messages: `campaign.xlsx, sheet "optics"`.
pub(crate) fn place(file: &str, sheet: &str) -> String {
    if sheet.is_empty() {
        file.to_string()
    } else {
        format!("{file}, sheet \"{sheet}\"")
    }
}

fn header_list(grid: &Grid, r: usize) -> Vec<(String, String)> {
    (0..grid.width())
        .filter_map(|c| {
            grid.cell(r, c)
                .text()
                .map(|t| (column_letter(grid.column_number(c)), clip(&t).into_owned()))
        })
        .collect()
}

fn scale_for(kind: Kind, unit: &str) -> Result<f64, String> {
    let u = unit.trim();
    let ok = |v: f64| Ok(v);
    match (kind, u) {
        (_, "") => ok(1.0),
        (Kind::Water, "cm" | "g cm2" | "g cm 2") => ok(1.0),
        (Kind::Water, "mm" | "kg m2" | "kg m 2") => ok(0.1),
        (Kind::Pressure, "hpa" | "mb" | "mbar") => ok(1.0),
        (Kind::Pressure, "kpa") => ok(10.0),
        (Kind::Pressure, "pa") => ok(0.01),
        (Kind::Altitude, "m" | "m asl" | "m a s l") => ok(1.0),
        (Kind::Altitude, "km" | "km asl") => ok(1000.0),
        (Kind::LayerTop, "km" | "km agl" | "km a g l" | "km asl") => ok(1.0),
        (Kind::LayerTop, "m" | "m agl" | "m a g l") => ok(0.001),
        (Kind::Ozone, "du") => ok(1.0),
        (Kind::Ozone, "atm cm" | "cm") => ok(1000.0),
        (Kind::Ssa | Kind::Albedo, "percent") => ok(0.01),
        (Kind::Latitude | Kind::Longitude, _) if u.starts_with("deg") || u == "n" || u == "e" => {
            ok(1.0)
        }
        (Kind::UtcOffset, "h" | "hours" | "hour") => ok(1.0),
        (
            Kind::Aod | Kind::Ssa | Kind::Asymmetry | Kind::Albedo | Kind::Angstrom,
            "1" | "unitless" | "dimensionless" | "fraction" | "none" | "0 1",
        ) => ok(1.0),
        (Kind::Time | Kind::Date | Kind::Site | Kind::SiteName | Kind::Surface, _) => ok(1.0),
        _ => Err(format!(
            "unit \"{u}\" is not understood for {}",
            kind.name()
        )),
    }
}

/// Work out the layout of a data sheet: header row, units row, mapping (detected, with the
/// job file's overrides), units.
///
/// Errors: a message (without the file prefix) when no header is found or an override names
/// no column.
pub(crate) fn data_layout(
    grid: &Grid,
    spec: &InputSpec,
    file: &str,
    sheet: &str,
) -> Result<Layout, IngestError> {
    let layout_err = |message: String| IngestError::Layout {
        path: file.to_string(),
        message,
    };
    let here = place(file, sheet);
    if grid.height() == 0 || grid.width() == 0 {
        return Err(layout_err(format!(
            "{here} is empty: expected a header row (time, AOD, SSA, g, ...) and data rows under it"
        )));
    }
    let header_row = match spec.header_row {
        Some(n) => grid.row_index(n).ok_or_else(|| {
            layout_err(format!("{here}: the job file sets the header row to {n}, but the sheet's rows are {}–{}", grid.row_number(0), grid.row_number(grid.height() - 1)))
        })?,
        None => detect::find_header_row(grid, true).ok_or_else(|| {
            let mut shown = Vec::new();
            for r in 0..grid.height().min(5) {
                let cells = header_list(grid, r);
                if !cells.is_empty() {
                    let t: Vec<String> = cells.iter().take(8).map(|(_, t)| format!("\"{t}\"")).collect();
                    shown.push(format!("row {}: {}", grid.row_number(r), t.join(", ")));
                }
            }
            layout_err(format!(
                "{here}: no header row found in the first {} rows: expected a row naming the columns, such as time, aod_500, angstrom, ssa_550, g_550, site. Found: {}. Set the header row in the job file if it is further down.",
                detect::HEADER_SEARCH_ROWS,
                if shown.is_empty() { "no text".to_string() } else { shown.join("; ") }
            ))
        })?,
    };
    let mut warnings = Vec::new();
    let mut columns: Vec<Mapped> = Vec::new();
    let mut ignored: Vec<Ignored> = Vec::new();
    for c in 0..grid.width() {
        let Some(text) = grid.cell(header_row, c).text() else {
            continue;
        };
        let letter = column_letter(grid.column_number(c));
        if let Some(why) = super::sigma_headers::unread_reason(grid, header_row, c) {
            ignored.push(Ignored::new(c, &letter, &text, why));
            continue;
        }
        let Some(m) = parse_header(&text) else {
            ignored.push(Ignored::new(
                c,
                &letter,
                &text,
                detect::unrecognised_reason(&text),
            ));
            continue;
        };
        let candidate = Mapped {
            col: c,
            kind: m.kind,
            wavelength_nm: m.wavelength_nm,
            header: text.clone(),
            letter,
            unit: m.unit,
            how: "detected",
            scale: 1.0,
            stated_offset_hours: None,
            pair_nm: m.pair_nm,
        };
        if let Some(prev) = columns.iter().find(|p| p.name() == candidate.name()) {
            warnings.push(format!(
                "{here}: column {} \"{}\" names {} again (already column {} \"{}\"); it is ignored",
                candidate.letter,
                text,
                candidate.name(),
                prev.letter,
                prev.header
            ));
            ignored.push(Ignored::new(
                c,
                &candidate.letter,
                &text,
                format!(
                    "names {} again (already column {}); only the first is read",
                    candidate.name(),
                    prev.letter
                ),
            ));
            continue;
        }
        columns.push(candidate);
    }
    // Job-file overrides.
    for (key, target) in &spec.columns {
        let Some(km) = parse_header(key) else {
            let names: Vec<&str> = Kind::all().iter().map(|k| k.name()).collect();
            return Err(layout_err(format!(
                "the job file maps \"{key}\", which is not a quantity hazebook knows; expected one of {} (spectral ones with a wavelength, e.g. aod_500, ssa_675)",
                names.join(", ")
            )));
        };
        let t = target.trim();
        let by_header = (0..grid.width()).find(|&c| {
            grid.cell(header_row, c).text().is_some_and(|h| {
                h.eq_ignore_ascii_case(t) || detect::normalised(&h) == detect::normalised(t)
            })
        });
        let col = by_header.or_else(|| column_index(t).and_then(|i| grid.column_offset(i)));
        let Some(col) = col else {
            let list: Vec<String> = header_list(grid, header_row)
                .iter()
                .map(|(l, h)| format!("{l} \"{h}\""))
                .collect();
            return Err(layout_err(format!(
                "{here}: the job file maps {key} to \"{t}\", but no header in row {} is \"{t}\" and it is no column letter of the sheet. Headers found: {}",
                grid.row_number(header_row),
                list.join(", ")
            )));
        };
        let header = grid.cell(header_row, col).text().unwrap_or_default();
        let from_header = parse_header(&header);
        let wavelength_nm = km
            .wavelength_nm
            .or(from_header.as_ref().and_then(|h| h.wavelength_nm));
        let unit = if km.unit.is_empty() {
            from_header
                .as_ref()
                .map(|h| h.unit.clone())
                .unwrap_or_default()
        } else {
            km.unit
        };
        let m = Mapped {
            col,
            kind: km.kind,
            wavelength_nm,
            header,
            letter: column_letter(grid.column_number(col)),
            unit,
            how: "job file",
            scale: 1.0,
            stated_offset_hours: None,
            pair_nm: from_header.as_ref().and_then(|h| h.pair_nm),
        };
        let name = m.name();
        ignored.retain(|i| i.col != col);
        for p in columns
            .iter()
            .filter(|p| p.col != col && p.name() == name && p.how == "detected")
        {
            ignored.push(Ignored::new(
                p.col,
                &p.letter,
                &p.header,
                format!("the job file maps {name} to column {} instead", m.letter),
            ));
        }
        columns.retain(|p| p.col != col && !(p.name() == name && p.how == "detected"));
        columns.push(m);
    }
    let dropped = super::accounting::apply_ignore_list(spec, &mut columns, &mut ignored);
    ignored.extend(dropped);
    super::accounting::site_name_alone_is_site(&mut columns);
    columns.sort_by_key(|m| m.col);
    // Units row.
    let mapped_cols: Vec<usize> = columns.iter().map(|m| m.col).collect();
    let units_row = match spec.units_row {
        Some(n) => Some(grid.row_index(n).ok_or_else(|| {
            layout_err(format!(
                "{here}: the job file sets the units row to {n}, which is outside the sheet"
            ))
        })?),
        None => {
            let r = header_row + 1;
            detect::looks_like_units_row(grid, r, &mapped_cols).then_some(r)
        }
    };
    for m in &mut columns {
        if m.unit.is_empty()
            && let Some(u) = units_row.and_then(|r| grid.cell(r, m.col).text())
        {
            m.unit = detect::normalised(&u);
            if m.unit == "percent" || u.trim() == "%" {
                m.unit = "percent".into();
            }
            if m.kind == Kind::Angstrom
                && let Some((pair, rest)) = detect::units_wavelength_pair(&u)
            {
                m.pair_nm = m.pair_nm.or(Some(pair));
                m.unit = rest;
            }
        }
        if matches!(m.kind, Kind::Time | Kind::Date) {
            if m.unit.starts_with("utc") || m.unit.starts_with("gmt") {
                m.stated_offset_hours = parse_offset_hours(&m.unit.replace(' ', ""));
            }
            continue;
        }
        match scale_for(m.kind, &m.unit) {
            Ok(s) => m.scale = s,
            Err(e) => {
                return Err(layout_err(format!(
                    "{here}, column {} \"{}\": {e}; expected {}",
                    m.letter,
                    m.header,
                    match m.kind {
                        Kind::Water => "cm or mm",
                        Kind::Pressure => "hPa, mb, kPa or Pa",
                        Kind::Altitude => "m or km",
                        Kind::LayerTop => "km or m",
                        Kind::Ozone => "DU or atm-cm",
                        _ => "no unit (a fraction)",
                    }
                )));
            }
        }
    }
    let has_time = columns.iter().any(|m| m.kind == Kind::Time);
    let has_date = columns.iter().any(|m| m.kind == Kind::Date);
    let split_date_time = has_time && has_date;
    if has_date && !has_time {
        for m in &mut columns {
            if m.kind == Kind::Date {
                m.kind = Kind::Time;
            }
        }
    }
    for m in &columns {
        if m.kind.spectral() && m.wavelength_nm.is_none() {
            warnings.push(format!(
                "{here}: column {} \"{}\" gives no wavelength; {} nm is assumed",
                m.letter,
                m.header,
                format_number(DEFAULT_WAVELENGTH_NM)
            ));
        }
    }
    super::accounting::headerless_columns(grid, header_row, &columns, &mut ignored);
    ignored.sort_by_key(|i| i.col);
    Ok(Layout {
        header_row,
        units_row,
        columns,
        warnings,
        split_date_time,
        ignored,
    })
}

/// Fail when a required quantity has no column, naming the closest header.
pub(crate) fn require_columns(
    layout: &Layout,
    grid: &Grid,
    file: &str,
    sheet: &str,
    sites: &SiteTable,
) -> Result<(), IngestError> {
    let here = place(file, sheet);
    let mut missing = Vec::new();
    for (kind, what) in [
        (Kind::Time, "the measurement time (time, or date and time)"),
        (Kind::Aod, "AOD (e.g. aod_500)"),
        (Kind::Ssa, "single-scattering albedo (e.g. ssa_550)"),
        (Kind::Asymmetry, "asymmetry factor (e.g. g_550)"),
    ] {
        if !layout.has(kind) {
            missing.push((kind, what));
        }
    }
    let located_by_sites =
        !sites.is_empty() && (layout.has(Kind::Site) || sites.entries.len() == 1);
    let has_location = layout.has(Kind::Latitude) && layout.has(Kind::Longitude);
    if !has_location && !located_by_sites {
        if !layout.has(Kind::Latitude) {
            missing.push((
                Kind::Latitude,
                "latitude (or a site column and a site table)",
            ));
        }
        if !layout.has(Kind::Longitude) {
            missing.push((
                Kind::Longitude,
                "longitude (or a site column and a site table)",
            ));
        }
    }
    if missing.is_empty() {
        return Ok(());
    }
    let mapped: Vec<usize> = layout.columns.iter().map(|m| m.col).collect();
    let unmapped: Vec<String> = (0..grid.width())
        .filter(|c| !mapped.contains(c))
        .filter_map(|c| grid.cell(layout.header_row, c).text())
        .collect();
    let found: Vec<String> = layout
        .columns
        .iter()
        .map(|m| format!("{} \"{}\" → {}", m.letter, m.header, m.name()))
        .collect();
    let mut lines = Vec::new();
    for (kind, what) in &missing {
        let mut l = format!("no column for {what}");
        if let Some(h) = closest_header(*kind, &unmapped) {
            let letter = (0..grid.width())
                .find(|&c| grid.cell(layout.header_row, c).text().as_deref() == Some(h))
                .map(|c| column_letter(grid.column_number(c)))
                .unwrap_or_default();
            l.push_str(&format!(
                "; the closest header is \"{h}\" (column {letter}): if that is it, rename it or map it in the job file ({} = \"{letter}\")",
                kind.name()
            ));
        }
        lines.push(l);
    }
    Err(IngestError::Layout {
        path: file.to_string(),
        message: format!(
            "{here}, header row {}: {}. Understood: {}. Unrecognised headers: {}.",
            grid.row_number(layout.header_row),
            lines.join("; "),
            if found.is_empty() {
                "nothing".into()
            } else {
                found.join(", ")
            },
            if unmapped.is_empty() {
                "none".into()
            } else {
                unmapped
                    .iter()
                    .map(|h| format!("\"{h}\""))
                    .collect::<Vec<_>>()
                    .join(", ")
            }
        ),
    })
}

/// A site sheet read: its sites, and how each of its header columns was read or why not.
pub(crate) struct SiteSheet {
    pub sites: Vec<SiteInfo>,
    pub mapped: Vec<MappedColumn>,
    pub ignored: Vec<Ignored>,
}

/// Quantities a site sheet gives per site.
pub(crate) fn is_site_property(kind: Kind) -> bool {
    matches!(
        kind,
        Kind::Site
            | Kind::SiteName
            | Kind::Latitude
            | Kind::Longitude
            | Kind::Altitude
            | Kind::Pressure
            | Kind::Albedo
            | Kind::Surface
            | Kind::UtcOffset
    )
}

/// Read a site sheet into site records. The site column (`site`, `stn`, `station id`, ...) is
/// the key the data rows name; a name column beside it (`name`, `site name`) gives the full
/// name shown beside the key in the report. A name column alone is the key.
///
/// Errors: a value outside its range or not a number (the site table is small and
/// hand-made: fix it rather than guess).
pub(crate) fn read_site_sheet(
    grid: &Grid,
    header_row: usize,
    fill: &FillValues,
    file: &str,
    sheet: &str,
) -> Result<SiteSheet, IngestError> {
    let here = place(file, sheet);
    let mut cols: Vec<(usize, Kind, f64)> = Vec::new();
    let mut read_columns = Vec::new();
    let mut ignored = Vec::new();
    let headers: Vec<(usize, String, Option<detect::HeaderMeaning>)> = (0..grid.width())
        .filter_map(|c| {
            let t = grid.cell(header_row, c).text()?;
            let m = parse_header(&t);
            Some((c, t, m))
        })
        .collect();
    let has_key = headers
        .iter()
        .any(|(_, _, m)| m.as_ref().is_some_and(|m| m.kind == Kind::Site));
    for (c, text, m) in headers {
        let letter = column_letter(grid.column_number(c));
        let Some(m) = m else {
            let why = detect::unrecognised_reason(&text);
            ignored.push(Ignored::new(c, &letter, &text, why));
            continue;
        };
        let kind = if m.kind == Kind::SiteName && !has_key {
            Kind::Site
        } else {
            m.kind
        };
        if !is_site_property(kind) {
            ignored.push(Ignored::new(
                c,
                &letter,
                &text,
                format!(
                    "{} is not a property of a site: a site sheet gives site, site_name, latitude, longitude, altitude, pressure, albedo, surface, utc_offset",
                    kind.name()
                ),
            ));
            continue;
        }
        if let Some((pc, _, _)) = cols.iter().find(|(_, k, _)| *k == kind) {
            ignored.push(Ignored::new(
                c,
                &letter,
                &text,
                format!(
                    "names {} again (already column {}); only the first is read",
                    kind.name(),
                    column_letter(grid.column_number(*pc))
                ),
            ));
            continue;
        }
        let scale = scale_for(kind, &m.unit).unwrap_or(1.0);
        cols.push((c, kind, scale));
        read_columns.push(MappedColumn {
            file: file.to_string(),
            sheet: sheet.to_string(),
            quantity: kind.name().to_string(),
            wavelength_nm: None,
            header: text,
            letter,
            unit: m.unit,
            how: "site table".into(),
            wavelength_pair_nm: None,
        });
    }
    let mut start = header_row + 1;
    let mapped: Vec<usize> = cols.iter().map(|c| c.0).collect();
    if detect::looks_like_units_row(grid, start, &mapped) {
        start += 1;
    }
    let mut out = Vec::new();
    for r in start..grid.height() {
        let mut s = SiteInfo::default();
        for &(c, kind, scale) in &cols {
            let cell = grid.cell(r, c);
            let bad = |why: String| IngestError::Layout {
                path: file.to_string(),
                message: format!(
                    "{here}, cell {} ({}): {why}. Fix the site table and rerun.",
                    grid.a1(r, c),
                    kind.name()
                ),
            };
            if let Cell::Text(t) = cell
                && let Some(n) = too_long(t)
            {
                return Err(bad(format!(
                    "the text has {n} characters, more than the {MAX_CELL_CHARS} a worksheet cell holds"
                )));
            }
            match kind {
                Kind::Site => s.name = cell.text().unwrap_or_default(),
                Kind::SiteName => {
                    s.full_name = cell
                        .text()
                        .map(|t| t.trim().to_string())
                        .filter(|t| !t.is_empty() && !fill.is_missing(&cell))
                }
                Kind::Surface if !fill.is_missing(&cell) => {
                    s.surface = Some(parse_surface(&cell).ok_or_else(|| {
                        bad(format!("expected land or ocean, found {}", cell.display()))
                    })?);
                }
                Kind::Surface => {}
                Kind::UtcOffset if matches!(cell, Cell::Text(_)) && !fill.is_missing(&cell) => {
                    let t = cell.text().unwrap_or_default();
                    s.utc_offset_hours = Some(parse_offset_hours(&t).ok_or_else(|| {
                        bad(format!(
                            "expected a UTC offset such as +8 or UTC-03:30, found \"{t}\""
                        ))
                    })?);
                }
                Kind::Latitude
                | Kind::Longitude
                | Kind::Altitude
                | Kind::Pressure
                | Kind::Albedo
                | Kind::UtcOffset => {
                    let v = match read_number(&cell, fill) {
                        NumberRead::Missing => continue,
                        NumberRead::Bad(why) => {
                            return Err(bad(format!("{why}, found {}", cell.display())));
                        }
                        NumberRead::Value(v) => v * scale,
                    };
                    if let Check::Reject(why) = check(kind, v, &cell.display()) {
                        return Err(bad(why));
                    }
                    let slot = match kind {
                        Kind::Latitude => &mut s.latitude_deg,
                        Kind::Longitude => &mut s.longitude_deg,
                        Kind::Altitude => &mut s.altitude_m,
                        Kind::Pressure => &mut s.pressure_hpa,
                        Kind::Albedo => &mut s.albedo,
                        _ => &mut s.utc_offset_hours,
                    };
                    *slot = Some(v);
                }
                _ => {}
            }
        }
        if !s.name.is_empty() {
            out.push(s);
        }
    }
    Ok(SiteSheet {
        sites: out,
        mapped: read_columns,
        ignored,
    })
}

pub(crate) fn parse_surface(cell: &Cell<'_>) -> Option<SurfaceType> {
    let t = cell.text()?.to_lowercase();
    match t.trim() {
        "land" | "l" | "ground" => Some(SurfaceType::Land),
        "ocean" | "sea" | "water" | "o" | "s" => Some(SurfaceType::Ocean),
        _ => None,
    }
}

/// The value of an assumption, kept cheap per row and spelled out once at the end.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub(crate) enum Val {
    /// A number (f64 bits).
    Num(u64),
    /// A number from a site's record.
    AtSite(u64, Arc<str>),
    SurfaceAt(&'static str, Arc<str>),
    /// A UTC offset [h] (f64 bits).
    Offset(u64),
    OffsetAt(u64, Arc<str>),
    Text(&'static str),
    Owned(String),
}

impl Val {
    pub(crate) fn text(&self) -> String {
        let f = |b: &u64| format_number(f64::from_bits(*b));
        match self {
            Val::Num(b) => f(b),
            Val::AtSite(b, site) => format!("{} (site {site})", f(b)),
            Val::SurfaceAt(s, site) => format!("{s} (site {site})"),
            Val::Offset(b) => format_offset(f64::from_bits(*b)),
            Val::OffsetAt(b, site) => {
                format!("{} (site {site})", format_offset(f64::from_bits(*b)))
            }
            Val::Text(t) => t.to_string(),
            Val::Owned(s) => s.clone(),
        }
    }
}

/// An accepted row before the frame is built.
#[derive(Debug, Clone)]
pub(crate) struct Accepted {
    pub origin: RowOrigin,
    pub site: String,
    /// The site as compared for duplicates.
    pub site_key: Arc<str>,
    /// Full name from the row's site-name column, if any.
    pub site_full_name: Option<String>,
    pub observation: Observation,
    pub warnings: Vec<RowWarning>,
    pub assumptions: Vec<(&'static str, Val, ValueSource)>,
    /// AOD as measured, (wavelength [nm], value).
    pub aod_measured: Vec<(f64, f64)>,
    pub albedo: Option<f64>,
    pub surface: SurfaceType,
}

/// Rows of all sheets so far.
#[derive(Debug, Default)]
pub(crate) struct Rows {
    /// Boxed: rows are built in parallel and then only their pointers move (an accepted
    /// row is some 400 bytes).
    #[allow(clippy::vec_box)]
    pub accepted: Vec<Box<Accepted>>,
    pub rejected: Vec<Rejection>,
    pub counts: Counts,
    pub warnings: Vec<String>,
    /// (site key, time [ms]) → index of the first accepted row.
    seen: HashMap<(Arc<str>, i64), usize, FxBuild>,
}

/// Everything the row reader needs about a sheet.
pub(crate) struct SheetContext<'a> {
    pub file: &'a str,
    pub sheet: &'a str,
    pub grid: &'a Grid,
    pub layout: &'a Layout,
    pub is_1904: bool,
    pub fill: &'a FillValues,
    pub sites: &'a SiteTable,
    pub spec: &'a InputSpec,
}

/// Read every data row of a sheet into `rows`.
pub(crate) fn read_rows(ctx: &SheetContext<'_>, rows: &mut Rows) {
    let grid = ctx.grid;
    let layout = ctx.layout;
    let start = layout.data_start();
    let measurement_cols: Vec<usize> = layout
        .columns
        .iter()
        .filter(|m| m.kind.is_measurement())
        .map(|m| m.col)
        .collect();
    let mapped_cols: Vec<usize> = layout.columns.iter().map(|m| m.col).collect();
    let last = (start..grid.height()).rev().find(|&r| {
        measurement_cols
            .iter()
            .any(|&c| !ctx.fill.is_missing(&grid.cell(r, c)))
    });
    let end = last.map_or(start, |l| l + 1);
    // Note rows after the data: ignored, but said.
    let notes: Vec<u32> = (end..grid.height())
        .filter(|&r| !grid.row_is_empty(r))
        .map(|r| grid.row_number(r))
        .collect();
    if !notes.is_empty() {
        rows.warnings.push(format!(
            "{}: {} row(s) after the last data row hold no measurement and are read as notes (rows {}{})",
            place(ctx.file, ctx.sheet),
            notes.len(),
            notes.iter().take(10).map(|n| n.to_string()).collect::<Vec<_>>().join(", "),
            if notes.len() > 10 {
                format!(" and {} more", notes.len() - 10)
            } else {
                String::new()
            }
        ));
    }
    // Rows are read and checked in parallel (each on its own), then counted and checked for
    // duplicates in order.
    use rayon::prelude::*;
    type RowResult = Result<Option<Box<Accepted>>, Problem>;
    let results: Vec<(usize, RowResult)> = (start..end)
        .into_par_iter()
        .with_min_len(1024)
        .filter_map(|r| {
            // Blank text counts as empty (a csv line of spaces is a blank line).
            let any_mapped = mapped_cols.iter().any(|&c| match grid.cell(r, c) {
                Cell::Empty => false,
                Cell::Text(t) => !t.trim().is_empty(),
                _ => true,
            });
            if !any_mapped && grid.row_is_empty(r) {
                return None;
            }
            let mut result = super::row::read_row(ctx, r).map(|a| a.map(Box::new));
            if let Ok(Some(acc)) = &mut result {
                acc.origin = RowOrigin {
                    file: ctx.file.to_string(),
                    sheet: ctx.sheet.to_string(),
                    row: grid.row_number(r),
                };
            }
            Some((r, result))
        })
        .collect();
    rows.accepted.reserve(results.len());
    rows.seen.reserve(results.len());
    for (r, result) in results {
        rows.counts.read += 1;
        match result {
            Err(p) => {
                let origin = RowOrigin {
                    file: ctx.file.to_string(),
                    sheet: ctx.sheet.to_string(),
                    row: grid.row_number(r),
                };
                rows.counts.rejected += 1;
                rows.rejected.push(Rejection {
                    file: origin.file,
                    sheet: origin.sheet,
                    row: origin.row,
                    cell: p.col.map(|c| grid.a1(r, c)).unwrap_or_default(),
                    column: p.column,
                    value: p.value,
                    reason: p.reason,
                });
            }
            Ok(None) => rows.counts.outside_period += 1,
            Ok(Some(acc)) => {
                let key = (
                    if acc.site.is_empty() {
                        Arc::from(format!(
                            "{:.5},{:.5}",
                            acc.observation.latitude_deg, acc.observation.longitude_deg
                        ))
                    } else {
                        acc.site_key.clone()
                    },
                    acc.observation.time_utc.timestamp_millis(),
                );
                // Rows placed by their date alone share a nominal time: not duplicates.
                let nominal_time = lacks_time_of_day(&acc.warnings);
                if let Some(&first) = rows.seen.get(&key).filter(|_| !nominal_time) {
                    let f = &rows.accepted[first].origin;
                    let origin = acc.origin;
                    let first_ref = if f.file == origin.file && f.sheet == origin.sheet {
                        format!("row {}", f.row)
                    } else {
                        format!("{}, row {}", place(&f.file, &f.sheet), f.row)
                    };
                    let tc = layout
                        .columns
                        .iter()
                        .find(|m| m.kind == Kind::Time)
                        .map(|m| m.col);
                    rows.counts.rejected += 1;
                    rows.rejected.push(Rejection {
                        file: origin.file,
                        sheet: origin.sheet,
                        row: origin.row,
                        cell: tc.map(|c| grid.a1(r, c)).unwrap_or_default(),
                        column: "time".into(),
                        value: acc.observation.time_utc.format("%Y-%m-%dT%H:%M:%SZ").to_string(),
                        reason: format!(
                            "duplicate of {first_ref}: same site ({}) and time ({}); the first is computed",
                            if acc.site.is_empty() { key.0.to_string() } else { acc.site.clone() },
                            acc.observation.time_utc.format("%Y-%m-%d %H:%M:%S UTC")
                        ),
                    });
                    continue;
                }
                if !nominal_time {
                    rows.seen.insert(key, rows.accepted.len());
                }
                rows.counts.computed += 1;
                rows.accepted.push(acc);
            }
        }
    }
}

/// How the warning of a row without a readable time of day starts (see [`lacks_time_of_day`]).
pub const NO_TIME_OF_DAY: &str = "no readable time of day";

/// Whether a row was placed by its date alone (its warnings say so): its instantaneous
/// values are not known.
pub fn lacks_time_of_day(warnings: &[RowWarning]) -> bool {
    warnings
        .iter()
        .any(|w| w.message.starts_with(NO_TIME_OF_DAY))
}

/// Empty the instantaneous values of rows placed by their date alone
/// ([`lacks_time_of_day`]): NaN effect and zenith, no sun flags. `results` is aligned with
/// `row_warnings`.
pub fn blank_instantaneous(
    row_warnings: &[Vec<RowWarning>],
    results: &mut [crate::physics::ObservationResult],
) {
    for (w, res) in row_warnings.iter().zip(results.iter_mut()) {
        if lacks_time_of_day(w) {
            res.solar_zenith_deg = f64::NAN;
            let nan = |e: &mut crate::physics::Effect| {
                let blank = |f: &mut crate::physics::Fluxes| {
                    f.toa_down = f64::NAN;
                    f.toa_up = f64::NAN;
                    f.toa_net = f64::NAN;
                    f.sfc_down_direct = f64::NAN;
                    f.sfc_down_diffuse = f64::NAN;
                    f.sfc_up = f64::NAN;
                    f.sfc_net = f64::NAN;
                };
                blank(&mut e.clean);
                blank(&mut e.aerosol);
                e.dre_toa = f64::NAN;
                e.dre_sfc = f64::NAN;
                e.dre_atm = f64::NAN;
                e.efficiency_toa = f64::NAN;
                e.efficiency_sfc = f64::NAN;
                e.heating_rate_k_day = f64::NAN;
            };
            nan(&mut res.instantaneous);
            res.flags.sun_below_horizon = false;
            res.flags.low_sun = false;
        }
    }
}

/// Where a value came from, as the mapping summary and row warnings say it.
pub(crate) fn source_label(s: ValueSource) -> &'static str {
    match s {
        ValueSource::Workbook => "workbook",
        ValueSource::SiteTable => "site table",
        ValueSource::JobFile => "job file",
        ValueSource::BuiltIn => "built-in default",
    }
}

pub(crate) fn surface_name(s: SurfaceType) -> &'static str {
    match s {
        SurfaceType::Land => "land",
        SurfaceType::Ocean => "ocean",
    }
}

/// `+08:00`, `-03:30`.
pub(crate) fn format_offset(hours: f64) -> String {
    let sign = if hours < 0.0 { '-' } else { '+' };
    let total = (hours.abs() * 60.0).round() as i64;
    format!("{sign}{:02}:{:02}", total / 60, total % 60)
}
