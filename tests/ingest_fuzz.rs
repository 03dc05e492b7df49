//! Fuzz-style property tests of the reader and the job-file parser: generated workbooks
//! (written with rust_xlsxwriter into a temporary folder), csv files and job files, with
//! hostile values mixed into plausible ones. Each case asserts that nothing panics or
//! aborts, every row is accounted for (read = computed + rejected + outside the period) and
//! the inputs are not changed. The number of cases is bounded so the suite stays quick.
//! All data here are invented.

use std::path::Path;

use proptest::prelude::*;

#[allow(dead_code)]
mod binary_support;
mod ingest_support;

use hazebook::ingest::{InputSpec, Period, read_inputs};
use ingest_support::assert_reconciles;

/// A generated cell.
#[derive(Debug, Clone)]
enum G {
    Num(f64),
    Text(String),
    Empty,
}

const HEADER: [&str; 7] = [
    "site",
    "time_utc",
    "latitude",
    "longitude",
    "aod_500",
    "ssa_550",
    "g_550",
];

/// Texts that have broken readers: fill values, formulas, references, format characters,
/// leap seconds, far offsets, durations, locale numbers, long runs.
const TRICKY: &[&str] = &[
    "",
    "   ",
    "\t",
    "N/A",
    "-999",
    "-9999.0",
    "nan",
    "inf",
    "1e308",
    "-0",
    "0,25",
    "=HYPERLINK(\"http://x\")",
    "+cmd",
    "@SUM(A1)",
    "Gull!A1",
    "=Tarn!B2",
    "Gull/Spit",
    "\u{202E}tilps\u{200D}",
    "line\nbreak",
    "\"quoted\"",
    "2027-06-22T11:59:60Z",
    "2026-11-03T11:00:00+15:00",
    "2026-11-03T11:00:00-23:59",
    "2026-02-31T10:00:00",
    "25:00",
    "PT25H00M00S",
    "99999-01-01",
    "#DIV/0!",
    "TRUE",
];

fn tricky() -> impl Strategy<Value = String> {
    prop_oneof![
        proptest::sample::select(TRICKY).prop_map(str::to_string),
        "[ -~]{0,40}",
        "\\PC{0,20}",
        (1usize..200).prop_map(|n| "x".repeat(n)),
    ]
}

fn number() -> impl Strategy<Value = f64> {
    prop_oneof![
        -2.0f64..2.0,
        -200.0f64..400.0,
        proptest::num::f64::NORMAL,
        proptest::sample::select(vec![0.0, -0.0, 1.0, -999.0, 1e308, -1e308, 5e-324]),
    ]
}

fn plausible(col: usize) -> BoxedStrategy<G> {
    match col {
        0 => proptest::sample::select(vec!["Gull Spit", "Tarn", "gull  spit", "Kelver"])
            .prop_map(|s| G::Text(s.into()))
            .boxed(),
        1 => (1u32..=28, 0u32..24, 0u32..60)
            .prop_map(|(d, h, m)| G::Text(format!("2026-11-{d:02}T{h:02}:{m:02}:00Z")))
            .boxed(),
        2 => (-90.0f64..90.0).prop_map(G::Num).boxed(),
        3 => (-180.0f64..180.0).prop_map(G::Num).boxed(),
        4 => (0.0f64..2.0).prop_map(G::Num).boxed(),
        5 => (0.7f64..1.0).prop_map(G::Num).boxed(),
        _ => (0.4f64..0.8).prop_map(G::Num).boxed(),
    }
}

fn cell(col: usize) -> impl Strategy<Value = G> {
    prop_oneof![
        6 => plausible(col),
        1 => number().prop_map(G::Num),
        1 => tricky().prop_map(G::Text),
        1 => Just(G::Empty),
    ]
}

fn table() -> impl Strategy<Value = Vec<Vec<G>>> {
    let row = (0..HEADER.len()).map(cell).collect::<Vec<_>>();
    proptest::collection::vec(row, 0..14)
}

fn write_xlsx(path: &Path, header: &[String], rows: &[Vec<G>]) {
    let mut wb = rust_xlsxwriter::Workbook::new();
    let ws = wb.add_worksheet();
    for (c, h) in header.iter().enumerate() {
        ws.write_string(0, c as u16, h).unwrap();
    }
    for (r, row) in rows.iter().enumerate() {
        for (c, g) in row.iter().enumerate() {
            let (r, c) = (r as u32 + 1, c as u16);
            match g {
                G::Num(v) if v.is_finite() => {
                    ws.write_number(r, c, *v).unwrap();
                }
                G::Num(v) => {
                    ws.write_string(r, c, v.to_string()).unwrap();
                }
                G::Text(s) if !s.is_empty() => {
                    ws.write_string(r, c, s).unwrap();
                }
                _ => {}
            }
        }
    }
    wb.save(path).unwrap();
}

fn csv_field(g: &G) -> String {
    let s = match g {
        G::Num(v) => format!("{v}"),
        G::Text(s) => s.clone(),
        G::Empty => String::new(),
    };
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s
    }
}

