//! Job files (TOML): what to read, how to compute, what to write.
//!
//! A job file pins everything a scheduled rerun needs. Unknown keys are rejected with the line
//! and the list of known keys (serde `deny_unknown_fields` and the `toml` crate's spans).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::ingest::{AtmosphereDefaults, SiteInfo};
use crate::physics::discrete_ordinates::MAX_STREAMS;
use crate::physics::{BandSet, Closure, Method, Settings};
use crate::report::SideFormat;

/// A problem with a job file: stops the run before anything is read or written.
#[derive(Debug, thiserror::Error)]
pub enum JobError {
    #[error("{path}: cannot read the job file: {reason}")]
    Unreadable { path: String, reason: String },
    #[error(
        "{path}: {message}\n       Fix the job file and rerun; `hazebook init` writes a commented example."
    )]
    Invalid { path: String, message: String },
}

/// The whole job file.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct JobFile {
    /// Job name, used for `{job}` in output names; default: the job file's stem.
    pub name: Option<String>,
    #[serde(default)]
    pub input: InputSection,
    /// Site table (overrides a site sheet's values of the same site).
    #[serde(default)]
    pub sites: Vec<SiteInfo>,
    #[serde(default)]
    pub atmosphere: AtmosphereDefaults,
    #[serde(default)]
    pub solver: SolverSection,
    #[serde(default)]
    pub report: ReportSection,
    /// Declared input uncertainties (`[uncertainty]`, see `job::uncertainty`).
    #[serde(default)]
    pub uncertainty: super::uncertainty::UncertaintySection,
}

/// `[input]`: files, sheets, layout and mapping overrides.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InputSection {
    /// One or more paths or glob patterns, relative to the job file, read in order.
    #[serde(default)]
    pub paths: Vec<String>,
    pub sheet: Option<String>,
    pub site_sheet: Option<String>,
    pub header_row: Option<u32>,
    pub units_row: Option<u32>,
    /// Extra fill values read as missing.
    #[serde(default)]
    pub fill_values: Vec<String>,
    /// Canonical quantity → header text or column letter.
    #[serde(default)]
    pub columns: BTreeMap<String, String>,
    /// Strict mode for scheduled runs: fail (exit 2, nothing written) when a column is not
    /// read without being listed in `ignore_columns`, or a built-in default applies to a
    /// quantity not listed in `defaults_allowed`.
    #[serde(default)]
    pub strict: bool,
    /// Columns (header text or letter) not to read; strict mode accepts them being ignored.
    #[serde(default)]
    pub ignore_columns: Vec<String>,
    /// Quantities that may take a built-in default in strict mode (`angstrom`, `ozone`,
    /// `water`, `pressure`, `albedo`, `altitude`, `layer_top`, `utc_offset`, ...).
    #[serde(default)]
    pub defaults_allowed: Vec<String>,
    /// Site name of rows without a site column (else the file name).
    pub site_name: Option<String>,
    /// The rows come from a moving platform (ship, buoy, aircraft).
    #[serde(default)]
    pub moving_platform: bool,
    /// Largest distance of a row's coordinates from its site's in the site table before a
    /// row warning [km] (default 2).
    pub site_tolerance_km: Option<f64>,
    /// Quantities whose empty or fill-value cells may take the site, job or built-in value;
    /// default `["ozone", "water"]` ([`crate::ingest::DEFAULT_FALLBACK`]).
    pub fallback: Option<Vec<String>>,
}

impl InputSection {
    /// `fallback`, checked against the quantities that can fall back.
    pub fn fallback_checked(&self) -> Result<Option<Vec<String>>, String> {
        let Some(list) = &self.fallback else {
            return Ok(None);
        };
        let known = crate::ingest::FALLBACK_QUANTITIES;
        for q in list {
            if !known.contains(&q.as_str()) {
                return Err(format!(
                    "[input] fallback names \"{q}\", which cannot fall back; expected some of {}",
                    known
                        .iter()
                        .map(|k| format!("\"{k}\""))
                        .collect::<Vec<_>>()
                        .join(", ")
                ));
            }
        }
        Ok(Some(list.clone()))
    }
}

