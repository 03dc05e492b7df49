//! Hostile but realistic inputs: each test crafts a small workbook, csv or job file in a
//! temporary folder, runs the real binary (or the reader) on it and checks that the outcome
//! is a clear message or rejection, never a crash, a silent loss or a wrong number.
//! All data here are invented.

use std::path::{Path, PathBuf};
use std::process::Output;

#[allow(dead_code)]
mod binary_support;
mod ingest_support;

use binary_support::{run, text};
use ingest_support::{W, assert_reconciles, write_xlsx};

fn header() -> Vec<W> {
    vec![
        W::S("site"),
        W::S("time_utc"),
        W::S("latitude"),
        W::S("longitude"),
        W::S("aod_500"),
        W::S("ssa_550"),
        W::S("g_550"),
    ]
}

fn row(site: &str, time: &str, aod: f64) -> Vec<W> {
    vec![
        W::Str(site.into()),
        W::Str(time.into()),
        W::N(54.2),
        W::N(-3.1),
        W::N(aod),
        W::N(0.93),
        W::N(0.7),
    ]
}

fn csv_text(rows: &[&str]) -> String {
    let mut s = "site,time_utc,latitude,longitude,aod_500,ssa_550,g_550\n".to_string();
    for r in rows {
        s.push_str(r);
        s.push('\n');
    }
    s
}

fn json(o: &Output) -> serde_json::Value {
    serde_json::from_slice(&o.stdout)
        .unwrap_or_else(|e| panic!("not JSON ({e}): {}{}", text(&o.stdout), text(&o.stderr)))
}

fn check_json(path: &Path, dir: &Path) -> (Output, serde_json::Value) {
    let o = run(&["check", path.to_str().unwrap(), "--json"], dir);
    let doc = json(&o);
    (o, doc)
}

fn sha(p: &Path) -> Vec<u8> {
    use sha2::Digest;
    sha2::Sha256::digest(std::fs::read(p).unwrap()).to_vec()
}

fn reasons(doc: &serde_json::Value) -> Vec<String> {
    doc["rejected"]
        .as_array()
        .map(|a| {
            a.iter()
                .map(|r| format!("{} {}", r["cell"], r["reason"].as_str().unwrap_or("")))
                .collect()
        })
        .unwrap_or_default()
}

fn files_in(dir: &Path) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    v.sort();
    v
}

// Item 5: a cell at XFD1048576 must not make the reader allocate the sheet's rectangle.
#[test]
fn a_far_stray_cell_is_refused_with_a_message_not_an_abort() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("far.xlsx");
    let mut wb = rust_xlsxwriter::Workbook::new();
    let ws = wb.add_worksheet();
    for (c, h) in [
        "site",
        "time_utc",
        "latitude",
        "longitude",
        "aod_500",
        "ssa_550",
        "g_550",
    ]
    .iter()
    .enumerate()
    {
        ws.write_string(0, c as u16, *h).unwrap();
    }
    ws.write_string(1, 0, "Gull Spit").unwrap();
    ws.write_string(1, 1, "2026-11-03T11:00:00Z").unwrap();
    for (c, v) in [54.2, -3.1, 0.2, 0.93, 0.7].iter().enumerate() {
        ws.write_number(1, c as u16 + 2, *v).unwrap();
    }
    ws.write_string(1_048_575, 16_383, "x").unwrap();
    wb.save(&p).unwrap();
    assert!(std::fs::metadata(&p).unwrap().len() < 20_000);

    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert_eq!(doc["ok"], false);
    let err = doc["error"].as_str().unwrap();
    assert!(
        err.contains("far.xlsx") && err.contains("XFD1048576"),
        "{err}"
    );
    assert!(err.contains("Limits on input"), "{err}");

    let o = run(&["run", p.to_str().unwrap(), "--out", "out"], dir.path());
    assert_eq!(o.status.code(), Some(2));
    let err = text(&o.stderr);
    assert!(
        err.contains("used range") && !err.contains("memory allocation"),
        "{err}"
    );
    assert!(!dir.path().join("out").exists() || files_in(&dir.path().join("out")).is_empty());
}

