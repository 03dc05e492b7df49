//! Report templates (TOML). Built-in templates live in `templates/` and are embedded.
//!
//! A template names the sheets of the report in order and says what each holds:
//!
//! ```toml
//! name = "my-report"
//! description = "What this report is for"
//!
//! [formats]            # optional: Excel number formats per kind of quantity
//! dre = "0.0"
//!
//! [widths]             # optional: column width limits [characters]
//! min = 6.0
//! max = 60.0
//!
//! [[sheet]]
//! name = "Results"
//! kind = "results"     # about | results | summary | efficiency | charts | rejected | quotable
//! columns = ["identity", "dre_toa_24h"]
//! ```
//!
//! Unknown keys are errors that name the line and list the known keys.

use std::path::Path;

use serde::Deserialize;

use super::ReportError;
use super::frame;

/// The built-in templates, embedded at compile time.
const BUILTIN: &[(&str, &str, &str)] = &[
    (
        "full",
        "Complete report: About, Results, summaries, efficiency regressions, charts, Rejected (default)",
        include_str!("../../templates/full.toml"),
    ),
    (
        "brief",
        "Short report for collaborators: About, summaries, efficiency and charts, no per-row Results",
        include_str!("../../templates/brief.toml"),
    ),
    (
        "monthly",
        "One month's rerun: About, compact Results, site and daily summaries, efficiency, chart, Rejected",
        include_str!("../../templates/monthly.toml"),
    ),
    (
        "fluxes",
        "About, Results with every column including the broadband fluxes, Rejected",
        include_str!("../../templates/fluxes.toml"),
    ),
];

/// Name of the default built-in template.
pub const DEFAULT: &str = "full";

/// Built-in templates: (name, one-line description, TOML text).
pub fn builtin() -> Vec<(&'static str, &'static str, &'static str)> {
    BUILTIN.to_vec()
}

/// A parsed report template.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Template {
    pub name: String,
    #[serde(default)]
    pub description: String,
    /// Number formats per kind of quantity.
    #[serde(default)]
    pub formats: Formats,
    /// Column width limits.
    #[serde(default)]
    pub widths: Widths,
    /// Observations a site-day needs to count in the statistics (default 1); a job's
    /// `[report] min_observations_per_day` overrides it.
    #[serde(default = "one")]
    pub min_observations_per_day: usize,
    /// Propagate input uncertainties even when the job declares none (built-in typical
    /// values then apply); default false.
    #[serde(default)]
    pub propagate_uncertainty: bool,
    /// Sheets in workbook order.
    #[serde(rename = "sheet", default)]
    pub sheets: Vec<SheetSpec>,
}

fn one() -> usize {
    1
}

/// Excel number formats per kind of quantity.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Formats {
    /// Direct radiative effects ΔF [W m⁻²].
    pub dre: String,
    /// Broadband fluxes [W m⁻²].
    pub flux: String,
    /// Aerosol optical depth [unitless].
    pub aod: String,
    /// Single-scattering albedo [unitless].
    pub ssa: String,
    /// Asymmetry factor [unitless].
    pub asymmetry: String,
    /// Forcing efficiency [W m⁻² per unit AOD].
    pub efficiency: String,
    /// Heating rate [K day⁻¹].
    pub heating: String,
    /// Angles [deg] and hours.
    pub angle: String,
    /// Latitude and longitude [deg].
    pub coordinate: String,
    /// Anything else numeric.
    pub general: String,
    /// Counts and row numbers.
    pub count: String,
    /// Date and time cells.
    pub datetime: String,
    /// R² and other fractions.
    pub fraction: String,
}

impl Default for Formats {
    fn default() -> Self {
        Self {
            dre: "0.0".into(),
            flux: "0.0".into(),
            aod: "0.000".into(),
            ssa: "0.000".into(),
            asymmetry: "0.000".into(),
            efficiency: "0.0".into(),
            heating: "0.000".into(),
            angle: "0.00".into(),
            coordinate: "0.0000".into(),
            general: "0.000".into(),
            count: "0".into(),
            datetime: "yyyy-mm-dd hh:mm:ss".into(),
            fraction: "0.000".into(),
        }
    }
}

/// Column width limits [characters].
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Widths {
    pub min: f64,
    pub max: f64,
}

impl Default for Widths {
    fn default() -> Self {
        Self {
            min: 6.0,
            max: 60.0,
        }
    }
}

/// What a sheet holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SheetKind {
    /// The job, methods, assumptions, settings, cautions, provenance and row counts.
    About,
    /// One row per computed observation.
    Results,
    /// Statistics per group and quantity.
    Summary,
    /// Forcing-efficiency regressions of ΔF against AOD(550).
    Efficiency,
    /// Charts (with their data on a sheet of their own right after).
    Charts,
    /// Every row not computed, with the reason.
    Rejected,
    /// Per site and season, and over the period: the 24-hour DRE, efficiency and AOD(550)
    /// as "mean ± uncertainty (n days)", and a generated methods paragraph.
    Quotable,
}