/// The `[atmosphere]` keys a job file's text writes out (an explicit value, even one equal to
/// the built-in default, is the job file's).
pub fn atmosphere_keys(text: &str) -> Vec<String> {
    text.parse::<toml::Table>()
        .ok()
        .and_then(|t| t.get("atmosphere").and_then(|a| a.as_table()).cloned())
        .map(|a| a.keys().cloned().collect())
        .unwrap_or_default()
}

/// `[solver]`: radiative-transfer settings, including the idealised switches.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct SolverSection {
    pub closure: Closure,
    pub band_set: BandSet,
    pub diurnal_nodes: usize,
    pub solar_constant_wm2: f64,
    pub rayleigh: bool,
    pub gases: bool,
    pub fixed_cos_zenith: Option<f64>,
    pub earth_sun_distance: bool,
    pub daily_mean: bool,
    /// `"two-stream"` (default) or `"discrete-ordinates"`.
    pub method: Method,
    /// Streams of the discrete-ordinate solver (even, 2–64).
    pub streams: usize,
    /// Also compute every row with the other solver and report the two-stream's error.
    pub error_estimate: bool,
}

impl Default for SolverSection {
    fn default() -> Self {
        let s = Settings::default();
        Self {
            closure: s.closure,
            band_set: s.band_set,
            diurnal_nodes: s.diurnal_nodes,
            solar_constant_wm2: s.solar_constant_wm2,
            rayleigh: s.rayleigh,
            gases: s.gases,
            fixed_cos_zenith: s.fixed_cos_zenith,
            earth_sun_distance: s.earth_sun_distance,
            daily_mean: s.daily_mean,
            method: s.method,
            streams: s.streams,
            error_estimate: s.error_estimate,
        }
    }
}

impl SolverSection {
    /// The physics settings, validated.
    pub fn settings(&self) -> Result<Settings, String> {
        if !(self.solar_constant_wm2.is_finite()
            && (1000.0..=1500.0).contains(&self.solar_constant_wm2))
        {
            return Err(format!(
                "[solver] solar_constant_wm2 = {}: expected a value in 1000–1500 W m⁻² (about 1361 today)",
                self.solar_constant_wm2
            ));
        }
        if !(1..=64).contains(&self.diurnal_nodes) {
            return Err(format!(
                "[solver] diurnal_nodes = {}: expected 1–64 (12 is the default)",
                self.diurnal_nodes
            ));
        }
        if let Some(mu) = self.fixed_cos_zenith
            && !(mu.is_finite() && mu > 0.0 && mu <= 1.0)
        {
            return Err(format!(
                "[solver] fixed_cos_zenith = {mu}: expected a number in (0, 1]"
            ));
        }
        if !(2..=MAX_STREAMS).contains(&self.streams) || !self.streams.is_multiple_of(2) {
            return Err(format!(
                "[solver] streams = {}: expected an even number of streams from 2 to {MAX_STREAMS} \
                 (6 is the default; 8 or 16 for reference work)",
                self.streams
            ));
        }
        Ok(Settings {
            solar_constant_wm2: self.solar_constant_wm2,
            closure: self.closure,
            band_set: self.band_set,
            diurnal_nodes: self.diurnal_nodes,
            rayleigh: self.rayleigh,
            gases: self.gases,
            fixed_cos_zenith: self.fixed_cos_zenith,
            earth_sun_distance: self.earth_sun_distance,
            daily_mean: self.daily_mean,
            method: self.method,
            streams: self.streams,
            error_estimate: self.error_estimate,
            rayleigh_above_tau: None,
        })
    }
}

