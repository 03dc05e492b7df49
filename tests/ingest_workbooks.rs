//! Reading workbooks of each layout, and deliberately bad ones, written into a fresh
//! temporary directory.

mod ingest_support;

use chrono::{TimeZone, Utc};
use hazebook::ingest::{
    IngestError, Period, SiteInfo, SurfaceType, ValueSource, fit_angstrom, read_inputs,
};
use hazebook::job::summary::understanding;
use hazebook::physics::Surface;
use ingest_support::{W, W::*, assert_reconciles, read, spec, tmp, write_minimal_xlsx, write_xlsx};

fn utc(y: i32, mo: u32, d: u32, h: u32, mi: u32) -> chrono::DateTime<Utc> {
    Utc.with_ymd_and_hms(y, mo, d, h, mi, 0).unwrap()
}

/// Title rows, a note, a blank row, the header, a units row, data with fill values and junk,
/// a blank row inside, and trailing notes.
fn messy_rows() -> Vec<Vec<W>> {
    vec![
        vec![S("Haze campaign 2024 (invented test data)")],
        vec![S("PI: nobody; instrument: sun photometer")],
        vec![],
        vec![
            S("Site"),
            S("Time (UTC)"),
            S("Lat"),
            S("Lon"),
            S("AOD 500 nm"),
            S("Angstrom"),
            S("SSA(550)"),
            S("g 550nm"),
            S("PW"),
            S("Ozone [DU]"),
            S("remarks"),
        ],
        vec![
            S("-"),
            S("yyyy-mm-dd hh:mm"),
            S("deg N"),
            S("deg E"),
            S("-"),
            S("-"),
            S("-"),
            S("-"),
            S("mm"),
            S("DU"),
            S("text"),
        ],
        vec![
            S("Alpha"),
            D("2024-05-01 10:00:00"),
            N(30.0),
            N(100.0),
            N(0.3),
            N(1.2),
            N(0.92),
            N(0.7),
            N(15.0),
            N(310.0),
            S("ok"),
        ],
        vec![
            S("Alpha"),
            D("2024-05-01 11:00:00"),
            N(30.0),
            N(100.0),
            N(-999.0),
            N(1.2),
            N(0.92),
            N(0.7),
            N(15.0),
            N(310.0),
        ],
        vec![
            S("Alpha"),
            S("2024-05-01T12:00:00+08:00"),
            N(30.0),
            N(100.0),
            N(0.25),
            S("N/A"),
            N(95.0),
            N(0.7),
            S("-9999"),
            Blank,
        ],
        vec![],
        vec![
            S("Alpha"),
            D("2024-05-01 13:00:00"),
            N(30.0),
            N(100.0),
            S("high?"),
            N(1.2),
            N(0.9),
            N(0.7),
            N(15.0),
            N(310.0),
        ],
        vec![
            S("Alpha"),
            D("2024-05-01 10:00:00"),
            N(30.0),
            N(100.0),
            N(0.31),
            N(1.2),
            N(0.92),
            N(0.7),
            N(15.0),
            N(310.0),
        ],
        vec![
            S("Alpha"),
            D("2024-05-01 14:00:00"),
            N(30.0),
            N(100.0),
            N(3.5),
            N(1.2),
            N(0.92),
            N(0.95),
            N(15.0),
            N(310.0),
        ],
        vec![],
        vec![S("Note: AOD cloud-screened by hand.")],
        vec![S("End of file")],
    ]
}

