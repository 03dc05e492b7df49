//! `hazebook merge`: one report from the partial results of partitioned runs.
//!
//! The partitions (by site with `--site`, by period with `--period`, or both) each wrote a
//! bundle ([`super::partial`]). The merge checks that the bundles fit together, joins their
//! rows in input order (file, sheet, row — whatever the order the bundles are given in), and
//! writes the report from the joined rows, so every statistic is recomputed from the rows, not
//! averaged from partial summaries. Partitions by site of one reading give the same sheets as
//! the single run over the same inputs (the About sheet adds a note naming the bundles).
//!
//! Row counts: `computed` is the number of joined rows and `rejected` the number of distinct
//! rejected rows (each partition of a reading lists the same rejected rows). Every partition
//! counted every row of its input files as read, so `read` is taken once per set of input
//! files (by SHA-256), the largest any bundle of that set gives, and summed over distinct
//! sets; `outside_period` is then what remains: `read − computed − rejected`, the rows that
//! fell in no partition. Assumption row counts are tallied by ingestion over the rows of the
//! period before a site filter, so they are taken once per input-file set and period and
//! summed over those.

use std::collections::{BTreeMap, HashMap};
use std::path::{Path, PathBuf};

use anyhow::{Context as _, bail};

use super::log::Log;
use super::output::{self, FolderLock, NameTokens, Staged, expand_name};
use super::partial::{self, Bundle};
use super::run::{
    created_time, named, report_stale, site_filter_note, staging_error, template_file,
};
use crate::cli::{MergeArgs, Status};
use crate::ingest::{Assumption, Counts, Ingested, InputFile, Rejection};
use crate::physics::ObservationResult;
use crate::report::{self, About, ReportInput, SideFormat, template};

/// Default output name of a merged report.
pub const DEFAULT_MERGED_NAME: &str = "{job}-merged-report.xlsx";

/// Merge partial results into one report; errors are also written to the log file.
pub fn merge(a: &MergeArgs) -> anyhow::Result<Status> {
    let log = Log::new(a.outputs.quiet, a.outputs.log.as_deref(), &a.bundles)?;
    log.outcome("merge", merge_inner(a, &log))
}

