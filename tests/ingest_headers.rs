//! Header detection: every spelling of the header table has a case here, each family of
//! spellings is read from an invented workbook, every column of the header row is accounted
//! for (read with how, or ignored with why), a quantity that falls back to a built-in default
//! while an ignored column looks like it is warned about, and strict mode refuses both.

mod binary_support;
mod ingest_support;

use binary_support::{run, text};
use hazebook::ingest::{ValueSource, header_spellings, read_header, read_inputs};
use hazebook::job::summary::understanding;
use ingest_support::{W, W::*, assert_reconciles, read, spec, tmp, write_xlsx};

/// (header as a user writes it, quantity it must read as, spelling of the header table it
/// exercises). Every spelling of the table needs at least one case: add one with each new
/// spelling.
const CASES: &[(&str, &str, &str)] = &[
    ("Time", "time", "time"),
    ("datetime", "time", "datetime"),
    ("date_time", "time", "date time"),
    ("Timestamp", "time", "timestamp"),
    ("time-stamp", "time", "time stamp"),
    ("time_utc", "time", "time utc"),
    ("Utc", "time", "utc"),
    ("utc-time", "time", "utc time"),
    ("obs_time", "time", "obs time"),
    ("Observation Time", "time", "observation time"),
    ("measurement-time", "time", "measurement time"),
    ("local_time", "time", "local time"),
    ("Time Local", "time", "time local"),
    ("date-and-time", "time", "date and time"),
    ("datetime_utc", "time", "datetime utc"),
    ("Date Time Utc", "time", "date time utc"),
    ("sample-time", "time", "sample time"),
    ("date", "date", "date"),
    ("Day", "date", "day"),
    ("obs-date", "date", "obs date"),
    ("measurement_date", "date", "measurement date"),
    ("Date Utc", "date", "date utc"),
    ("date-local", "date", "date local"),
    ("site", "site", "site"),
    ("Station", "site", "station"),
    ("STN", "site", "stn"),
    ("stid", "site", "stid"),
    ("St Id", "site", "st id"),
    ("site-id", "site", "site id"),
    ("site_code", "site", "site code"),
    ("Station Id", "site", "station id"),
    ("station-code", "site", "station code"),
    ("stn_id", "site", "stn id"),
    ("Stn Code", "site", "stn code"),
    ("station-number", "site", "station number"),
    ("station_no", "site", "station no"),
    ("Location", "site", "location"),
    ("location-id", "site", "location id"),
    ("location_code", "site", "location code"),
    ("Platform", "site", "platform"),
    ("NAME", "site_name", "name"),
    ("site_name", "site_name", "site name"),
    ("Station Name", "site_name", "station name"),
    ("stn-name", "site_name", "stn name"),
    ("location_name", "site_name", "location name"),
    ("Full Name", "site_name", "full name"),
    ("long-name", "site_name", "long name"),
    ("site_full_name", "site_name", "site full name"),
    ("Station Full Name", "site_name", "station full name"),
    ("LAT (deg N)", "latitude", "lat"),
    ("latitude", "latitude", "latitude"),
    ("Lat Deg (deg N)", "latitude", "lat deg"),
    ("latitude-deg", "latitude", "latitude deg"),
    ("site_latitude (deg N)", "latitude", "site latitude"),
    ("Station Latitude", "latitude", "station latitude"),
    ("LON [deg E]", "longitude", "lon"),
    ("long", "longitude", "long"),
    ("Lng [deg E]", "longitude", "lng"),
    ("longitude", "longitude", "longitude"),
    ("lon_deg [deg E]", "longitude", "lon deg"),
    ("Longitude Deg", "longitude", "longitude deg"),
    ("site-longitude [deg E]", "longitude", "site longitude"),
    ("station_longitude", "longitude", "station longitude"),
    ("Aod_440", "aod", "aod"),
    ("AOT(675)", "aod", "aot"),
    ("tau 500 nm", "aod", "tau"),
    ("Tau A_440", "aod", "tau a"),
    ("TAUA(675)", "aod", "taua"),
    ("tau_aer 500 nm", "aod", "tau aer"),
    ("Aerosol Optical Depth_440", "aod", "aerosol optical depth"),
    (
        "aerosol-optical-thickness(675)",
        "aod",
        "aerosol optical thickness",
    ),
    ("optical_depth 500 nm", "aod", "optical depth"),
    ("Aod Total_440", "aod", "aod total"),
    ("angstrom", "angstrom", "angstrom"),
    ("angstrom_exponent", "angstrom", "angstrom exponent"),
    ("Angstrom Exp", "angstrom", "angstrom exp"),
    ("angstrom-coefficient", "angstrom", "angstrom coefficient"),
    ("angstrom_coeff", "angstrom", "angstrom coeff"),
    ("Angstrom Coef", "angstrom", "angstrom coef"),
    ("angstrom-parameter", "angstrom", "angstrom parameter"),
    ("angstrom_alpha", "angstrom", "angstrom alpha"),
    ("Angstroem", "angstrom", "angstroem"),
    ("angstroem-exponent", "angstrom", "angstroem exponent"),
    ("alpha", "angstrom", "alpha"),
    ("Alpha Angstrom", "angstrom", "alpha angstrom"),
    ("AE", "angstrom", "ae"),
    (
        "extinction_angstrom_exponent",
        "angstrom",
        "extinction angstrom exponent",
    ),
    ("Aod Angstrom Exponent", "angstrom", "aod angstrom exponent"),
    ("SSA_440", "ssa", "ssa"),
    (
        "single_scattering_albedo 550nm",
        "ssa",
        "single scattering albedo",
    ),
    ("Omega_440", "ssa", "omega"),
    ("omega-0 550nm", "ssa", "omega 0"),
    ("w_0_440", "ssa", "w 0"),
    ("Ssa Total 550nm", "ssa", "ssa total"),
    ("single-scatter-albedo_440", "ssa", "single scatter albedo"),
    ("g 870 nm", "asymmetry", "g"),
    ("Asy_550", "asymmetry", "asy"),
    ("ASYM 870 nm", "asymmetry", "asym"),
    ("asymmetry_550", "asymmetry", "asymmetry"),
    ("Asymmetry Factor 870 nm", "asymmetry", "asymmetry factor"),
    (
        "asymmetry-parameter_550",
        "asymmetry",
        "asymmetry parameter",
    ),
    ("asymm 870 nm", "asymmetry", "asymm"),
    ("Asymmetry Total_550", "asymmetry", "asymmetry total"),
    ("ALBEDO", "albedo", "albedo"),
    ("surface_albedo", "albedo", "surface albedo"),
    ("Sfc Albedo", "albedo", "sfc albedo"),
    ("sfc-alb", "albedo", "sfc alb"),
    ("alb", "albedo", "alb"),
    ("Broadband Albedo", "albedo", "broadband albedo"),
    (
        "broadband-surface-albedo",
        "albedo",
        "broadband surface albedo",
    ),
    ("albedo_broadband", "albedo", "albedo broadband"),
    (
        "Surface Albedo Broadband",
        "albedo",
        "surface albedo broadband",
    ),
    ("ground-albedo", "albedo", "ground albedo"),
    ("lambertian_albedo", "albedo", "lambertian albedo"),
    ("Surface", "surface", "surface"),
    ("surface-type", "surface", "surface type"),
    ("sfc_type", "surface", "sfc type"),
    ("Land Ocean", "surface", "land ocean"),
    ("land-sea", "surface", "land sea"),
    ("ozone [DU]", "ozone", "ozone"),
    ("O3", "ozone", "o3"),
    ("total-ozone [DU]", "ozone", "total ozone"),
    ("ozone_column", "ozone", "ozone column"),
    ("Column Ozone [DU]", "ozone", "column ozone"),
    ("total-column-ozone", "ozone", "total column ozone"),
    ("total_ozone_column [DU]", "ozone", "total ozone column"),
    ("Toc", "ozone", "toc"),
    ("TCO [DU]", "ozone", "tco"),
    ("tco3", "ozone", "tco3"),
    ("O3 Column [DU]", "ozone", "o3 column"),
    ("total-o3", "ozone", "total o3"),
    ("pw (cm)", "water", "pw"),
    ("Pwv", "water", "pwv"),
    ("PWAT (cm)", "water", "pwat"),
    ("water", "water", "water"),
    ("Precipitable Water (cm)", "water", "precipitable water"),
    ("water-vapour", "water", "water vapour"),
    ("water_vapor (cm)", "water", "water vapor"),
    ("Wv", "water", "wv"),
    (
        "precipitable-water-vapour (cm)",
        "water",
        "precipitable water vapour",
    ),
    (
        "precipitable_water_vapor",
        "water",
        "precipitable water vapor",
    ),
    ("Water Vapour Column (cm)", "water", "water vapour column"),
    ("water-vapor-column", "water", "water vapor column"),
    ("column_water_vapour (cm)", "water", "column water vapour"),
    ("Column Water Vapor", "water", "column water vapor"),
    (
        "total-column-water-vapour (cm)",
        "water",
        "total column water vapour",
    ),
    (
        "total_column_water_vapor",
        "water",
        "total column water vapor",
    ),
    ("Tcwv (cm)", "water", "tcwv"),
    ("CWV", "water", "cwv"),
    ("iwv (cm)", "water", "iwv"),
    ("H2o", "water", "h2o"),
    ("pressure / hPa", "pressure", "pressure"),
    ("surface_pressure", "pressure", "surface pressure"),
    ("P / hPa", "pressure", "p"),
    ("PS", "pressure", "ps"),
    ("psfc / hPa", "pressure", "psfc"),
    ("P Sfc", "pressure", "p sfc"),
    ("sfc-pressure / hPa", "pressure", "sfc pressure"),
    ("station_pressure", "pressure", "station pressure"),
    ("Air Pressure / hPa", "pressure", "air pressure"),
    ("barometric-pressure", "pressure", "barometric pressure"),
    ("pres / hPa", "pressure", "pres"),
    ("Press", "pressure", "press"),
    ("altitude [m]", "altitude", "altitude"),
    ("elevation", "altitude", "elevation"),
    ("Alt [m]", "altitude", "alt"),
    ("station-altitude", "altitude", "station altitude"),
    ("site_altitude [m]", "altitude", "site altitude"),
    ("Station Elevation", "altitude", "station elevation"),
    ("site-elevation [m]", "altitude", "site elevation"),
    ("height_asl", "altitude", "height asl"),
    ("Elev [m]", "altitude", "elev"),
    ("layer-top", "layer_top", "layer top"),
    ("aerosol_layer_top (km)", "layer_top", "aerosol layer top"),
    ("Aerosol Top", "layer_top", "aerosol top"),
    (
        "aerosol-layer-height (km)",
        "layer_top",
        "aerosol layer height",
    ),
    ("alh", "layer_top", "alh"),
    ("Blh (km)", "layer_top", "blh"),
    ("pbl-height", "layer_top", "pbl height"),
    ("pblh (km)", "layer_top", "pblh"),
    ("Mixing Height", "layer_top", "mixing height"),
    (
        "mixing-layer-height (km)",
        "layer_top",
        "mixing layer height",
    ),
    ("mlh", "layer_top", "mlh"),
    (
        "Boundary Layer Height (km)",
        "layer_top",
        "boundary layer height",
    ),
    ("layer-height", "layer_top", "layer height"),
    ("top (km)", "layer_top", "top"),
    ("Utc Offset", "utc_offset", "utc offset"),
    ("TZ", "utc_offset", "tz"),
    ("timezone", "utc_offset", "timezone"),
    ("Time Zone", "utc_offset", "time zone"),
    ("OFFSET", "utc_offset", "offset"),
    ("tz_offset", "utc_offset", "tz offset"),
    ("Utc Offset H", "utc_offset", "utc offset h"),
    // The Ångström exponent as campaign workbooks write it, with or without its pair.
    ("Angstrom exp.", "angstrom", "angstrom exp"),
    ("Ångström exponent", "angstrom", "angstrom exponent"),
    ("Ångström coefficient", "angstrom", "angstrom coefficient"),
    ("Angstrom exp. 440–870 nm", "angstrom", "angstrom exp"),
    ("α", "angstrom", "alpha"),
    ("α 440/870", "angstrom", "alpha"),
    ("AE 440-870", "angstrom", "ae"),
    ("alpha_440_870", "angstrom", "alpha"),
    ("Angstrom exponent alpha", "angstrom", "angstrom exponent"),
    // Station identifiers of network files.
    ("Station ID", "site", "station id"),
    ("STID", "site", "stid"),
    ("Station code", "site", "station code"),
];

