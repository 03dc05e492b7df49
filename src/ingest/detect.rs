//! Understanding a sheet's layout: which row is the header, whether a units row follows,
//! and which canonical quantity (with its wavelength) each header names.

use super::cells::{Cell, Grid};

/// A quantity hazebook understands.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub(crate) enum Kind {
    Time,
    Date,
    Site,
    SiteName,
    Latitude,
    Longitude,
    Aod,
    Angstrom,
    Ssa,
    Asymmetry,
    Albedo,
    Surface,
    Ozone,
    Water,
    Pressure,
    Altitude,
    LayerTop,
    UtcOffset,
}

impl Kind {
    /// Canonical name, as used in the job file, the mapping and rejection messages.
    pub(crate) fn name(self) -> &'static str {
        match self {
            Kind::Time => "time",
            Kind::Date => "date",
            Kind::Site => "site",
            Kind::SiteName => "site_name",
            Kind::Latitude => "latitude",
            Kind::Longitude => "longitude",
            Kind::Aod => "aod",
            Kind::Angstrom => "angstrom",
            Kind::Ssa => "ssa",
            Kind::Asymmetry => "asymmetry",
            Kind::Albedo => "albedo",
            Kind::Surface => "surface",
            Kind::Ozone => "ozone",
            Kind::Water => "water",
            Kind::Pressure => "pressure",
            Kind::Altitude => "altitude",
            Kind::LayerTop => "layer_top",
            Kind::UtcOffset => "utc_offset",
        }
    }

    /// True for quantities given per wavelength.
    pub(crate) fn spectral(self) -> bool {
        matches!(self, Kind::Aod | Kind::Ssa | Kind::Asymmetry)
    }

    /// The quantities of a measurement (as opposed to metadata).
    pub(crate) fn is_measurement(self) -> bool {
        matches!(
            self,
            Kind::Time | Kind::Date | Kind::Aod | Kind::Ssa | Kind::Asymmetry
        )
    }

    pub(crate) fn all() -> &'static [Kind] {
        &[
            Kind::Time,
            Kind::Date,
            Kind::Site,
            Kind::SiteName,
            Kind::Latitude,
            Kind::Longitude,
            Kind::Aod,
            Kind::Angstrom,
            Kind::Ssa,
            Kind::Asymmetry,
            Kind::Albedo,
            Kind::Surface,
            Kind::Ozone,
            Kind::Water,
            Kind::Pressure,
            Kind::Altitude,
            Kind::LayerTop,
            Kind::UtcOffset,
        ]
    }
}