/// A chart of a `charts` sheet.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ChartKind {
    /// Monthly mean 24-hour DRE by site, TOA and surface (two line charts).
    MonthlyDre,
    /// ΔF against AOD(550) with the fitted line per site, TOA and surface (two scatter charts).
    DreVsAod,
    /// Daily (site-day) 24-hour TOA and surface DRE per site with the propagated 1σ as error
    /// bars (two charts).
    DailyDre,
    /// Daily 24-hour TOA against surface DRE per site (the ratio tells absorption).
    ToaVsSurface,
}

/// One sheet of a template.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SheetSpec {
    /// Sheet name (at most 31 characters, none of `[]:*?/\`).
    pub name: String,
    pub kind: SheetKind,
    /// `results`: column keys or groups (`all`, `identity`, `inputs`, `geometry`,
    /// `fluxes`, `instantaneous`, `daily`, `status`); default `all`.
    pub columns: Option<Vec<String>>,
    /// `summary`: group keys (`site`, `year`, `month`, `season`, `date` (UTC), `day` (local
    /// mean-solar date, the day of the 24-hour mean), `file`); empty for one overall group.
    pub group_by: Option<Vec<String>>,
    /// `summary`: numeric result columns to summarise.
    pub quantities: Option<Vec<String>>,
    /// `summary`: statistics (`all` or any of `count`, `mean`, `sd`, `se`, `ci95_low`,
    /// `ci95_high`, `median`, `p5`, `p25`, `p75`, `p95`, `min`, `max`, `days`,
    /// `observations`, `u_random`, `u_systematic`, `u_total`). `count` is the number of
    /// statistical units: site-days for 24-hour quantities, observations otherwise.
    pub statistics: Option<Vec<String>>,
    /// `efficiency`: group-key lists, one block of regressions each; default `[["site"]]`.
    pub groupings: Option<Vec<Vec<String>>>,
    /// `charts`: which charts; default both.
    pub charts: Option<Vec<ChartKind>>,
    /// Fixed width for every column of this sheet [characters], instead of fitting.
    pub column_width: Option<f64>,
}

/// Group keys a summary or efficiency sheet may use.
pub const GROUP_KEYS: &[&str] = &["site", "year", "month", "season", "date", "day", "file"];

/// Statistics a summary sheet may show, in display order.
pub const STATISTICS: &[&str] = &[
    "count",
    "mean",
    "sd",
    "se",
    "ci95_low",
    "ci95_high",
    "median",
    "p5",
    "p25",
    "p75",
    "p95",
    "min",
    "max",
    "days",
    "observations",
    "u_random",
    "u_systematic",
    "u_total",
];

/// Load a built-in template by name, or a template file by path.
///
/// A name without a path separator or `.toml` ending is looked up among the built-ins; an
/// unknown name lists them.
///
/// Errors: [`ReportError::Template`] when the file cannot be read, the TOML is malformed, a
/// key is unknown (the message names the line and the known keys), or a value is not usable.
pub fn load(name_or_path: &str) -> Result<Template, ReportError> {
    if let Some((_, _, text)) = BUILTIN.iter().find(|(n, _, _)| *n == name_or_path) {
        return parse(text, name_or_path);
    }
    let looks_like_path = name_or_path.ends_with(".toml")
        || name_or_path.contains('/')
        || name_or_path.contains('\\');
    let path = Path::new(name_or_path);
    if !looks_like_path && !path.is_file() {
        let names: Vec<&str> = BUILTIN.iter().map(|(n, _, _)| *n).collect();
        return Err(ReportError::Template {
            name: name_or_path.into(),
            message: format!(
                "no built-in template of this name and no such file; built-in templates: {}",
                names.join(", ")
            ),
        });
    }
    let text = std::fs::read_to_string(path).map_err(|e| ReportError::Template {
        name: name_or_path.into(),
        message: format!("cannot read the template file: {e}"),
    })?;
    parse(&text, name_or_path)
}

/// Parse and check a template's TOML text; `origin` names it in messages.
pub fn parse(text: &str, origin: &str) -> Result<Template, ReportError> {
    let template: Template = toml::from_str(text).map_err(|e| ReportError::Template {
        name: origin.into(),
        message: describe_toml_error(text, &e),
    })?;
    template.check().map_err(|message| ReportError::Template {
        name: origin.into(),
        message,
    })?;
    Ok(template)
}

/// Turn a TOML error into "line N: unknown key `x`; known keys: a, b".
fn describe_toml_error(text: &str, e: &toml::de::Error) -> String {
    let line = e
        .span()
        .map(|s| text[..s.start.min(text.len())].matches('\n').count() + 1);
    let msg = e.message().trim();
    let msg = if let Some(rest) = msg.strip_prefix("unknown field ") {
        match rest.split_once(", expected one of ") {
            Some((key, known)) => {
                format!("unknown key {key}; known keys: {}", known.replace('`', ""))
            }
            None => match rest.split_once(", expected ") {
                Some((key, known)) => {
                    format!("unknown key {key}; known keys: {}", known.replace('`', ""))
                }
                None => format!("unknown key {rest}"),
            },
        }
    } else if let Some(rest) = msg.strip_prefix("unknown variant ") {
        format!(
            "unknown value {}",
            rest.replace("expected one of", "known values:")
        )
    } else {
        msg.to_string()
    };
    match line {
        Some(l) => format!("line {l}: {msg}"),
        None => msg,
    }
}