// Item 5: a stray cell near the data is read as before.
#[test]
fn a_near_stray_cell_is_read() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("near.xlsx");
    let mut rows = vec![header(), row("Gull Spit", "2026-11-03T11:00:00Z", 0.2)];
    for _ in 0..30 {
        rows.push(vec![]);
    }
    let mut last = vec![W::Blank; 40];
    last[39] = W::S("checked by R.");
    rows.push(last);
    write_xlsx(&p, &[("data", rows)]);
    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    assert_eq!(doc["counts"]["computed"], 1);
}

/// A copy of a workbook with an extra part of `size` zero bytes, deflated.
fn with_padding(src: &Path, dst: &Path, size: usize) {
    use std::io::{Read, Write};
    let mut zin = zip::ZipArchive::new(std::fs::File::open(src).unwrap()).unwrap();
    let mut zout = zip::ZipWriter::new(std::fs::File::create(dst).unwrap());
    let opts = zip::write::SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Deflated);
    for i in 0..zin.len() {
        let mut f = zin.by_index(i).unwrap();
        let name = f.name().unwrap().to_string();
        let mut buf = Vec::new();
        f.read_to_end(&mut buf).unwrap();
        zout.start_file(name, opts).unwrap();
        zout.write_all(&buf).unwrap();
    }
    zout.start_file("xl/media/padding.bin", opts).unwrap();
    let chunk = vec![0u8; 1 << 20];
    for _ in 0..size >> 20 {
        zout.write_all(&chunk).unwrap();
    }
    zout.finish().unwrap();
}

// Item 6: a small file that decompresses a thousand fold is refused before it is inflated.
#[test]
fn a_decompression_bomb_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let ok = dir.path().join("ok.xlsx");
    write_xlsx(
        &ok,
        &[(
            "data",
            vec![header(), row("Gull Spit", "2026-11-03T11:00:00Z", 0.2)],
        )],
    );
    let bomb = dir.path().join("bomb.xlsx");
    with_padding(&ok, &bomb, 64 << 20);
    assert!(std::fs::metadata(&bomb).unwrap().len() < 1 << 20);
    let (o, doc) = check_json(&bomb, dir.path());
    assert_eq!(o.status.code(), Some(2));
    let err = doc["error"].as_str().unwrap();
    assert!(
        err.contains("bomb.xlsx") && err.contains("decompression bomb"),
        "{err}"
    );
    // The same padding at a modest ratio is only a part like any other.
    let (o, _) = check_json(&ok, dir.path());
    assert_eq!(o.status.code(), Some(0));
}

// Items 6 and 7: a cell text longer than a worksheet cell holds rejects its row, naming the
// cell; messages show the first characters only; `check` and `run` agree.
#[test]
fn over_long_texts_are_rejected_and_cut_in_messages() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("long.xlsx");
    let long_site = "G".repeat(40_000);
    let junk = "x".repeat(5_000);
    let mut r2 = row("Gull Spit", "2026-11-03T12:00:00Z", 0.2);
    r2[4] = W::Str(junk.clone());
    // rust_xlsxwriter refuses strings over 32,767 characters: write a shorter one and
    // lengthen it in the package.
    let marker = "L".repeat(32_000);
    let rows = vec![
        header(),
        row(&marker, "2026-11-03T11:00:00Z", 0.2),
        r2,
        row("Gull Spit", "2026-11-03T13:00:00Z", 0.3),
    ];
    write_xlsx(&p, &[("data", rows)]);
    lengthen_string(&p, &marker, &long_site);

    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(1), "{}", text(&o.stderr));
    let rej = doc["rejected"].as_array().unwrap();
    assert_eq!(rej.len(), 2, "{rej:?}");
    assert_eq!(rej[0]["cell"], "A2");
    assert!(
        rej[0]["reason"]
            .as_str()
            .unwrap()
            .contains("40000 characters"),
        "{rej:?}"
    );
    assert!(rej[0]["value"].as_str().unwrap().chars().count() <= 61);
    assert_eq!(rej[1]["cell"], "E3");
    let why = rej[1]["reason"].as_str().unwrap();
    assert!(why.contains('…') && why.len() < 300, "{why}");

    let o = run(&["run", p.to_str().unwrap(), "--out", "out"], dir.path());
    assert_eq!(o.status.code(), Some(1), "{}", text(&o.stderr));
    assert!(text(&o.stderr).len() < 5_000);
}