/// `[report]`: template, output naming and side outputs.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct ReportSection {
    /// Built-in template name or a path relative to the job file.
    pub template: String,
    /// Output file name with `{job}`, `{site}`, `{period}` and `{date}` tokens.
    pub output: String,
    /// Output folder, relative to the job file.
    pub folder: Option<String>,
    /// Results at full precision beside the workbook.
    pub side_output: Option<SideFormat>,
    /// Observations a site-day needs to count in the statistics (overrides the template's).
    pub min_observations_per_day: Option<usize>,
    /// Institution that produced the results (the NetCDF `institution` attribute).
    pub institution: Option<String>,
}

impl Default for ReportSection {
    fn default() -> Self {
        Self {
            template: "full".into(),
            output: DEFAULT_OUTPUT_NAME.into(),
            folder: None,
            side_output: None,
            min_observations_per_day: None,
            institution: None,
        }
    }
}

/// Output name used without a job file.
pub const DEFAULT_OUTPUT_NAME: &str = "{job}-{period}-report.xlsx";

/// A job file read and parsed, with the folder it lives in.
#[derive(Debug, Clone)]
pub struct LoadedJob {
    pub path: PathBuf,
    pub text: String,
    pub file: JobFile,
}

impl LoadedJob {
    /// Read and parse a job file.
    ///
    /// Errors: [`JobError`] for an unreadable file, TOML syntax, an unknown key (with its line
    /// and the known keys) or a value of the wrong type.
    pub fn load(path: &Path) -> Result<Self, JobError> {
        let text = std::fs::read_to_string(path).map_err(|e| JobError::Unreadable {
            path: path.display().to_string(),
            reason: e.to_string(),
        })?;
        let file = parse(&text).map_err(|message| JobError::Invalid {
            path: path.display().to_string(),
            message,
        })?;
        Ok(Self {
            path: path.to_path_buf(),
            text,
            file,
        })
    }

    /// Folder of the job file; relative paths in the job resolve against it.
    pub fn dir(&self) -> PathBuf {
        self.path
            .parent()
            .map(Path::to_path_buf)
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or_else(|| PathBuf::from("."))
    }

    /// Job name: `name`, else the file stem.
    pub fn name(&self) -> String {
        self.file.name.clone().unwrap_or_else(|| stem(&self.path))
    }
}

/// Parse job-file text; the error message carries the line and column. The values of
/// `[[sites]]` and `[atmosphere]` are checked against the ranges of workbook values, and a
/// site listed twice is refused.
pub fn parse(text: &str) -> Result<JobFile, String> {
    let job = toml::from_str::<JobFile>(text).map_err(|e| {
        let (line, col) = e.span().map(|s| line_col(text, s.start)).unwrap_or((0, 0));
        let msg = e.message().trim().to_string();
        if line > 0 {
            format!("line {line}, column {col}: {msg}")
        } else {
            msg
        }
    })?;
    validate_values(text, &job)?;
    Ok(job)
}

/// Longest site name: what a worksheet cell holds (Microsoft, "Excel specifications and
/// limits"), as for names read from a workbook.
const MAX_SITE_NAME_CHARS: usize = 32_767;

/// Where each value of `[[sites]]` and `[atmosphere]` is written (a second, lenient parse
/// that keeps the spans).
#[derive(Deserialize, Default)]
struct ValueSpans {
    #[serde(default)]
    sites: Vec<BTreeMap<String, toml::Spanned<toml::Value>>>,
    #[serde(default)]
    atmosphere: BTreeMap<String, toml::Spanned<toml::Value>>,
}

