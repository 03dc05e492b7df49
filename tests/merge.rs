//! Integration tests of partitioned runs (`run --site ... --partial`) and `hazebook merge`:
//! each runs the real binary in a fresh temporary folder on the bundled (invented) samples.

use std::path::{Path, PathBuf};
use std::process::Output;

mod binary_support;
mod outside_readers;

use binary_support::{run, samples, text};
use calamine::{Data, Reader, open_workbook_auto};

const SITES: [&str; 3] = ["Brinemouth", "Kelvergate", "Tarnfell"];

fn campaign() -> String {
    samples()
        .join("brinefell-campaign.xlsx")
        .to_string_lossy()
        .into_owned()
}

/// Paths printed on stdout, one a line.
fn paths(o: &Output) -> Vec<PathBuf> {
    text(&o.stdout).lines().map(PathBuf::from).collect()
}

fn ok(o: &Output, code: i32) {
    assert_eq!(
        o.status.code(),
        Some(code),
        "stdout: {}\nstderr: {}",
        text(&o.stdout),
        text(&o.stderr)
    );
}

/// Every sheet of a workbook, as rows of cells.
fn sheets(p: &Path) -> Vec<(String, Vec<Vec<Data>>)> {
    let mut wb = open_workbook_auto(p).expect("workbook reopens");
    wb.sheet_names()
        .into_iter()
        .map(|n| {
            let range = wb.worksheet_range(&n).unwrap();
            let rows = range.rows().map(<[Data]>::to_vec).collect();
            (n, rows)
        })
        .collect()
}

fn sheet<'a>(all: &'a [(String, Vec<Vec<Data>>)], name: &str) -> &'a [Vec<Data>] {
    &all.iter()
        .find(|(n, _)| n == name)
        .unwrap_or_else(|| panic!("sheet {name} missing"))
        .1
}

/// The About sheet without the merge's own note.
fn about_without_merge_note(all: &[(String, Vec<Vec<Data>>)]) -> Vec<Vec<Data>> {
    sheet(all, "About")
        .iter()
        .filter(|r| {
            !r.iter().any(
                |c| matches!(c, Data::String(s) if s.starts_with("Merged by `hazebook merge`")),
            )
        })
        .cloned()
        .collect()
}

/// The value right of a label in column A of the About sheet.
fn about_value(all: &[(String, Vec<Vec<Data>>)], label: &str) -> Data {
    sheet(all, "About")
        .iter()
        .find(|r| matches!(r.first(), Some(Data::String(s)) if s == label))
        .unwrap_or_else(|| panic!("About has no {label}"))[1]
        .clone()
}

/// The merged report equals the single run's: every sheet but About cell for cell, and About
/// apart from the note that names the merged bundles.
fn assert_same_report(single: &Path, merged: &Path) {
    let a = sheets(single);
    let b = sheets(merged);
    let names =
        |v: &[(String, Vec<Vec<Data>>)]| v.iter().map(|(n, _)| n.clone()).collect::<Vec<_>>();
    assert_eq!(names(&a), names(&b), "sheet names");
    for ((name, x), (_, y)) in a.iter().zip(&b) {
        if name == "About" {
            continue;
        }
        assert_eq!(x.len(), y.len(), "rows of sheet {name}");
        for (i, (rx, ry)) in x.iter().zip(y).enumerate() {
            assert_eq!(rx, ry, "sheet {name}, row {}", i + 1);
        }
    }
    let (ax, ay) = (about_without_merge_note(&a), about_without_merge_note(&b));
    for (i, (rx, ry)) in ax.iter().zip(&ay).enumerate() {
        assert_eq!(rx, ry, "About, row {}", i + 1);
    }
    assert_eq!(ax.len(), ay.len(), "rows of About");
    assert_eq!(
        sheet(&b, "About").len(),
        sheet(&a, "About").len() + 1,
        "the merge adds one note"
    );
}

/// `run --site S --partial` for each site; returns the bundle paths (relative to `cwd`).
fn site_partials(input: &str, cwd: &Path, extra: &[&str], code: i32) -> Vec<PathBuf> {
    SITES
        .iter()
        .map(|s| {
            let mut args = vec![
                "run",
                input,
                "--site",
                s,
                "--partial",
                "--out",
                "parts",
                "-q",
            ];
            args.extend_from_slice(extra);
            let o = run(&args, cwd);
            ok(&o, code);
            let p = paths(&o);
            assert_eq!(p.len(), 2, "a report and a bundle: {p:?}");
            assert!(
                p[1].to_string_lossy()
                    .ends_with(&format!("-{s}.partial.json")),
                "{p:?}"
            );
            p[1].clone()
        })
        .collect()
}

