//! Integration tests of the `hazebook` binary: each runs the real binary in a fresh temporary
//! folder on the bundled (invented) samples and checks exit status, messages and outputs.

use std::path::{Path, PathBuf};
use std::process::Output;

mod binary_support;
mod outside_readers;

use binary_support::{bin, run, samples, text};
use calamine::{Reader, open_workbook_auto};

fn sha(p: &Path) -> Vec<u8> {
    use sha2::Digest;
    sha2::Sha256::digest(std::fs::read(p).unwrap()).to_vec()
}

fn campaign() -> PathBuf {
    samples().join("brinefell-campaign.xlsx")
}

/// `check --json` counts: rows read = computed + rejected + outside the period.
fn assert_counts_reconcile(doc: &serde_json::Value) {
    let c = &doc["counts"];
    assert_eq!(
        c["read"].as_u64().unwrap(),
        c["computed"].as_u64().unwrap()
            + c["rejected"].as_u64().unwrap()
            + c["outside_period"].as_u64().unwrap()
    );
}

/// The first line of stdout is the report's path.
fn report_path(o: &Output) -> PathBuf {
    PathBuf::from(
        text(&o.stdout)
            .lines()
            .next()
            .expect("a path on stdout")
            .trim(),
    )
}

#[test]
fn run_on_the_campaign_sample_writes_a_report_that_reopens() {
    let dir = tempfile::tempdir().unwrap();
    let before = sha(&campaign());
    let o = run(
        &[
            "run",
            campaign().to_str().unwrap(),
            "--out",
            "out",
            "--period",
            "2026-11",
            "--today",
            "2026-12-01",
        ],
        dir.path(),
    );
    let err = text(&o.stderr);
    assert!(
        o.status.code() == Some(0) || o.status.code() == Some(1),
        "{err}"
    );
    // What was understood is printed before computing, with column letters.
    assert!(err.contains("columns of"), "{err}");
    assert!(err.contains("→ aod"), "{err}");
    let report = dir.path().join(report_path(&o));
    assert!(
        report.ends_with("out/brinefell-campaign-2026-11-report.xlsx"),
        "{}",
        report.display()
    );
    let mut wb = open_workbook_auto(&report).expect("report reopens");
    let names = wb.sheet_names();
    for want in ["About", "Results", "Rejected"] {
        assert!(
            names.iter().any(|n| n == want),
            "sheet {want} missing in {names:?}"
        );
    }
    let results = wb.worksheet_range("Results").unwrap();
    // 139 November rows, plus a header and a units row.
    assert_eq!(results.height(), 139 + 2, "rows of Results");
    assert_eq!(sha(&campaign()), before, "input unchanged");
    // No temporary files left beside the report.
    let leftovers: Vec<_> = std::fs::read_dir(dir.path().join("out"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
    outside_readers::keep(&report, "cli-campaign-2026-11");
}

#[test]
fn reruns_are_byte_identical() {
    let dir = tempfile::tempdir().unwrap();
    let args = |out: &str| {
        vec![
            "run".to_string(),
            campaign().to_string_lossy().into_owned(),
            "--out".into(),
            out.into(),
            "--period".into(),
            "2026-10".into(),
            "--quiet".into(),
        ]
    };
    let a = bin()
        .args(args("a"))
        .current_dir(dir.path())
        .output()
        .unwrap();
    let b = bin()
        .args(args("b"))
        .current_dir(dir.path())
        .output()
        .unwrap();
    assert!(a.status.code().unwrap() <= 1, "{}", text(&a.stderr));
    assert!(b.status.code().unwrap() <= 1);
    let pa = dir.path().join(report_path(&a));
    let pb = dir.path().join(report_path(&b));
    assert_eq!(std::fs::read(pa).unwrap(), std::fs::read(pb).unwrap());
}

#[test]
fn quiet_prints_nothing_but_paths_and_the_log_gets_the_story() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(
        &[
            "run",
            campaign().to_str().unwrap(),
            "--period",
            "2026-09",
            "--quiet",
            "--log",
            "run.log",
        ],
        dir.path(),
    );
    assert!(o.status.code().unwrap() <= 1);
    assert_eq!(text(&o.stderr), "", "quiet stderr");
    assert_eq!(text(&o.stdout).lines().count(), 1);
    let log = std::fs::read_to_string(dir.path().join("run.log")).unwrap();
    assert!(log.contains("INFO"), "{log}");
    assert!(log.contains("wrote "), "{log}");
    assert!(log.contains("done: 156 rows computed"), "{log}");
}

#[test]
fn period_selects_rows_and_counts_the_rest() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(
        &[
            "check",
            campaign().to_str().unwrap(),
            "--json",
            "--period",
            "previous-month",
            "--today",
            "2026-12-15",
        ],
        dir.path(),
    );
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).expect("json");
    assert_eq!(doc["counts"]["computed"], 139, "{doc}");
    let read = doc["counts"]["read"].as_u64().unwrap();
    let outside = doc["counts"]["outside_period"].as_u64().unwrap();
    let rejected = doc["counts"]["rejected"].as_u64().unwrap();
    assert_eq!(read, 139 + outside + rejected);
    assert!(outside > 1000);
}