/// Range checks of the site table and the atmosphere defaults, with the line of the value.
fn validate_values(text: &str, job: &JobFile) -> Result<(), String> {
    let spans: ValueSpans = toml::from_str(text).unwrap_or_default();
    let at = |v: Option<&toml::Spanned<toml::Value>>| {
        v.map(|v| {
            let (line, col) = line_col(text, v.span().start);
            format!("line {line}, column {col}: ")
        })
        .unwrap_or_default()
    };
    for (i, site) in job.sites.iter().enumerate() {
        let keys = spans.sites.get(i);
        let here = |key: &str| at(keys.and_then(|k| k.get(key)));
        let label = if site.name.trim().is_empty() {
            format!("[[sites]] entry {}", i + 1)
        } else {
            format!("[[sites]] \"{}\"", site.name.trim())
        };
        if site.name.trim().is_empty() {
            return Err(format!(
                "{}{label}: name is empty: expected the site's name as the workbook writes it",
                here("name")
            ));
        }
        let chars = site.name.chars().count();
        if chars > MAX_SITE_NAME_CHARS {
            return Err(format!(
                "{}[[sites]] entry {}: name has {chars} characters, more than the {MAX_SITE_NAME_CHARS} a worksheet cell holds",
                here("name"),
                i + 1
            ));
        }
        for (key, value) in [
            ("latitude_deg", site.latitude_deg),
            ("longitude_deg", site.longitude_deg),
            ("altitude_m", site.altitude_m),
            ("pressure_hpa", site.pressure_hpa),
            ("albedo", site.albedo),
            ("utc_offset_hours", site.utc_offset_hours),
        ] {
            if let Some(v) = value
                && let Err(why) = crate::ingest::check_job_value(key, v)
            {
                return Err(format!("{}{label}: {key}: {why}", here(key)));
            }
        }
        let key = crate::ingest::site_name_key(&site.name);
        if let Some(j) = job.sites[..i]
            .iter()
            .position(|s| crate::ingest::site_name_key(&s.name) == key)
        {
            let first = at(spans.sites.get(j).and_then(|k| k.get("name")));
            let first = first.trim_end_matches(": ");
            return Err(format!(
                "{}{label}: the site is listed twice (first as \"{}\"{}{first}): give each site once",
                here("name"),
                job.sites[j].name,
                if first.is_empty() { "" } else { ", at " },
            ));
        }
    }
    let a = &job.atmosphere;
    let here = |key: &str| at(spans.atmosphere.get(key));
    for (key, value) in [
        ("albedo", Some(a.albedo)),
        ("ozone_du", Some(a.ozone_du)),
        ("water_cm", Some(a.water_cm)),
        ("pressure_hpa", a.pressure_hpa),
        ("altitude_m", Some(a.altitude_m)),
        ("layer_top_km", Some(a.layer_top_km)),
        ("layer_base_km", Some(a.layer_base_km)),
        ("angstrom", Some(a.angstrom)),
        ("utc_offset_hours", Some(a.utc_offset_hours)),
    ] {
        if let Some(v) = value
            && let Err(why) = crate::ingest::check_job_value(key, v)
        {
            return Err(format!("{}[atmosphere] {key}: {why}", here(key)));
        }
    }
    if a.layer_base_km >= a.layer_top_km {
        return Err(format!(
            "{}[atmosphere] layer_base_km = {}: expected below layer_top_km ({})",
            here("layer_base_km"),
            a.layer_base_km,
            a.layer_top_km
        ));
    }
    Ok(())
}

fn line_col(text: &str, offset: usize) -> (usize, usize) {
    let before = &text[..offset.min(text.len())];
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, col)
}

