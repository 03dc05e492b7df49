//! Site metadata written as key/value rows: a sheet of `label | value | unit or note` rows
//! (`Latitude | 42.4482 | deg N`, `Elevation | 1184 | m`, `Time zone | local summer time =
//! UTC+2`), often with the site name in the first row, and metadata lines above a data sheet's
//! header (`Site: Hollin Ridge; Latitude: 42.4482 N; Elevation: 1184 m`).
//!
//! One workbook, one site: what is found becomes a one-site table, so rows without site or
//! coordinate columns are located. Labels are matched like headers (case, separators and a
//! parenthesised qualifier do not matter); units are honoured (deg N/S/E/W, m/km/ft,
//! hPa/mb/kPa/Pa/atm, % for albedo, UTC offsets written anywhere in the text); every value
//! keeps the cell it came from, for the mapping summary.

use super::cells::{Cell, FillValues, Grid, NumberRead, column_letter, format_number, read_number};
use super::detect::{Kind, parse_header, tokens};
use super::read::{parse_surface, place};
use super::time::parse_offset_hours;
use super::types::{IngestError, MetadataValue, SiteInfo};
use super::validate::{Check, check};

/// Labels of key/value rows that header detection does not know (the names of the trade;
/// common practice), normalised as [`tokens`] gives them.
const EXTRA_LABELS: &[(Kind, &[&str])] = &[
    (
        Kind::Site,
        &["site code", "station code", "name", "place", "observatory"],
    ),
    (
        Kind::Altitude,
        &[
            "station elevation",
            "site elevation",
            "height above sea level",
            "elevation asl",
            "altitude asl",
            "elevation above sea level",
            "height",
        ],
    ),
    (Kind::UtcOffset, &["local time", "local time zone", "clock"]),
    (Kind::Pressure, &["mean pressure", "mean surface pressure"]),
];

/// Site values found in one place (a sheet or the lines above a header).
#[derive(Debug, Clone, Default, PartialEq)]
pub(crate) struct SiteMetadata {
    pub info: SiteInfo,
    /// Where each value came from, in the order found.
    pub values: Vec<MetadataValue>,
    /// Rows or parts that were not understood (said, never silently dropped).
    pub unused: Vec<String>,
}

impl SiteMetadata {
    fn is_empty(&self) -> bool {
        self.values.is_empty()
    }
}

/// The quantity a label names, for site metadata: header detection first, then the same text
/// without a parenthesised qualifier or trailing colon, then the labels of [`EXTRA_LABELS`].
pub(crate) fn label_kind(label: &str) -> Option<(Kind, String)> {
    let plain: String = {
        let mut depth = 0;
        label
            .chars()
            .filter(|&c| {
                match c {
                    '(' | '[' => depth += 1,
                    ')' | ']' => depth -= 1,
                    _ => return depth == 0,
                }
                false
            })
            .collect()
    };
    for text in [label, plain.as_str()] {
        let text = text.trim().trim_end_matches([':', '=']).trim();
        if let Some(h) = parse_header(text)
            && h.wavelength_nm.is_none()
        {
            // On a one-site metadata sheet the site's (full) name is the site.
            let kind = if h.kind == Kind::SiteName {
                Kind::Site
            } else {
                h.kind
            };
            if super::read::is_site_property(kind) {
                return Some((kind, h.unit));
            }
        }
        let norm = tokens(text).join(" ");
        for (k, names) in EXTRA_LABELS {
            if names.contains(&norm.as_str()) {
                return Some((*k, String::new()));
            }
        }
    }
    None
}