/// Replace `from` by `to` in the shared strings of a workbook (to write what rust_xlsxwriter
/// would refuse).
fn lengthen_string(p: &Path, from: &str, to: &str) {
    use std::io::{Read, Write};
    let bytes = std::fs::read(p).unwrap();
    let mut zin = zip::ZipArchive::new(std::io::Cursor::new(bytes)).unwrap();
    let mut zout = zip::ZipWriter::new(std::fs::File::create(p).unwrap());
    let opts = zip::write::SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Deflated);
    for i in 0..zin.len() {
        let mut f = zin.by_index(i).unwrap();
        let name = f.name().unwrap().to_string();
        let mut buf = String::new();
        f.read_to_string(&mut buf).unwrap();
        zout.start_file(name, opts).unwrap();
        zout.write_all(buf.replace(from, to).as_bytes()).unwrap();
    }
    zout.finish().unwrap();
}

// Item 6: a long list of note rows is cut in the warning.
#[test]
fn note_rows_are_listed_briefly() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("notes.csv");
    let mut lines = vec!["Gull Spit,2026-11-03T11:00:00Z,54.2,-3.1,0.2,0.93,0.7".to_string()];
    for i in 0..500 {
        lines.push(format!("note {i},,,,,,"));
    }
    let refs: Vec<&str> = lines.iter().map(String::as_str).collect();
    std::fs::write(&p, csv_text(&refs)).unwrap();
    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(0));
    let w = doc["warnings"].to_string();
    assert!(
        w.contains("500 row(s)") && w.contains("and 490 more"),
        "{w}"
    );
    assert!(w.len() < 1_000, "{w}");
}

// Item 7: a site name that reads like a cell reference does not break the charts.
#[test]
fn a_site_name_with_an_exclamation_mark_is_written() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("bang.xlsx");
    write_xlsx(
        &p,
        &[(
            "data",
            vec![
                header(),
                row("Gull!A1", "2026-11-03T11:00:00Z", 0.2),
                row("=Tarn!B2", "2026-11-03T11:00:00Z", 0.3),
                row("Kelver", "2026-11-04T11:00:00Z", 0.25),
            ],
        )],
    );
    let (o, _) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(0));
    let o = run(&["run", p.to_str().unwrap(), "--out", "out"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let report = PathBuf::from(text(&o.stdout).lines().next().unwrap().trim());
    let report = if report.is_absolute() {
        report
    } else {
        dir.path().join(report)
    };
    assert!(report.exists());
}

// Item 8: a leap second is read as the following instant, said in a warning, and computed
// as daylight, not as night.
#[test]
fn a_leap_second_is_the_following_instant_and_not_night() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("leap.csv");
    // Local noon near Greenwich on 2027-06-22.
    std::fs::write(
        &p,
        csv_text(&["Gull Spit,2027-06-22T11:59:60Z,51.5,0.0,0.2,0.93,0.7"]),
    )
    .unwrap();
    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stdout));
    let w = doc["row_warnings"].to_string();
    assert!(w.contains("leap second") && w.contains("12:00:00"), "{w}");

    let ing = ingest_support::read(&p);
    assert_eq!(
        ing.observations[0].time_utc.to_rfc3339(),
        "2027-06-22T12:00:00+00:00"
    );
    let settings = hazebook::physics::Settings::default();
    let ctx = hazebook::physics::forcing::Context::new(&settings);
    let r = hazebook::physics::forcing::compute_observation(&ing.observations[0], &settings, &ctx);
    assert!(!r.flags.sun_below_horizon);
    assert!(r.solar_zenith_deg < 40.0, "{}", r.solar_zenith_deg);
    assert!(r.instantaneous.dre_toa < 0.0);
}