/// The header table: names (normalised: lower case, words separated by one space, Greek and
/// accented letters spelled out, so `Ångström exp.` is `angstrom exp` and `α` is `alpha`) that
/// mean each quantity. A header is a name of this table, optionally with a wavelength
/// (`aod 500`, `alpha 440 870`), a unit (`ozone du`) or a trailing symbol (`asymmetry factor
/// g`). The spellings and abbreviations of the trade; common practice.
///
/// To recognise a new spelling, add it to its quantity's list and add a case for it to
/// `tests/ingest_headers.rs` (a test fails for a spelling without one). A new quantity is a
/// new [`Kind`] with its own row. Only names that mean the quantity belong here: no guessing
/// from words that merely occur in it.
const ALIASES: &[(Kind, &[&str])] = &[
    (
        Kind::Time,
        &[
            "time",
            "datetime",
            "date time",
            "timestamp",
            "time stamp",
            "time utc",
            "utc",
            "utc time",
            "obs time",
            "observation time",
            "measurement time",
            "local time",
            "time local",
            "date and time",
            "datetime utc",
            "date time utc",
            "sample time",
        ],
    ),
    (
        Kind::Date,
        &[
            "date",
            "day",
            "obs date",
            "measurement date",
            "date utc",
            "date local",
        ],
    ),
    (
        Kind::Site,
        &[
            "site",
            "station",
            "stn",
            "stid",
            "st id",
            "site id",
            "site code",
            "station id",
            "station code",
            "stn id",
            "stn code",
            "station number",
            "station no",
            "location",
            "location id",
            "location code",
            "platform",
        ],
    ),
    (
        Kind::SiteName,
        &[
            "name",
            "site name",
            "station name",
            "stn name",
            "location name",
            "full name",
            "long name",
            "site full name",
            "station full name",
        ],
    ),
    (
        Kind::Latitude,
        &[
            "lat",
            "latitude",
            "lat deg",
            "latitude deg",
            "site latitude",
            "station latitude",
        ],
    ),
    (
        Kind::Longitude,
        &[
            "lon",
            "long",
            "lng",
            "longitude",
            "lon deg",
            "longitude deg",
            "site longitude",
            "station longitude",
        ],
    ),
    (
        Kind::Aod,
        &[
            "aod",
            "aot",
            "tau",
            "tau a",
            "taua",
            "tau aer",
            "aerosol optical depth",
            "aerosol optical thickness",
            "optical depth",
            "aod total",
        ],
    ),
    (
        Kind::Angstrom,
        &[
            "angstrom",
            "angstrom exponent",
            "angstrom exp",
            "angstrom coefficient",
            "angstrom coeff",
            "angstrom coef",
            "angstrom parameter",
            "angstrom alpha",
            "angstroem",
            "angstroem exponent",
            "alpha",
            "alpha angstrom",
            "ae",
            "extinction angstrom exponent",
            "aod angstrom exponent",
        ],
    ),
    (
        Kind::Ssa,
        &[
            "ssa",
            "single scattering albedo",
            "omega",
            "omega 0",
            "w 0",
            "ssa total",
            "single scatter albedo",
        ],
    ),
    (
        Kind::Asymmetry,
        &[
            "g",
            "asy",
            "asym",
            "asymmetry",
            "asymmetry factor",
            "asymmetry parameter",
            "asymm",
            "asymmetry total",
        ],
    ),
    (
        Kind::Albedo,
        &[
            "albedo",
            "surface albedo",
            "sfc albedo",
            "sfc alb",
            "alb",
            "broadband albedo",
            "broadband surface albedo",
            "albedo broadband",
            "surface albedo broadband",
            "ground albedo",
            "lambertian albedo",
        ],
    ),
    (
        Kind::Surface,
        &[
            "surface",
            "surface type",
            "sfc type",
            "land ocean",
            "land sea",
        ],
    ),
    (
        Kind::Ozone,
        &[
            "ozone",
            "o3",
            "total ozone",
            "ozone column",
            "column ozone",
            "total column ozone",
            "total ozone column",
            "toc",
            "tco",
            "tco3",
            "o3 column",
            "total o3",
        ],
    ),
    (
        Kind::Water,
        &[
            "pw",
            "pwv",
            "pwat",
            "water",
            "precipitable water",
            "water vapour",
            "water vapor",
            "wv",
            "precipitable water vapour",
            "precipitable water vapor",
            "water vapour column",
            "water vapor column",
            "column water vapour",
            "column water vapor",
            "total column water vapour",
            "total column water vapor",
            "tcwv",
            "cwv",
            "iwv",
            "h2o",
        ],
    ),
    (
        Kind::Pressure,
        &[
            "pressure",
            "surface pressure",
            "p",
            "ps",
            "psfc",
            "p sfc",
            "sfc pressure",
            "station pressure",
            "air pressure",
            "barometric pressure",
            "pres",
            "press",
        ],
    ),
    (
        Kind::Altitude,
        &[
            "altitude",
            "elevation",
            "alt",
            "station altitude",
            "site altitude",
            "station elevation",
            "site elevation",
            "height asl",
            "elev",
        ],
    ),
    (
        Kind::LayerTop,
        &[
            "layer top",
            "aerosol layer top",
            "aerosol top",
            "aerosol layer height",
            "alh",
            "blh",
            "pbl height",
            "pblh",
            "mixing height",
            "mixing layer height",
            "mlh",
            "boundary layer height",
            "layer height",
            "top",
        ],
    ),
    (
        Kind::UtcOffset,
        &[
            "utc offset",
            "tz",
            "timezone",
            "time zone",
            "offset",
            "tz offset",
            "utc offset h",
        ],
    ),
];

/// Every (quantity, spelling) of the header table, for documentation and tests.
pub(crate) fn spellings() -> impl Iterator<Item = (Kind, &'static str)> {
    ALIASES
        .iter()
        .flat_map(|(k, names)| names.iter().map(move |n| (*k, *n)))
}

