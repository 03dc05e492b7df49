//! NetCDF side output: read back with the `netcdf3` reader and compared with the Parquet side
//! output of the same rows; CF-1.8 timeSeries structure (CF 1.8 §9, Appendix H.2.5 and
//! H.2.1), attributes, flags, fill values, the site × month summaries and deterministic bytes.

mod binary_support;
mod report_support;

use std::path::Path;

use hazebook::physics::Settings;
use hazebook::report::side::{self, FILL_DOUBLE, SideMeta};
use hazebook::report::{self, SideFormat, stats};
use netcdf3::FileReader;
use polars::prelude::*;
use report_support::*;

fn write_nc(dir: &Path, n: usize) -> (std::path::PathBuf, DataFrame) {
    let (ing, res) = sample(n);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let nc = dir.join("results.nc");
    let meta = SideMeta {
        command: Some("hazebook run camp.toml --side-output netcdf".into()),
        institution: Some("Kestrel Ridge Observatory".into()),
    };
    report::write_side_output_with(&nc, SideFormat::Netcdf, &input, &meta).unwrap();
    let pq = dir.join("results.parquet");
    report::write_side_output(&pq, SideFormat::Parquet, &input).unwrap();
    let df = ParquetReader::new(std::fs::File::open(&pq).unwrap())
        .finish()
        .unwrap();
    (nc, df)
}

/// Strings of a char variable `var(n, strlen)`, NUL padding removed.
fn strings(r: &mut FileReader, var: &str) -> Vec<String> {
    let dims = r.data_set().get_var(var).unwrap().dim_names();
    let len = r.data_set().dim_size(&dims[1]).unwrap();
    let bytes = r.read_var_u8(var).unwrap();
    bytes
        .chunks(len)
        .map(|c| {
            let end = c.iter().position(|&b| b == 0).unwrap_or(c.len());
            String::from_utf8(c[..end].to_vec()).unwrap()
        })
        .collect()
}

#[test]
fn observations_equal_the_parquet_side_output() {
    let dir = tempfile::tempdir().unwrap();
    let (nc, df) = write_nc(dir.path(), 25);
    let mut r = FileReader::open(&nc).unwrap();
    let ds = FileReader::open(r.file_path()).unwrap().close().0;
    assert_eq!(ds.dim_size("obs"), Some(25));
    assert_eq!(ds.dim_size("station"), Some(3));
    let mut compared = 0;
    for name in df.get_column_names() {
        let col = df.column(name).unwrap();
        if col.dtype() != &DataType::Float64 {
            continue;
        }
        let key = name.as_str();
        let values: Vec<Option<f64>> = col.f64().unwrap().iter().collect();
        if matches!(key, "latitude_deg" | "longitude_deg" | "altitude_m") {
            continue;
        }
        let nc_values = r
            .read_var_f64(key)
            .unwrap_or_else(|e| panic!("{key}: {e:?}"));
        assert_eq!(nc_values.len(), values.len(), "{key}");
        for (i, (a, b)) in nc_values.iter().zip(&values).enumerate() {
            match b {
                Some(b) => assert_eq!(a, b, "{key} row {i}: bit for bit"),
                None => assert_eq!(*a, FILL_DOUBLE, "{key} row {i}: null is the fill value"),
            }
        }
        compared += 1;
    }
    assert!(compared > 40, "only {compared} columns compared");
    // Zero AOD (row 5): efficiencies are missing, written as the fill value.
    assert_eq!(
        r.read_var_f64("efficiency_toa_24h").unwrap()[5],
        FILL_DOUBLE
    );
    assert_eq!(
        ds.get_var_attr_f64("efficiency_toa_24h", "_FillValue"),
        Some(&[FILL_DOUBLE][..])
    );

    // Station coordinates through station_index, against the per-row parquet columns.
    let index = r.read_var_i32("station_index").unwrap();
    let lat = r.read_var_f64("latitude").unwrap();
    let lon = r.read_var_f64("longitude").unwrap();
    let alt = r.read_var_f64("altitude").unwrap();
    let ids = strings(&mut r, "station_id");
    let site_col = df.column("site").unwrap().str().unwrap().clone();
    let pq_lat = df.column("latitude_deg").unwrap().f64().unwrap().clone();
    let pq_lon = df.column("longitude_deg").unwrap().f64().unwrap().clone();
    let pq_alt = df.column("altitude_m").unwrap().f64().unwrap().clone();
    for (i, &s) in index.iter().enumerate() {
        let s = s as usize;
        assert_eq!(Some(ids[s].as_str()), site_col.get(i));
        assert_eq!(Some(lat[s]), pq_lat.get(i));
        assert_eq!(Some(lon[s]), pq_lon.get(i));
        assert_eq!(Some(alt[s]), pq_alt.get(i));
    }
    let mut sorted = ids.clone();
    sorted.sort();
    assert_eq!(ids, sorted, "stations sorted by name");

    // Times: seconds since the epoch, equal to the parquet milliseconds.
    let t = r.read_var_f64("time").unwrap();
    let pq_t = df
        .column("time_utc")
        .unwrap()
        .datetime()
        .unwrap()
        .physical()
        .clone();
    for (a, b) in t.iter().zip(pq_t.iter()) {
        assert_eq!(*a * 1000.0, b.unwrap() as f64);
    }
    // Text columns come back unchanged.
    let files = strings(&mut r, "file");
    assert!(files.iter().all(|f| f == "campaign-2026.xlsx"));
    let warnings = strings(&mut r, "warnings");
    assert_eq!(
        Some(warnings[7].as_str()),
        df.column("warnings").unwrap().str().unwrap().get(7)
    );
    assert_eq!(r.read_var_i32("row").unwrap()[0], 3);
}

