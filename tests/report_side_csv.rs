//! CSV side output: units in brackets in the column names, and text cells that a spreadsheet
//! program would run as formulas neutralised (in CSV only; Parquet, NetCDF and the workbook
//! keep the text as it is).

mod report_support;

use hazebook::physics::Settings;
use hazebook::report::{self, SideFormat, template};
use polars::prelude::*;
use report_support::*;

#[test]
fn csv_column_names_carry_udunits_units() {
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(4);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let path = dir.path().join("results.csv");
    report::write_side_output(&path, SideFormat::Csv, &input).unwrap();
    let df = CsvReadOptions::default()
        .try_into_reader_with_file_path(Some(path.clone()))
        .unwrap()
        .finish()
        .unwrap();
    let names: Vec<String> = df
        .get_column_names()
        .iter()
        .map(|s| s.to_string())
        .collect();
    for want in [
        "site",
        "time_utc",
        "row",
        "latitude_deg [degrees_north]",
        "longitude_deg [degrees_east]",
        "altitude_m [m]",
        "pressure_hpa [hPa]",
        "aod [1]",
        "aod_wavelength_nm [nm]",
        "ozone_du [DU]",
        "water_cm [cm]",
        "layer_top_km [km]",
        "solar_zenith_deg [degree]",
        "daylight_hours [h]",
        "dre_toa_24h [W m-2]",
        "efficiency_sfc [W m-2]",
        "heating_rate_24h [K day-1]",
        "sfc_net_clean_24h [W m-2]",
        "flags",
        "warnings",
    ] {
        assert!(
            names.iter().any(|n| n == want),
            "{want} missing in {names:?}"
        );
    }
    // Every numeric column has its unit; pandas users strip them with one regex.
    let pq = report::results_frame(&input).unwrap();
    assert_eq!(names.len(), pq.width());
    for (n, c) in names.iter().zip(pq.columns()) {
        let plain = n.split(" [").next().unwrap();
        assert_eq!(plain, c.name().as_str());
        if c.dtype() == &DataType::Float64 {
            assert!(n.ends_with(']'), "{n} has no unit");
        }
    }
    let v = df
        .column("dre_toa_24h [W m-2]")
        .unwrap()
        .f64()
        .unwrap()
        .get(0);
    assert_eq!(v, Some(res[0].daily.dre_toa), "full precision");
}

#[test]
fn formula_like_text_is_neutralised_in_csv_only() {
    let dir = tempfile::tempdir().unwrap();
    let (mut ing, res) = sample(6);
    let hostile = [
        "=HYPERLINK(\"http://example.invalid\",\"x\")",
        "+41 Station",
        "-Spit",
        "@SUM(A1:A2)",
        "\tTabbed",
        "Plain = fine",
    ];
    for (i, s) in hostile.iter().enumerate() {
        ing.sites[i] = s.to_string();
    }
    ing.row_warnings[0] = vec![hazebook::ingest::RowWarning {
        cell: String::new(),
        message: "=1+1".into(),
    }];
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);

    let csv = dir.path().join("results.csv");
    report::write_side_output(&csv, SideFormat::Csv, &input).unwrap();
    let df = CsvReadOptions::default()
        .try_into_reader_with_file_path(Some(csv))
        .unwrap()
        .finish()
        .unwrap();
    let sites = df.column("site").unwrap().str().unwrap().clone();
    for (i, s) in hostile.iter().enumerate() {
        let want = if i < 5 {
            format!("'{s}")
        } else {
            s.to_string()
        };
        assert_eq!(sites.get(i), Some(want.as_str()), "row {i}");
    }
    let warnings = df.column("warnings").unwrap().str().unwrap().clone();
    assert_eq!(warnings.get(0), Some("'=1+1"));

    // Parquet keeps the text as it is.
    let pq = dir.path().join("results.parquet");
    report::write_side_output(&pq, SideFormat::Parquet, &input).unwrap();
    let back = ParquetReader::new(std::fs::File::open(&pq).unwrap())
        .finish()
        .unwrap();
    let sites = back.column("site").unwrap().str().unwrap().clone();
    for (i, s) in hostile.iter().enumerate() {
        assert_eq!(sites.get(i), Some(*s));
    }

    // The workbook keeps them as plain strings (never formulas).
    let xlsx = dir.path().join("report.xlsx");
    let tpl = template::load("full").unwrap();
    report::write_report(&xlsx, &tpl, &input).unwrap();
    let results = sheet(&xlsx, "Results");
    let site_col = (0..results.width())
        .find(|&c| text(&results, 0, c) == "Site")
        .unwrap();
    let shown: Vec<String> = (2..8).map(|r| text(&results, r, site_col)).collect();
    assert_eq!(shown, hostile.map(String::from));
    let mut wb = open(&xlsx);
    use calamine::Reader;
    let formulas = wb.worksheet_formula("Results").unwrap();
    assert!(
        formulas.used_cells().all(|(_, _, f)| f.is_empty()),
        "no formula in Results"
    );
}