fn write_csv(path: &Path, header: &[String], rows: &[Vec<G>]) {
    // Header fields are quoted like the cells: a header with a line break or a comma stays
    // one field of the header line.
    let mut s = header
        .iter()
        .map(|h| csv_field(&G::Text(h.clone())))
        .collect::<Vec<_>>()
        .join(",");
    s.push('\n');
    for row in rows {
        s.push_str(&row.iter().map(csv_field).collect::<Vec<_>>().join(","));
        s.push('\n');
    }
    std::fs::write(path, s).unwrap();
}

fn sha(p: &Path) -> Vec<u8> {
    use sha2::Digest;
    sha2::Sha256::digest(std::fs::read(p).unwrap()).to_vec()
}

fn november() -> Period {
    use chrono::TimeZone;
    Period {
        label: "2026-11".into(),
        start: chrono::Utc.with_ymd_and_hms(2026, 11, 1, 0, 0, 0).unwrap(),
        end: chrono::Utc.with_ymd_and_hms(2026, 11, 15, 0, 0, 0).unwrap(),
    }
}

/// Read one generated file; if it is read, every row is accounted for; the file is unchanged.
fn read_and_account(path: &Path, rows: usize, period: bool) {
    let before = sha(path);
    let spec = InputSpec {
        paths: vec![path.to_path_buf()],
        period: period.then(november),
        ..InputSpec::default()
    };
    match read_inputs(&spec) {
        Ok(ing) => {
            assert_reconciles(&ing);
            assert!(ing.counts.read <= rows, "{:?} of {rows} rows", ing.counts);
            for o in &ing.observations {
                assert!(o.latitude_deg.is_finite() && o.aod.is_finite());
                assert!((0.0..=10.0).contains(&o.aod), "{}", o.aod);
            }
            for r in &ing.rejected {
                assert!(r.value.chars().count() <= 61, "{r:?}");
                assert!(r.reason.len() < 2_000, "{r:?}");
            }
        }
        Err(e) => {
            let msg = e.to_string();
            assert!(msg.contains(&path.display().to_string()), "{msg}");
        }
    }
    assert_eq!(sha(path), before, "the input was changed");
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    #[test]
    fn generated_workbooks_and_csv_are_read_without_loss(
        rows in table(),
        drop_col in proptest::option::of(0usize..HEADER.len()),
        extra in proptest::option::of(tricky()),
        period in any::<bool>(),
    ) {
        let mut header: Vec<String> = HEADER.iter().map(|s| s.to_string()).collect();
        let mut rows = rows;
        if let Some(c) = drop_col {
            header.remove(c);
            for r in &mut rows {
                r.remove(c);
            }
        }
        if let Some(h) = extra {
            header.push(h);
            for r in &mut rows {
                r.push(G::Text("spare".into()));
            }
        }
        let dir = tempfile::tempdir().unwrap();
        let x = dir.path().join("gen.xlsx");
        write_xlsx(&x, &header, &rows);
        read_and_account(&x, rows.len(), period);
        let c = dir.path().join("gen.csv");
        write_csv(&c, &header, &rows);
        read_and_account(&c, rows.len(), period);
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 8, ..ProptestConfig::default() })]

    /// The binary on generated files: a JSON document and a defined exit status, never an
    /// abort; the input unchanged.
    #[test]
    fn the_binary_checks_generated_files(rows in table()) {
        let header: Vec<String> = HEADER.iter().map(|s| s.to_string()).collect();
        let dir = tempfile::tempdir().unwrap();
        let x = dir.path().join("gen.xlsx");
        write_xlsx(&x, &header, &rows);
        let before = sha(&x);
        let o = binary_support::run(&["check", "gen.xlsx", "--json"], dir.path());
        let code = o.status.code();
        prop_assert!(matches!(code, Some(0..=2)), "{code:?} {}", binary_support::text(&o.stderr));
        let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        if doc["ok"] == true {
            let c = &doc["counts"];
            prop_assert_eq!(
                c["read"].as_u64().unwrap(),
                c["computed"].as_u64().unwrap() + c["rejected"].as_u64().unwrap()
                    + c["outside_period"].as_u64().unwrap()
            );
        }
        prop_assert_eq!(sha(&x), before);
    }
}

/// A TOML value, hostile or not.
fn toml_value() -> impl Strategy<Value = String> {
    prop_oneof![
        number().prop_map(|v| if v.is_finite() {
            format!("{v:?}")
        } else {
            "nan".into()
        }),
        proptest::sample::select(vec![
            "nan",
            "inf",
            "-inf",
            "+inf",
            "1e309",
            "-0.0",
            "400",
            "-1",
            "0",
            "true",
            "\"\"",
            "\"land\"",
            "\"ocean\"",
            "\"x\"",
            "[]",
            "[1, 2]",
            "{}",
            "1979-05-27",
        ])
        .prop_map(str::to_string),
        tricky().prop_map(|s| toml_quote(&s)),
        (-100i64..2000).prop_map(|v| v.to_string()),
    ]
}