#[test]
fn cf_attributes_and_flags() {
    let dir = tempfile::tempdir().unwrap();
    let (nc, df) = write_nc(dir.path(), 25);
    let mut r = FileReader::open(&nc).unwrap();
    let ds = FileReader::open(r.file_path()).unwrap().close().0;
    let g = |a: &str| ds.get_global_attr_as_string(a);
    assert_eq!(g("Conventions").as_deref(), Some("CF-1.8"));
    assert_eq!(g("featureType").as_deref(), Some("timeSeries"));
    assert_eq!(
        g("institution").as_deref(),
        Some("Kestrel Ridge Observatory")
    );
    let history = g("history").unwrap();
    assert!(history.starts_with("2026-09-01T00:00:00Z hazebook run camp.toml --side-output netcdf; hazebook 0.1.0; settings {"), "{history}");
    assert!(
        history.contains(&"ab".repeat(32)),
        "input SHA-256 in history"
    );
    assert!(
        history.contains("\"closure\":\"delta-eddington\""),
        "{history}"
    );
    assert!(g("references").unwrap().contains("Joseph, J. H."));
    assert!(g("title").unwrap().contains("kestrel-campaign"));

    let attr = |v: &str, a: &str| ds.get_var_attr_as_string(v, a);
    assert_eq!(
        attr("station_id", "cf_role").as_deref(),
        Some("timeseries_id")
    );
    assert_eq!(
        attr("station_index", "instance_dimension").as_deref(),
        Some("station")
    );
    assert_eq!(
        attr("time", "units").as_deref(),
        Some("seconds since 1970-01-01 00:00:00")
    );
    assert_eq!(attr("time", "calendar").as_deref(), Some("standard"));
    assert_eq!(attr("latitude", "units").as_deref(), Some("degrees_north"));
    assert_eq!(
        attr("longitude", "standard_name").as_deref(),
        Some("longitude")
    );
    assert_eq!(attr("altitude", "positive").as_deref(), Some("up"));
    for (var, units, std) in [
        (
            "dre_toa_24h",
            "W m-2",
            Some("toa_instantaneous_shortwave_forcing"),
        ),
        ("dre_sfc", "W m-2", None),
        ("heating_rate_24h", "K day-1", None),
        ("efficiency_toa", "W m-2", None),
        (
            "aod_550",
            "1",
            Some("atmosphere_optical_thickness_due_to_ambient_aerosol_particles"),
        ),
        (
            "ssa_550",
            "1",
            Some("single_scattering_albedo_in_air_due_to_ambient_aerosol_particles"),
        ),
        (
            "asymmetry_550",
            "1",
            Some("asymmetry_factor_of_ambient_aerosol_particles"),
        ),
        (
            "angstrom",
            "1",
            Some("angstrom_exponent_of_ambient_aerosol_in_air"),
        ),
        ("ozone_du", "DU", Some("atmosphere_mole_content_of_ozone")),
        (
            "water_cm",
            "cm",
            Some("lwe_thickness_of_atmosphere_mass_content_of_water_vapor"),
        ),
        ("pressure_hpa", "hPa", Some("surface_air_pressure")),
        ("solar_zenith_deg", "degree", Some("solar_zenith_angle")),
        (
            "toa_up_aerosol",
            "W m-2",
            Some("toa_outgoing_shortwave_flux_assuming_clear_sky"),
        ),
        ("toa_up_clean", "W m-2", None),
        ("sfc_down_direct_aerosol", "W m-2", None),
        ("layer_top_km", "km", None),
    ] {
        assert_eq!(attr(var, "units").as_deref(), Some(units), "{var}");
        assert_eq!(attr(var, "standard_name").as_deref(), std, "{var}");
        assert!(
            attr(var, "long_name").is_some_and(|l| !l.is_empty()),
            "{var}"
        );
        assert_eq!(
            attr(var, "coordinates")
                .unwrap()
                .split(' ')
                .take(5)
                .collect::<Vec<_>>(),
            ["time", "latitude", "longitude", "altitude", "station_id"],
            "{var}"
        );
    }
    assert!(
        attr("aod", "coordinates")
            .unwrap()
            .ends_with(" aod_wavelength_nm")
    );
    assert!(
        attr("aod_550", "coordinates")
            .unwrap()
            .ends_with(" wavelength_550")
    );
    assert_eq!(r.read_var_f64("wavelength_550").unwrap(), vec![550.0]);

    // Flags: CF flag variable whose masks decode to the parquet flag names.
    let masks = ds.get_var_attr_i16("flags", "flag_masks").unwrap().to_vec();
    let meanings = attr("flags", "flag_meanings").unwrap();
    let meanings: Vec<&str> = meanings.split(' ').collect();
    assert_eq!(masks.len(), meanings.len());
    let bits = r.read_var_i16("flags").unwrap();
    let names = df.column("flags").unwrap().str().unwrap().clone();
    for (i, b) in bits.iter().enumerate() {
        let decoded: Vec<&str> = masks
            .iter()
            .zip(&meanings)
            .filter(|(m, _)| b & **m != 0)
            .map(|(_, n)| *n)
            .collect();
        assert_eq!(Some(decoded.join(", ").as_str()), names.get(i), "row {i}");
    }
    assert!(bits.iter().any(|b| b & 1 != 0), "the sample has night rows");
}