#[test]
fn messy_layout_reads_and_accounts_for_every_row() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "campaign.xlsx");
    write_xlsx(&p, &[("optics", messy_rows())]);
    let ing = read(&p);
    assert_reconciles(&ing);
    // rows 6, 7, 8, 10, 11, 12 are data (9 is blank and not counted)
    assert_eq!(ing.counts.read, 6);
    assert_eq!(ing.counts.computed, 2, "{:#?}", ing.rejected);
    assert_eq!(ing.counts.rejected, 4);
    let by_row = |row: u32| {
        ing.rejected
            .iter()
            .find(|r| r.row == row)
            .unwrap_or_else(|| panic!("row {row} not rejected"))
    };
    let r7 = by_row(7);
    assert_eq!((r7.cell.as_str(), r7.column.as_str()), ("E7", "aod_500"));
    assert!(r7.reason.contains("missing"), "{}", r7.reason);
    let r8 = by_row(8);
    assert_eq!(r8.cell, "G8");
    assert!(
        r8.reason.contains("percentage") && r8.reason.contains("0.95"),
        "{}",
        r8.reason
    );
    assert_eq!(r8.value, "95");
    let r10 = by_row(10);
    assert_eq!(r10.cell, "E10");
    assert_eq!(
        r10.to_string(),
        format!(
            "{}, sheet \"optics\", cell E10 (aod_500): expected a number, found \"high?\".",
            p.display()
        )
    );
    let r11 = by_row(11);
    assert!(
        r11.reason.starts_with("duplicate of row 6"),
        "{}",
        r11.reason
    );
    // First row: PW in mm (units row) → cm; UTC times; longitude as given.
    let o = &ing.observations[0];
    assert_eq!(o.time_utc, utc(2024, 5, 1, 10, 0));
    assert!((o.water_cm - 1.5).abs() < 1e-12);
    assert_eq!(o.aod_wavelength_nm, 500.0);
    assert_eq!(o.ssa[0].wavelength_nm, 550.0);
    assert_eq!(o.ozone_du, 310.0);
    // Row 12: warnings for AOD > 3 and g > 0.9, with cells.
    let w = &ing.row_warnings[1];
    assert_eq!(ing.origins[1].row, 12);
    assert!(
        w.iter()
            .any(|w| w.cell == "E12" && w.message.contains("above 3")),
        "{w:?}"
    );
    assert!(w.iter().any(|w| w.cell == "H12"), "{w:?}");
    // Notes said, mapping recorded with letters and units.
    assert!(
        ing.warnings.iter().any(|w| w.contains("rows 14, 15")),
        "{:?}",
        ing.warnings
    );
    let water = ing.mapping.iter().find(|m| m.quantity == "water").unwrap();
    assert_eq!(
        (
            water.letter.as_str(),
            water.unit.as_str(),
            water.header.as_str()
        ),
        ("I", "mm", "PW")
    );
    assert!(!ing.mapping.iter().any(|m| m.header == "remarks"));
    let summary = understanding(&ing).join("\n");
    assert!(
        summary
            .lines()
            .any(|l| l.trim_start().starts_with("E ") && l.contains("→ aod_500")),
        "{summary}"
    );
    assert!(
        summary.contains("6 read = 2 to compute + 4 rejected"),
        "{summary}"
    );
    // The remarks column is not read, and the summary says so with the reason.
    assert!(
        summary
            .lines()
            .any(|l| l.contains("\"remarks\"") && l.contains("ignored: not a quantity")),
        "{summary}"
    );
}

#[test]
fn iso_text_with_offset_and_default_angstrom() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "a.xlsx");
    write_xlsx(
        &p,
        &[(
            "data",
            vec![
                vec![
                    S("time"),
                    S("latitude"),
                    S("longitude"),
                    S("aod_500"),
                    S("ssa_550"),
                    S("g_550"),
                ],
                vec![
                    S("2024-05-01T12:00:00+08:00"),
                    N(30.0),
                    N(250.0),
                    N(0.2),
                    N(0.9),
                    N(0.7),
                ],
                vec![
                    S("2024-05-01 13:00"),
                    N(30.0),
                    N(100.0),
                    N(0.2),
                    N(0.9),
                    N(0.7),
                ],
            ],
        )],
    );
    let ing = read(&p);
    assert_reconciles(&ing);
    assert_eq!(ing.counts.computed, 2);
    assert_eq!(ing.observations[0].time_utc, utc(2024, 5, 1, 4, 0));
    assert_eq!(ing.observations[0].longitude_deg, -110.0);
    assert_eq!(ing.observations[1].time_utc, utc(2024, 5, 1, 13, 0));
    let a = ing
        .assumptions
        .iter()
        .find(|a| a.quantity == "angstrom")
        .unwrap();
    assert_eq!(
        (a.value.as_str(), a.source, a.rows),
        ("1.3", ValueSource::BuiltIn, 2)
    );
    let tz = ing
        .assumptions
        .iter()
        .find(|a| a.quantity == "utc_offset_hours")
        .unwrap();
    assert_eq!(tz.rows, 1, "only the naive time is assumed UTC");
    assert!(tz.value.contains("UTC"));
}