#[test]
fn every_case_reads_as_its_quantity() {
    for (header, quantity, _) in CASES {
        let got = read_header(header).unwrap_or_else(|| panic!("{header:?} is not understood"));
        assert_eq!(got.quantity, *quantity, "{header:?}");
    }
}

#[test]
fn every_spelling_of_the_table_has_a_case_and_reads_as_its_quantity() {
    let table = header_spellings();
    for (quantity, spelling) in &table {
        assert!(
            CASES.iter().any(|(_, q, s)| q == quantity && s == spelling),
            "spelling {spelling:?} of {quantity} has no case in CASES"
        );
        let got = read_header(spelling).map(|r| r.quantity);
        assert_eq!(got, Some(*quantity), "table spelling {spelling:?}");
    }
    for (header, quantity, spelling) in CASES {
        assert!(
            table.contains(&(*quantity, *spelling)),
            "case {header:?} names {spelling:?}, which is no spelling of {quantity} in the table"
        );
    }
    // No spelling means two quantities.
    for (i, (q1, s1)) in table.iter().enumerate() {
        for (q2, s2) in &table[i + 1..] {
            assert!(!(s1 == s2 && q1 != q2), "{s1:?} is both {q1} and {q2}");
        }
    }
}

#[test]
fn wavelength_pairs_of_the_angstrom_exponent() {
    for h in [
        "alpha_440_870",
        "Ångström exp. 440/870",
        "AE (440–870 nm)",
        "Angstrom exponent 440-870 nm [-]",
        "α 870/440",
    ] {
        let r = read_header(h).unwrap();
        assert_eq!(r.quantity, "angstrom", "{h}");
        assert_eq!(r.wavelength_pair_nm, Some((440.0, 870.0)), "{h}");
    }
    assert_eq!(read_header("Angstrom").unwrap().wavelength_pair_nm, None);
    // A pair is an Ångström notion only: AOD keeps its one wavelength.
    assert_eq!(read_header("aod 500").unwrap().wavelength_pair_nm, None);
}