// Item 8: in the physics, a zenith that cannot be computed is never night.
#[test]
fn a_nan_zenith_is_not_night() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("one.csv");
    std::fs::write(
        &p,
        csv_text(&["Gull Spit,2027-06-22T12:00:00Z,51.5,0.0,0.2,0.93,0.7"]),
    )
    .unwrap();
    let ing = ingest_support::read(&p);
    let mut obs = ing.observations[0].clone();
    obs.latitude_deg = f64::NAN;
    let settings = hazebook::physics::Settings::default();
    let ctx = hazebook::physics::forcing::Context::new(&settings);
    let r = hazebook::physics::forcing::compute_observation(&obs, &settings, &ctx);
    assert!(r.solar_zenith_deg.is_nan());
    assert!(!r.flags.sun_below_horizon);
    assert!(r.instantaneous.dre_toa.is_nan());
}

// Item 12: a row whose radiative transfer gives no finite number is rejected, not reported
// as computed with empty forcing.
#[test]
fn rows_without_a_finite_result_are_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("two.csv");
    std::fs::write(
        &p,
        csv_text(&[
            "Gull Spit,2027-06-22T12:00:00Z,51.5,0.0,0.2,0.93,0.7",
            "Gull Spit,2027-06-22T13:00:00Z,51.5,0.0,0.2,0.93,0.7",
        ]),
    )
    .unwrap();
    let mut ing = ingest_support::read(&p);
    let settings = hazebook::physics::Settings::default();
    let ctx = hazebook::physics::forcing::Context::new(&settings);
    let mut results: Vec<_> = ing
        .observations
        .iter()
        .map(|o| hazebook::physics::forcing::compute_observation(o, &settings, &ctx))
        .collect();
    results[1].instantaneous.dre_toa = f64::NAN;
    let kept = hazebook::ingest::reject_uncomputable(&mut ing, results, &settings);
    assert_eq!(kept.len(), 1);
    assert_reconciles(&ing);
    assert_eq!(ing.counts.rejected, 1);
    assert_eq!(ing.rejected[0].row, 3);
    assert!(ing.rejected[0].reason.contains("not a finite number"));
}

// Item 12: an absurd AOD is a rejection with a compact number, not a warning.
#[test]
fn an_absurd_aod_is_rejected_with_a_compact_number() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("huge.xlsx");
    write_xlsx(
        &p,
        &[(
            "data",
            vec![
                header(),
                row("Gull Spit", "2026-11-03T11:00:00Z", 1e308),
                row("Gull Spit", "2026-11-03T12:00:00Z", 0.2),
            ],
        )],
    );
    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(1));
    let r = reasons(&doc);
    assert_eq!(r.len(), 1, "{r:?}");
    assert!(r[0].contains("E2") && r[0].contains("1e308"), "{r:?}");
    assert!(r[0].len() < 250, "{r:?}");
    assert_eq!(doc["counts"]["computed"], 1);
}

fn job(dir: &Path, body: &str) -> PathBuf {
    std::fs::write(
        dir.join("camp.csv"),
        csv_text(&["Gull Spit,2026-11-03T11:00:00Z,,,0.2,0.93,0.7"]),
    )
    .unwrap();
    let p = dir.join("job.toml");
    std::fs::write(&p, format!("[input]\npaths = [\"camp.csv\"]\n{body}")).unwrap();
    p
}

