//! Sites: station codes in a site column joined with a site sheet (names shown beside the
//! codes, codes kept as keys), rows without a site column (one place, several fixed places,
//! a moving platform), row coordinates checked against the site sheet, and reports with one
//! series per site and partitions by code or name. All workbooks are invented.

mod binary_support;
mod ingest_support;

use std::collections::BTreeSet;
use std::path::Path;

use binary_support::{run, text};
use calamine::{Data, Reader, open_workbook_auto};
use hazebook::job::summary::understanding;
use ingest_support::{W, W::*, assert_reconciles, read, spec, tmp, write_xlsx};

/// Three invented stations: code, full name, latitude, longitude, elevation [m].
const STATIONS: [(&str, &str, f64, f64, f64); 3] = [
    ("HRF", "Harlsby Flats", 52.31, 4.12, 3.0),
    ("KSW", "Kestle Swale", 47.85, 11.04, 680.0),
    ("MBL", "Morrow Bluff", 38.62, -5.44, 410.0),
];

fn header_cells(h: &[&'static str]) -> Vec<W> {
    h.iter().map(|s| S(s)).collect()
}

/// The data rows: each station on three days at 10:00 and 13:00 UTC. `site` adds the `stn`
/// column; `shift` moves the coordinates of the first row of `MBL` by that many degrees.
fn network_rows(site: bool, shift: f64) -> Vec<Vec<W>> {
    let mut head = vec![
        "utc",
        "lat",
        "lon",
        "elev_m",
        "aod500",
        "alpha_440_870",
        "ssa550",
        "asym550",
        "albedo",
    ];
    if site {
        head.insert(0, "stn");
    }
    let mut rows = vec![header_cells(&head)];
    for (i, (code, _, lat, lon, elev)) in STATIONS.iter().enumerate() {
        for day in 1..=3 {
            for hour in [10, 13] {
                let first = day == 1 && hour == 10;
                let d = if *code == "MBL" && first { shift } else { 0.0 };
                let mut r = vec![
                    Str(format!("2024-06-0{day} {hour}:00:00")),
                    N(lat + d),
                    N(*lon),
                    N(*elev),
                    N(0.1 + 0.05 * i as f64 + 0.01 * day as f64),
                    N(1.2),
                    N(0.9 + 0.01 * i as f64),
                    N(0.7),
                    N(0.15),
                ];
                if site {
                    r.insert(0, S(code));
                }
                rows.push(r);
            }
        }
    }
    rows
}

fn site_sheet() -> Vec<Vec<W>> {
    let mut rows = vec![header_cells(&[
        "stn", "name", "lat", "lon", "elev_m", "type",
    ])];
    for (code, name, lat, lon, elev) in STATIONS {
        rows.push(vec![S(code), S(name), N(lat), N(lon), N(elev), S("rural")]);
    }
    rows
}

fn network(path: &Path, shift: f64) {
    write_xlsx(
        path,
        &[("data", network_rows(true, shift)), ("sites", site_sheet())],
    );
}

#[test]
fn station_codes_are_sites_joined_with_the_site_sheet() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "network.xlsx");
    network(&p, 0.0);
    let ing = read(&p);
    assert_reconciles(&ing);
    assert_eq!(ing.counts.computed, 18, "{:?}", ing.rejected);
    let sites: BTreeSet<&str> = ing.sites.iter().map(String::as_str).collect();
    assert_eq!(sites, BTreeSet::from(["HRF", "KSW", "MBL"]));
    assert_eq!(ing.site_labels["HRF"], "Harlsby Flats (HRF)");
    assert_eq!(ing.site_label("MBL"), "Morrow Bluff (MBL)");
    assert_eq!(
        ing.site_rules,
        [format!(
            "{}, sheet \"data\": sites from column A \"stn\" (3 site(s): HRF, KSW, MBL), joined with the site sheet \"sites\" by the same identifier: 3 of 3 found",
            p.display()
        )]
    );
    // The site sheet's columns: read, and its station type ignored with the reason.
    let read_cols: Vec<(&str, &str)> = ing
        .site_columns
        .iter()
        .map(|m| (m.letter.as_str(), m.quantity.as_str()))
        .collect();
    assert_eq!(
        read_cols,
        [
            ("A", "site"),
            ("B", "site_name"),
            ("C", "latitude"),
            ("D", "longitude"),
            ("E", "altitude")
        ]
    );
    let t = ing.ignored.iter().find(|c| c.header == "type").unwrap();
    assert_eq!((t.sheet.as_str(), t.letter.as_str()), ("sites", "F"));
    let lines = understanding(&ing);
    for want in [
        "columns of ".to_string() + &p.display().to_string() + ", sheet \"sites\" (site table):",
        "  HRF is shown as \"Harlsby Flats (HRF)\"".into(),
    ] {
        assert!(lines.contains(&want), "{want:?} not in {lines:#?}");
    }
    assert!(
        lines
            .iter()
            .any(|l| l.contains("\"stn\"") && l.contains("→ site (detected)")),
        "{lines:#?}"
    );
    assert!(
        lines
            .iter()
            .any(|l| l.contains("\"type\"") && l.contains("ignored: not a quantity")),
        "{lines:#?}"
    );
    // Coordinates agree with the site sheet: no row warning.
    assert!(ing.row_warnings.iter().all(|w| w.is_empty()));
}

