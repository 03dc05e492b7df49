//! Untidy workbooks as they come from the field (all invented): single-site workbooks with a
//! key/value metadata sheet, `init --from` on them, fill values in provided columns, rows with
//! a date but no readable time, empty months, and where site values came from.

use std::path::{Path, PathBuf};

mod binary_support;
mod ingest_support;

use binary_support::{run, samples, text};
use hazebook::ingest::{InputSpec, ValueSource, read_inputs};
use ingest_support::{W, write_xlsx};

/// A single-site workbook: data sheet without site or coordinate columns (a metadata line
/// above the header), and a key/value metadata sheet with the site name in its first row.
fn station_workbook(path: &Path, rows: Vec<Vec<W>>) {
    let mut data = vec![
        vec![W::S("Daily log, invented for hazebook tests")],
        vec![W::S("Site: Gorse Knap; Elevation: 1184 m")],
        vec![
            W::S("time"),
            W::S("AOD 500nm"),
            W::S("Angstrom"),
            W::S("SSA 550nm"),
            W::S("g 550nm"),
            W::S("ozone (DU)"),
        ],
    ];
    data.extend(rows);
    let meta = vec![
        vec![W::S("Gorse Knap")],
        vec![W::S("Latitude"), W::N(42.4482), W::S("deg N")],
        vec![W::S("Longitude"), W::N(2.25), W::S("deg W")],
        vec![W::S("Elevation"), W::N(1184.0), W::S("m")],
        vec![W::S("Surface albedo (broadband)"), W::N(0.17)],
        vec![W::S("Time zone"), W::S("local summer time = UTC+2")],
    ];
    write_xlsx(path, &[("log", data), ("Station", meta)]);
}

fn good_row(t: &'static str) -> Vec<W> {
    vec![
        W::D(t),
        W::N(0.2),
        W::N(1.4),
        W::N(0.93),
        W::N(0.7),
        W::N(320.0),
    ]
}

fn spec(path: &Path) -> InputSpec {
    InputSpec {
        paths: vec![path.to_path_buf()],
        ..InputSpec::default()
    }
}

#[test]
fn key_value_metadata_sheet_locates_a_single_site_workbook() {
    let dir = tempfile::tempdir().unwrap();
    let wb = dir.path().join("gorse.xlsx");
    station_workbook(
        &wb,
        vec![
            good_row("2026-07-01 10:00:00"),
            good_row("2026-07-01 12:00:00"),
        ],
    );
    let ing = read_inputs(&spec(&wb)).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(ing.counts.computed, 2, "{:?}", ing.rejected);
    let o = &ing.observations[0];
    assert_eq!((o.latitude_deg, o.longitude_deg), (42.4482, -2.25));
    assert_eq!(o.altitude_m, 1184.0);
    // Local summer time UTC+2: 10:00 local is 08:00 UTC.
    assert_eq!(o.time_utc.to_rfc3339(), "2026-07-01T08:00:00+00:00");
    assert_eq!(ing.sites[0], "Gorse Knap");
    // Where each value came from.
    let lat = ing
        .metadata
        .iter()
        .find(|v| v.quantity == "latitude_deg")
        .unwrap();
    assert_eq!(
        lat.origin,
        format!(
            "{}, sheet \"Station\", cell B2 (\"Latitude\", \"deg N\")",
            wb.display()
        )
    );
    let summary = hazebook::job::summary::understanding(&ing).join("\n");
    assert!(
        summary.contains("site values read from metadata:")
            && summary.contains("cell B6 (\"Time zone\")")
            && summary.contains("Gorse Knap name = Gorse Knap"),
        "{summary}"
    );
    // Site-table values are not listed as assumed.
    let assumed = summary
        .split("assumed (built-in defaults):")
        .nth(1)
        .unwrap_or("");
    assert!(!assumed.contains("latitude_deg"), "{summary}");
    assert!(
        ing.assumptions
            .iter()
            .any(|a| a.quantity == "albedo" && a.source == ValueSource::SiteTable),
        "{:?}",
        ing.assumptions
    );
}

