//! `hazebook run`: the main job.

use std::borrow::Cow;
use std::path::PathBuf;
use std::time::Instant;

use anyhow::{Context as _, bail};
use chrono::{DateTime, TimeZone, Utc};
use polars::prelude::{BooleanChunked, NewChunkedArray};

use super::log::Log;
use super::output::{
    self, FolderLock, NameTokens, Staged, expand_name, own_output_kind, same_file, site_file_names,
    token_value,
};
use super::partial;
use super::plan::{self, Overrides, Plan};
use super::summary;
use crate::cli::{RunArgs, Status};
use crate::ingest::{self, Ingested};
use crate::physics::ObservationResult;
use crate::physics::forcing::{Context, compute_batch_with_context};
use crate::physics::uncertainty::propagate_batch;
use crate::report::{self, About, ReportInput, SideFormat, SideMeta, WriteOptions, template};

/// Above this many results the workbook is compressed faster (zip level 1): most of a large
/// write is deflate, and level 1 writes 100,000 results about 40 % faster for a file about a
/// quarter larger (`cargo bench --bench report`).
const LARGE_REPORT_ROWS: usize = 20_000;
const LARGE_REPORT_ZIP_LEVEL: u8 = 1;

/// Observations per progress step.
const CHUNK: usize = 4096;

/// Run the main job; errors are also written to the log file.
pub fn run(a: &RunArgs) -> anyhow::Result<Status> {
    let log = Log::new(
        a.outputs.quiet,
        a.outputs.log.as_deref(),
        std::slice::from_ref(&a.select.input),
    )?;
    log.outcome("run", run_inner(a, &log))
}