#[test]
fn separate_date_and_time_with_site_offset_from_job_file() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "b.xlsx");
    write_xlsx(
        &p,
        &[(
            "obs",
            vec![
                vec![
                    S("station"),
                    S("date"),
                    S("time"),
                    S("AOD 440 nm"),
                    S("AOD 870 nm"),
                    S("SSA 440"),
                    S("SSA 870"),
                    S("asymmetry 440nm"),
                    S("asymmetry 870nm"),
                ],
                vec![
                    S("Beta"),
                    S("2024-06-02"),
                    S("09:30"),
                    N(0.4),
                    N(0.2),
                    N(0.95),
                    N(0.9),
                    N(0.72),
                    N(0.66),
                ],
                vec![
                    S("beta "),
                    D("2024-06-02 00:00:00"),
                    S("10:30:00"),
                    N(0.4),
                    N(0.0),
                    N(0.95),
                    N(0.9),
                    N(0.72),
                    N(0.66),
                ],
                vec![
                    S("Gamma"),
                    S("2024-06-02"),
                    S("10:30"),
                    N(0.4),
                    N(0.2),
                    N(0.95),
                    N(0.9),
                    N(0.72),
                    N(0.66),
                ],
            ],
        )],
    );
    let mut s = spec(&[&p]);
    s.sites = vec![SiteInfo {
        name: "Beta".into(),
        latitude_deg: Some(-33.9),
        longitude_deg: Some(18.4),
        altitude_m: Some(1200.0),
        albedo: Some(0.2),
        surface: Some(SurfaceType::Land),
        utc_offset_hours: Some(2.0),
        ..Default::default()
    }];
    let ing = read_inputs(&s).unwrap();
    assert_reconciles(&ing);
    assert_eq!(ing.counts.computed, 2);
    let o = &ing.observations[0];
    assert_eq!(o.time_utc, utc(2024, 6, 2, 7, 30));
    assert_eq!((o.latitude_deg, o.altitude_m), (-33.9, 1200.0));
    assert_eq!(o.surface, Surface::Lambertian { albedo: 0.2 });
    // Two AOD wavelengths: the exponent is the two-point one; reference nearest 550 nm.
    let expected = fit_angstrom(&[(440.0, 0.4), (870.0, 0.2)]).unwrap();
    assert!((o.angstrom - expected).abs() < 1e-12);
    assert!(
        (o.angstrom - 1.0168).abs() < 1e-4,
        "ln 2 / ln(870/440) = 1.0168"
    );
    assert_eq!(o.aod_wavelength_nm, 440.0);
    assert_eq!(o.ssa.len(), 2);
    // Second row: AOD 0 at 870 nm cannot enter a log fit: default exponent, with a warning.
    assert_eq!(ing.observations[1].angstrom, 1.3);
    assert!(!ing.row_warnings[1].is_empty());
    let tz = ing
        .assumptions
        .iter()
        .find(|a| a.quantity == "utc_offset_hours")
        .unwrap();
    assert_eq!((tz.source, tz.rows), (ValueSource::JobFile, 2));
    assert!(tz.value.contains("+02:00"), "{}", tz.value);
    let g = ing.rejected.iter().find(|r| r.row == 4).unwrap();
    assert!(
        g.reason.contains("\"Gamma\" is not in the site table"),
        "{}",
        g.reason
    );
    assert_eq!(g.cell, "A4");
}