fn json(p: &Path) -> serde_json::Value {
    serde_json::from_slice(&std::fs::read(p).unwrap()).unwrap()
}

fn files_in(dir: &Path) -> Vec<String> {
    match std::fs::read_dir(dir) {
        Ok(rd) => rd
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|n| !n.starts_with(".hazebook.lock"))
            .collect(),
        Err(_) => Vec::new(),
    }
}

#[test]
fn site_partitions_merge_to_the_single_run() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let input = campaign();
    let single = run(&["run", &input, "--out", "single", "-q"], d);
    ok(&single, 0);
    let single_report = d.join(&paths(&single)[0]);

    let bundles = site_partials(&input, d, &[], 0);
    // Each partition counts the rows of the other sites as outside, and says so.
    let mut computed = 0;
    for (b, site) in bundles.iter().zip(SITES) {
        let v = json(&d.join(b));
        assert_eq!(v["format"], "hazebook-partial");
        assert_eq!(v["format_version"], 1);
        assert_eq!(v["sites"], serde_json::json!([site]));
        let c = &v["counts"];
        let n = c["computed"].as_u64().unwrap();
        assert_eq!(v["rows"].as_array().unwrap().len() as u64, n);
        assert_eq!(c["read"], 1837);
        assert_eq!(
            c["outside_period"].as_u64().unwrap() + n + c["rejected"].as_u64().unwrap(),
            1837
        );
        assert!(
            v["rows"]
                .as_array()
                .unwrap()
                .iter()
                .all(|r| r["site"] == site)
        );
        computed += n;
        let report = d.join(b.to_string_lossy().replace(".partial.json", ".xlsx"));
        let all = sheets(&report);
        assert_eq!(
            about_value(&all, "Outside the period"),
            Data::Float((1837 - n) as f64)
        );
        assert!(
            sheet(&all, "About").iter().flatten().any(
                |c| matches!(c, Data::String(s) if s.starts_with(&format!("Site filter: {site}")))
            ),
            "the About sheet names the site filter"
        );
    }
    assert_eq!(computed, 1837);

    // Given in reverse order: rows still come out in input order.
    let mut args: Vec<String> = vec!["merge".into()];
    args.extend(
        bundles
            .iter()
            .rev()
            .map(|b| b.to_string_lossy().into_owned()),
    );
    args.extend(["--out".into(), "merged".into()]);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let merged = run(&args, d);
    ok(&merged, 0);
    let merged_report = d.join(&paths(&merged)[0]);
    assert!(
        merged_report.ends_with("merged/brinefell-campaign-merged-report.xlsx"),
        "{}",
        merged_report.display()
    );
    assert_same_report(&single_report, &merged_report);
    outside_readers::keep(&merged_report, "merge-sites");
    let all = sheets(&merged_report);
    assert_eq!(sheet(&all, "Results").len(), 1837 + 2);
    assert_eq!(about_value(&all, "Rows read"), Data::Float(1837.0));
    assert_eq!(about_value(&all, "Outside the period"), Data::Float(0.0));

    // In the given order: the same bytes (bundle order does not matter).
    let mut args2: Vec<String> = vec!["merge".into()];
    args2.extend(bundles.iter().map(|b| b.to_string_lossy().into_owned()));
    args2.extend(["--out".into(), "merged2".into()]);
    let args2: Vec<&str> = args2.iter().map(String::as_str).collect();
    let merged2 = run(&args2, d);
    ok(&merged2, 0);
    assert!(
        std::fs::read(&merged_report).unwrap()
            == std::fs::read(d.join(&paths(&merged2)[0])).unwrap(),
        "merges in either order give the same bytes"
    );
}