/// A number with its unit written after it in the same text: `42.4482 N`, `42.4482°N`,
/// `1184 m`, `42° 26′ 53″ N` (degrees, minutes, seconds).
fn number_and_unit(text: &str) -> Option<(f64, String)> {
    let t = text.trim();
    let numeric_end = |s: &str| {
        s.char_indices()
            .find(|&(i, c)| !(c.is_ascii_digit() || c == '.' || ((c == '-' || c == '+') && i == 0)))
            .map_or(s.len(), |(i, _)| i)
    };
    let end = numeric_end(t);
    let first: f64 = t[..end].parse().ok()?;
    let mut rest = t[end..].trim_start();
    // Degrees, minutes and seconds.
    if let Some(r) = rest.strip_prefix(['°', 'º']) {
        let mut value = first.abs();
        let mut r = r.trim_start();
        for divisor in [60.0, 3600.0] {
            let e = numeric_end(r);
            if e == 0 {
                break;
            }
            let Ok(part) = r[..e].parse::<f64>() else {
                break;
            };
            let after = r[e..].trim_start();
            let Some(a) = after.strip_prefix(['\'', '′', '"', '″']) else {
                break;
            };
            value += part / divisor;
            r = a.trim_start_matches(['\'', '′']).trim_start();
        }
        let value = if first < 0.0 { -value } else { value };
        return Some((value, format!("deg {}", r.trim())));
    }
    rest = rest.trim();
    Some((first, rest.to_string()))
}

/// A site value read from a value cell and its unit (or note) text.
///
/// Errors: what was expected, for the message.
fn site_value(
    kind: Kind,
    value: &Cell<'_>,
    unit: &str,
    fill: &FillValues,
) -> Result<Option<f64>, String> {
    let (number, written_unit) = match read_number(value, fill) {
        NumberRead::Missing => return Ok(None),
        NumberRead::Value(v) => (v, String::new()),
        NumberRead::Bad(why) => match value {
            Cell::Text(s) => match number_and_unit(s) {
                Some((v, u)) => (v, u),
                None => return Err(format!("{why}, found {}", value.display())),
            },
            _ => return Err(format!("{why}, found {}", value.display())),
        },
    };
    let unit = if written_unit.is_empty() {
        unit.to_string()
    } else {
        written_unit
    };
    let norm = tokens(&unit).join(" ");
    let words: Vec<&str> = norm.split(' ').filter(|w| !w.is_empty()).collect();
    let has = |w: &str| words.contains(&w);
    // Words that may accompany a unit without changing it (`m above sea level`, `WGS84`).
    const FILLER: &[&str] = &[
        "a", "s", "l", "asl", "amsl", "msl", "above", "sea", "level", "mean", "station", "height",
        "wgs", "wgs84", "84", "decimal", "deg", "degree", "degrees",
    ];
    let unknown = |units: &[&str]| {
        words
            .iter()
            .any(|w| !units.contains(w) && !FILLER.contains(w))
    };
    let refuse = |expected: &str| {
        Err(format!(
            "unit \"{}\" is not understood for {}; expected {expected}",
            unit.trim(),
            kind.name()
        ))
    };
    let scaled = match kind {
        Kind::Latitude | Kind::Longitude => {
            let (pos, neg, expected) = if kind == Kind::Latitude {
                (
                    ["n", "north"],
                    ["s", "south"],
                    "degrees, optionally with N or S",
                )
            } else {
                (
                    ["e", "east"],
                    ["w", "west"],
                    "degrees, optionally with E or W",
                )
            };
            let units = [pos[0], pos[1], neg[0], neg[1]];
            if unknown(&units[..]) {
                return refuse(expected);
            }
            if neg.iter().any(|w| has(w)) {
                -number.abs()
            } else {
                number
            }
        }
        Kind::Altitude => {
            if unknown(
                &[
                    "m", "metres", "meters", "metre", "meter", "km", "ft", "feet", "foot",
                ][..],
            ) {
                return refuse("m, km or ft");
            }
            if has("km") {
                number * 1000.0
            } else if has("ft") || has("feet") || has("foot") {
                // International foot, 0.3048 m exactly.
                number * 0.3048
            } else {
                number
            }
        }
        Kind::Pressure => {
            if unknown(&["hpa", "mb", "mbar", "kpa", "pa", "atm"][..]) {
                return refuse("hPa, mb, kPa, Pa or atm");
            }
            if has("kpa") {
                number * 10.0
            } else if has("pa") {
                number * 0.01
            } else if has("atm") {
                // Standard atmosphere, 1013.25 hPa (definition).
                number * 1013.25
            } else {
                number
            }
        }
        // A note beside an albedo (`MODIS white-sky`) does not change it; `%` does.
        Kind::Albedo if has("percent") => number * 0.01,
        _ => number,
    };
    Ok(Some(scaled))
}