#[test]
fn check_json_lists_rejected_rows_with_cells() {
    let dir = tempfile::tempdir().unwrap();
    let messy = samples().join("brinefell-messy.xlsx");
    let o = run(&["check", messy.to_str().unwrap(), "--json"], dir.path());
    assert_eq!(
        o.status.code(),
        Some(1),
        "rows are rejected: {}",
        text(&o.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).expect("json");
    let rejected = doc["rejected"].as_array().unwrap();
    assert!(!rejected.is_empty());
    for r in rejected {
        for k in ["file", "sheet", "row", "cell", "value", "reason"] {
            assert!(r.get(k).is_some(), "{k} missing in {r}");
        }
    }
    // The percent-SSA rows are rejected with that hint.
    assert!(
        rejected.iter().any(|r| r["reason"]
            .as_str()
            .unwrap()
            .to_lowercase()
            .contains("percent")),
        "{rejected:?}"
    );
    assert_counts_reconcile(&doc);
}

#[test]
fn check_prints_cell_references() {
    let dir = tempfile::tempdir().unwrap();
    let messy = samples().join("brinefell-messy.xlsx");
    let o = run(&["check", messy.to_str().unwrap()], dir.path());
    assert_eq!(o.status.code(), Some(1));
    let out = text(&o.stdout);
    assert!(out.contains("rejected rows"), "{out}");
    assert!(out.contains("cell F"), "an SSA cell is named: {out}");
}

#[test]
fn job_file_run_uses_its_settings_and_names() {
    let dir = tempfile::tempdir().unwrap();
    let job = samples().join("brinefell-monthly.toml");
    let o = run(
        &[
            "run",
            job.to_str().unwrap(),
            "--out",
            "r",
            "--period",
            "previous-month",
            "--today",
            "2026-12-01",
        ],
        dir.path(),
    );
    assert_eq!(
        o.status.code(),
        Some(1),
        "messy rows are rejected: {}",
        text(&o.stderr)
    );
    let paths: Vec<String> = text(&o.stdout).lines().map(String::from).collect();
    assert!(
        paths
            .iter()
            .any(|p| p.ends_with("brinefell-fieldlog-2026-11.xlsx")),
        "{paths:?}"
    );
    assert!(
        paths
            .iter()
            .any(|p| p.ends_with("brinefell-fieldlog-2026-11.csv")),
        "{paths:?}"
    );
}

#[test]
fn missing_file_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(&["run", "nowhere.xlsx"], dir.path());
    assert_eq!(o.status.code(), Some(2));
    let err = text(&o.stderr);
    assert!(err.contains("nowhere.xlsx: no such file"), "{err}");
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        0,
        "nothing written"
    );
}

#[test]
fn unknown_job_key_names_the_line() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(campaign(), dir.path().join("c.xlsx")).unwrap();
    std::fs::write(
        dir.path().join("j.toml"),
        "[input]\npaths = [\"c.xlsx\"]\n\n[solver]\nclosur = \"pifm\"\n",
    )
    .unwrap();
    let o = run(&["run", "j.toml"], dir.path());
    assert_eq!(o.status.code(), Some(2));
    let err = text(&o.stderr);
    assert!(err.contains("line 5"), "{err}");
    assert!(err.contains("closur"), "{err}");
    assert!(err.contains("closure"), "known keys listed: {err}");
}

#[test]
fn unknown_template_lists_the_built_in_ones() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(
        &["run", campaign().to_str().unwrap(), "--template", "fancy"],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(2));
    let err = text(&o.stderr);
    assert!(err.contains("fancy"), "{err}");
    assert!(err.contains("full"), "{err}");
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        0,
        "nothing written"
    );
}

#[test]
fn refuses_to_overwrite_an_input() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("c.xlsx");
    std::fs::copy(campaign(), &input).unwrap();
    let before = sha(&input);
    std::fs::write(
        dir.path().join("j.toml"),
        "[input]\npaths = [\"c.xlsx\"]\n[report]\noutput = \"c.xlsx\"\n",
    )
    .unwrap();
    let o = run(&["run", "j.toml", "--quiet"], dir.path());
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(
        text(&o.stderr).contains("overwrite the input"),
        "{}",
        text(&o.stderr)
    );
    assert_eq!(sha(&input), before);
}

