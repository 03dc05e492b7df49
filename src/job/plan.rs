//! From command-line values and an optional job file to a validated plan of work.

use std::path::{Path, PathBuf};

use anyhow::{Context, bail};
use chrono::{NaiveDate, Utc};

use super::config::{self, DEFAULT_OUTPUT_NAME, LoadedJob};
use super::period::parse_period;
use crate::cli::SelectArgs;
use crate::ingest::{InputSpec, Period};
use crate::physics::Settings;
use crate::report::SideFormat;

/// Everything a run needs, resolved and validated.
#[derive(Debug, Clone)]
pub struct Plan {
    pub job_name: String,
    pub job: Option<LoadedJob>,
    pub spec: InputSpec,
    pub settings: Settings,
    /// Built-in template name or a path.
    pub template: String,
    pub out_dir: PathBuf,
    pub output_pattern: String,
    pub side_output: Option<SideFormat>,
    pub period: Option<Period>,
    pub today: NaiveDate,
    /// Inputs found by a glob pattern of `[input] paths` (not named one by one): a run skips
    /// those that are hazebook's own outputs.
    pub globbed: Vec<PathBuf>,
}

/// Command-line values that override the job file.
#[derive(Debug, Clone, Default)]
pub struct Overrides {
    pub template: Option<String>,
    pub out: Option<PathBuf>,
    pub side_output: Option<SideFormat>,
}

/// Is this path a job file (by extension)?
pub fn is_job_file(p: &Path) -> bool {
    p.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("toml"))
}

/// Build the plan.
///
/// Errors: a missing input, a bad job file, a bad period or date, a glob that matches nothing.
pub fn build(select: &SelectArgs, ov: &Overrides) -> anyhow::Result<Plan> {
    let today = super::period::parse_today(select.today.as_deref()).map_err(anyhow::Error::msg)?;
    let period = select
        .period
        .as_deref()
        .map(|p| parse_period(p, today))
        .transpose()
        .map_err(anyhow::Error::msg)?;
    if !select.input.exists() {
        bail!(
            "{}: no such file. Give a campaign workbook (xlsx, xlsm, xls, ods, csv, parquet) or a job file (.toml); `hazebook init` writes an example job file.",
            select.input.display()
        );
    }
    let mut plan = if is_job_file(&select.input) {
        from_job(LoadedJob::load(&select.input)?)?
    } else {
        from_workbook(&select.input)
    };
    plan.today = today;
    plan.spec.strict |= select.strict;
    plan.spec.period = period.clone();
    plan.period = period;
    if let Some(t) = &ov.template {
        plan.template = t.clone();
    }
    if let Some(o) = &ov.out {
        plan.out_dir = o.clone();
    }
    if ov.side_output.is_some() {
        plan.side_output = ov.side_output;
    }
    Ok(plan)
}

fn from_workbook(path: &Path) -> Plan {
    Plan {
        job_name: config::stem(path),
        job: None,
        spec: InputSpec {
            paths: vec![path.to_path_buf()],
            ..InputSpec::default()
        },
        settings: Settings::default(),
        template: "full".into(),
        out_dir: PathBuf::from("."),
        output_pattern: DEFAULT_OUTPUT_NAME.into(),
        side_output: None,
        period: None,
        today: Utc::now().date_naive(),
        globbed: Vec::new(),
    }
}

fn from_job(job: LoadedJob) -> anyhow::Result<Plan> {
    let dir = job.dir();
    let f = &job.file;
    let where_ = job.path.display().to_string();
    if f.input.paths.is_empty() {
        bail!(
            "{where_}: [input] paths is empty: expected one or more workbook paths or glob patterns, relative to the job file, e.g. paths = [\"campaign.xlsx\"]"
        );
    }
    let mut paths = Vec::new();
    let mut globbed = Vec::new();
    for pattern in &f.input.paths {
        let full = dir.join(pattern);
        let text = full.to_string_lossy().into_owned();
        if pattern.contains(['*', '?', '[']) {
            let mut found: Vec<PathBuf> = glob::glob(&text)
                .with_context(|| format!("{where_}: [input] paths: bad glob pattern {pattern:?}"))?
                .filter_map(Result::ok)
                .collect();
            found.sort();
            if found.is_empty() {
                bail!(
                    "{where_}: [input] paths: {pattern:?} matches no file (looked in {})",
                    dir.display()
                );
            }
            globbed.extend(found.iter().cloned());
            paths.extend(found);
        } else {
            if !full.exists() {
                bail!(
                    "{where_}: [input] paths: {} does not exist (paths are relative to the job file's folder {})",
                    full.display(),
                    dir.display()
                );
            }
            paths.push(full);
        }
    }
    let settings = f
        .solver
        .settings()
        .map_err(|m| anyhow::anyhow!("{where_}: {m}"))?;
    let spec = InputSpec {
        paths,
        sheet: f.input.sheet.clone(),
        site_sheet: f.input.site_sheet.clone(),
        header_row: f.input.header_row,
        units_row: f.input.units_row,
        columns: f.input.columns.clone(),
        fill_values: f.input.fill_values.clone(),
        sites: f.sites.clone(),
        defaults: f.atmosphere.clone(),
        period: None,
        fallback: f
            .input
            .fallback_checked()
            .map_err(|m| anyhow::anyhow!("{where_}: {m}"))?,
        defaults_set: super::config::atmosphere_keys(&job.text),
        strict: f.input.strict,
        ignore_columns: f.input.ignore_columns.clone(),
        defaults_allowed: f.input.defaults_allowed.clone(),
        site_name: f.input.site_name.clone(),
        moving_platform: f.input.moving_platform,
        site_tolerance_km: f.input.site_tolerance_km,
    };
    let template = if f.report.template.ends_with(".toml") || f.report.template.contains('/') {
        dir.join(&f.report.template).to_string_lossy().into_owned()
    } else {
        f.report.template.clone()
    };
    let out_dir = f
        .report
        .folder
        .as_ref()
        .map(|d| dir.join(d))
        .unwrap_or_else(|| PathBuf::from("."));
    Ok(Plan {
        job_name: job.name(),
        spec,
        settings,
        template,
        out_dir,
        output_pattern: f.report.output.clone(),
        side_output: f.report.side_output,
        period: None,
        today: Utc::now().date_naive(),
        job: Some(job),
        globbed,
    })
}
