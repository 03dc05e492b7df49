//! Every header column accounted for: read (with how) or ignored (with why); warnings when a
//! quantity falls back to a default while an ignored column looks like it; strict mode.

use super::cells::{Cell, Grid, column_letter};
use super::detect::{self, Kind};
use super::read::Mapped;
use super::types::{IgnoredColumn, Ingested, InputSpec, ValueSource};

/// A header column of a sheet that is not read.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Ignored {
    pub col: usize,
    pub letter: String,
    pub header: String,
    pub reason: String,
    /// Named by the job file's `ignore_columns`.
    pub declared: bool,
}

impl Ignored {
    pub(crate) fn new(col: usize, letter: &str, header: &str, reason: String) -> Self {
        Self {
            col,
            letter: letter.to_string(),
            header: header.to_string(),
            reason,
            declared: false,
        }
    }
}

/// True when `entry` of `[input] ignore_columns` names this column (its header, case- and
/// separator-insensitively, or its letter).
fn names_column(entry: &str, letter: &str, header: &str) -> bool {
    let e = entry.trim();
    if e.is_empty() {
        return false;
    }
    e.eq_ignore_ascii_case(letter)
        || e.eq_ignore_ascii_case(header.trim())
        || (!header.trim().is_empty() && detect::normalised(e) == detect::normalised(header))
}

/// Columns named by `[input] ignore_columns` are not read (even when their header names a
/// quantity); columns already ignored are marked as declared.
pub(crate) fn apply_ignore_list(
    spec: &InputSpec,
    columns: &mut Vec<Mapped>,
    ignored: &mut [Ignored],
) -> Vec<Ignored> {
    let listed = |letter: &str, header: &str| {
        spec.ignore_columns
            .iter()
            .any(|e| names_column(e, letter, header))
    };
    for i in ignored.iter_mut() {
        if listed(&i.letter, &i.header) {
            i.declared = true;
        }
    }
    let mut dropped = Vec::new();
    columns.retain(|m| {
        if m.how != "job file" && listed(&m.letter, &m.header) {
            dropped.push(Ignored {
                col: m.col,
                letter: m.letter.clone(),
                header: m.header.clone(),
                reason: format!(
                    "listed in [input] ignore_columns (its header would read as {})",
                    m.name()
                ),
                declared: true,
            });
            false
        } else {
            true
        }
    });
    dropped
}

/// The ignored columns of a sheet as recorded in [`Ingested::ignored`]; those named by
/// `[input] ignore_columns` are marked declared.
pub(crate) fn to_ignored_columns(
    list: &[Ignored],
    file: &str,
    sheet: &str,
    spec: &InputSpec,
) -> Vec<IgnoredColumn> {
    list.iter()
        .map(|i| IgnoredColumn {
            file: file.to_string(),
            sheet: sheet.to_string(),
            letter: i.letter.clone(),
            header: i.header.clone(),
            reason: i.reason.clone(),
            declared: i.declared
                || spec
                    .ignore_columns
                    .iter()
                    .any(|e| names_column(e, &i.letter, &i.header)),
            resembles: Vec::new(),
        })
        .collect()
}

/// One header column of an input sheet, read or not.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ColumnAccount {
    pub file: String,
    pub sheet: String,
    /// `data` or `site table`.
    pub role: &'static str,
    pub letter: String,
    pub header: String,
    /// `read` or `ignored`.
    pub status: &'static str,
    /// Quantity as the job file names it (`aod_500`, `angstrom`, `site`); empty when ignored.
    pub quantity: String,
    /// How it was read (`detected`, `job file`, `site table`, with unit and wavelength pair),
    /// or why it is not.
    pub detail: String,
}

