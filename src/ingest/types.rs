//! The contract between reading and the rest of the program.

use std::collections::BTreeMap;
use std::path::PathBuf;

use chrono::{DateTime, Utc};
use polars::prelude::DataFrame;

use crate::physics::{AerosolLayer, Observation};

/// Land or ocean surface of a site.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SurfaceType {
    #[default]
    Land,
    /// Taylor et al. (1996) ocean albedo.
    Ocean,
}

/// Metadata of one site (from a site sheet or the job file). `None` fields fall back to the
/// job defaults.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SiteInfo {
    /// The site's key: the code or name the data rows give in their site column.
    pub name: String,
    /// Full name shown beside the key in the report (`Harlsby Flats (HRF)`), if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub full_name: Option<String>,
    pub latitude_deg: Option<f64>,
    pub longitude_deg: Option<f64>,
    pub altitude_m: Option<f64>,
    pub pressure_hpa: Option<f64>,
    pub albedo: Option<f64>,
    pub surface: Option<SurfaceType>,
    /// Offset of the site's local clock from UTC [h], used for times without an offset.
    pub utc_offset_hours: Option<f64>,
}

/// Atmosphere and surface defaults of a job (built-in values unless the job file says).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct AtmosphereDefaults {
    /// Broadband surface albedo [unitless].
    pub albedo: f64,
    pub surface: SurfaceType,
    /// [DU]
    pub ozone_du: f64,
    /// Precipitable water [cm].
    pub water_cm: f64,
    /// [hPa]; when `None`, from altitude.
    pub pressure_hpa: Option<f64>,
    /// [m]
    pub altitude_m: f64,
    /// [km] above the surface.
    pub layer_top_km: f64,
    /// [km] above the surface; 0 for a boundary-layer aerosol.
    pub layer_base_km: f64,
    /// Ångström exponent used when the workbook gives AOD at one wavelength only.
    pub angstrom: f64,
    /// [h] offset of naive times from UTC when neither the row nor the site gives one.
    pub utc_offset_hours: f64,
}

impl Default for AtmosphereDefaults {
    fn default() -> Self {
        Self {
            albedo: 0.15,
            surface: SurfaceType::Land,
            ozone_du: 300.0,
            water_cm: 1.5,
            pressure_hpa: None,
            altitude_m: 0.0,
            layer_top_km: AerosolLayer::default().top_km,
            layer_base_km: 0.0,
            angstrom: 1.3,
            utc_offset_hours: 0.0,
        }
    }
}

/// An inclusive-exclusive time window [start, end) that selects rows.
#[derive(Debug, Clone, PartialEq)]
pub struct Period {
    /// Label used in output names, e.g. `2026-11` or `2026`.
    pub label: String,
    pub start: DateTime<Utc>,
    pub end: DateTime<Utc>,
}

/// What to read and how: built from the job file, or defaults plus detection.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct InputSpec {
    /// Files to read, concatenated in order.
    pub paths: Vec<PathBuf>,
    /// Data sheet name; `None` picks the first sheet that has a recognisable header.
    pub sheet: Option<String>,
    /// Site sheet name; `None` looks for a sheet with site metadata.
    pub site_sheet: Option<String>,
    /// Header row as the spreadsheet shows it (1-based); `None` detects it.
    pub header_row: Option<u32>,
    /// Units row (1-based); `None` detects a units row right under the header.
    pub units_row: Option<u32>,
    /// Canonical quantity name → header text or column letter, overriding detection.
    pub columns: BTreeMap<String, String>,
    /// Extra fill values read as missing, beyond the built-in ones.
    pub fill_values: Vec<String>,
    /// Sites from the job file (override sheet values of the same name).
    pub sites: Vec<SiteInfo>,
    pub defaults: AtmosphereDefaults,
    /// Keep only rows in this window (rows outside are counted, not rejected).
    pub period: Option<Period>,
    /// Strict mode: an ignored column not in `ignore_columns`, or a built-in default for a
    /// quantity not in `defaults_allowed`, fails the run (see [`strict_problems`](crate::ingest::strict_problems)).
    pub strict: bool,
    /// Columns (header text or column letter) not to read, and that strict mode accepts
    /// being ignored.
    pub ignore_columns: Vec<String>,
    /// Quantities (`angstrom`, `ozone`, `water`, ...) that may take a built-in default in
    /// strict mode.
    pub defaults_allowed: Vec<String>,
    /// Site name for rows without a site column (else the file name).
    pub site_name: Option<String>,
    /// The rows come from a moving platform (ship, aircraft): rows without a site column are
    /// one platform, and row coordinates are not compared with the site table's.
    pub moving_platform: bool,
    /// Largest distance between a row's coordinates and its site's in the site table before
    /// the row is warned about [km]; `None`: [`SITE_TOLERANCE_KM`](crate::ingest::SITE_TOLERANCE_KM).
    pub site_tolerance_km: Option<f64>,
    /// Quantities whose empty or fill-value cells, in a column the workbook provides, may
    /// take the site, job or built-in value (`[input] fallback`); `None`: [`DEFAULT_FALLBACK`].
    pub fallback: Option<Vec<String>>,
    /// `[atmosphere]` keys the job file writes out, so that a value equal to the built-in
    /// one is still reported as the job file's.
    pub defaults_set: Vec<String>,
}