/// Unit words that may trail a header (`ozone du`, `pw cm`, `time utc`).
const UNIT_WORDS: &[&str] = &[
    "du", "cm", "mm", "hpa", "mb", "mbar", "kpa", "pa", "m", "km", "deg", "degrees", "degree", "n",
    "e", "h", "hours", "unitless", "1", "percent", "kg m2", "atm cm", "deg n", "deg e",
];

/// A header understood as a quantity.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct HeaderMeaning {
    pub kind: Kind,
    /// Wavelength read from the header [nm].
    pub wavelength_nm: Option<f64>,
    /// Unit written in the header (normalised, e.g. `mm`, `du`, `utc`), or empty.
    pub unit: String,
    /// For the Ångström exponent: the wavelength pair it spans (`alpha 440-870`) [nm].
    pub pair_nm: Option<(f64, f64)>,
}

/// The wavelength pair of an Ångström exponent from its wavelengths (the first two, in
/// ascending order), if two distinct ones are given.
fn pair_of(kind: Kind, wavelengths: &[f64]) -> Option<(f64, f64)> {
    match (kind, wavelengths) {
        (Kind::Angstrom, [a, b, ..]) if a != b => Some((a.min(*b), a.max(*b))),
        _ => None,
    }
}

/// A wavelength pair written in a units-row cell (`440–870 nm`, `440/870`, `(440-870) [-]`)
/// and what remains of the cell once it is taken out (normalised; empty for `-`).
pub(crate) fn units_wavelength_pair(text: &str) -> Option<((f64, f64), String)> {
    let toks = tokens(text);
    let mut nums: Vec<f64> = Vec::new();
    let mut rest: Vec<String> = Vec::new();
    for t in toks {
        if is_number_token(&t) {
            let v: f64 = t.parse().ok()?;
            if (250.0..=4000.0).contains(&v) {
                nums.push(v);
                continue;
            }
        }
        if t != "nm" {
            rest.push(t);
        }
    }
    match nums.as_slice() {
        [a, b] if a != b => Some(((a.min(*b), a.max(*b)), rest.join(" "))),
        _ => None,
    }
}

/// Normalise text: lower case, Greek and accented letters spelled out, words split at
/// separators and at letter/digit boundaries.
pub(crate) fn tokens(text: &str) -> Vec<String> {
    let mut s = String::with_capacity(text.len());
    for ch in text.chars() {
        match ch {
            'ω' | 'Ω' => s.push_str(" omega "),
            'α' => s.push_str(" alpha "),
            'τ' => s.push_str(" tau "),
            'µ' | 'μ' => s.push('u'),
            'å' | 'Å' | 'ä' | 'Ä' => s.push('a'),
            'ö' | 'Ö' => s.push('o'),
            '%' => s.push_str(" percent "),
            '+' => s.push_str(" + "),
            c => s.extend(c.to_lowercase()),
        }
    }
    let mut out: Vec<String> = Vec::new();
    let mut cur = String::new();
    let mut cur_digit = false;
    let flush = |cur: &mut String, out: &mut Vec<String>| {
        if !cur.is_empty() {
            out.push(std::mem::take(cur));
        }
    };
    let chars: Vec<char> = s.chars().collect();
    for (i, &c) in chars.iter().enumerate() {
        let is_digit = c.is_ascii_digit()
            || (c == '.' && cur_digit && chars.get(i + 1).is_some_and(|n| n.is_ascii_digit()));
        if c.is_alphanumeric() || is_digit {
            if !cur.is_empty() && is_digit != cur_digit {
                flush(&mut cur, &mut out);
            }
            cur_digit = is_digit;
            cur.push(c);
        } else if c == '+' {
            flush(&mut cur, &mut out);
            out.push("+".into());
        } else {
            flush(&mut cur, &mut out);
        }
    }
    flush(&mut cur, &mut out);
    out
}

fn is_number_token(t: &str) -> bool {
    t.chars().next().is_some_and(|c| c.is_ascii_digit()) && t.parse::<f64>().is_ok()
}