#[test]
fn unrelated_words_name_no_quantity() {
    for h in [
        "Notes",
        "Remarks",
        "aod440 (Oct, raw)",
        "Ångström (fit)",
        "operator",
        "cloud flag",
        "QA level",
        "comment",
        "type",
        "aod fine mode",
        "instrument serial",
    ] {
        assert!(
            read_header(h).is_none(),
            "{h:?} must not be read as a quantity"
        );
    }
}

/// A campaign workbook as a new user brings it: two title rows and a blank one above the
/// header on row 4, a units row under it, then `rows` rows of data. Columns: time, latitude,
/// longitude, AOD 500, `angstrom` (header and unit given), SSA, g, `extra` columns.
fn campaign(
    path: &std::path::Path,
    angstrom: (&str, &str),
    extra: &[(&str, &str, W)],
    aod_header: &str,
) {
    let mut header = vec![
        S("time (UTC)"),
        S("lat"),
        S("lon"),
        Str(aod_header.to_string()),
        Str(angstrom.0.to_string()),
        S("SSA 550 nm"),
        S("g 550 nm"),
    ];
    let mut units = vec![
        S("yyyy-mm-dd hh:mm"),
        S("deg N"),
        S("deg E"),
        S("-"),
        Str(angstrom.1.to_string()),
        S("-"),
        S("-"),
    ];
    for (h, u, _) in extra {
        header.push(Str(h.to_string()));
        units.push(Str(u.to_string()));
    }
    let mut rows = vec![
        vec![S("Haze campaign (invented test data)")],
        vec![S("Operator log, copied by hand")],
        vec![],
        header,
        units,
    ];
    for (k, alpha) in [0.4, 1.1, 1.7].into_iter().enumerate() {
        let mut r = vec![
            Str(format!("2024-05-0{} 10:00:00", k + 1)),
            N(42.45),
            N(11.2),
            N(0.2 + 0.1 * k as f64),
            N(alpha),
            N(0.92),
            N(0.7),
        ];
        for (_, _, v) in extra {
            r.push(v.clone());
        }
        rows.push(r);
    }
    write_xlsx(path, &[("log", rows)]);
}