#[test]
fn summaries_are_site_by_month_statistics() {
    let dir = tempfile::tempdir().unwrap();
    let (nc, _) = write_nc(dir.path(), 150); // every 7 h from 1 June: June and July
    let path = side::summary_path(&nc);
    assert_eq!(path.file_name().unwrap(), "results.summary.nc");
    let mut r = FileReader::open(&path).unwrap();
    let ds = FileReader::open(r.file_path()).unwrap().close().0;
    assert_eq!(ds.dim_size("station"), Some(3));
    assert_eq!(ds.dim_size("time"), Some(2));
    assert_eq!(
        ds.get_global_attr_as_string("featureType").as_deref(),
        Some("timeSeries")
    );
    let t = r.read_var_f64("time").unwrap();
    assert_eq!(t, vec![1_780_272_000.0, 1_782_864_000.0]); // 2026-06-01, 2026-07-01 UTC
    assert_eq!(
        r.read_var_f64("time_bnds").unwrap(),
        vec![
            1_780_272_000.0,
            1_782_864_000.0,
            1_782_864_000.0,
            1_785_542_400.0
        ]
    );
    assert_eq!(
        ds.get_var_attr_as_string("dre_toa_24h_mean", "cell_methods")
            .as_deref(),
        Some("time: mean")
    );
    assert_eq!(
        ds.get_var_attr_as_string("dre_toa_24h_se", "standard_name")
            .as_deref(),
        Some("toa_instantaneous_shortwave_forcing standard_error")
    );
    assert_eq!(
        ds.get_var_attr_as_string("dre_toa_24h_count", "standard_name"),
        None,
        "the number_of_observations modifier is deprecated"
    );
    assert!(
        ds.get_var_attr_as_string("dre_toa_24h_p95", "cell_methods")
            .is_none()
    );

    // Recompute from the rows: station s (sorted names), month m.
    let (ing, res) = sample(150);
    let ids = strings(&mut r, "station_id");
    let mean = r.read_var_f64("dre_toa_24h_mean").unwrap();
    let count = r.read_var_i32("dre_toa_24h_count").unwrap();
    let p95 = r.read_var_f64("dre_sfc_24h_p95").unwrap();
    let inst_count = r.read_var_i32("dre_toa_count").unwrap();
    let mut total = 0;
    for (s, id) in ids.iter().enumerate() {
        for (m, month) in [6u32, 7].iter().enumerate() {
            let rows: Vec<usize> = (0..150)
                .filter(|&i| {
                    ing.sites[i] == *id
                        && chrono::Datelike::month(&ing.observations[i].time_utc) == *month
                })
                .collect();
            let want = stats::summarise(rows.iter().map(|&i| res[i].daily.dre_toa));
            let k = s * 2 + m;
            assert_eq!(count[k] as usize, want.n);
            assert_eq!(Some(mean[k]), want.mean);
            let want95 = stats::summarise(rows.iter().map(|&i| res[i].daily.dre_sfc));
            assert_eq!(Some(p95[k]), want95.p95);
            // Instantaneous values at night are left out, as on the summary sheets.
            let sunlit = rows
                .iter()
                .filter(|&&i| !res[i].flags.sun_below_horizon)
                .count();
            assert_eq!(inst_count[k] as usize, sunlit);
            total += want.n;
        }
    }
    assert_eq!(total, 150, "every row in one cell");
}