/// Read a header: the quantity, the wavelength and the unit it names.
///
/// Case and separators do not matter: `aod_500`, `AOD 440 nm`, `SSA(675)`,
/// `asymmetry 870nm`, `Ozone [DU]`, `PW (mm)` are all understood.
pub(crate) fn parse_header(text: &str) -> Option<HeaderMeaning> {
    let mut toks = tokens(text);
    if toks.is_empty() {
        return None;
    }
    // Wavelengths: a number followed by nm/um, or a bare number in 250–4000 (nm).
    let mut wavelengths: Vec<f64> = Vec::new();
    let mut rest: Vec<String> = Vec::new();
    let mut i = 0;
    while i < toks.len() {
        let t = &toks[i];
        if is_number_token(t) {
            let v: f64 = t.parse().unwrap_or(f64::NAN);
            let next = toks.get(i + 1).map(String::as_str);
            match next {
                Some("nm") => {
                    wavelengths.push(v);
                    i += 2;
                    continue;
                }
                Some("um") | Some("micron") | Some("microns") => {
                    wavelengths.push(v * 1000.0);
                    i += 2;
                    continue;
                }
                _ => {}
            }
            if (250.0..=4000.0).contains(&v) {
                wavelengths.push(v);
                i += 1;
                continue;
            }
            if (0.25..=4.0).contains(&v) && t.contains('.') {
                wavelengths.push(v * 1000.0);
                i += 1;
                continue;
            }
        }
        rest.push(t.clone());
        i += 1;
    }
    toks = rest;
    if toks.is_empty() {
        return None;
    }
    // Trailing unit words and UTC offsets.
    let mut unit = String::new();
    if let Some(pos) = toks.iter().position(|t| t == "utc" || t == "gmt") {
        // `time utc`, `time (UTC+8)`, `utc offset` are handled below
        let tail: Vec<String> = toks[pos..].to_vec();
        let head = &toks[..pos];
        if !head.is_empty() && tail.len() <= 3 && !tail.iter().any(|t| t == "offset") {
            unit = tail.join("");
            toks.truncate(pos);
        }
    }
    if unit.is_empty() && toks.last().is_some_and(|t| t == "local") && toks.len() > 1 {
        unit = "local".into();
        toks.pop();
    }
    let mut name = toks.join(" ");
    if let Some(kind) = lookup(&name) {
        if unit.is_empty()
            && matches!(kind, Kind::Time | Kind::Date)
            && toks.iter().any(|t| t == "local")
        {
            unit = "local".into();
        }
        return Some(HeaderMeaning {
            kind,
            wavelength_nm: wavelengths.first().copied(),
            unit,
            pair_nm: pair_of(kind, &wavelengths),
        });
    }
    for n_unit in (1..=2).rev() {
        if toks.len() > n_unit {
            let u = toks[toks.len() - n_unit..].join(" ");
            if UNIT_WORDS.contains(&u.as_str()) {
                name = toks[..toks.len() - n_unit].join(" ");
                if let Some(kind) = lookup(&name) {
                    return Some(HeaderMeaning {
                        kind,
                        wavelength_nm: wavelengths.first().copied(),
                        unit: u,
                        pair_nm: pair_of(kind, &wavelengths),
                    });
                }
            }
        }
    }
    None
}

/// The header table with each name split as [`tokens`] splits a header (`o3` → `o 3`), so
/// that names holding digits match.
fn normalised_aliases() -> &'static [(Kind, Vec<String>)] {
    static TABLE: std::sync::LazyLock<Vec<(Kind, Vec<String>)>> = std::sync::LazyLock::new(|| {
        ALIASES
            .iter()
            .map(|(k, names)| (*k, names.iter().map(|n| tokens(n).join(" ")).collect()))
            .collect()
    });
    &TABLE
}

fn lookup(name: &str) -> Option<Kind> {
    let find = |name: &str| {
        normalised_aliases()
            .iter()
            .find(|(_, names)| names.iter().any(|n| n == name))
            .map(|(k, _)| *k)
    };
    if let Some(k) = find(name) {
        return Some(k);
    }
    // A name followed by its symbol: `asymmetry factor g`, `angstrom exponent alpha`,
    // `single scattering albedo omega`.
    let (head, last) = name.rsplit_once(' ')?;
    const SYMBOLS: &[&str] = &["g", "a", "w", "alpha", "omega", "tau", "ae", "ssa", "aod"];
    if SYMBOLS.contains(&last) {
        return find(head);
    }
    None
}