fn run_inner(a: &RunArgs, log: &Log) -> anyhow::Result<Status> {
    let ov = Overrides {
        template: a.template.clone(),
        out: a.out.clone(),
        side_output: a.outputs.side_output.map(Into::into),
    };
    let mut plan = plan::build(&a.select, &ov)?;
    let mut tpl = template::load(&plan.template)?;
    let uncertainty = plan
        .job
        .as_ref()
        .map(|j| j.file.uncertainty.clone())
        .unwrap_or_default();
    let (declared, uncertainty_notes) = uncertainty
        .resolve(tpl.propagate_uncertainty)
        .map_err(|m| anyhow::anyhow!("{}: {m}", inputs_text_job(&plan)))?;
    if let Some(n) = plan
        .job
        .as_ref()
        .and_then(|j| j.file.report.min_observations_per_day)
    {
        if n == 0 {
            bail!(
                "{}: [report] min_observations_per_day: expected a whole number of at least 1, found 0",
                inputs_text_job(&plan)
            );
        }
        tpl.min_observations_per_day = n;
    }
    log.info(&format!(
        "hazebook {} — job {}{}",
        env!("CARGO_PKG_VERSION"),
        plan.job_name,
        plan.period
            .as_ref()
            .map(|p| format!(", period {}", p.label))
            .unwrap_or_default()
    ));
    if plan.job.is_none() {
        log.info("no job file: built-in defaults and header detection (`hazebook init --from <workbook>` pins them in a job file)");
    }

    skip_own_outputs(&mut plan, a.outputs.log.as_deref(), log)?;
    // What the run reads; no output may be one of these.
    let inputs = all_inputs(&plan);
    log.add_inputs(&inputs);

    let t = Instant::now();
    let mut ing = ingest::read_inputs(&plan.spec)?;
    let t_read = t.elapsed().as_secs_f64();
    for l in summary::understanding(&ing) {
        log.info(&l);
    }
    for w in &ing.warnings {
        log.warn(w);
    }
    if !ing.rejected.is_empty() {
        log.warn(&format!(
            "{} rejected (listed on the Rejected sheet):",
            ingest::rows_text(ing.rejected.len())
        ));
        for l in summary::rejected_lines(&ing, 10) {
            log.warn(&l);
        }
    }
    let strict = ingest::strict_problems(&ing, &plan.spec);
    if plan.spec.strict && !strict.is_empty() {
        bail!("{}", summary::strict_refusal(&strict));
    }
    if ing.counts.read == 0 {
        bail!(
            "{}: no data rows found under the header; nothing to compute",
            inputs_text(&plan)
        );
    }
    if ing.observations.is_empty() && ing.counts.rejected == 0 {
        bail!(
            "no rows in period {}: {} rows read, all outside it; nothing written",
            plan.period.as_ref().map_or("", |p| p.label.as_str()),
            ing.counts.read
        );
    }
    // Tallied over the rows of the period before the site filter, like ingestion's.
    one_wavelength_assumptions(&mut ing);
    // File-name forms of the sites, from every site read (before a site filter), so that
    // partitions of one reading agree and no two sites share an output.
    let site_names = site_file_names(&ing.sites).map_err(anyhow::Error::msg)?;
    // A site is asked for by its key (code) or by its full name or label; the key is used.
    let asked_sites: Vec<String> = a
        .sites
        .iter()
        .map(|s| summary::site_key_for(&ing, s).unwrap_or(s).to_string())
        .collect();
    let outside_site = if asked_sites.is_empty() {
        0
    } else {
        filter_sites(&mut ing, &asked_sites, log)?
    };

    if plan.side_output == Some(SideFormat::Netcdf) && ing.observations.is_empty() {
        bail!(
            "every row was rejected: the NetCDF side output needs at least one computed row; nothing written. Fix the rows listed above, or rerun without --side-output netcdf to get the report with its Rejected sheet"
        );
    }
    let t = Instant::now();
    let results = compute(&ing, &plan, log);
    let before = ing.rejected.len();
    let mut results = ingest::reject_uncomputable(&mut ing, results, &plan.settings);
    for r in &ing.rejected[before..] {
        log.warn(&format!("rejected after the radiative transfer: {r}"));
    }
    for (o, r) in ing.observations.iter().zip(results.iter_mut()) {
        crate::physics::spectral_flags::refine(o, &plan.settings, &mut r.flags);
    }
    if !declared.is_empty() {
        let ctx = Context::new(&plan.settings);
        let u = propagate_batch(&ing.observations, &results, &plan.settings, &ctx, &declared);
        for (r, u) in results.iter_mut().zip(u) {
            r.uncertainty = Some(u);
        }
    }
    let t_physics = t.elapsed().as_secs_f64();

    let created = created_time(&ing);
    let tokens = NameTokens {
        job: plan.job_name.clone(),
        site: None,
        period: plan.period.as_ref().map(|p| p.label.clone()),
        date: plan.today.format("%Y-%m-%d").to_string(),
    };
    let file_form = |s: &String| site_names.get(s).cloned().unwrap_or_else(|| token_value(s));
    let site_label = (!asked_sites.is_empty()).then(|| {
        asked_sites
            .iter()
            .map(file_form)
            .collect::<Vec<_>>()
            .join("+")
    });
    let pattern = output_pattern(&plan.output_pattern, site_label.is_some());
    // One report per site only when the output name asks for it.
    let per_site = plan.output_pattern.contains("{site}");
    let groups: Vec<(Option<String>, Vec<bool>)> = if per_site {
        let mut names: Vec<String> = ing.sites.clone();
        names.sort();
        names.dedup();
        names
            .into_iter()
            .map(|n| {
                let mask = ing.sites.iter().map(|s| *s == n).collect();
                (Some(n), mask)
            })
            .collect()
    } else {
        vec![(None, vec![true; ing.observations.len()])]
    };
    // Sites told apart by a suffix, said in the log and on the About sheet.
    let renamed: Vec<String> = site_names
        .iter()
        .filter(|(s, form)| **form != token_value(s) && (per_site || a.sites.contains(s)))
        .map(|(s, form)| format!("{s:?} as {form}"))
        .collect();
    let renamed_note = (!renamed.is_empty()).then(|| {
        format!(
            "Sites whose names give the same file name are told apart by a suffix (the first 8 hex digits of the SHA-256 of the name): {}",
            renamed.join(", ")
        )
    });
    if let Some(n) = &renamed_note {
        log.warn(n);
    }

    // Every output path, checked against the inputs and each other before anything is written.
    let mut reports = Vec::with_capacity(groups.len());
    let mut outputs: Vec<(&str, PathBuf)> = Vec::new();
    for (site, _) in &groups {
        let name = expand_name(
            &pattern,
            &NameTokens {
                site: site.as_ref().map(file_form).or_else(|| site_label.clone()),
                ..tokens.clone()
            },
        )
        .map_err(anyhow::Error::msg)?;
        let path = plan.out_dir.join(&name);
        outputs.push(("report", path.clone()));
        if let Some(fmt) = plan.side_output {
            for f in report::side_files(&path.with_extension(fmt.extension()), fmt) {
                outputs.push(("side output", f));
            }
        }
        reports.push(path);
    }
    let bundle_path = if a.partial {
        let name = expand_name(
            &pattern,
            &NameTokens {
                site: site_label.clone(),
                ..tokens.clone()
            },
        )
        .map_err(anyhow::Error::msg)?;
        let path = plan.out_dir.join(name).with_extension("partial.json");
        outputs.push(("partial results", path.clone()));
        Some(path)
    } else {
        None
    };
    output::check_outputs(&outputs, &inputs).map_err(anyhow::Error::msg)?;
    log.confirm(&outputs)?;

    std::fs::create_dir_all(&plan.out_dir).with_context(|| {
        format!(
            "{}: cannot create the output folder",
            plan.out_dir.display()
        )
    })?;
    let lock = FolderLock::acquire(&plan.out_dir)
        .with_context(|| format!("{}: cannot lock the output folder", plan.out_dir.display()))?;
    report_stale(&lock, log);

    // Every output goes to a temporary file first; all are renamed into place at the end.
    let mut staged = Staged::new();
    let mut t_write = 0.0;
    let mut t_stats = 0.0;
    for ((site, mask), path) in groups.into_iter().zip(&reports) {
        // One report per site needs the site's rows; a single report borrows them all.
        let (sub_ing, sub_res): (Cow<Ingested>, Cow<[ObservationResult]>) = if site.is_some() {
            let (i, r) = subset(&ing, &results, &mask)?;
            (Cow::Owned(i), Cow::Owned(r))
        } else {
            (Cow::Borrowed(&ing), Cow::Borrowed(&results))
        };
        let about = About {
            job_name: plan.job_name.clone(),
            version: env!("CARGO_PKG_VERSION").into(),
            job_text: plan.job.as_ref().map(|j| j.text.clone()),
            template_name: plan.template.clone(),
            period: plan.period.as_ref().map(|p| p.label.clone()),
            created_utc: created,
            notes: {
                let mut n = notes(&plan, site.as_deref(), &asked_sites);
                n.extend(uncertainty_notes.iter().cloned());
                if sub_res.len() > LARGE_REPORT_ROWS {
                    n.push(format!(
                        "More than {LARGE_REPORT_ROWS} results: the workbook is compressed at zip level {LARGE_REPORT_ZIP_LEVEL} for speed (about a quarter larger than at the default level 6)."
                    ));
                }
                n.extend(renamed_note.clone());
                n
            },
        };
        let input = ReportInput {
            ingested: &sub_ing,
            results: &sub_res,
            settings: &plan.settings,
            mapping: &sub_ing.mapping,
            about,
        };
        let t = Instant::now();
        let options = WriteOptions {
            compression_level: if sub_res.len() > LARGE_REPORT_ROWS {
                LARGE_REPORT_ZIP_LEVEL
            } else {
                WriteOptions::default().compression_level
            },
            ..WriteOptions::default()
        };
        let tmp = staged.add(path).with_context(|| staging_error(path))?;
        report::write_report_with(&tmp, &tpl, &input, &options)
            .map_err(|e| named(e, path, "report"))?;
        t_write += t.elapsed().as_secs_f64();
        if let Some(fmt) = plan.side_output {
            let side = path.with_extension(fmt.extension());
            let meta = SideMeta {
                command: Some(report::side::command_line()),
                institution: plan
                    .job
                    .as_ref()
                    .and_then(|j| j.file.report.institution.clone()),
            };
            let t = Instant::now();
            let mut tmps = Vec::new();
            for f in report::side_files(&side, fmt) {
                tmps.push(staged.add(&f).with_context(|| staging_error(&f))?);
            }
            report::write_side_staged(&tmps, &side, fmt, &input, &meta)
                .map_err(|e| named(e, &side, "side output"))?;
            t_stats += t.elapsed().as_secs_f64();
        }
    }
    if let Some(path) = &bundle_path {
        let t = Instant::now();
        let bundle = bundle(
            &plan,
            &ing,
            &results,
            &asked_sites,
            outside_site,
            &uncertainty_notes,
        );
        let bytes = partial::to_bytes(path, &bundle)?;
        let tmp = staged.add(path).with_context(|| staging_error(path))?;
        std::fs::write(&tmp, bytes)
            .with_context(|| format!("{}: cannot write the partial results", path.display()))?;
        t_write += t.elapsed().as_secs_f64();
    }
    let written = staged.commit()?;
    drop(lock);
    for p in &written {
        println!("{}", p.display());
        log.info(&format!("wrote {}", p.display()));
    }
    if a.timings {
        eprintln!("timing: read {t_read:.3} s");
        eprintln!("timing: physics {t_physics:.3} s");
        eprintln!("timing: write {t_write:.3} s");
        if plan.side_output.is_some() {
            eprintln!("timing: side-output {t_stats:.3} s");
        }
    }
    let c = ing.counts;
    log.info(&format!(
        "done: {} computed, {} rejected{}",
        ingest::rows_text(c.computed),
        c.rejected,
        if c.outside_period > 0 {
            format!(", {} outside the period", c.outside_period)
        } else {
            String::new()
        }
    ));
    Ok(if ing.rejected.is_empty() {
        Status::Success
    } else {
        Status::SuccessWithRejected
    })
}

