//! Job files (TOML): what to read, how to compute, what to write.
//!
//! A job file pins everything a scheduled rerun needs. Unknown keys are rejected with the line
//! and the list of known keys (serde `deny_unknown_fields` and the `toml` crate's spans).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::ingest::{AtmosphereDefaults, SiteInfo};
use crate::physics::{BandSet, Closure, Settings};
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
}

impl Default for ReportSection {
    fn default() -> Self {
        Self {
            template: "full".into(),
            output: DEFAULT_OUTPUT_NAME.into(),
            folder: None,
            side_output: None,
            min_observations_per_day: None,
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

/// Parse job-file text; the error message carries the line and column.
pub fn parse(text: &str) -> Result<JobFile, String> {
    toml::from_str::<JobFile>(text).map_err(|e| {
        let (line, col) = e.span().map(|s| line_col(text, s.start)).unwrap_or((0, 0));
        let msg = e.message().trim().to_string();
        if line > 0 {
            format!("line {line}, column {col}: {msg}")
        } else {
            msg
        }
    })
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
    fn bad_solar_constant_is_refused() {
        let job = parse("[solver]\nsolar_constant_wm2 = 13.61\n").unwrap();
        assert!(job.solver.settings().is_err());
    }
}