#[test]
fn a_row_far_from_its_site_is_warned_about() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "network.xlsx");
    network(&p, 0.05); // about 5.6 km north
    let ing = read(&p);
    let warned: Vec<(u32, &str)> = ing
        .row_warnings
        .iter()
        .zip(&ing.origins)
        .flat_map(|(w, o)| w.iter().map(move |w| (o.row, w.cell.as_str())))
        .collect();
    // MBL's first row is row 14 (header row 1, 12 rows of HRF and KSW before it).
    assert_eq!(warned, [(14, "C14")]); // the latitude cell
    let i = ing.origins.iter().position(|o| o.row == 14).unwrap();
    let m = &ing.row_warnings[i][0].message;
    assert!(
        m.contains("lie 5.6 km from those of site MBL in the site table (38.62, -5.44)")
            && m.contains("tolerance of 2 km"),
        "{m}"
    );
    // A moving platform is exempt; a wider tolerance accepts the row.
    let mut s = spec(&[&p]);
    s.moving_platform = true;
    let ing = hazebook::ingest::read_inputs(&s).unwrap();
    assert!(ing.row_warnings.iter().all(|w| w.is_empty()));
    let mut s = spec(&[&p]);
    s.site_tolerance_km = Some(10.0);
    let ing = hazebook::ingest::read_inputs(&s).unwrap();
    assert!(ing.row_warnings.iter().all(|w| w.is_empty()));
}

#[test]
fn without_a_site_column_fixed_places_are_grouped_and_said() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "stations.xlsx");
    write_xlsx(&p, &[("data", network_rows(false, 0.0))]);
    let ing = read(&p);
    assert_eq!(ing.counts.computed, 18);
    let sites: BTreeSet<&str> = ing.sites.iter().map(String::as_str).collect();
    assert_eq!(
        sites,
        BTreeSet::from(["38.620°N 5.440°W", "47.850°N 11.040°E", "52.310°N 4.120°E"])
    );
    assert!(ing.sites.iter().all(|s| !s.is_empty()));
    assert_eq!(ing.site_rules.len(), 1);
    assert!(
        ing.site_rules[0].contains("no site column; the rows lie at 3 fixed places (each holding 6 or more rows): grouped by place"),
        "{}",
        ing.site_rules[0]
    );
    assert!(
        ing.warnings
            .iter()
            .any(|w| w.contains("no site column") && w.contains("Add a site column")),
        "{:?}",
        ing.warnings
    );
}

#[test]
fn without_a_site_column_one_place_is_one_site_named_from_the_file() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "harlsby-2024.xlsx");
    let rows: Vec<Vec<W>> = network_rows(false, 0.0).into_iter().take(7).collect();
    write_xlsx(&p, &[("data", rows)]);
    let ing = read(&p);
    assert!(
        ing.sites.iter().all(|s| s == "harlsby-2024"),
        "{:?}",
        ing.sites
    );
    assert!(
        ing.site_rules[0].ends_with(
            "no site column; every row is at one place (52.310°N 4.120°E, within 0.001°): one site \"harlsby-2024\" (named from the file name)"
        ),
        "{}",
        ing.site_rules[0]
    );
    // A job-file name wins over the file's.
    let mut s = spec(&[&p]);
    s.site_name = Some("Harlsby Flats".into());
    let ing = hazebook::ingest::read_inputs(&s).unwrap();
    assert!(ing.sites.iter().all(|s| s == "Harlsby Flats"));
}