/// A UTC offset written anywhere in a text: `UTC+2`, `local summer time = UTC+2`,
/// `GMT-03:30`, `UTC - 3:30`, or the whole text an offset (`+02:00`, `2`).
pub(crate) fn offset_in_text(text: &str) -> Option<f64> {
    let lower = text.to_lowercase();
    for p in ["utc", "gmt"] {
        let Some(i) = lower.find(p) else {
            continue;
        };
        let rest = lower[i + p.len()..].trim_start();
        let (sign, rest) = if let Some(r) = rest.strip_prefix('+') {
            ("+", r.trim_start())
        } else if let Some(r) = rest.strip_prefix(['-', '\u{2212}']) {
            ("-", r.trim_start())
        } else {
            ("", rest)
        };
        let number: String = rest
            .chars()
            .take_while(|c| c.is_ascii_digit() || matches!(c, ':' | '.'))
            .collect();
        if number.is_empty() {
            return sign.is_empty().then_some(0.0);
        }
        return parse_offset_hours(&format!("{sign}{number}"));
    }
    let t = lower.trim();
    let t = t
        .strip_suffix("hours")
        .or_else(|| t.strip_suffix('h'))
        .unwrap_or(t)
        .trim();
    if t.is_empty() {
        return None;
    }
    parse_offset_hours(t)
}

/// Read one key/value entry into `meta`. `what` says where it is, for messages and the summary.
#[allow(clippy::too_many_arguments)]
fn put(
    meta: &mut SiteMetadata,
    kind: Kind,
    label_unit: &str,
    value: &Cell<'_>,
    note: &str,
    fill: &FillValues,
    origin: String,
    bad: &dyn Fn(String) -> IngestError,
) -> Result<(), IngestError> {
    if fill.is_missing(value) {
        return Ok(());
    }
    let unit = if note.trim().is_empty() {
        label_unit.to_string()
    } else {
        note.to_string()
    };
    let shown: String;
    match kind {
        Kind::Site => {
            let name = value.text().unwrap_or_default();
            shown = name.clone();
            meta.info.name = name;
        }
        Kind::Surface => {
            let s = parse_surface(value)
                .ok_or_else(|| bad(format!("expected land or ocean, found {}", value.display())))?;
            shown = super::read::surface_name(s).to_string();
            meta.info.surface = Some(s);
        }
        Kind::UtcOffset => {
            let from_text = |t: &str| offset_in_text(t);
            let h = match value {
                Cell::Number(v) => Some(*v),
                _ => value.text().and_then(|t| from_text(&t)),
            }
            .or_else(|| from_text(note))
            .ok_or_else(|| {
                bad(format!(
                    "expected a UTC offset such as +2, UTC+2 or \"local summer time = UTC+2\", found {}",
                    value.display()
                ))
            })?;
            if let Check::Reject(why) = check(kind, h, &format_number(h)) {
                return Err(bad(why));
            }
            shown = format_number(h);
            meta.info.utc_offset_hours = Some(h);
        }
        _ => {
            let Some(v) = site_value(kind, value, &unit, fill).map_err(bad)? else {
                return Ok(());
            };
            if let Check::Reject(why) = check(kind, v, &format_number(v)) {
                return Err(bad(why));
            }
            shown = format_number(v);
            let slot = match kind {
                Kind::Latitude => &mut meta.info.latitude_deg,
                Kind::Longitude => &mut meta.info.longitude_deg,
                Kind::Altitude => &mut meta.info.altitude_m,
                Kind::Pressure => &mut meta.info.pressure_hpa,
                _ => &mut meta.info.albedo,
            };
            *slot = Some(v);
        }
    }
    meta.values.retain(|m| m.quantity != quantity_name(kind));
    meta.values.push(MetadataValue {
        site: String::new(),
        quantity: quantity_name(kind).to_string(),
        value: shown,
        origin,
    });
    Ok(())
}