/// File stem as a job name.
pub fn stem(path: &Path) -> String {
    path.file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "hazebook".into())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unknown_key_names_line_and_known_keys() {
        let err = parse("name = \"x\"\n[solver]\nclosur = \"pifm\"\n").unwrap_err();
        assert!(err.starts_with("line 3"), "{err}");
        assert!(err.contains("closur"), "{err}");
        assert!(err.contains("closure"), "{err}");
    }

    #[test]
    fn defaults_are_the_physics_defaults() {
        let job = parse("").unwrap();
        assert_eq!(job.solver.settings().unwrap(), Settings::default());
        assert_eq!(job.report.template, "full");
    }

    #[test]
    fn closure_names_are_kebab_case() {
        let job = parse("[solver]\nclosure = \"hemispheric-mean\"\n").unwrap();
        assert_eq!(job.solver.closure, Closure::HemisphericMean);
    }

    #[test]
    fn fallback_names_are_checked() {
        let job = parse("[input]\nfallback = [\"angstrom\", \"water\"]\n").unwrap();
        assert_eq!(
            job.input.fallback_checked().unwrap(),
            Some(vec!["angstrom".to_string(), "water".to_string()])
        );
        let job = parse("[input]\nfallback = [\"latitude\"]\n").unwrap();
        let err = job.input.fallback_checked().unwrap_err();
        assert!(
            err.contains("\"latitude\"") && err.contains("\"angstrom\""),
            "{err}"
        );
        assert_eq!(parse("").unwrap().input.fallback_checked().unwrap(), None);
    }

    #[test]
    fn explicit_atmosphere_keys_are_found() {
        let keys = atmosphere_keys("[atmosphere]\nalbedo = 0.15\nozone_du = 300.0\n");
        assert_eq!(keys, vec!["albedo".to_string(), "ozone_du".to_string()]);
        assert!(atmosphere_keys("name = \"x\"\n").is_empty());
    }

    #[test]
    fn site_and_atmosphere_values_are_range_checked_with_their_line() {
        let err = parse("[[sites]]\nname = \"A\"\nlatitude_deg = 400\n").unwrap_err();
        assert!(err.starts_with("line 3"), "{err}");
        assert!(
            err.contains("latitude_deg") && err.contains("[−90, 90]"),
            "{err}"
        );
        let err = parse("[[sites]]\nname = \"A\"\nalbedo = -1\n").unwrap_err();
        assert!(err.starts_with("line 3") && err.contains("albedo"), "{err}");
        let err = parse("[atmosphere]\nozone_du = 3\n").unwrap_err();
        assert!(
            err.starts_with("line 2") && err.contains("ozone_du"),
            "{err}"
        );
        let err = parse("[atmosphere]\nwater_cm = nan\n").unwrap_err();
        assert!(err.contains("finite"), "{err}");
        let err = parse("[atmosphere]\nlayer_base_km = 3\n").unwrap_err();
        assert!(err.contains("layer_base_km"), "{err}");
        assert!(parse("[[sites]]\nname = \"A\"\nlatitude_deg = 40\nlongitude_deg = 350\n").is_ok());
    }

    #[test]
    fn a_site_listed_twice_is_refused() {
        let err = parse("[[sites]]\nname = \"Gull Spit\"\n[[sites]]\nname = \"gull  spit\"\n")
            .unwrap_err();
        assert!(err.starts_with("line 4") && err.contains("twice"), "{err}");
        assert!(err.contains("line 2"), "{err}");
    }

    #[test]
    fn bad_solar_constant_is_refused() {
        let job = parse("[solver]\nsolar_constant_wm2 = 13.61\n").unwrap();
        assert!(job.solver.settings().is_err());
    }

    #[test]
    fn solver_method_streams_and_error_estimate() {
        let job = parse(
            "[solver]\nmethod = \"discrete-ordinates\"\nstreams = 8\nerror_estimate = true\n",
        )
        .unwrap();
        let s = job.solver.settings().unwrap();
        assert_eq!(s.method, Method::DiscreteOrdinates);
        assert_eq!((s.streams, s.error_estimate), (8, true));
        let default = parse("").unwrap().solver.settings().unwrap();
        assert_eq!(default.method, Method::TwoStream);
        assert!(!default.error_estimate);
        for bad in [3, 0, 66] {
            let job = parse(&format!("[solver]\nstreams = {bad}\n")).unwrap();
            let err = job.solver.settings().unwrap_err();
            assert!(err.contains("streams") && err.contains("even"), "{err}");
        }
        assert!(parse("[solver]\nmethod = \"four-streams\"\n").is_err());
    }
}