impl Ingested {
    /// Every header column of every sheet read, in file, sheet and column order: read (with
    /// how) or ignored (with why). The text summary, `check --json`, the log and the About
    /// sheet all show this list.
    pub fn column_accounts(&self) -> Vec<ColumnAccount> {
        let mut out: Vec<(usize, usize, u32, ColumnAccount)> = Vec::new();
        let order = |file: &str, sheet: &str| {
            let fi = self.files.iter().position(|f| f.path == file);
            let si = fi
                .and_then(|i| self.files[i].sheets.iter().position(|s| s == sheet))
                .unwrap_or(0);
            (fi.unwrap_or(usize::MAX), si)
        };
        let col = |l: &str| super::cells::column_index(l).unwrap_or(u32::MAX);
        for (m, role) in self
            .mapping
            .iter()
            .map(|m| (m, "data"))
            .chain(self.site_columns.iter().map(|m| (m, "site table")))
        {
            let mut detail = m.how.clone();
            if let Some([a, b]) = m.wavelength_pair_nm {
                detail.push_str(&format!(
                    "; Ångström exponent over {}–{} nm",
                    super::cells::format_number(a),
                    super::cells::format_number(b)
                ));
            }
            if !m.unit.is_empty() {
                detail.push_str(&format!("; unit {}", m.unit));
            }
            let (f, s) = order(&m.file, &m.sheet);
            out.push((
                f,
                s,
                col(&m.letter),
                ColumnAccount {
                    file: m.file.clone(),
                    sheet: m.sheet.clone(),
                    role,
                    letter: m.letter.clone(),
                    header: m.header.clone(),
                    status: "read",
                    quantity: m.canonical_name(),
                    detail,
                },
            ));
        }
        for i in &self.ignored {
            let role = if self
                .site_columns
                .iter()
                .any(|m| m.file == i.file && m.sheet == i.sheet)
            {
                "site table"
            } else {
                "data"
            };
            let mut detail = i.reason.clone();
            if i.declared {
                detail.push_str(" (declared in [input] ignore_columns)");
            }
            if !i.resembles.is_empty() {
                detail.push_str(&format!(
                    "; looks like {}, which took a built-in default",
                    i.resembles.join(", ")
                ));
            }
            let (f, s) = order(&i.file, &i.sheet);
            out.push((
                f,
                s,
                col(&i.letter),
                ColumnAccount {
                    file: i.file.clone(),
                    sheet: i.sheet.clone(),
                    role,
                    letter: i.letter.clone(),
                    header: i.header.clone(),
                    status: "ignored",
                    quantity: String::new(),
                    detail,
                },
            ));
        }
        out.sort_by_key(|(f, s, c, _)| (*f, *s, *c));
        out.into_iter().map(|(_, _, _, a)| a).collect()
    }
}

/// A site-name column without a site column is the site column.
pub(crate) fn site_name_alone_is_site(columns: &mut [Mapped]) {
    if !columns.iter().any(|m| m.kind == Kind::Site) {
        for m in columns
            .iter_mut()
            .filter(|m| m.kind == Kind::SiteName)
            .take(1)
        {
            m.kind = Kind::Site;
        }
    }
}

/// Columns without a header that hold values under it: not read, and said.
pub(crate) fn headerless_columns(
    grid: &Grid,
    header_row: usize,
    columns: &[Mapped],
    ignored: &mut Vec<Ignored>,
) {
    for c in 0..grid.width() {
        if grid.cell(header_row, c).text().is_some()
            || columns.iter().any(|m| m.col == c)
            || ignored.iter().any(|i| i.col == c)
        {
            continue;
        }
        let n = (header_row + 1..grid.height())
            .filter(|&r| !matches!(grid.cell(r, c), Cell::Empty))
            .count();
        if n > 0 {
            ignored.push(Ignored::new(
                c,
                &column_letter(grid.column_number(c)),
                "",
                format!("no header: its {n} filled cell(s) are not read (give it a header, or map its letter in the job file)"),
            ));
        }
    }
}

/// The quantity name (as in `[input] defaults_allowed` and the job file's columns) of an
/// assumption's quantity: `ozone_du` → `ozone`.
pub(crate) fn assumption_kind(quantity: &str) -> &str {
    match quantity {
        "ozone_du" => "ozone",
        "water_cm" => "water",
        "pressure_hpa" => "pressure",
        "altitude_m" => "altitude",
        "layer_top_km" => "layer_top",
        "utc_offset_hours" => "utc_offset",
        "aod_wavelength_nm" => "aod_wavelength",
        "latitude_deg" => "latitude",
        "longitude_deg" => "longitude",
        other => other,
    }
}

fn kind_named(name: &str) -> Option<Kind> {
    Kind::all().iter().copied().find(|k| k.name() == name)
}