fn merge_inner(a: &MergeArgs, log: &Log) -> anyhow::Result<Status> {
    let today = super::period::parse_today(a.today.as_deref()).map_err(anyhow::Error::msg)?;
    refuse_repeats(&a.bundles)?;
    let mut bundles = Vec::with_capacity(a.bundles.len());
    let mut states = Vec::with_capacity(a.bundles.len());
    for p in &a.bundles {
        let (b, state) = partial::read_checked(p)?;
        bundles.push(b);
        states.push(state);
    }
    check_compatible(&a.bundles, &bundles)?;
    // Edited results and values a run would reject are refused, after the compatibility
    // checks (whose messages say more about bundles of different runs).
    for ((p, b), state) in a.bundles.iter().zip(&bundles).zip(states) {
        let path = p.display().to_string();
        match state {
            partial::Integrity::Intact => {}
            partial::Integrity::Edited => bail!(partial::PartialError::Edited { path }),
            partial::Integrity::Missing => bail!(partial::PartialError::NoDigest { path }),
        }
        partial::validate(p, b)?;
    }
    let merged = join(&a.bundles, &bundles)?;
    let first = &bundles[0];
    log.info(&format!(
        "hazebook {} — merging {} partial results of job {}: {} rows computed, {} rejected, {} read",
        env!("CARGO_PKG_VERSION"),
        bundles.len(),
        first.job_name,
        merged.ingested.counts.computed,
        merged.ingested.counts.rejected,
        merged.ingested.counts.read
    ));
    for w in &merged.warnings {
        log.warn(w);
    }

    let template_name = match &a.template {
        Some(t) => t.clone(),
        None if bundles.iter().all(|b| b.template == first.template) => first.template.clone(),
        None => "full".into(),
    };
    let tpl = template::load(&template_name)?;
    let job_name = a.name.clone().unwrap_or_else(|| first.job_name.clone());
    let period = common(&bundles, |b| b.period.clone()).flatten();
    let out_dir = a.out.clone().unwrap_or_else(|| PathBuf::from("."));
    let pattern = a.output.as_deref().unwrap_or(DEFAULT_MERGED_NAME);
    let name = expand_name(
        pattern,
        &NameTokens {
            job: job_name.clone(),
            site: None,
            period: period.as_ref().map(|p| p.label.clone()),
            date: today.format("%Y-%m-%d").to_string(),
        },
    )
    .map_err(anyhow::Error::msg)?;

    let path = out_dir.join(name);
    let side = a
        .outputs
        .side_output
        .map(SideFormat::from)
        .map(|f| (f, path.with_extension(f.extension())));
    let mut outputs: Vec<(&str, PathBuf)> = vec![("report", path.clone())];
    if let Some((f, p)) = &side {
        for file in report::side_files(p, *f) {
            outputs.push(("side output", file));
        }
    }
    let mut inputs = a.bundles.clone();
    inputs.extend(template_file(&template_name));
    log.add_inputs(&inputs);
    output::check_outputs(&outputs, &inputs).map_err(anyhow::Error::msg)?;
    log.confirm(&outputs)?;

    let version = if first.hazebook_version == env!("CARGO_PKG_VERSION") {
        first.hazebook_version.clone()
    } else {
        format!(
            "{} (results), merged by {}",
            first.hazebook_version,
            env!("CARGO_PKG_VERSION")
        )
    };
    let about = About {
        job_name,
        version,
        job_text: common(&bundles, |b| b.job_text.clone()).flatten(),
        template_name: template_name.clone(),
        period: period.as_ref().map(|p| p.label.clone()),
        created_utc: created_time(&merged.ingested),
        notes: notes(&a.bundles, &bundles, period.as_ref()),
    };
    let input = ReportInput {
        ingested: &merged.ingested,
        results: &merged.results,
        settings: &first.settings,
        mapping: &merged.ingested.mapping,
        about,
    };
    if side.as_ref().is_some_and(|(f, _)| *f == SideFormat::Netcdf) && input.results.is_empty() {
        bail!(
            "the bundles hold no computed row: the NetCDF side output needs at least one; nothing written. Rerun without --side-output netcdf"
        );
    }
    std::fs::create_dir_all(&out_dir)
        .with_context(|| format!("{}: cannot create the output folder", out_dir.display()))?;
    let lock = FolderLock::acquire(&out_dir)
        .with_context(|| format!("{}: cannot lock the output folder", out_dir.display()))?;
    report_stale(&lock, log);
    let mut staged = Staged::new();
    let tmp = staged.add(&path).with_context(|| staging_error(&path))?;
    report::write_report(&tmp, &tpl, &input).map_err(|e| named(e, &path, "report"))?;
    if let Some((fmt, side)) = &side {
        let meta = report::SideMeta {
            command: Some(report::side::command_line()),
            // The runs' job file, when they had one, names the institution.
            institution: input
                .about
                .job_text
                .as_deref()
                .and_then(|t| toml::from_str::<super::config::JobFile>(t).ok())
                .and_then(|j| j.report.institution),
        };
        let mut tmps = Vec::new();
        for f in report::side_files(side, *fmt) {
            tmps.push(staged.add(&f).with_context(|| staging_error(&f))?);
        }
        report::write_side_staged(&tmps, side, *fmt, &input, &meta)
            .map_err(|e| named(e, side, "side output"))?;
    }
    let written = staged.commit()?;
    for p in &written {
        println!("{}", p.display());
        log.info(&format!("wrote {}", p.display()));
    }
    let c = merged.ingested.counts;
    log.info(&format!(
        "done: {} rows computed, {} rejected, {} in no partition",
        c.computed, c.rejected, c.outside_period
    ));
    Ok(if merged.ingested.rejected.is_empty() {
        Status::Success
    } else {
        Status::SuccessWithRejected
    })
}

/// A bundle given twice (the same file, under any spelling) is refused before reading.
fn refuse_repeats(paths: &[PathBuf]) -> anyhow::Result<()> {
    let mut seen: HashMap<PathBuf, &Path> = HashMap::new();
    for p in paths {
        let key = p.canonicalize().unwrap_or_else(|_| p.clone());
        if let Some(before) = seen.insert(key, p) {
            bail!(
                "{} is listed twice (also as {}): each partition's results may be merged once; remove the repeat",
                p.display(),
                before.display()
            );
        }
    }
    Ok(())
}