#[test]
fn partitions_with_rejected_rows_merge_to_the_single_run_of_a_job_file() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let job = samples()
        .join("brinefell-monthly.toml")
        .to_string_lossy()
        .into_owned();
    let single = run(&["run", &job, "--out", "single", "-q"], d);
    ok(&single, 1);
    let single_paths = paths(&single);
    // This job's sample has two sites; a partition of a site with no rows still fails cleanly.
    let mut bundles = Vec::new();
    for s in ["Kelvergate", "Tarnfell"] {
        let o = run(
            &[
                "run",
                &job,
                "--site",
                s,
                "--partial",
                "--out",
                "parts",
                "-q",
            ],
            d,
        );
        ok(&o, 1);
        bundles.push(paths(&o).pop().unwrap());
    }
    let o = run(
        &[
            "merge",
            bundles[0].to_str().unwrap(),
            bundles[1].to_str().unwrap(),
            "--out",
            "merged",
            "--side-output",
            "csv",
        ],
        d,
    );
    ok(&o, 1);
    let merged = paths(&o);
    assert_eq!(merged.len(), 2, "{merged:?}");
    assert_same_report(&d.join(&single_paths[0]), &d.join(&merged[0]));
    let all = sheets(&d.join(&merged[0]));
    // The rejected rows are listed once, not once per partition.
    let rejected = about_value(&all, "Rejected (Rejected sheet)");
    assert!(
        matches!(rejected, Data::Float(x) if x > 0.0),
        "{rejected:?}"
    );
    assert_eq!(
        sheet(&all, "Rejected").len(),
        sheet(&sheets(&d.join(&single_paths[0])), "Rejected").len()
    );
    // The job's side output is reproduced byte for byte (full precision).
    assert!(
        std::fs::read(d.join(&single_paths[1])).unwrap()
            == std::fs::read(d.join(&merged[1])).unwrap(),
        "side outputs differ"
    );
}

#[test]
fn period_partitions_merge_to_the_single_run() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let input = campaign();
    let single = run(&["run", &input, "--out", "single", "-q"], d);
    ok(&single, 0);
    let mut args: Vec<String> = vec!["merge".into()];
    for m in 3..=11 {
        let period = format!("2026-{m:02}");
        let o = run(
            &[
                "run",
                &input,
                "--period",
                &period,
                "--partial",
                "--out",
                "parts",
                "-q",
            ],
            d,
        );
        ok(&o, 0);
        args.push(paths(&o)[1].to_string_lossy().into_owned());
    }
    args.extend(["--out".into(), "merged".into()]);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let o = run(&args, d);
    ok(&o, 0);
    assert_same_report(&d.join(&paths(&single)[0]), &d.join(&paths(&o)[0]));
}

/// Two small bundles: the November rows of two sites.
fn two_bundles(d: &Path) -> Vec<PathBuf> {
    let input = campaign();
    ["Brinemouth", "Tarnfell"]
        .iter()
        .map(|s| {
            let o = run(
                &[
                    "run",
                    &input,
                    "--period",
                    "2026-11",
                    "--site",
                    s,
                    "--partial",
                    "--out",
                    "parts",
                    "-q",
                ],
                d,
            );
            ok(&o, 0);
            paths(&o)[1].clone()
        })
        .collect()
}

fn merge_fails(d: &Path, bundles: &[&Path], wants: &[&str]) {
    let mut args: Vec<&str> = vec!["merge"];
    args.extend(bundles.iter().map(|b| b.to_str().unwrap()));
    args.extend(["--out", "merged"]);
    let o = run(&args, d);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    for w in wants {
        assert!(err.contains(w), "stderr lacks {w:?}: {err}");
    }
    let left: Vec<String> = files_in(&d.join("merged"))
        .into_iter()
        .filter(|n| n.ends_with(".xlsx") || n.contains(".hazebook-"))
        .collect();
    assert!(left.is_empty(), "nothing written: {left:?}");
    assert!(o.stdout.is_empty(), "{}", text(&o.stdout));
}

#[test]
fn incompatible_bundles_are_refused_naming_both_files() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let b = two_bundles(d);
    // Different settings.
    let mut v = json(&d.join(&b[1]));
    v["settings"]["diurnal_nodes"] = serde_json::json!(24);
    let other = d.join("parts/other-settings.partial.json");
    std::fs::write(&other, serde_json::to_vec(&v).unwrap()).unwrap();
    merge_fails(
        d,
        &[&b[0], &other],
        &[
            &b[0].to_string_lossy(),
            "other-settings.partial.json",
            "diurnal_nodes is 12 in the first and 24 in the second",
        ],
    );
    // Another hazebook version.
    let mut v = json(&d.join(&b[1]));
    v["hazebook_version"] = serde_json::json!("0.0.1");
    let older = d.join("parts/older.partial.json");
    std::fs::write(&older, serde_json::to_vec(&v).unwrap()).unwrap();
    merge_fails(
        d,
        &[&b[0], &older],
        &[
            &b[0].to_string_lossy(),
            "older.partial.json",
            "hazebook 0.0.1",
        ],
    );
    // The same two bundles do merge.
    let o = run(
        &[
            "merge",
            b[0].to_str().unwrap(),
            b[1].to_str().unwrap(),
            "--out",
            "merged",
        ],
        d,
    );
    ok(&o, 0);
}