#[test]
fn bytes_are_deterministic_and_written_atomically() {
    let dir = tempfile::tempdir().unwrap();
    let (a, _) = write_nc(&dir.path().join("."), 40);
    let first = std::fs::read(&a).unwrap();
    let first_summary = std::fs::read(side::summary_path(&a)).unwrap();
    let (b, _) = write_nc(dir.path(), 40);
    assert_eq!(first, std::fs::read(&b).unwrap());
    assert_eq!(
        first_summary,
        std::fs::read(side::summary_path(&b)).unwrap()
    );
    assert_eq!(&first[..4], b"CDF\x02", "NetCDF-3 64-bit offset format");
    // Only the finished files are left (no temporary files).
    let mut names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(
        names,
        ["results.nc", "results.parquet", "results.summary.nc"]
    );
}

#[test]
fn no_computed_row_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(0);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let nc = dir.path().join("results.nc");
    let e = report::write_side_output(&nc, SideFormat::Netcdf, &input).unwrap_err();
    assert!(e.to_string().contains("at least one computed row"), "{e}");
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
}

#[test]
fn run_writes_both_netcdf_files_beside_the_report() {
    let dir = tempfile::tempdir().unwrap();
    let sample = binary_support::samples().join("brinefell-campaign.xlsx");
    let o = binary_support::run(
        &[
            "run",
            sample.to_str().unwrap(),
            "--out",
            "out",
            "--period",
            "2026",
            "--today",
            "2026-12-01",
            "--side-output",
            "netcdf",
            "-q",
        ],
        dir.path(),
    );
    assert!(
        o.status.code().unwrap() <= 1,
        "{}",
        binary_support::text(&o.stderr)
    );
    let printed = binary_support::text(&o.stdout);
    let lines: Vec<&str> = printed.lines().collect();
    assert_eq!(lines.len(), 3, "{printed}");
    assert!(
        lines[1].ends_with(".nc") && lines[2].ends_with(".summary.nc"),
        "{printed}"
    );
    let r = FileReader::open(dir.path().join(lines[1])).unwrap();
    let history = r.data_set().get_global_attr_as_string("history").unwrap();
    assert!(
        history.contains("hazebook run") && history.contains("--side-output netcdf"),
        "{history}"
    );
    assert!(r.data_set().dim_size("obs").unwrap() > 0);
}