/// Bundles fit together when one hazebook version computed them with the same settings.
fn check_compatible(paths: &[PathBuf], bundles: &[Bundle]) -> anyhow::Result<()> {
    let (p0, b0) = (&paths[0], &bundles[0]);
    let s0 = settings_map(b0)?;
    for (p, b) in paths.iter().zip(bundles).skip(1) {
        if b.hazebook_version != b0.hazebook_version {
            bail!(
                "{} was computed by hazebook {} but {} by hazebook {}; merge results of one version (rerun the partitions with one version)",
                p0.display(),
                b0.hazebook_version,
                p.display(),
                b.hazebook_version
            );
        }
        let s = settings_map(b)?;
        for (k, v0) in &s0 {
            let v = s.get(k).cloned().unwrap_or(serde_json::Value::Null);
            if *v0 != v {
                bail!(
                    "{} and {} were computed with different settings: {k} is {} in the first and {} in the second; merge results of one job (rerun the partitions with the same job file)",
                    p0.display(),
                    p.display(),
                    show(v0),
                    show(&v)
                );
            }
        }
    }
    Ok(())
}

fn settings_map(b: &Bundle) -> anyhow::Result<BTreeMap<String, serde_json::Value>> {
    Ok(serde_json::from_value(serde_json::to_value(&b.settings)?)?)
}

fn show(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::String(s) => s.clone(),
        other => other.to_string(),
    }
}

/// The value every bundle has, if they all agree.
fn common<T: PartialEq>(bundles: &[Bundle], f: impl Fn(&Bundle) -> T) -> Option<T> {
    let v = f(&bundles[0]);
    bundles[1..].iter().all(|b| f(b) == v).then_some(v)
}

struct Merged {
    ingested: Ingested,
    results: Vec<ObservationResult>,
    warnings: Vec<String>,
}

/// Identity of an input row across bundles: file (by SHA-256), sheet, row.
type RowKey = (String, String, u32);

/// Where a row sorts: file position in the merged file list, sheet position in that file, row.
type SortKey = (usize, usize, u32);