fn scratch_columns() -> Vec<(&'static str, &'static str, W)> {
    vec![
        ("Notes", "", S("clear")),
        ("aod440 (Oct, raw)", "-", N(0.31)),
    ]
}

#[test]
fn angstrom_spellings_are_read_with_their_wavelength_pair() {
    let dir = tempfile::TempDir::new().unwrap();
    for (k, (header, unit)) in [
        ("Angstrom exp.", "440–870 nm"),
        ("Ångström exponent", "440/870"),
        ("Ångström coefficient 440-870", "-"),
        ("AE", "440-870 nm"),
        ("α", "(440–870)"),
        ("alpha_440_870", "-"),
    ]
    .into_iter()
    .enumerate()
    {
        let p = tmp(&dir, &format!("a{k}.xlsx"));
        campaign(&p, (header, unit), &scratch_columns(), "AOD 500 nm");
        let ing = read(&p);
        assert_reconciles(&ing);
        assert_eq!(ing.counts.computed, 3, "{header}");
        let m = ing
            .mapping
            .iter()
            .find(|m| m.quantity == "angstrom")
            .unwrap_or_else(|| panic!("{header} not mapped: {:?}", ing.ignored));
        assert_eq!(m.letter, "E", "{header}");
        assert_eq!(m.wavelength_pair_nm, Some([440.0, 870.0]), "{header}");
        let measured: Vec<f64> = ing.observations.iter().map(|o| o.angstrom).collect();
        assert_eq!(measured, vec![0.4, 1.1, 1.7], "{header}");
        assert!(
            !ing.assumptions.iter().any(|a| a.quantity == "angstrom"),
            "{header}: {:?}",
            ing.assumptions
        );
        // AOD at 500 nm lies inside the pair: no row is flagged.
        assert!(ing.row_warnings.iter().all(|w| w.is_empty()), "{header}");
        // The scratch columns are accounted for, with their reasons.
        let notes = ing.ignored.iter().find(|c| c.header == "Notes").unwrap();
        assert_eq!(notes.letter, "H");
        assert_eq!(notes.reason, "not a quantity hazebook reads");
        let raw = ing
            .ignored
            .iter()
            .find(|c| c.header == "aod440 (Oct, raw)")
            .unwrap();
        assert!(
            raw.reason
                .starts_with("reads as aod followed by other words (\"oct raw\")"),
            "{}",
            raw.reason
        );
        let lines = understanding(&ing);
        assert!(
            lines
                .iter()
                .any(|l| l.contains("\"Notes\"")
                    && l.contains("ignored: not a quantity hazebook reads")),
            "{lines:#?}"
        );
        assert!(
            lines.iter().any(|l| l.contains("\"aod440 (Oct, raw)\"")
                && l.contains("ignored: reads as aod")),
            "{lines:#?}"
        );
        assert!(
            lines
                .iter()
                .any(|l| l.contains("→ angstrom") && l.contains("over 440–870 nm")),
            "{lines:#?}"
        );
        assert!(
            lines
                .iter()
                .any(|l| l == "2 column(s) not read (2 not declared in [input] ignore_columns)"),
            "{lines:#?}"
        );
        // Every header column of the sheet is accounted for, in column order.
        let letters: Vec<String> = ing
            .column_accounts()
            .into_iter()
            .map(|a| a.letter)
            .collect();
        assert_eq!(letters, ["A", "B", "C", "D", "E", "F", "G", "H", "I"]);
    }
}