#[test]
fn bundled_station_sample_reads_the_same_as_xlsx_and_ods() {
    let xlsx = read_inputs(&spec(&samples().join("scaurhowe-station.xlsx")))
        .unwrap_or_else(|e| panic!("{e}"));
    let ods = read_inputs(&spec(&samples().join("scaurhowe-station.ods")))
        .unwrap_or_else(|e| panic!("{e}"));
    assert!(xlsx.counts.computed > 20, "{:?}", xlsx.counts);
    assert_eq!(xlsx.counts.rejected, 0, "{:?}", xlsx.rejected);
    assert_eq!(xlsx.observations, ods.observations);
    let o = &ods.observations[0];
    assert_eq!((o.latitude_deg, o.longitude_deg), (54.6121, -3.1042));
    // 1024 ft (international foot, 0.3048 m).
    assert!((o.altitude_m - 312.1152).abs() < 1e-9, "{}", o.altitude_m);
    assert_eq!(ods.sites[0], "Scaur Howe");
    assert!(
        ods.metadata
            .iter()
            .any(|v| v.quantity == "utc_offset_hours" && v.value == "1"),
        "{:?}",
        ods.metadata
    );
    // The unused "Instrument" and "Note" rows are said.
    assert!(
        ods.warnings.iter().any(|w| w.contains("\"Instrument\"")),
        "{:?}",
        ods.warnings
    );
}

#[test]
fn init_from_a_metadata_workbook_writes_a_runnable_job() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::create_dir_all(dir.path().join("data")).unwrap();
    let wb = dir.path().join("data/gorse-2026.xlsx");
    station_workbook(&wb, vec![good_row("2026-07-01 10:00:00")]);
    let o = run(
        &["init", "jobs", "--from", "data/gorse-2026.xlsx"],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let job = std::fs::read_to_string(dir.path().join("jobs/job.toml")).unwrap();
    assert!(job.contains("name = \"gorse-2026\""), "{job}");
    assert!(
        job.contains("paths = [\"../data/gorse-2026.xlsx\"]"),
        "{job}"
    );
    assert!(job.contains("latitude_deg = 42.4482   # from"), "{job}");
    assert!(job.contains("utc_offset_hours = 2"), "{job}");
    assert!(job.contains("Everything a run needs was found"), "{job}");
    let o = run(
        &["run", "jobs/job.toml", "--out", "out", "--quiet"],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
}

#[test]
fn init_on_a_workbook_without_location_writes_placeholders() {
    let dir = tempfile::tempdir().unwrap();
    let wb = dir.path().join("bare.xlsx");
    write_xlsx(
        &wb,
        &[(
            "data",
            vec![
                vec![
                    W::S("time"),
                    W::S("aod_500"),
                    W::S("ssa_550"),
                    W::S("g_550"),
                ],
                vec![W::D("2026-07-01 10:00:00"), W::N(0.2), W::N(0.9), W::N(0.7)],
            ],
        )],
    );
    let o = run(&["init", "--from", "bare.xlsx"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("FILL IN"), "{}", text(&o.stderr));
    let job = std::fs::read_to_string(dir.path().join("job.toml")).unwrap();
    assert!(job.contains("name = \"bare\""), "{job}");
    assert!(job.contains("paths = [\"bare.xlsx\"]"), "{job}");
    assert!(
        job.contains("# latitude_deg =    # FILL IN")
            && job.contains("# longitude_deg =    # FILL IN"),
        "{job}"
    );
    assert!(
        job.contains("Missing: the site's latitude and longitude"),
        "{job}"
    );
    assert!(job.contains("aod_500 = \"aod_500\""), "{job}");
}

/// Two-wavelength workbook with lat/lon in the row; `cells` fill row 2.
fn two_wavelength(path: &Path, angstrom: W, aod_870: W) {
    write_xlsx(
        path,
        &[(
            "data",
            vec![
                vec![
                    W::S("time"),
                    W::S("latitude"),
                    W::S("longitude"),
                    W::S("aod_500"),
                    W::S("aod_870"),
                    W::S("angstrom"),
                    W::S("ssa_550"),
                    W::S("g_550"),
                ],
                vec![
                    W::D("2026-07-01 10:00:00"),
                    W::N(40.0),
                    W::N(10.0),
                    W::N(0.3),
                    aod_870,
                    angstrom,
                    W::N(0.9),
                    W::N(0.7),
                ],
                vec![
                    W::D("2026-07-01 11:00:00"),
                    W::N(40.0),
                    W::N(10.0),
                    W::N(0.3),
                    W::N(0.15),
                    W::N(1.2),
                    W::N(0.9),
                    W::N(0.7),
                ],
            ],
        )],
    );
}

#[test]
fn fill_value_angstrom_rejects_the_row_naming_the_cell() {
    let dir = tempfile::tempdir().unwrap();
    let wb = dir.path().join("fill.xlsx");
    two_wavelength(&wb, W::N(-999.0), W::N(0.15));
    let ing = read_inputs(&spec(&wb)).unwrap();
    assert_eq!(ing.counts.computed, 1);
    let r = &ing.rejected[0];
    assert_eq!((r.cell.as_str(), r.column.as_str()), ("F2", "angstrom"));
    assert!(
        r.reason.contains("add \"angstrom\" to [input] fallback"),
        "{}",
        r.reason
    );
    // AOD 870 = "NaN" in a two-wavelength file.
    let wb2 = dir.path().join("nan.xlsx");
    two_wavelength(&wb2, W::N(1.2), W::S("NaN"));
    let ing = read_inputs(&spec(&wb2)).unwrap();
    assert_eq!(ing.rejected.len(), 1);
    assert_eq!(ing.rejected[0].cell, "E2", "{:?}", ing.rejected);
}

#[test]
fn fallback_allowed_by_the_job_file_warns_on_the_row_and_in_check_json() {
    let dir = tempfile::tempdir().unwrap();
    two_wavelength(&dir.path().join("fill.xlsx"), W::S("n/a"), W::N(0.15));
    std::fs::write(
        dir.path().join("job.toml"),
        "[input]\npaths = [\"fill.xlsx\"]\nfallback = [\"angstrom\"]\n[atmosphere]\nangstrom = 1.1\n",
    )
    .unwrap();
    let o = run(&["check", "job.toml", "--json"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stdout));
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let warnings = doc["row_warnings"].as_array().unwrap();
    let w = warnings
        .iter()
        .find(|w| w["cell"] == "F2")
        .unwrap_or_else(|| panic!("{warnings:?}"));
    let msg = w["message"].as_str().unwrap();
    // AOD at two wavelengths: the exponent is fitted rather than the default used.
    assert!(
        msg.starts_with("angstrom is \"n/a\": fitted to AOD at 500, 870 nm"),
        "{msg}"
    );
    // A name that cannot fall back is refused with the known ones.
    std::fs::write(
        dir.path().join("bad.toml"),
        "[input]\npaths = [\"fill.xlsx\"]\nfallback = [\"time\"]\n",
    )
    .unwrap();
    let o = run(&["check", "bad.toml"], dir.path());
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o.stderr).contains("\"angstrom\""),
        "{}",
        text(&o.stderr)
    );
}