#[test]
fn site_sheet_and_job_overrides() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "c.xlsx");
    write_xlsx(
        &p,
        &[
            (
                "data",
                vec![
                    vec![
                        S("where"),
                        S("when"),
                        S("tau500"),
                        S("alpha"),
                        S("w0"),
                        S("asy"),
                        S("albedo"),
                    ],
                    vec![
                        S("Sea"),
                        D("2024-01-10 12:00:00"),
                        N(0.1),
                        N(0.5),
                        N(0.98),
                        N(0.75),
                        Blank,
                    ],
                    vec![
                        S("Hill"),
                        D("2024-01-10 12:00:00"),
                        N(0.1),
                        N(0.5),
                        N(0.98),
                        N(0.75),
                        N(0.3),
                    ],
                    vec![
                        S("Hill"),
                        D("2024-01-11 12:00:00"),
                        N(0.1),
                        N(0.5),
                        N(0.98),
                        N(0.75),
                        Blank,
                    ],
                ],
            ),
            (
                "sites",
                vec![
                    vec![
                        S("site"),
                        S("latitude"),
                        S("longitude"),
                        S("altitude [km]"),
                        S("surface"),
                        S("albedo"),
                    ],
                    vec![S("Sea"), N(10.0), N(-20.0), N(0.0), S("ocean"), Blank],
                    vec![S("Hill"), N(11.0), N(-21.0), N(1.5), S("land"), N(0.25)],
                ],
            ),
        ],
    );
    let mut s = spec(&[&p]);
    s.columns.insert("site".into(), "A".into());
    s.columns.insert("time".into(), "when".into());
    // The blank albedo cells take the site's value: a fallback the job allows (an empty cell
    // in a provided column is otherwise a rejection; README, "Empty and fill-value cells").
    s.fallback = Some(vec!["albedo".into()]);
    s.period = Some(Period {
        label: "2024-01-10".into(),
        start: utc(2024, 1, 10, 0, 0),
        end: utc(2024, 1, 11, 0, 0),
    });
    let ing = read_inputs(&s).unwrap();
    assert_reconciles(&ing);
    assert_eq!(
        (ing.counts.computed, ing.counts.outside_period),
        (2, 1),
        "{:?}",
        ing.rejected
    );
    assert_eq!(ing.observations[0].surface, Surface::OceanTaylor1996);
    assert_eq!(
        ing.observations[1].surface,
        Surface::Lambertian { albedo: 0.3 }
    );
    assert_eq!(ing.observations[1].altitude_m, 1500.0);
    let site = ing.mapping.iter().find(|m| m.quantity == "site").unwrap();
    assert_eq!(
        (
            site.how.as_str(),
            site.letter.as_str(),
            site.header.as_str()
        ),
        ("job file", "A", "where")
    );
    let alt = ing
        .assumptions
        .iter()
        .find(|a| a.quantity == "altitude_m" && a.value.starts_with("1500"))
        .unwrap();
    assert_eq!(alt.source, ValueSource::SiteTable);
    assert_eq!(
        ing.files[0].sheets,
        vec!["data".to_string(), "sites".to_string()]
    );
    assert_eq!(ing.files[0].sha256.len(), 64);
}