#[test]
fn aod_outside_the_angstrom_pair_is_flagged_as_extrapolated() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "uv.xlsx");
    campaign(&p, ("Angstrom exp.", "440–870 nm"), &[], "AOD 380 nm");
    let ing = read(&p);
    assert_eq!(ing.counts.computed, 3);
    for (w, o) in ing.row_warnings.iter().zip(&ing.origins) {
        assert!(
            w.iter().any(|w| w.cell == format!("E{}", o.row)
                && w.message.contains(
                    "AOD at 380 nm lies outside the Ångström exponent's wavelength pair 440–870 nm"
                )
                && w.message.contains("extrapolated in the Ångström law")),
            "{w:?}"
        );
    }
}

#[test]
fn metadata_spellings_are_read_with_their_units() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "meta.xlsx");
    campaign(
        &p,
        ("Angstrom exponent", "-"),
        &[
            ("Total column ozone [DU]", "", N(320.0)),
            ("PWV (mm)", "", N(12.0)),
            ("Station pressure / hPa", "", N(950.0)),
            ("Broadband surface albedo", "-", N(0.18)),
            ("Aerosol layer height", "km", N(3.0)),
            ("Station elevation", "m", N(500.0)),
        ],
        "AOD 500 nm",
    );
    let ing = read(&p);
    assert_eq!(ing.counts.computed, 3, "{:?}", ing.rejected);
    assert!(ing.ignored.is_empty(), "{:?}", ing.ignored);
    for q in [
        "ozone",
        "water",
        "pressure",
        "albedo",
        "layer_top",
        "altitude",
    ] {
        assert!(
            ing.mapping.iter().any(|m| m.quantity == q),
            "{q}: {:?}",
            ing.mapping
        );
    }
    for q in [
        "ozone_du",
        "water_cm",
        "pressure_hpa",
        "albedo",
        "layer_top_km",
        "altitude_m",
    ] {
        assert!(
            !ing.assumptions.iter().any(|a| a.quantity == q),
            "{q} assumed: {:?}",
            ing.assumptions
        );
    }
    let o = &ing.observations[0];
    assert_eq!(
        (o.ozone_du, o.pressure_hpa, o.layer.top_km),
        (320.0, Some(950.0), 3.0)
    );
    // 12 mm of precipitable water, converted to cm.
    assert!((o.water_cm - 1.2).abs() < 1e-12, "{}", o.water_cm);
}