fn toml_quote(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if (c as u32) < 0x20 || c as u32 == 0x7F => {
                out.push_str(&format!("\\u{:04X}", c as u32))
            }
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

const SITE_KEYS: [&str; 8] = [
    "name",
    "latitude_deg",
    "longitude_deg",
    "altitude_m",
    "pressure_hpa",
    "albedo",
    "surface",
    "utc_offset_hours",
];
const ATMOSPHERE_KEYS: [&str; 10] = [
    "albedo",
    "surface",
    "ozone_du",
    "water_cm",
    "pressure_hpa",
    "altitude_m",
    "layer_top_km",
    "layer_base_km",
    "angstrom",
    "utc_offset_hours",
];

fn job_text() -> impl Strategy<Value = String> {
    let site = proptest::collection::vec(
        (proptest::sample::select(SITE_KEYS.to_vec()), toml_value()),
        0..6,
    );
    let atmosphere = proptest::collection::vec(
        (
            proptest::sample::select(ATMOSPHERE_KEYS.to_vec()),
            toml_value(),
        ),
        0..5,
    );
    (
        proptest::collection::vec(site, 0..4),
        atmosphere,
        proptest::option::of(tricky()),
    )
        .prop_map(|(sites, atmosphere, garbage)| {
            let mut t = String::from("[input]\npaths = [\"gen.csv\"]\n");
            for s in sites {
                t.push_str("[[sites]]\n");
                for (k, v) in s {
                    t.push_str(&format!("{k} = {v}\n"));
                }
            }
            t.push_str("[atmosphere]\n");
            for (k, v) in atmosphere {
                t.push_str(&format!("{k} = {v}\n"));
            }
            if let Some(g) = garbage {
                t.push_str(&g);
                t.push('\n');
            }
            t
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    /// The job-file parser never panics, and what it accepts meets the ranges of workbook
    /// values, with each site once.
    #[test]
    fn generated_job_files_parse_or_are_refused_with_a_line(text in job_text()) {
        match hazebook::job::config::parse(&text) {
            Ok(job) => {
                let mut keys = Vec::new();
                for s in &job.sites {
                    prop_assert!(!s.name.trim().is_empty());
                    for (k, v) in [
                        ("latitude_deg", s.latitude_deg),
                        ("longitude_deg", s.longitude_deg),
                        ("altitude_m", s.altitude_m),
                        ("pressure_hpa", s.pressure_hpa),
                        ("albedo", s.albedo),
                        ("utc_offset_hours", s.utc_offset_hours),
                    ] {
                        if let Some(v) = v {
                            prop_assert!(hazebook::ingest::check_job_value(k, v).is_ok(), "{k} = {v}");
                        }
                    }
                    keys.push(hazebook::ingest::site_name_key(&s.name));
                }
                let n = keys.len();
                keys.sort();
                keys.dedup();
                prop_assert_eq!(keys.len(), n, "a site listed twice was accepted");
                let a = &job.atmosphere;
                for (k, v) in [
                    ("albedo", a.albedo), ("ozone_du", a.ozone_du), ("water_cm", a.water_cm),
                    ("altitude_m", a.altitude_m), ("layer_top_km", a.layer_top_km),
                    ("layer_base_km", a.layer_base_km), ("angstrom", a.angstrom),
                    ("utc_offset_hours", a.utc_offset_hours),
                ] {
                    prop_assert!(hazebook::ingest::check_job_value(k, v).is_ok(), "{k} = {v}");
                }
                prop_assert!(a.layer_base_km < a.layer_top_km);
            }
            Err(msg) => prop_assert!(!msg.is_empty()),
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 8, ..ProptestConfig::default() })]

    /// Generated job files through the binary: a defined exit status, and with a good job
    /// file every row accounted for; the inputs unchanged.
    #[test]
    fn the_binary_checks_generated_job_files(text in job_text(), rows in table()) {
        let header: Vec<String> = HEADER.iter().map(|s| s.to_string()).collect();
        let dir = tempfile::tempdir().unwrap();
        let csv = dir.path().join("gen.csv");
        write_csv(&csv, &header, &rows);
        let job = dir.path().join("job.toml");
        std::fs::write(&job, &text).unwrap();
        let (a, b) = (sha(&csv), sha(&job));
        let o = binary_support::run(&["check", "job.toml", "--json"], dir.path());
        prop_assert!(matches!(o.status.code(), Some(0..=2)), "{}", binary_support::text(&o.stderr));
        let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        if doc["ok"] == true {
            let c = &doc["counts"];
            prop_assert_eq!(
                c["read"].as_u64().unwrap(),
                c["computed"].as_u64().unwrap() + c["rejected"].as_u64().unwrap()
                    + c["outside_period"].as_u64().unwrap()
            );
        }
        prop_assert_eq!(sha(&csv), a);
        prop_assert_eq!(sha(&job), b);
    }
}