#[test]
fn bad_inputs_fail_cleanly() {
    let dir = tempfile::tempdir().unwrap();
    for (file, expect) in [
        ("truncated.xlsx", "truncated.xlsx"),
        ("not-a-workbook.xlsx", "not-a-workbook.xlsx"),
        ("missing-ssa.xlsx", "ssa"),
        ("empty-sheet.xlsx", "empty-sheet.xlsx"),
    ] {
        let p = samples().join("bad").join(file);
        let o = run(&["run", p.to_str().unwrap(), "--out", "o"], dir.path());
        assert_eq!(o.status.code(), Some(2), "{file}: {}", text(&o.stderr));
        let err = text(&o.stderr);
        assert!(err.to_lowercase().contains(expect), "{file}: {err}");
        assert!(!err.contains("panicked"), "{file}: {err}");
        assert!(
            !dir.path().join("o").exists()
                || std::fs::read_dir(dir.path().join("o")).unwrap().count() == 0
        );
    }
}

#[test]
fn init_writes_a_job_file_that_runs() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(campaign(), dir.path().join("campaign.xlsx")).unwrap();
    let o = run(&["init", "job", "--from", "campaign.xlsx"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let job = std::fs::read_to_string(dir.path().join("job/job.toml")).unwrap();
    assert!(job.contains("[input.columns]"));
    assert!(job.contains("AOD 500 nm"), "mapping pre-filled: {job}");
    assert!(dir.path().join("job/report-template.toml").exists());
    let o = run(
        &[
            "run",
            "job/job.toml",
            "--period",
            "2026-06",
            "--out",
            "r",
            "--quiet",
        ],
        dir.path(),
    );
    assert!(o.status.code().unwrap() <= 1, "{}", text(&o.stderr));
    // A second init does not clobber.
    let o = run(&["init", "job"], dir.path());
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn templates_lists_and_shows() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(&["templates"], dir.path());
    assert_eq!(o.status.code(), Some(0));
    let out = text(&o.stdout);
    assert!(out.contains("full"), "{out}");
    let o = run(&["templates", "full"], dir.path());
    assert_eq!(o.status.code(), Some(0));
    // The printed template is the built-in file itself and reads back as a template.
    let shown = text(&o.stdout);
    let file = std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("templates/full.toml"),
    )
    .unwrap();
    assert_eq!(shown.trim_end(), file.trim_end());
    let parsed = hazebook::report::template::parse(&shown, "stdout").unwrap();
    let builtin = hazebook::report::template::load("full").unwrap();
    let names = |t: &hazebook::report::template::Template| {
        t.sheets.iter().map(|s| s.name.clone()).collect::<Vec<_>>()
    };
    assert_eq!(names(&parsed), names(&builtin));
    assert!(names(&parsed).len() > 3);
}

#[test]
fn grid_csv_has_every_case_at_full_precision() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(
        &[
            "grid",
            "--aod",
            "0,0.2,0.5",
            "--ssa",
            "0.85,1",
            "--g",
            "0.7",
            "--albedo",
            "0.05,0.3",
            "--mu0",
            "0.5,1",
        ],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let out = text(&o.stdout);
    let mut lines = out.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len(), 3 * 2 * 2 * 2);
    let col = |name: &str| {
        header
            .iter()
            .position(|h| *h == name)
            .unwrap_or_else(|| panic!("{name}"))
    };
    let (aod, dre, up) = (col("aod"), col("dre_toa_wm2"), col("aerosol_toa_up_wm2"));
    for r in &rows {
        let d: f64 = r[dre].parse().unwrap();
        if r[aod] == "0" {
            assert_eq!(d, 0.0, "zero AOD, zero effect");
        }
    }
    // Full precision: the printed values read back to exactly the doubles the library computes.
    let last = rows.last().unwrap();
    let obs = hazebook::physics::Observation {
        time_utc: chrono::TimeZone::with_ymd_and_hms(&chrono::Utc, 2026, 3, 20, 12, 0, 0).unwrap(),
        latitude_deg: 0.0,
        longitude_deg: 0.0,
        altitude_m: 0.0,
        pressure_hpa: Some(1013.25),
        aod: 0.5,
        aod_wavelength_nm: 550.0,
        angstrom: 1.3,
        ssa: vec![hazebook::physics::SpectralValue {
            wavelength_nm: 550.0,
            value: 1.0,
        }],
        asymmetry: vec![hazebook::physics::SpectralValue {
            wavelength_nm: 550.0,
            value: 0.7,
        }],
        surface: hazebook::physics::Surface::Lambertian { albedo: 0.3 },
        ozone_du: 300.0,
        water_cm: 1.5,
        layer: hazebook::physics::AerosolLayer::default(),
    };
    let settings = hazebook::physics::Settings {
        band_set: hazebook::physics::BandSet::Single,
        rayleigh: false,
        gases: false,
        fixed_cos_zenith: Some(1.0),
        daily_mean: false,
        earth_sun_distance: false,
        ..Default::default()
    };
    let ctx = hazebook::physics::forcing::Context::new(&settings);
    let r = hazebook::physics::forcing::compute_observation(&obs, &settings, &ctx);
    assert_eq!(last[aod], "0.5");
    assert_eq!(
        last[up].parse::<f64>().unwrap(),
        r.instantaneous.aerosol.toa_up
    );
    assert_eq!(last[dre].parse::<f64>().unwrap(), r.instantaneous.dre_toa);
}