#[test]
fn a_moving_platform_is_one_platform() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "cruise.xlsx");
    let mut rows = vec![header_cells(&[
        "time", "lat", "lon", "aod_500", "ssa_550", "g_550",
    ])];
    for k in 0..12 {
        rows.push(vec![
            Str(format!("2024-06-01 {:02}:00:00", 6 + k)),
            N(30.0 + 0.2 * k as f64),
            N(-40.0 - 0.3 * k as f64),
            N(0.2),
            N(0.95),
            N(0.7),
        ]);
    }
    write_xlsx(&p, &[("track", rows)]);
    let ing = read(&p);
    assert!(ing.sites.iter().all(|s| s == "cruise"));
    assert!(
        ing.site_rules[0].contains(
            "the coordinates change from row to row (12 places among 12 rows): one moving platform \"cruise\""
        ),
        "{}",
        ing.site_rules[0]
    );
    let mut s = spec(&[&p]);
    s.moving_platform = true;
    let ing = hazebook::ingest::read_inputs(&s).unwrap();
    assert!(
        ing.site_rules[0].contains("the job file declares a moving platform"),
        "{}",
        ing.site_rules[0]
    );
}

fn strings(path: &Path, sheet: &str) -> Vec<Vec<String>> {
    let mut wb = open_workbook_auto(path).unwrap();
    let r = wb.worksheet_range(sheet).unwrap();
    r.rows()
        .map(|row| {
            row.iter()
                .map(|c| match c {
                    Data::String(s) => s.clone(),
                    Data::Empty => String::new(),
                    other => other.to_string(),
                })
                .collect()
        })
        .collect()
}

fn only_report(dir: &Path) -> std::path::PathBuf {
    let mut files: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "xlsx"))
        .collect();
    assert_eq!(files.len(), 1, "{files:?}");
    files.pop().unwrap()
}

#[test]
fn the_report_names_sites_beside_their_codes_with_one_series_each() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "network.xlsx");
    network(&p, 0.0);
    let o = run(&["run", p.to_str().unwrap(), "--out", "out"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let report = only_report(&dir.path().join("out"));
    // The Site sheet: one group per station, named "Full name (CODE)", none empty.
    let site = strings(&report, "Site");
    let names: BTreeSet<&str> = site[2..]
        .iter()
        .map(|r| r[0].as_str())
        .filter(|s| !s.is_empty())
        .collect();
    assert_eq!(
        names,
        BTreeSet::from([
            "Harlsby Flats (HRF)",
            "Kestle Swale (KSW)",
            "Morrow Bluff (MBL)"
        ])
    );
    // One series per site: the data sheet holds one TOA column per site for the monthly
    // chart and one for the scatter chart, named by the site's label.
    let data = strings(&report, "Charts data");
    let series: Vec<&str> = data[0]
        .iter()
        .filter(|h| h.ends_with(": ΔF_TOA (24-h mean)"))
        .map(String::as_str)
        .collect();
    assert_eq!(series.len(), 2 * 3, "{series:?}");
    let labels: BTreeSet<&str> = series.iter().copied().collect();
    assert_eq!(
        labels,
        BTreeSet::from([
            "Harlsby Flats (HRF): ΔF_TOA (24-h mean)",
            "Kestle Swale (KSW): ΔF_TOA (24-h mean)",
            "Morrow Bluff (MBL): ΔF_TOA (24-h mean)"
        ])
    );
    // The About sheet accounts for every column and says how sites were found.
    let about = strings(&report, "About");
    let flat: Vec<&str> = about.iter().flatten().map(String::as_str).collect();
    assert!(
        flat.iter()
            .any(|c| c.starts_with("ignored: not a quantity")),
        "{flat:?}"
    );
    assert!(
        flat.iter()
            .any(|c| c.contains("joined with the site sheet \"sites\"")),
        "{flat:?}"
    );
    assert!(flat.contains(&"angstrom (440–870 nm pair)"), "{flat:?}");
    assert!(
        flat.iter()
            .any(|c| c.contains("Ångström exponent measured over 440–870 nm")),
        "{flat:?}"
    );
}

#[test]
fn partitions_by_code_or_by_name_are_the_same() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "network.xlsx");
    network(&p, 0.0);
    let mut results = Vec::new();
    for (k, asked) in ["KSW", "Kestle Swale", "kestle swale (ksw)"]
        .iter()
        .enumerate()
    {
        let out = format!("out{k}");
        let o = run(
            &["run", p.to_str().unwrap(), "--out", &out, "--site", asked],
            dir.path(),
        );
        assert_eq!(o.status.code(), Some(0), "{asked}: {}", text(&o.stderr));
        let report = only_report(&dir.path().join(&out));
        let r = strings(&report, "Results");
        let c = r[0].iter().position(|h| h == "Site").unwrap();
        let sites: BTreeSet<String> = r[2..].iter().map(|row| row[c].clone()).collect();
        assert_eq!(
            sites,
            BTreeSet::from(["Kestle Swale (KSW)".to_string()]),
            "{asked}"
        );
        assert_eq!(r.len() - 2, 6, "{asked}");
        results.push(r);
    }
    assert_eq!(results[0], results[1]);
    assert_eq!(results[0], results[2]);
}