/// The site field a kind fills, as the job file's `[[sites]]` names it.
fn quantity_name(kind: Kind) -> &'static str {
    match kind {
        Kind::Site => "name",
        Kind::Latitude => "latitude_deg",
        Kind::Longitude => "longitude_deg",
        Kind::Altitude => "altitude_m",
        Kind::Pressure => "pressure_hpa",
        Kind::Albedo => "albedo",
        Kind::Surface => "surface",
        _ => "utc_offset_hours",
    }
}

/// Whether a sheet is a key/value metadata sheet: at least two rows whose first text cell
/// names a site quantity other than the name and whose next cell holds a value.
pub(crate) fn is_key_value_sheet(grid: &Grid) -> bool {
    let mut n = 0;
    for r in 0..grid.height().min(60) {
        if let Some((c, kind, _)) = label_at(grid, r)
            && kind != Kind::Site
            && !matches!(grid.cell(r, c + 1), Cell::Empty)
        {
            n += 1;
        }
    }
    n >= 2
}

/// The first text cell of row `r` when it reads as a site-metadata label.
fn label_at(grid: &Grid, r: usize) -> Option<(usize, Kind, String)> {
    let c = (0..grid.width()).find(|&c| !matches!(grid.cell(r, c), Cell::Empty))?;
    let Cell::Text(t) = grid.cell(r, c) else {
        return None;
    };
    label_kind(t).map(|(k, u)| (c, k, u))
}

/// Read a key/value metadata sheet.
///
/// Rows are `label | value | unit or note`; a first row holding only a text that is no label
/// is the site's name (unless a `Site` row names it). Rows with labels that name no site
/// quantity are listed in [`SiteMetadata::unused`].
///
/// Errors: a value that is not understood or outside its range, naming the cell.
pub(crate) fn read_key_value_sheet(
    grid: &Grid,
    fill: &FillValues,
    file: &str,
    sheet: &str,
) -> Result<SiteMetadata, IngestError> {
    let here = place(file, sheet);
    let mut meta = SiteMetadata::default();
    let mut title: Option<(String, String)> = None;
    for r in 0..grid.height() {
        if grid.row_is_empty(r) {
            continue;
        }
        match label_at(grid, r) {
            Some((c, kind, label_unit)) => {
                let value = grid.cell(r, c + 1);
                let note = grid.cell(r, c + 2).text().unwrap_or_default();
                let label = grid.cell(r, c).text().unwrap_or_default();
                let a1 = grid.a1(r, c + 1);
                let origin = if note.is_empty() {
                    format!("{here}, cell {a1} (\"{label}\")")
                } else {
                    format!("{here}, cell {a1} (\"{label}\", \"{note}\")")
                };
                let bad = |why: String| IngestError::Layout {
                    path: file.to_string(),
                    message: format!(
                        "{here}, cell {a1} ({}): {why}. Fix the metadata sheet and rerun.",
                        label
                    ),
                };
                put(
                    &mut meta,
                    kind,
                    &label_unit,
                    &value,
                    &note,
                    fill,
                    origin,
                    &bad,
                )?;
            }
            None => {
                let texts: Vec<(usize, String)> = (0..grid.width())
                    .filter_map(|c| grid.cell(r, c).text().map(|t| (c, t)))
                    .collect();
                if meta.values.is_empty() && title.is_none() && texts.len() == 1 {
                    let (c, t) = &texts[0];
                    title = Some((
                        t.clone(),
                        format!("{here}, cell {} (the sheet's first row)", grid.a1(r, *c)),
                    ));
                } else if let Some((c, t)) = texts.first() {
                    meta.unused.push(format!(
                        "{} \"{t}\"",
                        column_letter(grid.column_number(*c)) + &grid.row_number(r).to_string()
                    ));
                }
            }
        }
    }
    if meta.info.name.is_empty()
        && let Some((name, origin)) = title
        && !meta.is_empty()
    {
        meta.info.name = site_name_from_title(&name);
        meta.values.insert(
            0,
            MetadataValue {
                site: String::new(),
                quantity: "name".into(),
                value: meta.info.name.clone(),
                origin,
            },
        );
    }
    Ok(meta)
}