#[test]
fn ozone_falls_back_by_default_with_a_warning_naming_the_value() {
    let dir = tempfile::tempdir().unwrap();
    let wb = dir.path().join("gorse.xlsx");
    let mut row = good_row("2026-07-01 10:00:00");
    row[5] = W::Blank;
    station_workbook(&wb, vec![row]);
    let ing = read_inputs(&spec(&wb)).unwrap();
    assert_eq!(ing.counts.computed, 1, "{:?}", ing.rejected);
    let w = &ing.row_warnings[0];
    assert!(
        w.iter().any(|w| w.cell == "F4"
            && w.message == "ozone is an empty cell: 300 DU (built-in default) is used"),
        "{w:?}"
    );
}

/// Split date and time columns; row 3 has a readable date and an unreadable time.
fn date_and_time(path: &Path) {
    write_xlsx(
        path,
        &[(
            "data",
            vec![
                vec![
                    W::S("date"),
                    W::S("time"),
                    W::S("latitude"),
                    W::S("longitude"),
                    W::S("aod_500"),
                    W::S("ssa_550"),
                    W::S("g_550"),
                ],
                vec![
                    W::S("2026-06-10"),
                    W::S("10:00"),
                    W::N(45.0),
                    W::N(90.0),
                    W::N(0.3),
                    W::N(0.9),
                    W::N(0.7),
                ],
                vec![
                    W::S("2026-06-30"),
                    W::S("not recorded"),
                    W::N(45.0),
                    W::N(90.0),
                    W::N(0.3),
                    W::N(0.9),
                    W::N(0.7),
                ],
                vec![
                    W::S("2026-07-02"),
                    W::S("11:00"),
                    W::N(45.0),
                    W::N(90.0),
                    W::N(0.3),
                    W::N(0.9),
                    W::N(0.7),
                ],
            ],
        )],
    );
}

#[test]
fn a_dated_row_without_a_time_is_placed_in_its_month() {
    let dir = tempfile::tempdir().unwrap();
    date_and_time(&dir.path().join("d.xlsx"));
    let o = run(
        &[
            "run",
            "d.xlsx",
            "--period",
            "2026-06",
            "--side-output",
            "csv",
            "--quiet",
        ],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let csv_path: PathBuf = text(&o.stdout)
        .lines()
        .map(|l| dir.path().join(l.trim()))
        .find(|p| p.extension().is_some_and(|e| e == "csv"))
        .expect("csv written");
    let csv = std::fs::read_to_string(csv_path).unwrap();
    let mut lines = csv.lines().filter(|l| !l.starts_with('#'));
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    // csv column names carry their unit in brackets ("dre_toa [W m-2]").
    let col = |name: &str| {
        header
            .iter()
            .position(|h| h.split(" [").next() == Some(name))
            .unwrap()
    };
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len(), 2, "{csv}");
    let placed = &rows[1];
    let toa = placed[col("dre_toa")];
    let toa_24h: f64 = placed[col("dre_toa_24h")].parse().unwrap();
    assert!(
        toa.is_empty() || toa.parse::<f64>().is_ok_and(f64::is_nan),
        "{toa}"
    );
    assert!(toa_24h < 0.0, "{toa_24h}");
    // Its warning says so, naming the cell.
    let o = run(
        &["check", "d.xlsx", "--json", "--period", "2026-06"],
        dir.path(),
    );
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let w = &doc["row_warnings"][0];
    assert_eq!(w["cell"], "B3", "{doc}");
    assert!(
        w["message"]
            .as_str()
            .unwrap()
            .contains("instantaneous values are left empty"),
        "{w}"
    );
    assert_eq!(doc["counts"]["computed"], 2);
    assert_eq!(doc["counts"]["outside_period"], 1);
}