/// Normalised form of a header for comparisons (`"AOD 500 nm"` → `"aod 500 nm"`).
pub(crate) fn normalised(text: &str) -> String {
    tokens(text).join(" ")
}

/// Levenshtein distance between two short strings.
fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.iter().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// The header among `headers` closest to a name of `kind`, if reasonably close.
pub(crate) fn closest_header(kind: Kind, headers: &[String]) -> Option<&str> {
    let names = ALIASES.iter().find(|(k, _)| *k == kind).map(|(_, n)| *n)?;
    let mut best: Option<(usize, &str)> = None;
    for h in headers {
        let stripped: String = tokens(h)
            .into_iter()
            .filter(|t| !is_number_token(t) && t != "nm")
            .collect::<Vec<_>>()
            .join(" ");
        if stripped.is_empty() {
            continue;
        }
        for n in names {
            let d = edit_distance(&stripped, n);
            let contains = stripped.contains(n) && n.len() >= 3;
            let score = if contains { 0 } else { d };
            let limit = (n.len().max(stripped.len()) / 2).max(2);
            if (contains || d <= limit) && best.is_none_or(|(b, _)| score < b) {
                best = Some((score, h.as_str()));
            }
        }
    }
    best.map(|(_, h)| h)
}

/// Words of the header table too common to tie a header to one quantity on their own.
const COMMON_WORDS: &[&str] = &[
    "total",
    "column",
    "surface",
    "sfc",
    "site",
    "station",
    "stn",
    "time",
    "factor",
    "parameter",
    "layer",
    "height",
    "top",
    "coefficient",
    "coeff",
    "coef",
    "id",
    "code",
    "no",
    "number",
    "name",
    "full",
    "long",
    "local",
    "utc",
    "date",
    "day",
    "obs",
    "measurement",
    "sample",
    "and",
    "deg",
    "type",
    "land",
    "ocean",
    "sea",
    "broadband",
    "aerosol",
    "offset",
    "aer",
    "st",
];

/// The header words that carry meaning (no wavelengths, no `nm`, no one-letter words).
fn meaningful_words(header: &str) -> Vec<String> {
    tokens(header)
        .into_iter()
        .filter(|t| !is_number_token(t) && t != "nm" && t.chars().count() >= 2)
        .collect()
}

/// True when an unrecognised header looks like a spelling of `kind`: it shares a distinctive
/// word with one of the quantity's names, or a word of it is a close spelling (edit distance
/// ≤ 2, or a prefix of four letters or more) of such a word. Used only to *suggest* a
/// mapping, never to map.
pub(crate) fn resembles(kind: Kind, header: &str) -> bool {
    let Some(names) = ALIASES.iter().find(|(k, _)| *k == kind).map(|(_, n)| *n) else {
        return false;
    };
    let distinctive: Vec<&str> = names
        .iter()
        .flat_map(|n| n.split(' '))
        .filter(|w| w.len() >= 2 && !COMMON_WORDS.contains(w))
        // A word that is itself the name of another quantity (`aod` in `aod angstrom
        // exponent`) says the header is about that quantity, not this one.
        .filter(|w| lookup(w).is_none_or(|k| k == kind))
        .collect();
    meaningful_words(header).iter().any(|t| {
        !COMMON_WORDS.contains(&t.as_str())
            && distinctive.iter().any(|w| {
                t == w
                    || (t.len() >= 4
                        && w.len() >= 5
                        && (w.starts_with(t.as_str())
                            || t.starts_with(w)
                            || edit_distance(t, w) <= 2))
            })
    })
}

/// Why a header names no quantity, for the column accounting: a known name followed by other
/// words (`aod440 (Oct, raw)`) is said as such; anything else is not a quantity hazebook reads.
pub(crate) fn unrecognised_reason(header: &str) -> String {
    let words = meaningful_words(header);
    for n in (1..words.len()).rev() {
        let head = words[..n].join(" ");
        if let Some(kind) = lookup(&head) {
            return format!(
                "reads as {} followed by other words (\"{}\"), so it may not hold the measured value; map it in the job file if it does",
                kind.name(),
                words[n..].join(" ")
            );
        }
    }
    "not a quantity hazebook reads".to_string()
}