/// Join the bundles: files, rows (checked for overlap), rejected rows, mapping, warnings,
/// assumptions and counts.
fn join(paths: &[PathBuf], bundles: &[Bundle]) -> anyhow::Result<Merged> {
    let mut warnings = Vec::new();
    // Files by SHA-256, in the order first seen; sheets joined.
    let mut files: Vec<InputFile> = Vec::new();
    for b in bundles {
        for f in &b.files {
            match files.iter_mut().find(|g| g.sha256 == f.sha256) {
                Some(g) => {
                    for s in &f.sheets {
                        if !g.sheets.contains(s) {
                            g.sheets.push(s.clone());
                        }
                    }
                }
                None => files.push(f.clone()),
            }
        }
    }
    let sort_key = |sha: &str, sheet: &str, row: u32| -> SortKey {
        let fi = files.iter().position(|f| f.sha256 == sha);
        let si = fi
            .and_then(|i| files[i].sheets.iter().position(|s| s == sheet))
            .unwrap_or(usize::MAX);
        (fi.unwrap_or(usize::MAX), si, row)
    };

    // Accepted rows, each input row in one bundle only.
    let mut owner: HashMap<RowKey, usize> = HashMap::new();
    let mut rows: Vec<(SortKey, &partial::BundleRow)> = Vec::new();
    for (i, b) in bundles.iter().enumerate() {
        let sha = file_hashes(b);
        for r in &b.rows {
            let file = sha
                .get(r.origin.file.as_str())
                .map_or_else(|| r.origin.file.clone(), |s| s.to_string());
            let key = (file.clone(), r.origin.sheet.clone(), r.origin.row);
            if let Some(&j) = owner.get(&key) {
                bail!(
                    "{}, row {} is in both {} and {}: partitions must not overlap (check the --site and --period of each run), and each partition's results may be merged once",
                    place(&r.origin.file, &r.origin.sheet),
                    r.origin.row,
                    paths[j].display(),
                    paths[i].display()
                );
            }
            owner.insert(key, i);
            rows.push((sort_key(&file, &r.origin.sheet, r.origin.row), r));
        }
    }
    rows.sort_by_key(|(k, _)| *k);

    // Rejected rows: every partition of a reading lists the same ones; keep each once.
    let mut seen_rejected: HashMap<RowKey, ()> = HashMap::new();
    let mut rejected: Vec<(SortKey, &Rejection)> = Vec::new();
    for b in bundles {
        let sha = file_hashes(b);
        for r in &b.rejected {
            let file = sha
                .get(r.file.as_str())
                .map_or_else(|| r.file.clone(), |s| s.to_string());
            let key = (file.clone(), r.sheet.clone(), r.row);
            if owner.contains_key(&key) {
                bail!(
                    "{}, row {} is computed in one bundle and rejected in another: the bundles did not read the inputs alike; rerun the partitions with one job file",
                    place(&r.file, &r.sheet),
                    r.row
                );
            }
            if seen_rejected.insert(key, ()).is_none() {
                rejected.push((sort_key(&file, &r.sheet, r.row), r));
            }
        }
    }
    rejected.sort_by_key(|(k, _)| *k);

    let mut mapping = Vec::new();
    let mut file_warnings = Vec::new();
    let (mut ignored, mut site_columns, mut site_rules) = (Vec::new(), Vec::new(), Vec::new());
    let mut site_labels = BTreeMap::new();
    for b in bundles {
        push_new(&mut ignored, &b.ignored);
        push_new(&mut site_columns, &b.site_columns);
        push_new(&mut site_rules, &b.site_rules);
        for (k, v) in &b.site_labels {
            site_labels.entry(k.clone()).or_insert_with(|| v.clone());
        }
        for m in &b.mapping {
            if !mapping.contains(m) {
                mapping.push(m.clone());
            }
        }
        for w in &b.warnings {
            if !file_warnings.contains(w) {
                file_warnings.push(w.clone());
            }
        }
    }

    // Rows read: once per input-file set.
    let mut read_by_set: BTreeMap<Vec<String>, (usize, usize)> = BTreeMap::new();
    for (i, b) in bundles.iter().enumerate() {
        let set = file_set(b);
        let e = read_by_set.entry(set).or_insert((b.counts.read, i));
        if e.0 != b.counts.read {
            warnings.push(format!(
                "{} read {} rows but {} read {} from the same files; counting {}",
                paths[e.1].display(),
                e.0,
                paths[i].display(),
                b.counts.read,
                e.0.max(b.counts.read)
            ));
            e.0 = e.0.max(b.counts.read);
        }
    }
    let sets: Vec<&Vec<String>> = read_by_set.keys().collect();
    for (i, x) in sets.iter().enumerate() {
        for y in &sets[i + 1..] {
            if x.iter().any(|s| y.contains(s)) {
                warnings.push(
                    "some bundles read overlapping but different sets of input files: rows read of the shared files are counted once per set, so the About sheet's row reconciliation may not hold".into(),
                );
            }
        }
    }
    let read: usize = read_by_set.values().map(|(n, _)| n).sum();

    // Assumptions: once per input-file set and period, summed over those.
    let mut groups: Vec<(Vec<String>, Option<String>)> = Vec::new();
    let mut tally: BTreeMap<(String, String, u8), (Assumption, usize)> = BTreeMap::new();
    for b in bundles {
        let g = (file_set(b), b.period.as_ref().map(|p| p.label.clone()));
        if groups.contains(&g) {
            continue;
        }
        groups.push(g);
        for a in &b.assumptions {
            tally
                .entry((a.quantity.clone(), a.value.clone(), a.source as u8))
                .or_insert_with(|| (a.clone(), 0))
                .1 += a.rows;
        }
    }
    let assumptions: Vec<Assumption> = tally
        .into_values()
        .map(|(a, rows)| Assumption { rows, ..a })
        .collect();

    let computed = rows.len();
    let n_rejected = rejected.len();
    let counts = Counts {
        read,
        computed,
        rejected: n_rejected,
        outside_period: read.saturating_sub(computed + n_rejected),
    };
    let ingested = Ingested {
        frame: Default::default(),
        sites: rows.iter().map(|(_, r)| r.site.clone()).collect(),
        origins: rows.iter().map(|(_, r)| r.origin.clone()).collect(),
        observations: rows.iter().map(|(_, r)| r.observation.clone()).collect(),
        row_warnings: rows.iter().map(|(_, r)| r.warnings.clone()).collect(),
        rejected: rejected.into_iter().map(|(_, r)| r.clone()).collect(),
        warnings: file_warnings,
        mapping,
        // Where metadata-sheet values came from is said by each partition's run.
        metadata: Vec::new(),
        assumptions,
        files,
        counts,
        other_sites: 0,
        ignored,
        site_columns,
        site_rules,
        site_labels,
    };
    Ok(Merged {
        results: rows.iter().map(|(_, r)| r.result).collect(),
        ingested,
        warnings,
    })
}