#[test]
fn both_date_systems() {
    // 2024-05-01 12:00 is serial 45413.5 (1900 system) and 43951.5 (1904 system);
    // ECMA-376 Part 1, §18.17.4.1.
    let dir = tempfile::TempDir::new().unwrap();
    for (name, date1904, serial) in [
        ("d1900.xlsx", false, "45413.5"),
        ("d1904.xlsx", true, "43951.5"),
    ] {
        let p = tmp(&dir, name);
        let header = [
            "time",
            "lat",
            "lon",
            "aod_550",
            "ssa_550",
            "g_550",
            "time_serial",
        ];
        let rows = vec![
            header.iter().map(|s| s.to_string()).collect(),
            vec![
                format!("=date:{serial}"),
                "=num:45".into(),
                "=num:7".into(),
                "=num:0.2".into(),
                "=num:0.9".into(),
                "=num:0.7".into(),
                format!("=num:{serial}"),
            ],
        ];
        write_minimal_xlsx(&p, date1904, &rows);
        let ing = read(&p);
        assert_reconciles(&ing);
        assert_eq!(ing.counts.computed, 1, "{name}: {:?}", ing.rejected);
        assert_eq!(
            ing.observations[0].time_utc,
            utc(2024, 5, 1, 12, 0),
            "{name}"
        );
        // The same serial as a plain number in a time column reads in the workbook's system.
        let mut s = spec(&[&p]);
        s.columns.insert("time".into(), "G".into());
        let ing = read_inputs(&s).unwrap();
        assert_eq!(
            ing.observations[0].time_utc,
            utc(2024, 5, 1, 12, 0),
            "{name} serial number"
        );
    }
}

#[test]
fn missing_column_names_the_closest_header() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "m.xlsx");
    write_xlsx(
        &p,
        &[(
            "optics",
            vec![
                vec![
                    S("time"),
                    S("lat"),
                    S("lon"),
                    S("aod_500"),
                    S("single scater albedo"),
                    S("g"),
                ],
                vec![
                    D("2024-05-01 10:00:00"),
                    N(1.0),
                    N(2.0),
                    N(0.1),
                    N(0.9),
                    N(0.7),
                ],
            ],
        )],
    );
    let err = read_inputs(&spec(&[&p])).unwrap_err();
    let msg = err.to_string();
    assert!(matches!(err, IngestError::Layout { .. }));
    assert!(
        msg.contains("m.xlsx") && msg.contains("sheet \"optics\""),
        "{msg}"
    );
    assert!(
        msg.contains("no column for single-scattering albedo"),
        "{msg}"
    );
    assert!(
        msg.contains("closest header is \"single scater albedo\" (column E)"),
        "{msg}"
    );
    assert_eq!(msg.matches("m.xlsx").count(), 1, "{msg}");
}

#[test]
fn location_required() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "n.xlsx");
    write_xlsx(
        &p,
        &[(
            "s",
            vec![
                vec![S("time"), S("aod"), S("ssa"), S("g")],
                vec![D("2024-05-01 10:00:00"), N(0.1), N(0.9), N(0.7)],
            ],
        )],
    );
    let msg = read_inputs(&spec(&[&p])).unwrap_err().to_string();
    assert!(msg.contains("no column for latitude"), "{msg}");
    // One job-file site locates a workbook without a site column.
    let mut s = spec(&[&p]);
    s.sites = vec![SiteInfo {
        name: "Only".into(),
        latitude_deg: Some(5.0),
        longitude_deg: Some(6.0),
        ..Default::default()
    }];
    let ing = read_inputs(&s).unwrap();
    assert_eq!(ing.sites, vec!["Only".to_string()]);
    assert!(ing.warnings.iter().any(|w| w.contains("550 nm is assumed")));
}