/// A site name from a title row: `Site: Hollin Ridge` and `Hollin Ridge — station metadata`
/// give `Hollin Ridge`.
fn site_name_from_title(title: &str) -> String {
    let t = title.trim();
    let t = match t.split_once(':') {
        Some((head, tail)) if label_kind(head).is_some_and(|(k, _)| k == Kind::Site) => tail,
        _ => t,
    };
    let cut = [" \u{2014} ", " \u{2013} ", " - "]
        .iter()
        .filter_map(|sep| t.find(sep))
        .min()
        .unwrap_or(t.len());
    t[..cut].trim().to_string()
}

/// Read metadata written above a data sheet's header: text cells holding `label: value
/// [unit]` parts separated by `;` or `|` (`Site: Hollin Ridge; Latitude: 42.4482 N`), or a
/// label cell followed by its value cell.
///
/// Errors: a labelled value that is not understood or outside its range, naming the cell.
pub(crate) fn read_header_lines(
    grid: &Grid,
    header_row: usize,
    fill: &FillValues,
    file: &str,
    sheet: &str,
) -> Result<SiteMetadata, IngestError> {
    let here = place(file, sheet);
    let mut meta = SiteMetadata::default();
    for r in 0..header_row.min(grid.height()) {
        let mut c = 0;
        while c < grid.width() {
            let Cell::Text(text) = grid.cell(r, c) else {
                c += 1;
                continue;
            };
            let a1 = grid.a1(r, c);
            let bad = |why: String| IngestError::Layout {
                path: file.to_string(),
                message: format!(
                    "{here}, cell {a1} (metadata above the header): {why}. Fix the line and rerun."
                ),
            };
            // A label cell followed by its value cell.
            if let Some((kind, unit)) = label_kind(text)
                && !matches!(grid.cell(r, c + 1), Cell::Empty)
            {
                let value_a1 = grid.a1(r, c + 1);
                let value = grid.cell(r, c + 1);
                let origin = format!(
                    "{here}, cell {value_a1} (\"{}\", above the header)",
                    text.trim()
                );
                put(&mut meta, kind, &unit, &value, "", fill, origin, &bad)?;
                c += 2;
                continue;
            }
            for part in text.split([';', '|', '\n']) {
                let Some((label, value)) = part.split_once([':', '=']) else {
                    continue;
                };
                let Some((kind, unit)) = label_kind(label) else {
                    continue;
                };
                // `Time zone: local summer time = UTC+2` splits at the first separator.
                let value = value.trim();
                let origin = format!("{here}, cell {a1} (\"{}\", above the header)", part.trim());
                put(
                    &mut meta,
                    kind,
                    &unit,
                    &Cell::Text(value),
                    "",
                    fill,
                    origin,
                    &bad,
                )?;
            }
            c += 1;
        }
    }
    Ok(meta)
}

/// The one site a workbook describes: the metadata sheet's values, completed by the lines
/// above the header; the name from either, else the file stem. Disagreements are warnings
/// (the sheet wins).
pub(crate) fn combine(
    sheet: Option<SiteMetadata>,
    lines: SiteMetadata,
    file: &str,
    warnings: &mut Vec<String>,
) -> Option<SiteMetadata> {
    let mut meta = match sheet {
        Some(s) => s,
        None if lines.is_empty() => return None,
        None => SiteMetadata::default(),
    };
    for v in lines.values {
        match meta.values.iter().find(|m| m.quantity == v.quantity) {
            Some(m) if m.value != v.value => warnings.push(format!(
                "{}: {} = {} there, but {} = {} at {}; the metadata sheet's value is used",
                m.origin, m.quantity, m.value, v.quantity, v.value, v.origin
            )),
            Some(_) => {}
            None => {
                let i = &mut meta.info;
                let l = &lines.info;
                match v.quantity.as_str() {
                    "name" => i.name = l.name.clone(),
                    "latitude_deg" => i.latitude_deg = l.latitude_deg,
                    "longitude_deg" => i.longitude_deg = l.longitude_deg,
                    "altitude_m" => i.altitude_m = l.altitude_m,
                    "pressure_hpa" => i.pressure_hpa = l.pressure_hpa,
                    "albedo" => i.albedo = l.albedo,
                    "surface" => i.surface = l.surface,
                    _ => i.utc_offset_hours = l.utc_offset_hours,
                }
                meta.values.push(v);
            }
        }
    }
    meta.unused.extend(lines.unused);
    if meta.info.name.trim().is_empty() {
        let stem = std::path::Path::new(file)
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "site".into());
        meta.info.name = stem;
        meta.values.insert(
            0,
            MetadataValue {
                site: String::new(),
                quantity: "name".into(),
                value: meta.info.name.clone(),
                origin: format!("{file}: the file name (no site name in the metadata)"),
            },
        );
    }
    let name = meta.info.name.clone();
    for v in &mut meta.values {
        v.site = name.clone();
    }
    Some(meta)
}