/// File name as given → SHA-256, for one bundle.
fn file_hashes(b: &Bundle) -> HashMap<&str, &str> {
    b.files
        .iter()
        .map(|f| (f.path.as_str(), f.sha256.as_str()))
        .collect()
}

fn file_set(b: &Bundle) -> Vec<String> {
    let mut v: Vec<String> = b.files.iter().map(|f| f.sha256.clone()).collect();
    v.sort();
    v
}

fn place(file: &str, sheet: &str) -> String {
    if sheet.is_empty() {
        file.to_string()
    } else {
        format!("{file}, sheet \"{sheet}\"")
    }
}

/// About notes: the job, the period if common, and the bundles merged with their partitions.
fn notes(
    paths: &[PathBuf],
    bundles: &[Bundle],
    period: Option<&partial::PeriodWindow>,
) -> Vec<String> {
    let mut v = Vec::new();
    match common(bundles, |b| b.job_file.clone()) {
        Some(Some(j)) => v.push(format!("Job file: {j}")),
        Some(None) => v.push("No job file: built-in defaults and header detection.".into()),
        None => v.push("Job files differ between the partial results (listed below).".into()),
    }
    if let Some(p) = period {
        v.push(format!(
            "Period: {} (rows from {} to before {})",
            p.label,
            p.start_utc.format("%Y-%m-%d"),
            p.end_utc.format("%Y-%m-%d")
        ));
    }
    if let Some(sites) = common(bundles, |b| b.sites.clone())
        && !sites.is_empty()
    {
        v.push(site_filter_note(&sites));
    }
    match common(bundles, |b| b.uncertainty_notes.clone()) {
        Some(u) => v.extend(u),
        None => v.push(
            "The partial results declare different input uncertainties (see each job file).".into(),
        ),
    }
    // Sorted by file name, so the report does not depend on the order the bundles are given.
    let mut listed: Vec<(&PathBuf, &Bundle)> = paths.iter().zip(bundles).collect();
    listed.sort_by_key(|(p, _)| p.file_name().map(|n| n.to_os_string()));
    let parts: Vec<String> = listed
        .into_iter()
        .map(|(p, b)| {
            let name = p
                .file_name()
                .map_or_else(|| p.display().to_string(), |n| n.to_string_lossy().into());
            let mut what = Vec::new();
            if !b.sites.is_empty() {
                what.push(format!("sites {}", b.sites.join(", ")));
            }
            if let Some(per) = &b.period {
                what.push(format!("period {}", per.label));
            }
            if let Some(j) = &b.job_file
                && common(bundles, |b| b.job_file.clone()).is_none()
            {
                what.push(format!("job file {j}"));
            }
            let what = if what.is_empty() {
                "all rows".to_string()
            } else {
                what.join(", ")
            };
            format!("{name} ({what}, {} rows)", b.rows.len())
        })
        .collect();
    v.push(format!(
        "Merged by `hazebook merge` from {} partial results: {}. Statistics are recomputed from the joined rows; rows read are counted once per set of input files.",
        bundles.len(),
        parts.join("; ")
    ));
    v
}

/// Append the items of `new` that `list` does not hold yet, in order.
fn push_new<T: Clone + PartialEq>(list: &mut Vec<T>, new: &[T]) {
    for x in new {
        if !list.contains(x) {
            list.push(x.clone());
        }
    }
}