// Item 9: the job's site table is range-checked like workbook values, with the line.
#[test]
fn job_site_values_are_range_checked() {
    let dir = tempfile::tempdir().unwrap();
    for (body, line, what) in [
        (
            "[[sites]]\nname = \"Gull Spit\"\nlatitude_deg = 400\nlongitude_deg = -3\n",
            "line 5",
            "latitude_deg",
        ),
        (
            "[[sites]]\nname = \"Gull Spit\"\nlatitude_deg = 54\nlongitude_deg = -3\nalbedo = -1\n",
            "line 7",
            "albedo",
        ),
        (
            "[[sites]]\nname = \"Gull Spit\"\nlatitude_deg = 54\nlongitude_deg = -3\n[[sites]]\nname = \"Gull Spit\"\nlatitude_deg = 10\nlongitude_deg = 3\n",
            "line 8",
            "twice",
        ),
    ] {
        let p = job(dir.path(), body);
        for cmd in ["run", "check"] {
            let o = run(&[cmd, p.to_str().unwrap()], dir.path());
            assert_eq!(o.status.code(), Some(2), "{cmd} {body}");
            let err = text(&o.stderr);
            assert!(
                err.contains("job.toml") && err.contains(line) && err.contains(what),
                "{cmd}: {err}"
            );
        }
    }
    let p = job(
        dir.path(),
        "[[sites]]\nname = \"Gull Spit\"\nlatitude_deg = 54\nlongitude_deg = -3\n",
    );
    let o = run(&["check", p.to_str().unwrap()], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
}

// Item 10: bad atmosphere defaults are a job-file error (exit 2, the line), not one
// rejection per row.
#[test]
fn bad_atmosphere_values_are_a_job_file_error() {
    let dir = tempfile::tempdir().unwrap();
    let sites = "[[sites]]\nname = \"Gull Spit\"\nlatitude_deg = 54\nlongitude_deg = -3\n";
    for (body, line) in [
        ("[atmosphere]\nozone_du = 3\n", "line 8"),
        ("[atmosphere]\nwater_cm = -1\n", "line 8"),
        ("[atmosphere]\nlayer_top_km = 0\n", "line 8"),
        ("[atmosphere]\nangstrom = inf\n", "line 8"),
    ] {
        let p = job(dir.path(), &format!("{sites}{body}"));
        let o = run(&["run", p.to_str().unwrap(), "--out", "out"], dir.path());
        assert_eq!(o.status.code(), Some(2), "{body}");
        let err = text(&o.stderr);
        assert!(err.contains(line) && err.contains("[atmosphere]"), "{err}");
        assert!(!dir.path().join("out").exists());
    }
}

// Item 11: offsets beyond ±14 h and duration cells in a time-of-day column are rejected
// with the reason.
#[test]
fn offsets_beyond_fourteen_hours_and_durations_are_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("offsets.csv");
    std::fs::write(
        &p,
        csv_text(&[
            "Gull Spit,2026-11-03T11:00:00+15:00,54.2,-3.1,0.2,0.93,0.7",
            "Gull Spit,2026-11-03T12:00:00-23:59,54.2,-3.1,0.2,0.93,0.7",
            "Gull Spit,2026-11-03T13:00:00+14:00,54.2,-3.1,0.2,0.93,0.7",
        ]),
    )
    .unwrap();
    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(1));
    let r = reasons(&doc);
    assert_eq!(r.len(), 2, "{r:?}");
    assert!(r[0].contains("B2") && r[0].contains("±14:00") && r[0].contains("+15:00"));
    assert!(r[1].contains("B3") && r[1].contains("-23:59"), "{r:?}");

    let x = dir.path().join("duration.xlsx");
    let mut wb = rust_xlsxwriter::Workbook::new();
    let dur = rust_xlsxwriter::Format::new().set_num_format("[h]:mm");
    let ws = wb.add_worksheet();
    for (c, h) in [
        "site",
        "date",
        "time",
        "latitude",
        "longitude",
        "aod_500",
        "ssa_550",
        "g_550",
    ]
    .iter()
    .enumerate()
    {
        ws.write_string(0, c as u16, *h).unwrap();
    }
    for (r, t) in [(1u32, 25.0 / 24.0), (2, 10.5 / 24.0)] {
        ws.write_string(r, 0, "Gull Spit").unwrap();
        ws.write_string(r, 1, "2026-11-03").unwrap();
        ws.write_number_with_format(r, 2, t, &dur).unwrap();
        for (c, v) in [54.2, -3.1, 0.2, 0.93, 0.7].iter().enumerate() {
            ws.write_number(r, c as u16 + 3, *v).unwrap();
        }
    }
    wb.save(&x).unwrap();
    let (o, doc) = check_json(&x, dir.path());
    assert_eq!(o.status.code(), Some(1), "{doc}");
    let r = reasons(&doc);
    assert_eq!(r.len(), 1, "{r:?}");
    assert!(
        r[0].contains("C2") && r[0].contains("duration") && r[0].contains("25:00:00"),
        "{r:?}"
    );
    assert_eq!(doc["counts"]["computed"], 1);
}

