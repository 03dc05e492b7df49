//! What a report says about itself and how it reads: document properties naming hazebook and
//! its version, the About sheet's document date, the units row wording, chart titles.

mod report_support;

use hazebook::physics::Settings;
use hazebook::report::{self, WriteOptions, template};
use report_support::*;

/// A report and the text of all its package parts.
fn stored_report(dir: &std::path::Path) -> (std::path::PathBuf, String) {
    let (ing, res) = sample(40);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let path = dir.join("report.xlsx");
    let tpl = template::load("full").unwrap();
    let opts = WriteOptions {
        compression_level: 0,
        ..WriteOptions::default()
    };
    report::write_report_with(&path, &tpl, &input, &opts).unwrap();
    // Every part of the package, unzipped and joined, to search as text.
    let mut zip = zip::ZipArchive::new(std::fs::File::open(&path).unwrap()).unwrap();
    let mut package = String::new();
    for i in 0..zip.len() {
        let mut part = zip.by_index(i).unwrap();
        let mut bytes = Vec::new();
        std::io::Read::read_to_end(&mut part, &mut bytes).unwrap();
        package.push_str(&String::from_utf8_lossy(&bytes));
    }
    (path, package)
}

#[test]
fn document_properties_name_hazebook_and_its_version() {
    let dir = tempfile::tempdir().unwrap();
    let (_, package) = stored_report(dir.path());
    assert!(
        package.contains("name=\"Generator\"")
            && package.contains("<vt:lpwstr>hazebook 0.1.0</vt:lpwstr>"),
        "custom property Generator missing"
    );
    assert!(package.contains("<dc:creator>hazebook</dc:creator>"));
}

#[test]
fn chart_titles_say_each_mean_once() {
    let dir = tempfile::tempdir().unwrap();
    let (_, package) = stored_report(dir.path());
    assert!(
        package.contains("Monthly mean 24-h DRE at TOA by site"),
        "chart title"
    );
    assert!(!package.contains("mean 24-h mean"));
}

#[test]
fn about_sheet_labels_the_document_date_for_what_it_is() {
    let dir = tempfile::tempdir().unwrap();
    let (path, _) = stored_report(dir.path());
    let about = sheet(&path, "About");
    let row = (0..about.height())
        .find(|&r| text(&about, r, 0) == "Document date (UTC)")
        .expect("document date row");
    let value = text(&about, row, 1);
    assert!(
        value.starts_with("2026-09-01T00:00:00Z (the latest observation's time"),
        "{value}"
    );
    assert!(!(0..about.height()).any(|r| text(&about, r, 0) == "Created (UTC)"));
}

#[test]
fn units_rows_hold_units_not_instructions() {
    let dir = tempfile::tempdir().unwrap();
    let (path, _) = stored_report(dir.path());
    for name in ["Results", "Rejected"] {
        let r = sheet(&path, name);
        for c in 0..r.width() {
            let u = text(&r, 1, c);
            assert!(
                !["as shown", "A1", "in Unit"].contains(&u.as_str()),
                "{name} column {c}: {u:?}"
            );
        }
    }
}