/// Compute every observation on all cores, with a progress bar on a terminal.
/// Rows whose SSA or g was given at one wavelength (held over the whole spectrum; flagged by
/// [`crate::physics::spectral_flags::refine`]), counted among the assumptions.
fn one_wavelength_assumptions(ing: &mut Ingested) {
    let ssa = ing.observations.iter().filter(|o| o.ssa.len() == 1).count();
    let g = ing
        .observations
        .iter()
        .filter(|o| o.asymmetry.len() == 1)
        .count();
    for (quantity, rows) in [
        ("ssa spectral dependence", ssa),
        ("asymmetry spectral dependence", g),
    ] {
        if rows > 0 {
            ing.assumptions.push(ingest::Assumption {
                quantity: quantity.into(),
                value: "given at one wavelength, held constant over the whole spectrum".into(),
                source: ingest::ValueSource::BuiltIn,
                rows,
            });
        }
    }
    // In the order `merge` tallies them, so that a merged report lists them alike.
    ing.assumptions.sort_by(|a, b| {
        (&a.quantity, &a.value, a.source as u8).cmp(&(&b.quantity, &b.value, b.source as u8))
    });
}

/// The job file's path for messages (or the inputs without one).
fn inputs_text_job(plan: &Plan) -> String {
    match &plan.job {
        Some(j) => j.path.display().to_string(),
        None => inputs_text(plan),
    }
}