// Item 14: merged cells in the site column take the site of their top-left cell.
#[test]
fn merged_site_cells_take_the_top_left_site() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("merged.xlsx");
    let mut wb = rust_xlsxwriter::Workbook::new();
    let ws = wb.add_worksheet();
    for (c, h) in [
        "site",
        "time_utc",
        "latitude",
        "longitude",
        "aod_500",
        "ssa_550",
        "g_550",
    ]
    .iter()
    .enumerate()
    {
        ws.write_string(0, c as u16, *h).unwrap();
    }
    for r in 1..=4u32 {
        ws.write_string(r, 1, format!("2026-11-03T1{r}:00:00Z"))
            .unwrap();
        for (c, v) in [54.2, -3.1, 0.2, 0.93, 0.7].iter().enumerate() {
            ws.write_number(r, c as u16 + 2, *v).unwrap();
        }
    }
    let fmt = rust_xlsxwriter::Format::new();
    ws.merge_range(1, 0, 3, 0, "Gull Spit", &fmt).unwrap();
    ws.write_string(4, 0, "Tarn").unwrap();
    wb.save(&p).unwrap();
    let ing = ingest_support::read(&p);
    assert_reconciles(&ing);
    assert_eq!(ing.sites, ["Gull Spit", "Gull Spit", "Gull Spit", "Tarn"]);
    assert!(
        ing.warnings
            .iter()
            .any(|w| w.contains("merged") && w.contains("A2:A4")),
        "{:?}",
        ing.warnings
    );
}

// Item 14: a file named several times in `paths` is read once, with a warning.
#[test]
fn a_file_listed_twice_is_read_once() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("camp.csv"),
        csv_text(&[
            "Gull Spit,2026-11-03T11:00:00Z,54.2,-3.1,0.2,0.93,0.7",
            "Gull Spit,2026-11-03T12:00:00Z,54.2,-3.1,0.2,0.93,0.7",
        ]),
    )
    .unwrap();
    let p = dir.path().join("job.toml");
    std::fs::write(
        &p,
        "[input]\npaths = [\"camp.csv\", \"camp.csv\", \"./camp.csv\", \"*.csv\"]\n",
    )
    .unwrap();
    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(0), "{doc}");
    assert_eq!(doc["counts"]["read"], 2);
    assert_eq!(doc["counts"]["rejected"], 0);
    let w = doc["warnings"].to_string();
    assert!(
        w.contains("listed 4 times") && w.contains("read once"),
        "{w}"
    );
}

// Item 14: lines of blanks in a csv are blank lines (not counted, not rejected), and the
// line numbers of later rows stay right.
#[test]
fn whitespace_only_csv_lines_are_blank() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("blanks.csv");
    std::fs::write(
        &p,
        csv_text(&[
            "Gull Spit,2026-11-03T11:00:00Z,54.2,-3.1,0.2,0.93,0.7",
            "   ",
            "\t",
            "Gull Spit,2026-11-03T12:00:00Z,54.2,-3.1,0.2,1.5,0.7",
        ]),
    )
    .unwrap();
    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(1), "{doc}");
    assert_eq!(doc["counts"]["read"], 2);
    assert_eq!(doc["counts"]["rejected"], 1);
    assert_eq!(doc["rejected"][0]["row"], 5);
    assert_eq!(doc["rejected"][0]["cell"], "F5");
}

