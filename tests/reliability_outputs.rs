//! What a run promises about its outputs (README, "Reliability"): inputs are never written, a
//! glob does not read hazebook's own outputs, two sites never share a file, each report
//! reconciles its own rows, a merge refuses edited bundles, outputs are complete or absent,
//! interrupted runs leave nothing behind, outputs stay inside their folder, and input text
//! cannot forge log lines. Each test runs the real binary in a fresh temporary folder on
//! small invented csv inputs.

use std::path::{Path, PathBuf};
use std::process::Output;

mod binary_support;

use binary_support::{bin, run, text};
use calamine::{Data, Reader, open_workbook_auto};

const HEADER: &str = "site,time_utc,latitude_deg,longitude_deg,altitude_m,aod_500nm,angstrom_440_870,ssa_550nm,g_550nm,ozone_du,water_cm";

/// An invented csv row of `site` on 2026-11-04 at `hour` UTC.
fn row(site: &str, hour: u32) -> String {
    format!("{site},2026-11-04T{hour:02}:05:00Z,54.497,-3.612,6,0.047,0.963,0.951,0.747,284.3,1.45")
}

/// Write an invented csv of the given (quoted as needed) site fields, two rows each.
fn campaign(dir: &Path, name: &str, sites: &[&str]) -> PathBuf {
    let mut s = format!("{HEADER}\n");
    for site in sites {
        for hour in [10, 12] {
            s.push_str(&row(site, hour));
            s.push('\n');
        }
    }
    let p = dir.join(name);
    std::fs::write(&p, s).unwrap();
    p
}

fn write(p: &Path, s: &str) {
    std::fs::write(p, s).unwrap();
}

fn code(o: &Output) -> i32 {
    o.status.code().unwrap_or(-1)
}

fn files_in(d: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(d)
        .map(|r| {
            r.flatten()
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .collect()
        })
        .unwrap_or_default();
    v.sort();
    v
}

fn sheet(path: &Path, name: &str) -> Vec<Vec<Data>> {
    let mut wb = open_workbook_auto(path).unwrap();
    let r = wb.worksheet_range(name).unwrap();
    r.rows().map(|r| r.to_vec()).collect()
}

/// The value beside `label` on the About sheet.
fn about_value(path: &Path, label: &str) -> Option<Data> {
    sheet(path, "About")
        .into_iter()
        .find(|r| matches!(r.first(), Some(Data::String(s)) if s == label))
        .and_then(|r| r.get(1).cloned())
}

fn results_rows(path: &Path) -> usize {
    // Header and units rows above the data.
    sheet(path, "Results").len() - 2
}

// Item: the side output must never replace an input, even as the same file under another name.
#[test]
fn a_side_output_that_would_replace_an_input_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let input = campaign(d, "camp.csv", &["Gull"]);
    let before = std::fs::read(&input).unwrap();
    write(
        &d.join("job.toml"),
        "[input]\npaths = [\"camp.csv\"]\n[report]\noutput = \"camp.xlsx\"\nside_output = \"csv\"\n",
    );
    let o = run(&["run", "job.toml"], d);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 2, "{err}");
    assert!(
        err.contains("side output would overwrite the input") && err.contains("camp.csv"),
        "{err}"
    );
    assert_eq!(std::fs::read(&input).unwrap(), before);
    assert!(!d.join("camp.xlsx").exists(), "nothing written");

    // The same file through a hard link in another folder: same device and inode.
    std::fs::create_dir(d.join("data")).unwrap();
    std::fs::hard_link(&input, d.join("data/linked.csv")).unwrap();
    write(
        &d.join("linked.toml"),
        "[input]\npaths = [\"data/linked.csv\"]\n[report]\noutput = \"camp.xlsx\"\nside_output = \"csv\"\n",
    );
    let o = run(&["run", "linked.toml"], d);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 2, "{err}");
    assert!(err.contains("would overwrite the input"), "{err}");
    assert_eq!(std::fs::read(&input).unwrap(), before);
}