fn compute(ing: &Ingested, plan: &Plan, log: &Log) -> Vec<ObservationResult> {
    let ctx = Context::new(&plan.settings);
    let pb = log.progress(ing.observations.len() as u64, "physics");
    let mut out = Vec::with_capacity(ing.observations.len());
    for chunk in ing.observations.chunks(CHUNK) {
        out.extend(compute_batch_with_context(chunk, &plan.settings, &ctx));
        pb.inc(chunk.len() as u64);
    }
    pb.finish_and_clear();
    // Rows placed by their date alone have no instantaneous values.
    ingest::blank_instantaneous(&ing.row_warnings, &mut out);
    out
}

/// The rows of one site.
fn subset(
    ing: &Ingested,
    results: &[ObservationResult],
    mask: &[bool],
) -> anyhow::Result<(Ingested, Vec<ObservationResult>)> {
    fn pick<T: Clone>(v: &[T], mask: &[bool]) -> Vec<T> {
        v.iter()
            .zip(mask)
            .filter(|(_, m)| **m)
            .map(|(x, _)| x.clone())
            .collect()
    }
    let frame = if ing.frame.height() == mask.len() {
        ing.frame
            .filter(&BooleanChunked::from_slice("mask".into(), mask))?
    } else {
        ing.frame.clone()
    };
    let mut sub = Ingested {
        frame,
        sites: pick(&ing.sites, mask),
        origins: pick(&ing.origins, mask),
        observations: pick(&ing.observations, mask),
        row_warnings: pick(&ing.row_warnings, mask),
        ..ing.clone()
    };
    // The rows of other sites are this report's "outside" rows, so that it reconciles.
    let left_out = ing.observations.len() - sub.observations.len();
    sub.counts.computed = sub.observations.len();
    sub.counts.outside_period += left_out;
    sub.other_sites += left_out;
    Ok((sub, pick(results, mask)))
}