#[test]
fn bad_files_are_clear_errors() {
    let dir = tempfile::TempDir::new().unwrap();
    // Empty sheet.
    let p = tmp(&dir, "empty.xlsx");
    write_xlsx(&p, &[("blank", vec![])]);
    let msg = read_inputs(&spec(&[&p])).unwrap_err().to_string();
    assert!(msg.contains("sheet \"blank\" is empty"), "{msg}");
    // Truncated zip.
    let good = tmp(&dir, "good.xlsx");
    write_xlsx(&good, &[("d", messy_rows())]);
    let bytes = std::fs::read(&good).unwrap();
    let t = tmp(&dir, "truncated.xlsx");
    std::fs::write(&t, &bytes[..bytes.len() / 2]).unwrap();
    let err = read_inputs(&spec(&[&t])).unwrap_err();
    assert!(matches!(err, IngestError::Unreadable { .. }));
    assert!(err.to_string().contains("truncated"), "{err}");
    // Encrypted (OLE compound document with an xlsx name).
    let e = tmp(&dir, "secret.xlsx");
    let mut ole = vec![0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1];
    ole.resize(4096, 0);
    std::fs::write(&e, ole).unwrap();
    assert!(
        read_inputs(&spec(&[&e]))
            .unwrap_err()
            .to_string()
            .contains("password")
    );
    // Empty file, missing file, unknown extension, sheet not found.
    let z = tmp(&dir, "zero.xlsx");
    std::fs::write(&z, b"").unwrap();
    assert!(
        read_inputs(&spec(&[&z]))
            .unwrap_err()
            .to_string()
            .contains("empty")
    );
    assert!(matches!(
        read_inputs(&spec(&[&tmp(&dir, "nope.xlsx")])),
        Err(IngestError::Unreadable { .. })
    ));
    let odd = tmp(&dir, "a.docx");
    std::fs::write(&odd, b"x").unwrap();
    assert!(read_inputs(&spec(&[&odd])).is_err());
    let mut s = spec(&[&good]);
    s.sheet = Some("nothere".into());
    let msg = read_inputs(&s).unwrap_err().to_string();
    assert!(
        msg.contains("\"nothere\"") && msg.contains("\"d\""),
        "{msg}"
    );
    // An override that names no column.
    let mut s = spec(&[&good]);
    s.columns.insert("ozone".into(), "Total O3".into());
    let msg = read_inputs(&s).unwrap_err().to_string();
    assert!(
        msg.contains("Total O3") && msg.contains("Headers found"),
        "{msg}"
    );
    let mut s = spec(&[&good]);
    s.columns.insert("colour".into(), "A".into());
    assert!(
        read_inputs(&s)
            .unwrap_err()
            .to_string()
            .contains("not a quantity")
    );
}

#[test]
fn extra_fill_values_and_explicit_header_row() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "f.xlsx");
    write_xlsx(&p, &[("d", messy_rows())]);
    let mut s = spec(&[&p]);
    s.fill_values = vec!["high?".into()];
    s.header_row = Some(4);
    s.units_row = Some(5);
    let ing = read_inputs(&s).unwrap();
    assert_reconciles(&ing);
    let r10 = ing.rejected.iter().find(|r| r.row == 10).unwrap();
    assert!(r10.reason.contains("AOD is missing"), "{}", r10.reason);
}

#[test]
fn csv_with_title_lines_and_blank_lines_keeps_line_numbers() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "obs.csv");
    std::fs::write(
        &p,
        "# invented test data\n\nsite;time;lat;lon;aod_500;angstrom;ssa_550;g_550\nA;2024-05-01T10:00:00Z;1;2;0.1;1;0.9;0.7\n\nA;2024-05-01T11:00:00Z;1;2;abc;1;0.9;0.7\nA;2024-05-01T12:00:00Z;1;2;0.1;1;0.9;0.7\n",
    )
    .unwrap();
    let ing = read(&p);
    assert_reconciles(&ing);
    assert_eq!((ing.counts.read, ing.counts.computed), (3, 2));
    assert_eq!(
        ing.origins.iter().map(|o| o.row).collect::<Vec<_>>(),
        vec![4, 7]
    );
    assert_eq!(ing.rejected[0].cell, "E6");
    assert_eq!(ing.rejected[0].sheet, "");
}