/// Quantities that may fall back when `[input] fallback` is not given: precipitable water
/// and ozone are often left blank in campaign files and their defaults are climatological.
pub const DEFAULT_FALLBACK: &[&str] = &["ozone", "water"];

/// Quantities `[input] fallback` may name: those whose cells can take a value from
/// elsewhere (the site, the job, the built-in defaults, the other wavelengths).
pub const FALLBACK_QUANTITIES: &[&str] = &[
    "angstrom",
    "aod",
    "ssa",
    "asymmetry",
    "ozone",
    "water",
    "pressure",
    "altitude",
    "albedo",
    "layer_top",
];

impl InputSpec {
    /// Whether an empty or fill-value cell of `quantity` may take a value from elsewhere.
    pub fn allows_fallback(&self, quantity: &str) -> bool {
        match &self.fallback {
            Some(list) => list.iter().any(|q| q == quantity),
            None => DEFAULT_FALLBACK.contains(&quantity),
        }
    }
}

/// Where a row came from.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct RowOrigin {
    /// File name as given.
    pub file: String,
    /// Sheet name; empty for csv and parquet.
    pub sheet: String,
    /// Row number as the spreadsheet shows it (1-based), or the line number of a csv.
    pub row: u32,
}

/// A row that could not be computed.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Rejection {
    pub file: String,
    pub sheet: String,
    pub row: u32,
    /// A1 reference of the offending cell (empty if the whole row is at fault).
    pub cell: String,
    /// Canonical quantity of the offending cell (empty if none).
    pub column: String,
    /// The cell as found, as text.
    pub value: String,
    /// What was expected and what was found, e.g. `expected a number in (0, 1], found 1.07`.
    pub reason: String,
}

/// A warning that does not stop a row from being computed.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RowWarning {
    pub cell: String,
    pub message: String,
}

/// How one input column was understood.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct MappedColumn {
    pub file: String,
    pub sheet: String,
    /// Canonical quantity, e.g. `aod`, `ssa`, `asymmetry`, `time`, `site`.
    pub quantity: String,
    /// Wavelength read from the header [nm], if any.
    #[serde(with = "crate::physics::serde_float::opt_float")]
    pub wavelength_nm: Option<f64>,
    /// Header text as found.
    pub header: String,
    /// Column letter(s), e.g. `F`.
    pub letter: String,
    /// Unit as found in the units row or header, if any.
    pub unit: String,
    /// `detected`, `job file` or `site table`.
    pub how: String,
    /// For the Ångström exponent: the wavelength pair it spans, from the header or the units
    /// row [nm] (`[440, 870]`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub wavelength_pair_nm: Option<[f64; 2]>,
}

/// A header column that was not read, and why.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct IgnoredColumn {
    pub file: String,
    pub sheet: String,
    /// Column letter(s), e.g. `K`.
    pub letter: String,
    /// Header text as found (empty for a column without a header).
    pub header: String,
    /// Why it is not read.
    pub reason: String,
    /// `true` when the job file's `ignore_columns` names it.
    #[serde(default)]
    pub declared: bool,
    /// Quantities that fell back to a default while this header resembles them.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub resembles: Vec<String>,
}

/// Where an assumed value came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ValueSource {
    Workbook,
    SiteTable,
    JobFile,
    BuiltIn,
}

/// A default or assumption that applied to some rows.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Assumption {
    pub quantity: String,
    pub value: String,
    pub source: ValueSource,
    /// How many computed rows it applied to.
    pub rows: usize,
}