/// Document creation time: `SOURCE_DATE_EPOCH` if set, else the latest observation time, so
/// the same inputs give the same bytes.
pub(super) fn created_time(ing: &Ingested) -> DateTime<Utc> {
    if let Some(secs) = std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse::<i64>().ok())
        && let Some(t) = Utc.timestamp_opt(secs, 0).single()
    {
        return t;
    }
    ing.observations
        .iter()
        .map(|o| o.time_utc)
        .max()
        .unwrap_or_else(|| {
            Utc.with_ymd_and_hms(2000, 1, 1, 0, 0, 0)
                .single()
                .expect("valid date")
        })
}

/// With a site filter, the output name carries the sites: `{site}` if the pattern has it, else
/// `-{site}` before the extension, so the partitions of one job do not overwrite each other.
fn output_pattern(pattern: &str, site_filter: bool) -> String {
    if !site_filter || pattern.contains("{site}") {
        return pattern.to_string();
    }
    match pattern.rfind('.') {
        Some(dot) if dot > 0 => format!("{}-{{site}}{}", &pattern[..dot], &pattern[dot..]),
        _ => format!("{pattern}-{{site}}"),
    }
}

/// Keep only the rows of `sites`; the others are counted as outside the period. Rejected rows
/// stay (their site may be the fault). Returns the number of rows left out.
///
/// Errors: no row of any of the sites and no rejected row (nothing to report).
fn filter_sites(ing: &mut Ingested, sites: &[String], log: &Log) -> anyhow::Result<usize> {
    let mut known: Vec<&str> = ing.sites.iter().map(String::as_str).collect();
    known.sort_unstable();
    known.dedup();
    let known_text = known
        .iter()
        .map(|s| ing.site_label(s))
        .collect::<Vec<_>>()
        .join(", ");
    let missing: Vec<&str> = sites
        .iter()
        .map(String::as_str)
        .filter(|s| !known.contains(s))
        .collect();
    let mask: Vec<bool> = ing.sites.iter().map(|s| sites.contains(s)).collect();
    let kept = mask.iter().filter(|m| **m).count();
    if kept == 0 && ing.rejected.is_empty() {
        bail!(
            "--site {}: no computed row of {} among the rows read (and in the period, if one is given); sites found: {known_text}. Check the spelling; nothing written.",
            sites.join(","),
            if sites.len() == 1 {
                "this site"
            } else {
                "these sites"
            },
        );
    }
    for m in &missing {
        log.warn(&format!(
            "--site {m}: no computed row of this site; sites found: {known_text}"
        ));
    }
    let removed = ing.sites.len() - kept;
    let (sub, _) = subset(ing, &[], &mask)?;
    *ing = sub;
    log.info(&format!(
        "site filter {}: {kept} rows kept, {removed} rows of other sites counted as outside",
        sites.join(", ")
    ));
    Ok(removed)
}

/// The partial results of this run, for `hazebook merge`.
fn bundle(
    plan: &Plan,
    ing: &Ingested,
    results: &[ObservationResult],
    sites: &[String],
    outside_site: usize,
    uncertainty_notes: &[String],
) -> partial::Bundle {
    let rows = (0..results.len())
        .map(|i| partial::BundleRow {
            site: ing.sites[i].clone(),
            origin: ing.origins[i].clone(),
            observation: ing.observations[i].clone(),
            warnings: ing.row_warnings.get(i).cloned().unwrap_or_default(),
            result: results[i],
        })
        .collect();
    partial::Bundle {
        format: partial::FORMAT.into(),
        format_version: partial::FORMAT_VERSION,
        hazebook_version: env!("CARGO_PKG_VERSION").into(),
        job_name: plan.job_name.clone(),
        job_file: plan.job.as_ref().map(|j| j.path.display().to_string()),
        job_text: plan.job.as_ref().map(|j| j.text.clone()),
        period: plan.period.as_ref().map(Into::into),
        sites: sites.to_vec(),
        settings: plan.settings.clone(),
        template: plan.template.clone(),
        rows,
        rejected: ing.rejected.clone(),
        warnings: ing.warnings.clone(),
        files: ing.files.clone(),
        mapping: ing.mapping.clone(),
        assumptions: ing.assumptions.clone(),
        counts: ing.counts,
        outside_site,
        ignored: ing.ignored.clone(),
        site_columns: ing.site_columns.clone(),
        site_rules: ing.site_rules.clone(),
        site_labels: ing.site_labels.clone(),
        uncertainty_notes: uncertainty_notes.to_vec(),
        content_sha256: None,
    }
}