/// How many distinct quantities grid row `r` names, and whether measurements are among them.
pub(crate) fn header_score(grid: &Grid, r: usize) -> (usize, bool, bool) {
    let mut kinds: Vec<Kind> = Vec::new();
    for c in 0..grid.width() {
        if let Cell::Text(s) = grid.cell(r, c)
            && let Some(m) = parse_header(s)
            && !kinds.contains(&m.kind)
        {
            kinds.push(m.kind);
        }
    }
    let has_aod = kinds.contains(&Kind::Aod) || kinds.contains(&Kind::Ssa);
    let is_site_table = (kinds.contains(&Kind::Site) || kinds.contains(&Kind::SiteName))
        && (kinds.contains(&Kind::Latitude)
            || kinds.contains(&Kind::Longitude)
            || kinds.contains(&Kind::Altitude)
            || kinds.contains(&Kind::Albedo)
            || kinds.contains(&Kind::Surface)
            || kinds.contains(&Kind::UtcOffset));
    (kinds.len(), has_aod, is_site_table)
}

/// Rows searched for a header, from the top of the sheet.
pub(crate) const HEADER_SEARCH_ROWS: usize = 60;

/// The grid row that looks most like a header (most quantities named), if any names at
/// least two. `want_measurements` prefers rows naming AOD or SSA (data sheets).
pub(crate) fn find_header_row(grid: &Grid, want_measurements: bool) -> Option<usize> {
    let mut best: Option<(usize, usize)> = None;
    for r in 0..grid.height().min(HEADER_SEARCH_ROWS) {
        let (n, has_meas, is_site) = header_score(grid, r);
        let ok = if want_measurements {
            has_meas
        } else {
            is_site && !has_meas
        };
        if n >= 2 && ok && best.is_none_or(|(_, b)| n > b) {
            best = Some((r, n));
        }
    }
    best.map(|(r, _)| r)
}

/// True when grid row `r` (right under the header) reads as a units row: none of its cells
/// in the mapped columns is a number, a date or a non-text value, and at least one of them is
/// a unit (`[DU]`, `cm`, `-`, `deg N`, ...); others may be short descriptions
/// (`ISO 8601 local time`).
pub(crate) fn looks_like_units_row(grid: &Grid, r: usize, mapped_columns: &[usize]) -> bool {
    if r >= grid.height() {
        return false;
    }
    let mut units = 0;
    for &c in mapped_columns {
        match grid.cell(r, c) {
            Cell::Empty => {}
            Cell::Text(s) => {
                let t = s.trim();
                if t.is_empty() {
                    continue;
                }
                if t.parse::<f64>().is_ok() || super::time::parse_datetime_text(t).is_some() {
                    return false;
                }
                if looks_like_unit(t) {
                    units += 1;
                }
            }
            _ => return false,
        }
    }
    units >= 1
}