// Item 14: fields beyond the header are said, naming the line.
#[test]
fn extra_csv_fields_are_warned_about() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("ragged.csv");
    std::fs::write(
        &p,
        csv_text(&[
            "Gull Spit,2026-11-03T11:00:00Z,54.2,-3.1,0.2,0.93,0.7",
            "Gull Spit,2026-11-03T12:00:00Z,54.2,-3.1,0.2,0.93,0.7,0.5,extra",
        ]),
    )
    .unwrap();
    let (o, doc) = check_json(&p, dir.path());
    assert_eq!(o.status.code(), Some(0), "{doc}");
    let w = doc["warnings"].to_string();
    assert!(
        w.contains("more fields than the header") && w.contains("line 3"),
        "{w}"
    );
    assert_eq!(doc["counts"]["computed"], 2);
}

// Item 14: `check` fails on a header-only file as `run` does.
#[test]
fn check_fails_on_a_header_only_file_like_run() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("empty.csv");
    std::fs::write(&p, csv_text(&[])).unwrap();
    let x = dir.path().join("empty.xlsx");
    write_xlsx(&x, &[("data", vec![header()])]);
    for f in [&p, &x] {
        let o = run(&["run", f.to_str().unwrap(), "--out", "out"], dir.path());
        assert_eq!(o.status.code(), Some(2));
        let o = run(&["check", f.to_str().unwrap()], dir.path());
        assert_eq!(o.status.code(), Some(2), "{}", text(&o.stdout));
        assert!(text(&o.stderr).contains("nothing to compute"));
        let (o, doc) = check_json(f, dir.path());
        assert_eq!(o.status.code(), Some(2));
        assert_eq!(doc["ok"], false);
    }
}

// Item 20: `init` escapes Unicode format characters so that the job file parses.
#[test]
fn init_escapes_format_characters() {
    let dir = tempfile::tempdir().unwrap();
    let name = "camp\u{200D}ai\"gn\u{202E}.xlsx";
    let p = dir.path().join(name);
    let rows = vec![header(), row("Gull Spit", "2026-11-03T11:00:00Z", 0.2)];
    write_xlsx(&p, &[("data", rows)]);
    let before = sha(&p);
    let o = run(
        &["init", "setup", "--from", p.to_str().unwrap()],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let job = std::fs::read_to_string(dir.path().join("setup/job.toml")).unwrap();
    assert!(job.contains("\\u202E") && job.contains("\\u200D"), "{job}");
    assert!(!job.contains('\u{202E}'));
    hazebook::job::config::parse(&job).unwrap();
    let o = run(&["check", "setup/job.toml"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    assert_eq!(sha(&p), before);
}

// Item 20: `grid` validates the solar constant and its other single values.
#[test]
fn grid_validates_its_numbers() {
    let dir = tempfile::tempdir().unwrap();
    for args in [
        ["--solar-constant", "NaN"],
        ["--solar-constant", "-5"],
        ["--solar-constant", "1e300"],
        ["--ozone-du", "-1"],
        ["--pressure-hpa", "inf"],
        ["--angstrom", "9"],
    ] {
        let arg = format!("{}={}", args[0], args[1]);
        let o = run(&["grid", &arg], dir.path());
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        assert!(text(&o.stderr).contains(args[0]), "{}", text(&o.stderr));
    }
    let o = run(
        &[
            "grid",
            "--aod",
            &vec!["0.1"; 2000].join(","),
            "--ssa",
            &vec!["0.9"; 2000].join(","),
        ],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("cases"));
    let o = run(&["grid", "--solar-constant", "1361"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
}