#[test]
fn concurrent_runs_on_one_output_both_finish_with_a_whole_file() {
    let dir = tempfile::tempdir().unwrap();
    let spawn = || {
        bin()
            .args([
                "run",
                campaign().to_str().unwrap(),
                "--out",
                "shared",
                "--period",
                "2026-08",
                "--quiet",
            ])
            .current_dir(dir.path())
            .spawn()
            .unwrap()
    };
    let (a, b) = (spawn(), spawn());
    let (a, b) = (a.wait_with_output().unwrap(), b.wait_with_output().unwrap());
    assert!(a.status.code().unwrap() <= 1 && b.status.code().unwrap() <= 1);
    let report = dir
        .path()
        .join("shared/brinefell-campaign-2026-08-report.xlsx");
    let mut wb = open_workbook_auto(&report).expect("whole file");
    assert!(wb.worksheet_range("Results").is_ok());
}

#[test]
fn a_monthly_rerun_rejects_only_rows_it_cannot_place_outside_its_month() {
    // The messy sample's October faults (fill values, percent SSA, a duplicate) are counted
    // outside a November run; rows whose time cannot be read are rejected in every period.
    let dir = tempfile::tempdir().unwrap();
    let job = samples().join("brinefell-monthly.toml");
    let o = run(
        &[
            "check",
            job.to_str().unwrap(),
            "--json",
            "--period",
            "2026-11",
        ],
        dir.path(),
    );
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).expect("json");
    let cells: Vec<&str> = doc["rejected"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["cell"].as_str().unwrap())
        .collect();
    for october in ["D10", "F15", "F38", "D52", "C58"] {
        assert!(
            !cells.contains(&october),
            "{october} is an October row: {cells:?}"
        );
    }
    assert!(
        cells.contains(&"B47"),
        "unreadable date is rejected: {cells:?}"
    );
    assert_counts_reconcile(&doc);
}

/// `grid --solver discrete-ordinates --streams N --rayleigh-above TAU`: the CSV names the
/// solver and band set as the command line spells them, records the molecular layer, and the
/// molecular layer above the aerosol changes the fluxes (it scatters part of the beam).
#[test]
fn grid_names_the_accurate_solver_and_the_molecular_layer() {
    let dir = tempfile::tempdir().unwrap();
    let grid = |extra: &[&str]| {
        let mut args = vec![
            "grid",
            "--aod",
            "0.3",
            "--ssa",
            "0.9",
            "--g",
            "0.7",
            "--albedo",
            "0.2",
            "--mu0",
            "0.6",
            "--solver",
            "discrete-ordinates",
            "--streams",
            "6",
        ];
        args.extend_from_slice(extra);
        let o = run(&args, dir.path());
        assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        let out = text(&o.stdout);
        let mut lines = out.lines();
        let header: Vec<String> = lines.next().unwrap().split(',').map(String::from).collect();
        let row: Vec<String> = lines.next().unwrap().split(',').map(String::from).collect();
        (header, row)
    };
    let (header, layered) = grid(&["--rayleigh-above", "0.1"]);
    let (_, single) = grid(&[]);
    let col = |name: &str| {
        header
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("{name}"))
    };
    assert_eq!(layered[col("solver")], "discrete-ordinates");
    assert_eq!(layered[col("streams")], "6");
    assert_eq!(layered[col("band_set")], "single");
    assert_eq!(
        layered[col("rayleigh_above_tau")].parse::<f64>().unwrap(),
        0.1
    );
    let dre = col("dre_toa_wm2");
    assert_ne!(
        layered[dre], single[dre],
        "the molecular layer changes nothing"
    );
}