/// A site value read from key/value metadata (a metadata sheet or a line above the header),
/// with the place it came from.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct MetadataValue {
    /// The site the value belongs to.
    pub site: String,
    /// The `[[sites]]` field it fills: `name`, `latitude_deg`, `altitude_m`, ...
    pub quantity: String,
    /// The value in canonical units, as text.
    pub value: String,
    /// Where it was read: `campaign.xlsx, sheet "Station", cell B2 ("Latitude", "deg N")`.
    pub origin: String,
}

/// An input file that was read.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct InputFile {
    pub path: String,
    /// Lower-case hex SHA-256 of the file's bytes.
    pub sha256: String,
    pub sheets: Vec<String>,
}

/// Row accounting: `read == computed + rejected + outside_period`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
pub struct Counts {
    pub read: usize,
    pub computed: usize,
    pub rejected: usize,
    pub outside_period: usize,
}

/// Everything read from the inputs.
#[derive(Debug, Clone, Default)]
pub struct Ingested {
    /// Accepted rows, canonical columns (see `ingest` module docs), one row per observation.
    pub frame: DataFrame,
    /// Site name of each accepted row.
    pub sites: Vec<String>,
    /// Origin of each accepted row (aligned with `frame`).
    pub origins: Vec<RowOrigin>,
    /// Resolved physics input of each accepted row (aligned with `frame`).
    pub observations: Vec<Observation>,
    /// Warnings of each accepted row (aligned with `frame`).
    pub row_warnings: Vec<Vec<RowWarning>>,
    pub rejected: Vec<Rejection>,
    /// File- or sheet-level warnings.
    pub warnings: Vec<String>,
    pub mapping: Vec<MappedColumn>,
    /// Site values read from key/value metadata, with where each came from.
    pub metadata: Vec<MetadataValue>,
    pub assumptions: Vec<Assumption>,
    pub files: Vec<InputFile>,
    pub counts: Counts,
    /// Accepted rows of other sites left out of a report of some sites (one report per site,
    /// or `--site`); included in `counts.outside_period`, shown beside it on the About sheet.
    pub other_sites: usize,
    /// Header columns of data and site sheets that were not read, with the reason.
    pub ignored: Vec<IgnoredColumn>,
    /// Columns of site sheets and how they were read.
    pub site_columns: Vec<MappedColumn>,
    /// How the rows' sites were found, one line per sheet (site column, one place, places
    /// by coordinates, moving platform).
    pub site_rules: Vec<String>,
    /// Site key → label shown in the report, for sites with a full name:
    /// `Harlsby Flats (HRF)`.
    pub site_labels: BTreeMap<String, String>,
}

impl Ingested {
    /// The label of a site as the report shows it: `Full Name (KEY)`, or the key.
    pub fn site_label<'a>(&'a self, site: &'a str) -> &'a str {
        self.site_labels.get(site).map_or(site, String::as_str)
    }
}

/// A problem that stops the run before anything is written.
#[derive(Debug, thiserror::Error)]
pub enum IngestError {
    #[error(
        "{path}: cannot read the file: {reason}. Check that the path is right and the file is a complete xlsx, xlsm, xls, ods, csv or parquet file."
    )]
    Unreadable { path: String, reason: String },
    #[error("{path}: {message}")]
    Layout { path: String, message: String },
}

impl std::fmt::Display for Rejection {
    /// `campaign.xlsx, sheet "optics", cell F57 (ssa_550): expected a number in (0, 1], found 1.07.`
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}", self.file)?;
        if !self.sheet.is_empty() {
            write!(f, ", sheet \"{}\"", self.sheet)?;
        }
        if self.cell.is_empty() {
            write!(f, ", row {}", self.row)?;
        } else {
            write!(f, ", cell {}", self.cell)?;
        }
        if !self.column.is_empty() {
            write!(f, " ({})", self.column)?;
        }
        write!(f, ": {}.", self.reason)
    }
}

impl std::fmt::Display for MappedColumn {
    /// `aod_500 <- column C "AOD 500 nm" [-] (detected)`
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{:<16} <- column {:<3} \"{}\"",
            self.canonical_name(),
            self.letter,
            self.header
        )?;
        if !self.unit.is_empty() {
            write!(f, " [{}]", self.unit)?;
        }
        write!(f, " ({})", self.how)
    }
}

impl MappedColumn {
    /// Quantity with its wavelength, as the job file names it: `aod_500`, `ssa_675`, `time`.
    pub fn canonical_name(&self) -> String {
        match self.wavelength_nm {
            Some(w) => format!("{}_{}", self.quantity, super::format_wavelength(w)),
            None => self.quantity.clone(),
        }
    }
}