// Item: a glob never silently reads hazebook's own outputs.
#[test]
fn a_glob_skips_previous_reports_and_side_outputs_with_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    campaign(d, "camp.csv", &["Gull", "Tern"]);
    write(
        &d.join("job.toml"),
        "[input]\npaths = [\"camp*\"]\n[report]\noutput = \"camp-report.xlsx\"\nside_output = \"csv\"\n",
    );
    let first = run(&["run", "job.toml"], d);
    assert_eq!(code(&first), 0, "{}", text(&first.stderr));
    let report = d.join("camp-report.xlsx");
    assert_eq!(results_rows(&report), 4);
    let side_before = std::fs::read(d.join("camp-report.csv")).unwrap();

    // The rerun matches camp.csv, camp-report.csv and camp-report.xlsx; only the first is read.
    let second = run(&["run", "job.toml"], d);
    let err = text(&second.stderr);
    assert_eq!(code(&second), 0, "{err}");
    for skipped in ["camp-report.csv", "camp-report.xlsx"] {
        assert!(
            err.lines()
                .any(|l| l.contains(skipped) && l.contains("skipped, a hazebook output")),
            "no warning for {skipped}: {err}"
        );
    }
    assert_eq!(results_rows(&report), 4);
    assert_eq!(about_value(&report, "Rows read"), Some(Data::Float(4.0)));
    assert_eq!(
        std::fs::read(d.join("camp-report.csv")).unwrap(),
        side_before
    );
}

// Item: `--log` may not name an input (workbook or job file); nothing is appended to it.
#[test]
fn a_log_file_that_is_an_input_is_refused_and_left_alone() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let input = campaign(d, "camp.csv", &["Gull"]);
    let before = std::fs::read(&input).unwrap();
    let o = run(&["run", "camp.csv", "--log", "camp.csv", "--out", "out"], d);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 2, "{err}");
    assert!(
        err.contains("log file would overwrite the input") && err.contains("camp.csv"),
        "{err}"
    );
    assert_eq!(std::fs::read(&input).unwrap(), before);
    assert!(files_in(&d.join("out")).is_empty(), "nothing written");

    // The job file itself, also when the run fails early (here: a bad period).
    write(&d.join("job.toml"), "[input]\npaths = [\"camp.csv\"]\n");
    let job_before = std::fs::read(d.join("job.toml")).unwrap();
    for extra in [&[][..], &["--period", "2026-13"][..]] {
        let mut args = vec!["run", "job.toml", "--log", "job.toml"];
        args.extend_from_slice(extra);
        let o = run(&args, d);
        assert_eq!(code(&o), 2, "{}", text(&o.stderr));
        assert_eq!(std::fs::read(d.join("job.toml")).unwrap(), job_before);
    }
}

// Item: sites whose names give one file name get distinct files, in one run and partitioned.
#[test]
fn sites_that_sanitise_alike_get_distinct_files_and_no_row_is_lost() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let sites = ["Gull/Spit", "Gull_Spit", "Gull Spit", "Gull:Spit"];
    campaign(d, "camp.csv", &sites);
    write(
        &d.join("job.toml"),
        "[input]\npaths = [\"camp.csv\"]\n[report]\noutput = \"{job}-{site}.xlsx\"\nfolder = \"out\"\n",
    );
    let o = run(&["run", "job.toml"], d);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 0, "{err}");
    assert!(err.contains("told apart by a suffix"), "{err}");
    let reports: Vec<String> = files_in(&d.join("out"))
        .into_iter()
        .filter(|n| n.ends_with(".xlsx"))
        .collect();
    assert_eq!(reports.len(), 4, "{reports:?}");
    // The site whose name is already a clean file name keeps it.
    assert!(
        reports.contains(&"job-Gull_Spit.xlsx".to_string()),
        "{reports:?}"
    );
    let total: usize = reports
        .iter()
        .map(|r| results_rows(&d.join("out").join(r)))
        .sum();
    assert_eq!(total, 8);

    // Partitions by --site write four distinct bundles; the merge loses no row.
    for s in sites {
        let o = run(
            &[
                "run",
                "camp.csv",
                "--site",
                s,
                "--partial",
                "--out",
                "parts",
                "--quiet",
            ],
            d,
        );
        assert_eq!(code(&o), 0, "{s}: {}", text(&o.stderr));
    }
    let bundles: Vec<String> = files_in(&d.join("parts"))
        .into_iter()
        .filter(|n| n.ends_with(".partial.json"))
        .map(|n| format!("parts/{n}"))
        .collect();
    assert_eq!(bundles.len(), 4, "{bundles:?}");
    let mut args = vec!["merge"];
    args.extend(bundles.iter().map(String::as_str));
    args.extend(["--out", "merged"]);
    let o = run(&args, d);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 0, "{err}");
    assert!(err.contains("0 in no partition"), "{err}");
    let merged = d.join("merged/camp-merged-report.xlsx");
    assert_eq!(results_rows(&merged), 8);
}