#[cfg(test)]
mod tests {
    use super::*;
    use calamine::{Data, Range};

    fn grid(rows: &[&[Data]]) -> Grid {
        let w = rows.iter().map(|r| r.len()).max().unwrap_or(0);
        let mut range = Range::new((0, 0), (rows.len() as u32 - 1, w as u32 - 1));
        for (r, row) in rows.iter().enumerate() {
            for (c, v) in row.iter().enumerate() {
                range.set_value((r as u32, c as u32), v.clone());
            }
        }
        Grid::Range(range)
    }

    fn s(t: &str) -> Data {
        Data::String(t.into())
    }

    #[test]
    fn labels_match_like_headers() {
        for (label, kind) in [
            ("Latitude", Kind::Latitude),
            ("LONGITUDE:", Kind::Longitude),
            ("Elevation", Kind::Altitude),
            ("Station elevation", Kind::Altitude),
            ("Surface albedo (broadband)", Kind::Albedo),
            ("Time zone", Kind::UtcOffset),
            ("Site name", Kind::Site),
            ("Surface type", Kind::Surface),
        ] {
            assert_eq!(label_kind(label).map(|k| k.0), Some(kind), "{label}");
        }
        assert_eq!(label_kind("Instrument"), None);
        assert_eq!(label_kind("AOD 500 nm"), None);
    }

    #[test]
    fn offsets_in_notes() {
        assert_eq!(offset_in_text("local summer time = UTC+2"), Some(2.0));
        assert_eq!(offset_in_text("CEST (UTC+02:00)"), Some(2.0));
        assert_eq!(offset_in_text("UTC - 3:30"), Some(-3.5));
        assert_eq!(offset_in_text("GMT"), Some(0.0));
        assert_eq!(offset_in_text("+05:30"), Some(5.5));
        assert_eq!(offset_in_text("summer"), None);
    }

    #[test]
    fn key_value_sheet_with_units_and_title() {
        let g = grid(&[
            &[s("Hollin Ridge — station metadata")],
            &[s("Latitude"), Data::Float(42.4482), s("deg S")],
            &[s("Longitude"), s("1.2345 W")],
            &[s("Elevation"), Data::Float(3884.0), s("ft")],
            &[s("Surface albedo (broadband)"), Data::Float(17.0), s("%")],
            &[s("Time zone"), s("local summer time = UTC+2")],
            &[s("Instrument"), s("sun photometer")],
        ]);
        assert!(is_key_value_sheet(&g));
        let fill = FillValues::new(&[]);
        let m = read_key_value_sheet(&g, &fill, "hollin.xlsx", "Station").unwrap();
        assert_eq!(m.info.name, "Hollin Ridge");
        assert_eq!(m.info.latitude_deg, Some(-42.4482));
        assert_eq!(m.info.longitude_deg, Some(-1.2345));
        assert!((m.info.altitude_m.unwrap() - 3884.0 * 0.3048).abs() < 1e-9);
        assert!((m.info.albedo.unwrap() - 0.17).abs() < 1e-12);
        assert_eq!(m.info.utc_offset_hours, Some(2.0));
        assert_eq!(m.unused, vec!["A7 \"Instrument\"".to_string()]);
        let lat = m
            .values
            .iter()
            .find(|v| v.quantity == "latitude_deg")
            .unwrap();
        assert_eq!(
            lat.origin,
            "hollin.xlsx, sheet \"Station\", cell B2 (\"Latitude\", \"deg S\")"
        );
        let name = &m.values[0];
        assert_eq!(
            (name.quantity.as_str(), name.origin.contains("A1")),
            ("name", true)
        );
    }