/// Warnings for quantities that took a built-in default while an ignored data column's header
/// resembles them, naming the column and the job-file line that maps it; the ignored column
/// records the quantity in `resembles`.
pub(crate) fn resemblance_warnings(ing: &mut Ingested) {
    let site_sheet = |file: &str, sheet: &str| {
        ing.site_columns
            .iter()
            .any(|m| m.file == file && m.sheet == sheet)
    };
    let mut warnings = Vec::new();
    let mut marks: Vec<(usize, String)> = Vec::new();
    for a in ing
        .assumptions
        .iter()
        .filter(|a| a.source == ValueSource::BuiltIn)
    {
        let q = assumption_kind(&a.quantity);
        let Some(kind) = kind_named(q) else {
            continue;
        };
        for (i, col) in ing.ignored.iter().enumerate() {
            if col.declared
                || col.header.is_empty()
                || site_sheet(&col.file, &col.sheet)
                || !detect::resembles(kind, &col.header)
            {
                continue;
            }
            let here = super::read::place(&col.file, &col.sheet);
            warnings.push(format!(
                "{here}: {q} = {} (built-in default) applies to {} row(s), while column {} \"{}\" is not read ({}) and looks like {q}. If it holds {q}, map it in the job file: [input.columns] {q} = \"{}\"; if not, list it in [input] ignore_columns.",
                a.value, a.rows, col.letter, col.header, col.reason, col.letter
            ));
            marks.push((i, q.to_string()));
        }
    }
    for (i, q) in marks {
        let r = &mut ing.ignored[i].resembles;
        if !r.contains(&q) {
            r.push(q);
        }
    }
    ing.warnings.extend(warnings);
}

/// What strict mode refuses in what was read: every column ignored without being named in
/// `[input] ignore_columns`, and every built-in default for a quantity not in `[input]
/// defaults_allowed`. Empty when strict mode would accept the inputs (whether or not
/// `spec.strict` is set: `check` shows what a strict run would refuse).
pub fn strict_problems(ing: &Ingested, spec: &InputSpec) -> Vec<String> {
    let mut out = Vec::new();
    for c in ing.ignored.iter().filter(|c| !c.declared) {
        let here = super::read::place(&c.file, &c.sheet);
        let header = if c.header.is_empty() {
            "(no header)".to_string()
        } else {
            format!("\"{}\"", c.header)
        };
        out.push(format!(
            "{here}, column {} {header} is not read ({}); map it in [input.columns] or list it in [input] ignore_columns = [\"{}\"]",
            c.letter,
            c.reason,
            if c.header.is_empty() { &c.letter } else { &c.header }
        ));
    }
    let allowed = |q: &str| {
        spec.defaults_allowed
            .iter()
            .any(|d| d.trim().eq_ignore_ascii_case(q))
    };
    for a in ing
        .assumptions
        .iter()
        .filter(|a| a.source == ValueSource::BuiltIn)
    {
        let q = assumption_kind(&a.quantity);
        if allowed(q) || allowed(&a.quantity) {
            continue;
        }
        out.push(format!(
            "{q} = {} is a built-in default for {} row(s); give it in the workbook or the job file, or list it in [input] defaults_allowed = [\"{q}\"]",
            a.value, a.rows
        ));
    }
    out
}

/// The row warning when the AOD a row gives lies outside the wavelength pair its Ångström
/// exponent was measured over: the Ångström law (Ångström 1929) is then extrapolated from
/// that wavelength to 550 nm and the bands.
pub(crate) fn outside_angstrom_pair(m: &Mapped, aod_wavelength_nm: f64) -> Option<String> {
    let (lo, hi) = m.pair_nm?;
    (aod_wavelength_nm < lo || aod_wavelength_nm > hi).then(|| {
        format!(
            "AOD at {} nm lies outside the Ångström exponent's wavelength pair {}–{} nm (column {}): extrapolated in the Ångström law",
            super::cells::format_number(aod_wavelength_nm),
            super::cells::format_number(lo),
            super::cells::format_number(hi),
            m.letter
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ignore_list_matches_letters_and_headers() {
        assert!(names_column("K", "K", "Notes"));
        assert!(names_column("notes", "K", "Notes"));
        assert!(names_column("aod440 oct raw", "L", "aod440 (Oct, raw)"));
        assert!(!names_column("L", "K", "Notes"));
        assert!(!names_column("", "K", ""));
    }

    #[test]
    fn assumption_names_are_quantity_names() {
        assert_eq!(assumption_kind("ozone_du"), "ozone");
        assert_eq!(assumption_kind("angstrom"), "angstrom");
        assert_eq!(assumption_kind("layer_top_km"), "layer_top");
        for q in [
            "ozone",
            "water",
            "pressure",
            "altitude",
            "layer_top",
            "angstrom",
        ] {
            assert!(kind_named(q).is_some(), "{q}");
        }
    }
}