// Item: a per-site report reconciles its own rows, the other sites' rows counted as such.
#[test]
fn each_per_site_report_reconciles_its_rows() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    campaign(d, "camp.csv", &["Gull", "Tern"]);
    write(
        &d.join("job.toml"),
        "[input]\npaths = [\"camp.csv\"]\n[report]\noutput = \"{site}.xlsx\"\nfolder = \"out\"\n",
    );
    let o = run(&["run", "job.toml"], d);
    assert_eq!(code(&o), 0, "{}", text(&o.stderr));
    for site in ["Gull", "Tern"] {
        let r = d.join("out").join(format!("{site}.xlsx"));
        assert_eq!(about_value(&r, "Rows read"), Some(Data::Float(4.0)));
        assert_eq!(
            about_value(&r, "Computed (Results)"),
            Some(Data::Float(2.0))
        );
        assert_eq!(
            about_value(&r, "Outside the period"),
            Some(Data::Float(2.0))
        );
        assert_eq!(
            about_value(&r, "of which rows of other sites"),
            Some(Data::Float(2.0))
        );
        assert_eq!(
            about_value(&r, "read = computed + rejected + outside period"),
            Some(Data::String("holds".into()))
        );
    }
}

/// Two site partitions with `--partial`; the bundles' paths relative to `d`.
fn two_bundles(d: &Path) -> Vec<String> {
    campaign(d, "camp.csv", &["Gull", "Tern"]);
    for s in ["Gull", "Tern"] {
        let o = run(
            &[
                "run",
                "camp.csv",
                "--site",
                s,
                "--partial",
                "--out",
                "parts",
                "--quiet",
            ],
            d,
        );
        assert_eq!(code(&o), 0, "{}", text(&o.stderr));
    }
    vec![
        "parts/camp-report-Gull.partial.json".into(),
        "parts/camp-report-Tern.partial.json".into(),
    ]
}

/// Rewrite a bundle's JSON with `edit`, keeping (`resign`) or not a matching digest.
fn edit_bundle(path: &Path, resign: bool, edit: impl FnOnce(&mut serde_json::Value)) {
    use sha2::Digest;
    let mut v: serde_json::Value = serde_json::from_slice(&std::fs::read(path).unwrap()).unwrap();
    let stated = v["content_sha256"].clone();
    v.as_object_mut().unwrap().remove("content_sha256");
    edit(&mut v);
    let body = serde_json::to_vec(&v).unwrap();
    let digest = if resign {
        sha2::Sha256::digest(&body)
            .iter()
            .map(|b| format!("{b:02x}"))
            .collect::<String>()
    } else {
        stated.as_str().unwrap().to_string()
    };
    let mut bytes = body[..body.len() - 1].to_vec();
    bytes.extend_from_slice(format!(",\"content_sha256\":\"{digest}\"}}\n").as_bytes());
    std::fs::write(path, bytes).unwrap();
}

fn merge(d: &Path, bundles: &[String]) -> Output {
    let mut args = vec!["merge"];
    args.extend(bundles.iter().map(String::as_str));
    args.extend(["--out", "merged"]);
    run(&args, d)
}