impl Template {
    /// Check names and keys beyond what serde checks.
    fn check(&self) -> Result<(), String> {
        if self.sheets.is_empty() {
            return Err("the template names no sheets; add at least one [[sheet]] table".into());
        }
        if self.min_observations_per_day == 0 {
            return Err(
                "min_observations_per_day: expected a whole number of at least 1, found 0".into(),
            );
        }
        if !(self.widths.min > 0.0
            && self.widths.max >= self.widths.min
            && self.widths.max <= 255.0)
        {
            return Err(format!(
                "[widths]: expected 0 < min <= max <= 255, found min {} and max {}",
                self.widths.min, self.widths.max
            ));
        }
        let mut seen: Vec<String> = Vec::new();
        for (i, s) in self.sheets.iter().enumerate() {
            let at = format!("sheet {} (\"{}\")", i + 1, s.name);
            check_sheet_name(&s.name).map_err(|m| format!("{at}: {m}"))?;
            let lower = s.name.to_lowercase();
            if seen.contains(&lower) {
                return Err(format!(
                    "{at}: a sheet of this name comes earlier; names must differ"
                ));
            }
            seen.push(lower);
            let misplaced = |field: &str, present: bool| -> Result<(), String> {
                if present {
                    Err(
                        format!("{at}: `{field}` does not apply to a {:?} sheet", s.kind)
                            .to_lowercase(),
                    )
                } else {
                    Ok(())
                }
            };
            let k = s.kind;
            misplaced("columns", s.columns.is_some() && k != SheetKind::Results)?;
            misplaced("group_by", s.group_by.is_some() && k != SheetKind::Summary)?;
            misplaced(
                "quantities",
                s.quantities.is_some() && k != SheetKind::Summary,
            )?;
            misplaced(
                "statistics",
                s.statistics.is_some() && k != SheetKind::Summary,
            )?;
            misplaced(
                "groupings",
                s.groupings.is_some() && k != SheetKind::Efficiency,
            )?;
            misplaced("charts", s.charts.is_some() && k != SheetKind::Charts)?;
            if let Some(cols) = &s.columns {
                for c in cols {
                    if frame::select_columns(std::slice::from_ref(c)).is_none() {
                        return Err(format!(
                            "{at}: unknown column `{c}`; known columns: {}, {}",
                            frame::COLUMN_GROUPS.join(", "),
                            frame::column_keys().join(", ")
                        ));
                    }
                }
            }
            for keys in s.group_by.iter().chain(s.groupings.iter().flatten()) {
                for g in keys {
                    if !GROUP_KEYS.contains(&g.as_str()) {
                        return Err(format!(
                            "{at}: unknown group key `{g}`; known group keys: {}",
                            GROUP_KEYS.join(", ")
                        ));
                    }
                }
            }
            if let Some(q) = &s.quantities {
                for name in q {
                    if !frame::numeric_keys().contains(&name.as_str()) {
                        return Err(format!(
                            "{at}: unknown quantity `{name}`; known quantities: {}",
                            frame::numeric_keys().join(", ")
                        ));
                    }
                }
            }
            if let Some(st) = &s.statistics {
                for name in st {
                    if name != "all" && !STATISTICS.contains(&name.as_str()) {
                        return Err(format!(
                            "{at}: unknown statistic `{name}`; known statistics: all, {}",
                            STATISTICS.join(", ")
                        ));
                    }
                }
            }
            if let Some(w) = s.column_width
                && !(w > 0.0 && w <= 255.0)
            {
                return Err(format!("{at}: column_width must be in (0, 255], found {w}"));
            }
        }
        Ok(())
    }
}

impl SheetSpec {
    /// Statistics to show, in display order.
    pub fn statistics_list(&self) -> Vec<&'static str> {
        match &self.statistics {
            None => STATISTICS.to_vec(),
            Some(v) if v.iter().any(|s| s == "all") => STATISTICS.to_vec(),
            Some(v) => STATISTICS
                .iter()
                .copied()
                .filter(|s| v.iter().any(|x| x == s))
                .collect(),
        }
    }
}

/// Excel's rules for sheet names.
pub fn check_sheet_name(name: &str) -> Result<(), String> {
    if name.trim().is_empty() {
        return Err("the sheet name is empty".into());
    }
    if name.chars().count() > 31 {
        return Err("a sheet name has at most 31 characters".into());
    }
    if let Some(c) = name.chars().find(|c| "[]:*?/\\".contains(*c)) {
        return Err(format!("a sheet name cannot contain `{c}`"));
    }
    if name.starts_with('\'') || name.ends_with('\'') {
        return Err("a sheet name cannot begin or end with an apostrophe".into());
    }
    Ok(())
}