#[test]
fn parquet_typed_columns() {
    use polars::prelude::*;
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "obs.parquet");
    let t0 = utc(2024, 5, 1, 10, 0).timestamp_millis();
    let mut df = df!(
        "site" => ["A", "A"],
        "time_utc" => [t0, t0 + 3_600_000],
        "latitude" => [1.0, 1.0],
        "longitude" => [2.0, 2.0],
        "aod_500" => [0.1, -0.5],
        "ssa_550" => [0.9, 0.9],
        "g_550" => [0.7, 0.7],
    )
    .unwrap();
    df.apply("time_utc", |s| {
        s.cast(&DataType::Datetime(TimeUnit::Milliseconds, None))
            .unwrap()
    })
    .unwrap();
    ParquetWriter::new(std::fs::File::create(&p).unwrap())
        .finish(&mut df)
        .unwrap();
    let ing = read(&p);
    assert_reconciles(&ing);
    assert_eq!(ing.counts.computed, 1);
    assert_eq!(ing.observations[0].time_utc, utc(2024, 5, 1, 10, 0));
    assert!(ing.rejected[0].reason.contains("≥ 0"));
    // The canonical frame.
    let f = &ing.frame;
    for c in [
        "site",
        "time_utc",
        "aod",
        "aod_at_550",
        "ssa_at_550",
        "asymmetry_at_550",
        "aod_500nm",
        "row",
    ] {
        assert!(
            f.column(c).is_ok(),
            "{c} missing from {:?}",
            f.get_column_names()
        );
    }
    let a550 = f
        .column("aod_at_550")
        .unwrap()
        .f64()
        .unwrap()
        .get(0)
        .unwrap();
    assert!((a550 - 0.1 * (550.0f64 / 500.0).powf(-1.3)).abs() < 1e-12);
}

#[test]
fn several_files_concatenate_and_duplicates_across_files_name_the_first() {
    let dir = tempfile::TempDir::new().unwrap();
    let a = tmp(&dir, "a.xlsx");
    let b = tmp(&dir, "b.xlsx");
    let rows = vec![
        vec![
            S("site"),
            S("time"),
            S("lat"),
            S("lon"),
            S("aod"),
            S("ssa"),
            S("g"),
        ],
        vec![
            S("X"),
            D("2024-05-01 10:00:00"),
            N(1.0),
            N(2.0),
            N(0.1),
            N(0.9),
            N(0.7),
        ],
    ];
    write_xlsx(&a, &[("s", rows.clone())]);
    write_xlsx(&b, &[("s", rows)]);
    let ing = read_inputs(&spec(&[&a, &b])).unwrap();
    assert_reconciles(&ing);
    assert_eq!((ing.counts.computed, ing.counts.rejected), (1, 1));
    assert!(
        ing.rejected[0]
            .reason
            .contains("a.xlsx, sheet \"s\", row 2"),
        "{}",
        ing.rejected[0].reason
    );
    assert_eq!(ing.files.len(), 2);
}

#[test]
fn ods_with_date_cells() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "obs.ods");
    let rows = vec![
        [
            "site",
            "time",
            "lat",
            "lon",
            "AOD 500nm",
            "SSA 550nm",
            "g 550nm",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect(),
        vec![
            "A".into(),
            "=date:2024-05-01T10:30:00".into(),
            "=num:1".into(),
            "=num:2".into(),
            "=num:0.1".into(),
            "=num:0.9".into(),
            "=num:0.7".into(),
        ],
        vec![
            "A".into(),
            "=date:2024-05-01T11:30:00".into(),
            "=num:1".into(),
            "=num:2".into(),
            "=num:0.1".into(),
            "=num:1.2".into(),
            "=num:0.7".into(),
        ],
    ];
    ingest_support::write_minimal_ods(&p, "optics", &rows);
    let ing = read(&p);
    assert_reconciles(&ing);
    assert_eq!((ing.counts.computed, ing.counts.rejected), (1, 1));
    assert_eq!(ing.observations[0].time_utc, utc(2024, 5, 1, 10, 30));
    assert_eq!(ing.rejected[0].cell, "F3");
    assert_eq!(ing.files[0].sheets, vec!["optics".to_string()]);
}
