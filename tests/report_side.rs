//! Parquet and CSV side output: full precision, every row, atomic.

mod report_support;

use hazebook::physics::Settings;
use hazebook::report::{self, SideFormat};
use polars::prelude::*;
use report_support::*;

#[test]
fn csv_carries_full_precision() {
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(25);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let path = dir.path().join("results.csv");
    report::write_side_output(&path, SideFormat::Csv, &input).unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(header[0], "site");
    let j = header
        .iter()
        .position(|h| *h == "dre_toa_24h [W m-2]")
        .unwrap();
    let t = header.iter().position(|h| *h == "time_utc").unwrap();
    let first: Vec<&str> = lines.next().unwrap().split(',').collect();
    let v: f64 = first[j].parse().unwrap();
    assert_eq!(v, res[0].daily.dre_toa, "full precision round trip");
    assert_eq!(first[t], "2026-06-01T09:00:00Z");
    assert_eq!(text.lines().count(), 26);
}

#[test]
fn parquet_reads_back_with_every_row() {
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(25);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let path = dir.path().join("results.parquet");
    report::write_side_output(&path, SideFormat::Parquet, &input).unwrap();
    let f = std::fs::File::open(&path).unwrap();
    let df = ParquetReader::new(f).finish().unwrap();
    assert_eq!(df.height(), 25);
    let col = df.column("dre_sfc").unwrap().f64().unwrap().clone();
    for (i, v) in col.iter().enumerate() {
        assert_eq!(v, Some(res[i].instantaneous.dre_sfc));
    }
    // Zero AOD: efficiency is null, not NaN.
    let eff = df
        .column("efficiency_toa_24h")
        .unwrap()
        .f64()
        .unwrap()
        .clone();
    assert_eq!(eff.get(5), None);
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[cfg(unix)]
#[test]
fn side_output_gets_ordinary_permissions() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(3);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let path = dir.path().join("results.csv");
    report::write_side_output(&path, SideFormat::Csv, &input).unwrap();
    let plain = dir.path().join("plain.txt");
    std::fs::write(&plain, "x").unwrap();
    let mode = |p: &std::path::Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode(&path), mode(&plain));
}