/// The workbook of the issue: an Ångström header hazebook cannot read, beside a notes
/// column and a scratch column.
fn unreadable_angstrom(path: &std::path::Path) {
    campaign(
        path,
        ("Ångström (fit)", "440–870 nm"),
        &scratch_columns(),
        "AOD 500 nm",
    );
}

#[test]
fn a_default_beside_a_lookalike_column_is_warned_about() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "fit.xlsx");
    unreadable_angstrom(&p);
    let ing = read(&p);
    let a = ing
        .assumptions
        .iter()
        .find(|a| a.quantity == "angstrom")
        .unwrap();
    assert_eq!(
        (a.value.as_str(), a.source, a.rows),
        ("1.3", ValueSource::BuiltIn, 3)
    );
    let fit = ing
        .ignored
        .iter()
        .find(|c| c.header == "Ångström (fit)")
        .unwrap();
    assert_eq!(fit.letter, "E");
    assert_eq!(fit.resembles, vec!["angstrom".to_string()]);
    let w: Vec<&String> = ing
        .warnings
        .iter()
        .filter(|w| w.contains("looks like angstrom"))
        .collect();
    assert_eq!(w.len(), 1, "{:?}", ing.warnings);
    assert!(
        w[0].contains("angstrom = 1.3 (built-in default) applies to 3 row(s)")
            && w[0].contains("column E \"Ångström (fit)\"")
            && w[0].contains("[input.columns] angstrom = \"E\""),
        "{}",
        w[0]
    );
    // The notes and scratch columns resemble nothing that took a default.
    for h in ["Notes", "aod440 (Oct, raw)"] {
        let c = ing.ignored.iter().find(|c| c.header == h).unwrap();
        assert!(c.resembles.is_empty(), "{h}: {:?}", c.resembles);
    }
}

#[test]
fn ignore_columns_are_declared_and_not_read() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "fit.xlsx");
    unreadable_angstrom(&p);
    let mut s = spec(&[&p]);
    s.ignore_columns = vec!["notes".into(), "I".into(), "ssa 550 nm".into()];
    let err = read_inputs(&s).unwrap_err().to_string();
    // SSA is required: ignoring it leaves no SSA column, said as such.
    assert!(err.contains("single-scattering albedo"), "{err}");
    s.ignore_columns = vec!["notes".into(), "I".into()];
    let ing = read_inputs(&s).unwrap();
    let declared: Vec<(&str, bool)> = ing
        .ignored
        .iter()
        .map(|c| (c.letter.as_str(), c.declared))
        .collect();
    assert_eq!(declared, [("E", false), ("H", true), ("I", true)]);
    // Every built-in default needs declaring: the workbook gives no ozone, water, pressure,
    // altitude, albedo or layer top either.
    let problems = hazebook::ingest::strict_problems(&ing, &s);
    assert_eq!(problems.len(), 8, "{problems:#?}");
    s.defaults_allowed = [
        "albedo",
        "altitude",
        "layer_top",
        "ozone",
        "pressure",
        "water",
    ]
    .map(String::from)
    .to_vec();
    let problems = hazebook::ingest::strict_problems(&ing, &s);
    assert_eq!(problems.len(), 2, "{problems:#?}");
    assert!(problems[0].contains("column E \"Ångström (fit)\" is not read"));
    assert!(problems[1].starts_with("angstrom = 1.3 is a built-in default for 3 row(s)"));
}