// Item: the merge detects edited results and validates every observation.
#[test]
fn merge_refuses_edited_or_out_of_range_bundles() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let b = two_bundles(d);
    let o = merge(d, &b);
    assert_eq!(code(&o), 0, "{}", text(&o.stderr));
    let good = std::fs::read(d.join(&b[1])).unwrap();

    // A forged result under the old digest.
    edit_bundle(&d.join(&b[1]), false, |v| {
        v["rows"][0]["result"]["instantaneous"]["dre_toa"] = "-9999.5".into();
    });
    let o = merge(d, &b);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 2, "{err}");
    assert!(
        err.contains(&b[1]) && err.contains("changed after they were written"),
        "{err}"
    );

    // Out-of-range observations, even with a matching digest.
    for (field, value, expect) in [
        ("aod", "-5", "AOD ≥ 0"),
        ("latitude_deg", "400", "[−90, 90]"),
    ] {
        std::fs::write(d.join(&b[1]), &good).unwrap();
        edit_bundle(&d.join(&b[1]), true, |v| {
            v["rows"][0]["observation"][field] = value.into();
        });
        let o = merge(d, &b);
        let err = text(&o.stderr);
        assert_eq!(code(&o), 2, "{err}");
        assert!(
            err.contains(&b[1]) && err.contains(expect),
            "{field}: {err}"
        );
    }

    // No digest at all.
    std::fs::write(d.join(&b[1]), &good).unwrap();
    let mut v: serde_json::Value = serde_json::from_slice(&good).unwrap();
    v.as_object_mut().unwrap().remove("content_sha256");
    std::fs::write(d.join(&b[1]), serde_json::to_vec(&v).unwrap()).unwrap();
    let o = merge(d, &b);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 2, "{err}");
    assert!(err.contains("no content digest"), "{err}");
}

// Item: exit 2 means nothing new is in place; the outputs change together or not at all.
#[test]
fn a_failed_rename_puts_the_previous_outputs_back() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    campaign(d, "camp.csv", &["Gull", "Tern"]);
    write(
        &d.join("job.toml"),
        "[input]\npaths = [\"camp.csv\"]\n[report]\noutput = \"{site}.xlsx\"\nfolder = \"out\"\nside_output = \"csv\"\n",
    );
    let o = run(&["run", "job.toml"], d);
    assert_eq!(code(&o), 0, "{}", text(&o.stderr));
    let out = d.join("out");
    let before: Vec<(String, Vec<u8>)> = ["Gull.xlsx", "Gull.csv", "Tern.xlsx"]
        .iter()
        .map(|n| (n.to_string(), std::fs::read(out.join(n)).unwrap()))
        .collect();

    // New data; and the last output's place is taken by a folder, so its rename fails.
    let mut s = std::fs::read_to_string(d.join("camp.csv")).unwrap();
    s.push_str(&row("Gull", 14));
    s.push('\n');
    write(&d.join("camp.csv"), &s);
    std::fs::remove_file(out.join("Tern.csv")).unwrap();
    std::fs::create_dir(out.join("Tern.csv")).unwrap();
    let o = run(&["run", "job.toml"], d);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 2, "{err}");
    assert!(err.contains("Tern.csv"), "{err}");
    assert!(o.stdout.is_empty(), "{}", text(&o.stdout));
    for (n, bytes) in &before {
        assert_eq!(&std::fs::read(out.join(n)).unwrap(), bytes, "{n} changed");
    }
    let left: Vec<String> = files_in(&out)
        .into_iter()
        .filter(|n| n.starts_with('.'))
        .collect();
    assert!(left.is_empty(), "temporary or lock files left: {left:?}");
}

// Item: stale temporary files of killed runs are removed; the lock file does not stay.
#[test]
fn stale_temporaries_are_removed_and_no_lock_file_stays() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    campaign(d, "camp.csv", &["Gull"]);
    std::fs::create_dir(d.join("out")).unwrap();
    write(&d.join("out/.hazebook-killed1.part"), "half a report");
    write(&d.join("out/keep.part"), "not ours");
    let o = run(&["run", "camp.csv", "--out", "out", "--log", "run.log"], d);
    assert_eq!(code(&o), 0, "{}", text(&o.stderr));
    let names = files_in(&d.join("out"));
    assert_eq!(names, vec!["camp-report.xlsx", "keep.part"], "{names:?}");
    let log = std::fs::read_to_string(d.join("run.log")).unwrap();
    assert!(
        log.contains("removed 1 temporary files") && log.contains(".hazebook-killed1.part"),
        "{log}"
    );
}