#[test]
fn an_empty_month_writes_nothing_and_a_month_of_rejected_rows_writes_a_report() {
    let dir = tempfile::tempdir().unwrap();
    date_and_time(&dir.path().join("d.xlsx"));
    // No row in the period at all: exit 2, nothing written.
    let o = run(
        &["run", "d.xlsx", "--period", "2026-01", "--quiet"],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(text(&o.stdout).is_empty());
    let written: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .filter(|n| n.ends_with("report.xlsx"))
        .collect();
    assert!(written.is_empty(), "{written:?}");
    // Every row of the period rejected: a report listing them, exit 1.
    write_xlsx(
        &dir.path().join("bad.xlsx"),
        &[(
            "data",
            vec![
                vec![
                    W::S("time"),
                    W::S("latitude"),
                    W::S("longitude"),
                    W::S("aod_500"),
                    W::S("angstrom"),
                    W::S("ssa_550"),
                    W::S("g_550"),
                ],
                vec![
                    W::D("2026-07-01 10:00:00"),
                    W::N(40.0),
                    W::N(10.0),
                    W::N(0.3),
                    W::N(-999.0),
                    W::N(0.9),
                    W::N(0.7),
                ],
            ],
        )],
    );
    let o = run(
        &["run", "bad.xlsx", "--period", "2026-07", "--quiet"],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(1), "{}", text(&o.stderr));
    let written = text(&o.stdout);
    assert_eq!(written.lines().count(), 1, "{written}");
    assert!(dir.path().join(written.trim()).exists());
}

#[test]
fn explicit_job_values_and_ocean_sites_are_labelled_for_what_they_are() {
    let dir = tempfile::tempdir().unwrap();
    two_wavelength(&dir.path().join("w.xlsx"), W::N(1.2), W::N(0.15));
    std::fs::write(
        dir.path().join("job.toml"),
        "[input]\npaths = [\"w.xlsx\"]\n[atmosphere]\nalbedo = 0.15\n",
    )
    .unwrap();
    let o = run(&["check", "job.toml", "--json"], dir.path());
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let albedo = doc["assumptions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|a| a["quantity"] == "albedo")
        .unwrap();
    assert_eq!(albedo["source"], "job-file", "{albedo}");
    let ozone = doc["assumptions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|a| a["quantity"] == "ozone_du")
        .unwrap();
    assert_eq!(ozone["source"], "built-in", "{ozone}");

    // An ocean site's albedo is not used: said, with the reason.
    let wb = dir.path().join("sea.xlsx");
    write_xlsx(
        &wb,
        &[
            (
                "data",
                vec![
                    vec![
                        W::S("site"),
                        W::S("time"),
                        W::S("aod_500"),
                        W::S("ssa_550"),
                        W::S("g_550"),
                    ],
                    vec![
                        W::S("Skerry"),
                        W::D("2026-07-01 10:00:00"),
                        W::N(0.1),
                        W::N(0.98),
                        W::N(0.72),
                    ],
                ],
            ),
            (
                "sites",
                vec![
                    vec![
                        W::S("site"),
                        W::S("latitude"),
                        W::S("longitude"),
                        W::S("albedo"),
                        W::S("surface"),
                    ],
                    vec![
                        W::S("Skerry"),
                        W::N(56.0),
                        W::N(-6.0),
                        W::N(0.06),
                        W::S("ocean"),
                    ],
                ],
            ),
        ],
    );
    let ing = read_inputs(&spec(&wb)).unwrap();
    let a = ing
        .assumptions
        .iter()
        .find(|a| a.quantity == "albedo")
        .unwrap();
    assert!(
        a.value
            .starts_with("Taylor et al. (1996) ocean albedo, not the site table value 0.06"),
        "{}",
        a.value
    );
}