#[test]
fn check_json_accounts_for_every_column_and_strict_mode_refuses() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "fit.xlsx");
    unreadable_angstrom(&p);
    let file = p.to_str().unwrap();
    // Without strict mode: exit 0, every column listed, the warning carried.
    let o = run(&["check", file, "--json"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let columns = doc["columns"].as_array().unwrap();
    let seen: Vec<(&str, &str)> = columns
        .iter()
        .map(|c| (c["letter"].as_str().unwrap(), c["status"].as_str().unwrap()))
        .collect();
    assert_eq!(
        seen,
        [
            ("A", "read"),
            ("B", "read"),
            ("C", "read"),
            ("D", "read"),
            ("E", "ignored"),
            ("F", "read"),
            ("G", "read"),
            ("H", "ignored"),
            ("I", "ignored")
        ]
    );
    assert_eq!(columns[3]["quantity"], "aod_500");
    let ignored = doc["ignored_columns"].as_array().unwrap();
    assert_eq!(ignored[0]["header"], "Ångström (fit)");
    assert_eq!(ignored[0]["resembles"][0], "angstrom");
    assert!(
        doc["warnings"].as_array().unwrap().iter().any(|w| w
            .as_str()
            .unwrap()
            .contains("[input.columns] angstrom = \"E\"")),
        "{doc}"
    );
    assert_eq!(doc["strict"]["enabled"], false);
    let problems: Vec<&str> = doc["strict"]["problems"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p.as_str().unwrap())
        .collect();
    assert_eq!(
        problems
            .iter()
            .filter(|p| p.contains("is not read"))
            .count(),
        3
    );
    assert!(
        problems
            .iter()
            .any(|p| p.starts_with("angstrom = 1.3 is a built-in default")),
        "{problems:#?}"
    );
    // Strict check: exit 2, not ok.
    let o = run(&["check", file, "--json", "--strict"], dir.path());
    assert_eq!(o.status.code(), Some(2));
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(doc["ok"], false);
    assert_eq!(doc["strict"]["enabled"], true);
    // Strict run: exit 2 and nothing written.
    let o = run(&["run", file, "--strict", "--out", "out"], dir.path());
    assert_eq!(o.status.code(), Some(2));
    let err = text(&o.stderr);
    assert!(
        err.contains("strict mode:") && err.contains("nothing written"),
        "{err}"
    );
    assert!(
        err.contains("column E \"Ångström (fit)\" is not read"),
        "{err}"
    );
    assert!(!dir.path().join("out").exists(), "nothing may be written");
}

#[test]
fn a_strict_job_that_declares_its_ignored_columns_and_defaults_runs() {
    let dir = tempfile::TempDir::new().unwrap();
    let p = tmp(&dir, "fit.xlsx");
    unreadable_angstrom(&p);
    let job = dir.path().join("job.toml");
    let write_job = |defaults: &str| {
        std::fs::write(
            &job,
            format!(
                "[input]\npaths = [\"fit.xlsx\"]\nstrict = true\nignore_columns = [\"Ångström (fit)\", \"Notes\", \"I\"]\ndefaults_allowed = [{defaults}]\n[report]\nfolder = \"out\"\n"
            ),
        )
        .unwrap();
    };
    // Defaults not all declared: refused, nothing written.
    write_job("\"angstrom\"");
    let o = run(&["run", job.to_str().unwrap()], dir.path());
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    let err = text(&o.stderr);
    assert!(err.contains("ozone = 300 is a built-in default"), "{err}");
    assert!(
        !err.contains("is not read"),
        "the ignored columns are declared: {err}"
    );
    assert!(!dir.path().join("out").exists());
    // Every default declared: the run writes its report.
    write_job(
        "\"angstrom\", \"ozone\", \"water\", \"albedo\", \"altitude\", \"pressure\", \"layer_top\", \"utc_offset\"",
    );
    let o = run(&["run", job.to_str().unwrap()], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let written: Vec<_> = std::fs::read_dir(dir.path().join("out")).unwrap().collect();
    assert_eq!(written.len(), 1);
}