/// Every file a run reads: the inputs, the job file and a template file.
fn all_inputs(plan: &Plan) -> Vec<PathBuf> {
    let mut v = plan.spec.paths.clone();
    v.extend(plan.job.as_ref().map(|j| j.path.clone()));
    v.extend(template_file(&plan.template));
    v
}

/// The template's file, when the template is not a built-in one.
pub(super) fn template_file(name: &str) -> Option<PathBuf> {
    let builtin = template::builtin().iter().any(|(n, _, _)| *n == name);
    (!builtin && std::path::Path::new(name).is_file()).then(|| PathBuf::from(name))
}

/// Leave out of the inputs the files a glob of `[input] paths` matched that are hazebook's
/// own outputs (a report, a side output, partial results — judged by content — or the log
/// file), with a warning naming each. A file named one by one is always read (and a run
/// that would write over it stops before writing).
///
/// Errors: every match of the globs was left out.
fn skip_own_outputs(
    plan: &mut Plan,
    log_file: Option<&std::path::Path>,
    log: &Log,
) -> anyhow::Result<()> {
    let before = plan.spec.paths.len();
    let globbed = std::mem::take(&mut plan.globbed);
    plan.spec.paths.retain(|p| {
        if !globbed.contains(p) {
            return true;
        }
        let kind = if log_file.is_some_and(|l| same_file(l, p)) {
            Some("the log file")
        } else {
            own_output_kind(p)
        };
        match kind {
            Some(k) => {
                log.warn(&format!(
                    "{}: skipped, a hazebook output ({k}) matched by a glob in [input] paths; name it in paths to read it",
                    p.display()
                ));
                false
            }
            None => true,
        }
    });
    if plan.spec.paths.is_empty() {
        bail!(
            "[input] paths: the {before} files matched are all hazebook outputs (skipped, see the warnings); nothing to read"
        );
    }
    Ok(())
}

/// Log the removal of temporary files that killed runs left in the output folder.
pub(super) fn report_stale(lock: &FolderLock, log: &Log) {
    let removed = lock.remove_stale_temporaries();
    if !removed.is_empty() {
        log.info(&format!(
            "removed {} temporary files left by earlier interrupted runs: {}",
            removed.len(),
            removed.join(", ")
        ));
    }
}

pub(super) fn staging_error(target: &std::path::Path) -> String {
    format!(
        "{}: cannot create a temporary file in its folder",
        target.display()
    )
}

/// A writing error named by the final path rather than its temporary file.
pub(super) fn named(e: report::ReportError, target: &std::path::Path, what: &str) -> anyhow::Error {
    match e {
        report::ReportError::Write { reason, .. } => {
            anyhow::anyhow!("{}: cannot write the {what}: {reason}", target.display())
        }
        other => other.into(),
    }
}

/// The About note of a site filter.
pub(super) fn site_filter_note(sites: &[String]) -> String {
    format!(
        "Site filter: {} (rows of other sites are counted as outside the period; rejected rows of every site are listed; assumption row counts cover every site read)",
        sites.join(", ")
    )
}

fn notes(plan: &Plan, site: Option<&str>, sites: &[String]) -> Vec<String> {
    let mut v = Vec::new();
    match &plan.job {
        Some(j) => v.push(format!("Job file: {}", j.path.display())),
        None => v.push("No job file: built-in defaults and header detection.".into()),
    }
    if let Some(p) = &plan.period {
        v.push(format!(
            "Period: {} (rows from {} to before {})",
            p.label,
            p.start.format("%Y-%m-%d"),
            p.end.format("%Y-%m-%d")
        ));
    }
    if !sites.is_empty() {
        v.push(site_filter_note(sites));
    }
    if let Some(s) = site {
        v.push(format!(
            "Site: {s} (one report per site; rejected rows of all sites are listed)"
        ));
    }
    v
}

fn inputs_text(plan: &Plan) -> String {
    plan.spec
        .paths
        .iter()
        .map(|p: &PathBuf| p.display().to_string())
        .collect::<Vec<_>>()
        .join(", ")
}