    #[test]
    fn bad_unit_and_range_name_the_cell() {
        let fill = FillValues::new(&[]);
        let g = grid(&[
            &[s("Latitude"), Data::Float(42.0)],
            &[s("Elevation"), Data::Float(1.0), s("furlongs")],
        ]);
        let e = read_key_value_sheet(&g, &fill, "x.xlsx", "Meta")
            .unwrap_err()
            .to_string();
        assert!(e.contains("cell B2") && e.contains("furlongs"), "{e}");
        let g = grid(&[
            &[s("Latitude"), Data::Float(142.0)],
            &[s("Longitude"), Data::Float(1.0)],
        ]);
        let e = read_key_value_sheet(&g, &fill, "x.xlsx", "Meta")
            .unwrap_err()
            .to_string();
        assert!(e.contains("cell B1") && e.contains("142"), "{e}");
    }

    #[test]
    fn dms_and_hemisphere_text() {
        let (v, u) = number_and_unit("42° 26' 53\" N").unwrap();
        assert!((v - (42.0 + 26.0 / 60.0 + 53.0 / 3600.0)).abs() < 1e-12);
        assert_eq!(u, "deg N");
        assert_eq!(number_and_unit("1184 m"), Some((1184.0, "m".into())));
    }

    #[test]
    fn line_above_header_and_file_stem() {
        let fill = FillValues::new(&[]);
        let g = grid(&[
            &[s(
                "Latitude: 42.4482 N; Longitude: 1.2345 E; Elevation: 1.184 km; Time zone: local summer time = UTC+2",
            )],
            &[s("time"), s("aod_500")],
        ]);
        let lines = read_header_lines(&g, 1, &fill, "dir/hollin-2026.xlsx", "data").unwrap();
        assert_eq!(lines.info.latitude_deg, Some(42.4482));
        assert_eq!(lines.info.altitude_m, Some(1184.0));
        assert_eq!(lines.info.utc_offset_hours, Some(2.0));
        let mut w = Vec::new();
        let m = combine(None, lines, "dir/hollin-2026.xlsx", &mut w).unwrap();
        assert_eq!(m.info.name, "hollin-2026");
        assert!(m.values[0].origin.contains("file name"));
        assert!(m.values.iter().all(|v| v.site == "hollin-2026"));
        assert!(w.is_empty());
    }

    #[test]
    fn sheet_wins_over_line_with_a_warning() {
        let fill = FillValues::new(&[]);
        let sheet = grid(&[
            &[s("Site"), s("Hollin Ridge")],
            &[s("Latitude"), Data::Float(42.4482)],
            &[s("Longitude"), Data::Float(1.2345)],
        ]);
        let line = grid(&[&[s("Latitude: 42.5; Elevation: 1184 m")], &[s("time")]]);
        let a = read_key_value_sheet(&sheet, &fill, "h.xlsx", "Station").unwrap();
        let b = read_header_lines(&line, 1, &fill, "h.xlsx", "data").unwrap();
        let mut w = Vec::new();
        let m = combine(Some(a), b, "h.xlsx", &mut w).unwrap();
        assert_eq!(m.info.latitude_deg, Some(42.4482));
        assert_eq!(m.info.altitude_m, Some(1184.0));
        assert_eq!(m.info.name, "Hollin Ridge");
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("42.5") && w[0].contains("42.4482"), "{w:?}");
    }

    #[test]
    fn a_site_table_is_no_key_value_sheet() {
        let g = grid(&[
            &[s("site"), s("latitude"), s("longitude")],
            &[s("Brinemouth"), Data::Float(54.0), Data::Float(-3.0)],
        ]);
        assert!(!is_key_value_sheet(&g));
    }
}