/// True for text that reads as a unit: short, and either bracketed or made of unit words.
fn looks_like_unit(t: &str) -> bool {
    if t.chars().count() > 24 {
        return false;
    }
    let t = t
        .trim_matches(|c| c == '[' || c == ']' || c == '(' || c == ')')
        .trim();
    let low = t.to_lowercase();
    const WORDS: &[&str] = &[
        "-",
        "1",
        "du",
        "cm",
        "mm",
        "hpa",
        "mb",
        "mbar",
        "kpa",
        "pa",
        "m",
        "km",
        "nm",
        "deg",
        "degrees",
        "°",
        "°n",
        "°e",
        "deg n",
        "deg e",
        "degrees north",
        "degrees east",
        "unitless",
        "dimensionless",
        "none",
        "%",
        "percent",
        "utc",
        "local",
        "h",
        "hours",
        "text",
        "name",
        "iso 8601",
        "yyyy-mm-dd",
        "hh:mm",
        "hh:mm:ss",
        "yyyy-mm-dd hh:mm",
        "kg m-2",
        "kg/m2",
        "kg m⁻²",
        "atm cm",
        "atm-cm",
        "land/ocean",
        "g/cm2",
        "g cm-2",
        "fraction",
        "0-1",
        "m asl",
        "m a.s.l.",
        "km agl",
        "km a.g.l.",
        "km asl",
    ];
    if WORDS.contains(&low.as_str()) {
        return true;
    }
    let toks = tokens(&low);
    !toks.is_empty()
        && toks.iter().all(|w| {
            WORDS.contains(&w.as_str())
                || UNIT_WORDS.contains(&w.as_str())
                || [
                    "utc", "local", "asl", "agl", "kg", "g", "m2", "cm2", "2", "atm", "yyyy", "mm",
                    "dd", "hh", "ss", "deg", "n", "e",
                ]
                .contains(&w.as_str())
                || w.starts_with("utc")
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(s: &str) -> (Kind, Option<f64>, String) {
        let m = parse_header(s).unwrap_or_else(|| panic!("{s} not understood"));
        (m.kind, m.wavelength_nm, m.unit)
    }

    #[test]
    fn headers_with_wavelengths() {
        assert_eq!(p("aod_500"), (Kind::Aod, Some(500.0), String::new()));
        assert_eq!(p("AOD 440 nm"), (Kind::Aod, Some(440.0), String::new()));
        assert_eq!(p("SSA(675)"), (Kind::Ssa, Some(675.0), String::new()));
        assert_eq!(
            p("asymmetry 870nm"),
            (Kind::Asymmetry, Some(870.0), String::new())
        );
        assert_eq!(p("AOD500"), (Kind::Aod, Some(500.0), String::new()));
        assert_eq!(p("tau_a 0.55um"), (Kind::Aod, Some(550.0), String::new()));
        assert_eq!(p("g-1020"), (Kind::Asymmetry, Some(1020.0), String::new()));
        assert_eq!(p("ω0 (440 nm)"), (Kind::Ssa, Some(440.0), String::new()));
        assert_eq!(
            p("Ångström exponent 440-870"),
            (Kind::Angstrom, Some(440.0), String::new())
        );
    }

    #[test]
    fn headers_with_units() {
        assert_eq!(p("Ozone [DU]"), (Kind::Ozone, None, "du".into()));
        assert_eq!(p("PW (mm)"), (Kind::Water, None, "mm".into()));
        assert_eq!(
            p("Surface Pressure / hPa"),
            (Kind::Pressure, None, "hpa".into())
        );
        assert_eq!(p("Time (UTC)"), (Kind::Time, None, "utc".into()));
        assert_eq!(p("time UTC+8"), (Kind::Time, None, "utc+8".into()));
        assert_eq!(p("Latitude (deg N)").0, Kind::Latitude);
        assert_eq!(p("UTC offset").0, Kind::UtcOffset);
        assert_eq!(p("layer top km"), (Kind::LayerTop, None, "km".into()));
        assert_eq!(p("Site"), (Kind::Site, None, String::new()));
        assert_eq!(
            p("asymmetry factor g 550 nm [-]"),
            (Kind::Asymmetry, Some(550.0), String::new())
        );
        assert_eq!(p("Angstrom exponent 440-870 nm [-]").0, Kind::Angstrom);
        assert!(parse_header("aod fine mode").is_none());
        assert!(parse_header("remarks").is_none());
        assert!(parse_header("").is_none());
    }

    #[test]
    fn closest_suggestion() {
        let headers = vec![
            "Tme".to_string(),
            "Sngle scat albedo".to_string(),
            "x".to_string(),
        ];
        assert_eq!(closest_header(Kind::Time, &headers), Some("Tme"));
        assert_eq!(
            closest_header(Kind::Ssa, &headers),
            Some("Sngle scat albedo")
        );
    }

    #[test]
    fn units() {
        for u in [
            "[DU]", "cm", "nm", "-", "(hPa)", "UTC", "deg N", "kg m-2", "%",
        ] {
            assert!(looks_like_unit(u), "{u}");
        }
        for u in ["Lhasa", "2024-05-01", "clear sky only"] {
            assert!(!looks_like_unit(u), "{u}");
        }
    }
}