#[test]
fn a_bundle_given_twice_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let b = two_bundles(d);
    merge_fails(d, &[&b[0], &b[1], &b[0]], &["listed twice"]);
    // Under another name: its rows are in both.
    let copy = d.join("parts/copy.partial.json");
    std::fs::copy(d.join(&b[0]), &copy).unwrap();
    merge_fails(
        d,
        &[&b[0], &copy],
        &["is in both", &b[0].to_string_lossy(), "copy.partial.json"],
    );
}

#[test]
fn a_missing_or_foreign_bundle_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let b = two_bundles(d);
    merge_fails(
        d,
        &[&b[0], Path::new("parts/nosuch.partial.json")],
        &[
            "parts/nosuch.partial.json",
            "cannot read the partial results",
        ],
    );
    let report = b[0].to_string_lossy().replace(".partial.json", ".xlsx");
    merge_fails(
        d,
        &[&b[0], Path::new(&report)],
        &[&report, "not a hazebook partial-results file"],
    );
    let cut = d.join("parts/cut.partial.json");
    let bytes = std::fs::read(d.join(&b[1])).unwrap();
    std::fs::write(&cut, &bytes[..bytes.len() / 2]).unwrap();
    merge_fails(d, &[&b[0], &cut], &["cut.partial.json", "damaged"]);
}

#[test]
fn merge_refuses_to_overwrite_a_bundle() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let b = two_bundles(d);
    let name = b[0].file_name().unwrap().to_string_lossy().into_owned();
    let before = std::fs::read(d.join(&b[0])).unwrap();
    let o = run(
        &[
            "merge",
            b[0].to_str().unwrap(),
            b[1].to_str().unwrap(),
            "--out",
            "parts",
            "--output",
            &name,
        ],
        d,
    );
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(
        text(&o.stderr).contains("would overwrite"),
        "{}",
        text(&o.stderr)
    );
    assert_eq!(std::fs::read(d.join(&b[0])).unwrap(), before);
}

#[test]
fn an_unknown_site_fails_and_names_the_sites_found() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(
        &[
            "run",
            &campaign(),
            "--site",
            "Nowhere",
            "--partial",
            "--out",
            "out",
        ],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(2));
    let err = text(&o.stderr);
    assert!(err.contains("--site Nowhere"), "{err}");
    assert!(err.contains("Brinemouth, Kelvergate, Tarnfell"), "{err}");
    assert!(files_in(&dir.path().join("out")).is_empty());
}

#[test]
fn a_site_list_and_repeated_sites_select_the_same_rows() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let input = campaign();
    let base = ["run", &input, "--period", "2026-11", "--partial", "-q"];
    let mut list: Vec<&str> = base.to_vec();
    list.extend(["--site", "Brinemouth,Tarnfell", "--out", "list"]);
    let mut repeated: Vec<&str> = base.to_vec();
    repeated.extend(["--site", "Brinemouth", "--site", "Tarnfell", "--out", "rep"]);
    let (a, b) = (run(&list, d), run(&repeated, d));
    ok(&a, 0);
    ok(&b, 0);
    let (pa, pb) = (paths(&a), paths(&b));
    assert!(
        pa[0].ends_with("list/brinefell-campaign-2026-11-report-Brinemouth_Tarnfell.xlsx"),
        "{pa:?}"
    );
    let (ja, jb) = (json(&d.join(&pa[1])), json(&d.join(&pb[1])));
    assert_eq!(ja["rows"], jb["rows"]);
    assert_eq!(ja["counts"], jb["counts"]);
    let rows = ja["rows"].as_array().unwrap();
    assert!(!rows.is_empty());
    assert!(
        rows.iter()
            .all(|r| r["site"] == "Brinemouth" || r["site"] == "Tarnfell")
    );
    // Efficiencies and other floats are strings that read back exactly; NaN is "NaN".
    let eff = &rows[0]["result"]["daily"]["efficiency_toa"];
    assert!(eff.is_string(), "{eff}");
    assert!(eff.as_str().unwrap().parse::<f64>().is_ok(), "{eff}");
}