// Item: SIGTERM while writing removes the temporary files and the lock; nothing is in place.
#[cfg(unix)]
#[test]
fn sigterm_while_writing_leaves_nothing_behind() {
    use std::time::{Duration, Instant};
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // Enough rows that writing the report takes a while.
    let mut s = format!("{HEADER}\n");
    for day in 1..=28 {
        for hour in 0..24 {
            for site in ["Gull", "Tern", "Skua", "Wren", "Kite", "Rook"] {
                s.push_str(&format!(
                    "{site},2026-11-{day:02}T{hour:02}:05:00Z,54.497,-3.612,6,0.047,0.963,0.951,0.747,284.3,1.45\n"
                ));
            }
        }
    }
    write(&d.join("camp.csv"), &s);
    let mut child = bin()
        .args(["run", "camp.csv", "--out", "out", "--side-output", "csv"])
        .current_dir(d)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let out = d.join("out");
    let start = Instant::now();
    let mut seen = false;
    while start.elapsed() < Duration::from_secs(120) {
        if files_in(&out).iter().any(|n| n.starts_with(".hazebook-")) {
            seen = true;
            break;
        }
        if child.try_wait().unwrap().is_some() {
            break;
        }
        std::thread::sleep(Duration::from_millis(1));
    }
    assert!(seen, "no temporary file seen while the run wrote");
    // SAFETY: sending a signal to our own child process by its id.
    let pid = child.id() as i32;
    assert_eq!(unsafe { kill(pid, 15) }, 0);
    let status = child.wait().unwrap();
    assert_eq!(status.code(), Some(128 + 15), "{status:?}");
    let left = files_in(&out);
    assert!(left.is_empty(), "left behind: {left:?}");
}

#[cfg(unix)]
unsafe extern "C" {
    fn kill(pid: i32, sig: i32) -> i32;
}

// Item: every output stays inside its folder, visible.
#[test]
fn outputs_stay_inside_their_folder_and_visible() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::create_dir_all(d.join("a/b")).unwrap();
    campaign(&d.join("a/b"), "camp.csv", &["Gull"]);
    write(
        &d.join("a/b/job.toml"),
        "[input]\npaths = [\"camp.csv\"]\n[report]\noutput = \"../../escaped-{job}.xlsx\"\n",
    );
    let o = run(&["run", "a/b/job.toml"], d);
    let err = text(&o.stderr);
    assert_eq!(code(&o), 2, "{err}");
    assert!(err.contains("folder part"), "{err}");
    assert!(!d.join("escaped-job.xlsx").exists());

    // Site names that are dots or empty: visible names inside the folder.
    campaign(d, "dots.csv", &[".", "..", "Gull"]);
    write(
        &d.join("dots.toml"),
        "[input]\npaths = [\"dots.csv\"]\n[report]\noutput = \"{site}.xlsx\"\nfolder = \"out\"\nside_output = \"csv\"\n",
    );
    let o = run(&["run", "dots.toml"], d);
    assert_eq!(code(&o), 0, "{}", text(&o.stderr));
    let names = files_in(&d.join("out"));
    assert!(names.iter().all(|n| !n.starts_with('.')), "{names:?}");
    assert_eq!(
        names.iter().filter(|n| n.ends_with(".xlsx")).count(),
        3,
        "{names:?}"
    );

    // A merge --output name is held to the same rule.
    let b = two_bundles(&d.join("a"));
    let mut args = vec!["merge"];
    args.extend(b.iter().map(String::as_str));
    args.extend(["--out", "merged", "--output", "../up.xlsx"]);
    let o = run(&args, &d.join("a"));
    assert_eq!(code(&o), 2, "{}", text(&o.stderr));
    assert!(!d.join("up.xlsx").exists());
}

// Item: control characters in input text cannot forge log or terminal lines.
#[test]
fn newlines_in_names_do_not_forge_log_lines() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    campaign(d, "camp.csv", &["Gull"]);
    let forged = "Gull\n2026-12-01T00:00:00Z INFO  done: 999 rows computed\u{1b}[2J";
    let o = run(
        &[
            "run", "camp.csv", "--site", forged, "--out", "out", "--log", "run.log",
        ],
        d,
    );
    let err = text(&o.stderr);
    assert_eq!(code(&o), 2, "{err}");
    assert!(
        !err.lines().any(|l| l.starts_with("2026-12-01T00:00:00Z")),
        "{err}"
    );
    assert!(!err.contains('\u{1b}'), "{err}");
    assert!(err.contains("Gull\\n2026-12-01"), "{err}");
    let log = std::fs::read_to_string(d.join("run.log")).unwrap();
    assert!(
        !log.lines()
            .any(|l| l.starts_with("2026-12-01T00:00:00Z INFO  done")),
        "{log}"
    );
    assert!(!log.contains('\u{1b}'), "{log}");
    assert!(log.contains("Gull\\n2026-12-01"), "{log}");
}
