//! Machine-readable side outputs of the Results table at full precision: CSV (units in the
//! column names, formula-like text neutralised), Parquet, and CF-convention NetCDF.
//!
//! - [`write_side_output`] / [`write_side_output_with`] write atomically (temporary files in
//!   the target folder, renamed into place when complete); [`side_files`] names every file a
//!   format writes (NetCDF writes two: the observations and the site × month summaries).
//! - The byte producers [`write_csv`], [`write_parquet`], [`netcdf_results`] and
//!   [`netcdf_summary`] write to a given writer or return the bytes, for callers that place
//!   files themselves.
//!
//! The NetCDF files are NetCDF-3 (64-bit offset format, written by the pure-Rust `netcdf3`
//! crate) following the CF conventions 1.8, discrete sampling geometry `timeSeries` (CF 1.8
//! §9 and Appendix H.2): the observations as an indexed ragged array (H.2.5), one instance per
//! site and position; the summaries as an orthogonal multidimensional array (H.2.1) of
//! station × month. NetCDF-3 has no groups, so the summaries are a second file.

use std::borrow::Cow;
use std::cell::RefCell;
use std::io::{BufWriter, Cursor, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};
use std::rc::Rc;

use chrono::{Datelike, TimeZone, Utc};
use netcdf3::{DataSet, FileWriter, Version};
use polars::prelude::*;

use super::frame::{self, Class, ColumnDef, Row, Value};
use super::{ReportError, ReportInput, build_rows, temp_beside, write_error};
use crate::physics::Flags;

/// Machine-readable side output of the Results table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SideFormat {
    Csv,
    Parquet,
    /// CF-1.8 NetCDF-3: `<stem>.nc` (observations) and `<stem>.summary.nc` (site × month).
    Netcdf,
}

impl SideFormat {
    /// File extension of the side output beside a report (`csv`, `parquet`, `nc`).
    pub fn extension(self) -> &'static str {
        match self {
            SideFormat::Csv => "csv",
            SideFormat::Parquet => "parquet",
            SideFormat::Netcdf => "nc",
        }
    }
}

/// Context of a run that the NetCDF global attributes record.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct SideMeta {
    /// The command line as given (for `history`).
    pub command: Option<String>,
    /// The institution that produced the results (job file `[report] institution`).
    pub institution: Option<String>,
}

/// The CF version the NetCDF output follows.
pub const CF_CONVENTIONS: &str = "CF-1.8";

/// Fill value of double variables: the NetCDF default fill for doubles (`NC_FILL_DOUBLE`),
/// also written as `_FillValue`.
pub const FILL_DOUBLE: f64 = netcdf3::NC_FILL_F64;
/// Fill value of int variables (`NC_FILL_INT`).
pub const FILL_INT: i32 = netcdf3::NC_FILL_I32;

/// The summary file beside a NetCDF side output: `x.nc` → `x.summary.nc`.
pub fn summary_path(path: &Path) -> PathBuf {
    path.with_extension("summary.nc")
}

/// Every file that [`write_side_output`] writes for `path` in `format`.
pub fn side_files(path: &Path, format: SideFormat) -> Vec<PathBuf> {
    match format {
        SideFormat::Netcdf => vec![path.to_path_buf(), summary_path(path)],
        _ => vec![path.to_path_buf()],
    }
}

/// Write the Results table at full precision as CSV, Parquet or NetCDF (atomically: temporary
/// files in the same folder, renamed into place when all are complete). NetCDF also writes
/// [`summary_path`].
///
/// Errors: [`ReportError::Write`] when the folder is not writable; [`ReportError::Input`]
/// when the results do not line up with the rows, or a NetCDF output has no computed row.
pub fn write_side_output(
    path: &Path,
    format: SideFormat,
    input: &ReportInput,
) -> Result<(), ReportError> {
    write_side_output_with(path, format, input, &SideMeta::default())
}

/// [`write_side_output`] with the run context recorded in the NetCDF global attributes.
pub fn write_side_output_with(
    path: &Path,
    format: SideFormat,
    input: &ReportInput,
    meta: &SideMeta,
) -> Result<(), ReportError> {
    let mut done: Vec<(tempfile::NamedTempFile, PathBuf)> = Vec::new();
    match format {
        SideFormat::Csv | SideFormat::Parquet => {
            let mut tmp = temp_beside(path).map_err(|e| write_error(path, e))?;
            {
                let mut w = BufWriter::new(tmp.as_file_mut());
                if format == SideFormat::Csv {
                    write_csv(&mut w, input, path)?;
                } else {
                    write_parquet(&mut w, input, path)?;
                }
                w.flush().map_err(|e| write_error(path, e))?;
            }
            done.push((tmp, path.to_path_buf()));
        }
        SideFormat::Netcdf => {
            let summary = summary_path(path);
            for (target, bytes) in [
                (path.to_path_buf(), netcdf_results(input, meta)?),
                (summary.clone(), netcdf_summary(input, meta)?),
            ] {
                let mut tmp = temp_beside(&target).map_err(|e| write_error(&target, e))?;
                tmp.as_file_mut()
                    .write_all(&bytes)
                    .map_err(|e| write_error(&target, e))?;
                done.push((tmp, target));
            }
        }
    }
    for (tmp, target) in &done {
        tmp.as_file()
            .sync_all()
            .map_err(|e| write_error(target, e))?;
    }
    for (tmp, target) in done {
        tmp.persist(&target)
            .map_err(|e| write_error(&target, e.error))?;
    }
    Ok(())
}

/// Write the side output into files the caller has already staged: `staged[i]` receives what
/// belongs at `side_files(path, format)[i]` (the caller renames them into place together with
/// the report, so a report and its side output always come from the same run). `path` names
/// the output in messages.
///
/// Errors: as [`write_side_output_with`]; [`ReportError::Input`] when `staged` does not hold
/// one file per [`side_files`] entry.
pub fn write_side_staged(
    staged: &[PathBuf],
    path: &Path,
    format: SideFormat,
    input: &ReportInput,
    meta: &SideMeta,
) -> Result<(), ReportError> {
    let targets = side_files(path, format);
    if staged.len() != targets.len() {
        return Err(ReportError::Input {
            message: format!(
                "{}: {} staged files for {} side outputs",
                path.display(),
                staged.len(),
                targets.len()
            ),
        });
    }
    let write = |tmp: &Path,
                 target: &Path,
                 body: &dyn Fn(&mut BufWriter<&mut std::fs::File>) -> Result<(), ReportError>|
     -> Result<(), ReportError> {
        let mut f = std::fs::File::create(tmp).map_err(|e| write_error(target, e))?;
        {
            let mut w = BufWriter::new(&mut f);
            body(&mut w)?;
            w.flush().map_err(|e| write_error(target, e))?;
        }
        f.sync_all().map_err(|e| write_error(target, e))
    };
    match format {
        SideFormat::Csv => write(&staged[0], path, &|w| write_csv(w, input, path)),
        SideFormat::Parquet => write(&staged[0], path, &|w| write_parquet(w, input, path)),
        SideFormat::Netcdf => {
            let results = netcdf_results(input, meta)?;
            write(&staged[0], &targets[0], &|w| {
                w.write_all(&results)
                    .map_err(|e| write_error(&targets[0], e))
            })?;
            let summary = netcdf_summary(input, meta)?;
            write(&staged[1], &targets[1], &|w| {
                w.write_all(&summary)
                    .map_err(|e| write_error(&targets[1], e))
            })
        }
    }
}

/// The Results table (every available column) as a polars frame at full precision: numbers
/// as Float64 (null where not finite), times as Datetime[ms] (UTC), text as String.
pub fn results_frame(input: &ReportInput) -> Result<DataFrame, ReportError> {
    table_frame(input, false)
}

/// The frame of the CSV side output: units in brackets in the column names
/// ([`csv_header`]) and text cells made safe for spreadsheet programs ([`csv_safe_text`]).
pub fn csv_frame(input: &ReportInput) -> Result<DataFrame, ReportError> {
    table_frame(input, true)
}

/// Write the CSV side output to `w` (`path` names it in messages).
pub fn write_csv<W: Write>(w: &mut W, input: &ReportInput, path: &Path) -> Result<(), ReportError> {
    let mut df = csv_frame(input)?;
    CsvWriter::new(w)
        .with_datetime_format(Some("%Y-%m-%dT%H:%M:%SZ".into()))
        .finish(&mut df)
        .map_err(|e| write_error(path, e))
}

/// Write the Parquet side output to `w` (`path` names it in messages).
pub fn write_parquet<W: Write>(
    w: &mut W,
    input: &ReportInput,
    path: &Path,
) -> Result<(), ReportError> {
    let mut df = results_frame(input)?;
    ParquetWriter::new(w)
        .finish(&mut df)
        .map(|_| ())
        .map_err(|e| write_error(path, e))
}

/// Column name in the CSV side output: the key, with the UDUNITS unit in brackets where the
/// column has one (`dre_toa_24h [W m-2]`, `aod_550 [1]`; `site`, `time_utc` as they are).
pub fn csv_header(c: &ColumnDef) -> String {
    match udunits(c) {
        Some(u) => format!("{} [{u}]", c.key),
        None => c.key.clone(),
    }
}

/// A text cell for CSV: a value that a spreadsheet program would run as a formula (starting
/// with `=`, `+`, `-`, `@`, a tab or a carriage return) gets a leading single quote, as is
/// common practice (OWASP "CSV injection"); everything else is unchanged.
pub fn csv_safe_text(s: &str) -> Cow<'_, str> {
    match s.chars().next() {
        Some('=' | '+' | '-' | '@' | '\t' | '\r') => Cow::Owned(format!("'{s}")),
        _ => Cow::Borrowed(s),
    }
}

fn table_frame(input: &ReportInput, csv: bool) -> Result<DataFrame, ReportError> {
    let rows = build_rows(input)?;
    let cols = frame::drop_empty_uncertainty(
        frame::available(frame::columns().iter().collect(), input.settings),
        &rows,
    );
    let polars_err = |e: PolarsError| ReportError::Input {
        message: format!("building the results table: {e}"),
    };
    let mut out: Vec<Column> = Vec::with_capacity(cols.len());
    for c in cols {
        let name: PlSmallStr = if csv {
            csv_header(c).into()
        } else {
            c.key.as_str().into()
        };
        let col = match c.class {
            Class::Text => {
                let v: Vec<Option<String>> = rows
                    .iter()
                    .map(|r| match c.value(r) {
                        Value::Text(s) if csv => Some(csv_safe_text(&s).into_owned()),
                        Value::Text(s) => Some(s.into_owned()),
                        _ => None,
                    })
                    .collect();
                Column::new(name, v)
            }
            Class::Time => {
                let v: Vec<Option<i64>> = rows
                    .iter()
                    .map(|r| match c.value(r) {
                        Value::Time(ms) => Some(ms),
                        _ => None,
                    })
                    .collect();
                Column::new(name, v)
                    .cast(&DataType::Datetime(TimeUnit::Milliseconds, None))
                    .map_err(polars_err)?
            }
            Class::Count => {
                let v: Vec<Option<i64>> = rows
                    .iter()
                    .map(|r| {
                        let x = c.number(r);
                        x.is_finite().then_some(x as i64)
                    })
                    .collect();
                Column::new(name, v)
            }
            _ => {
                let v: Vec<Option<f64>> = rows
                    .iter()
                    .map(|r| {
                        let x = c.number(r);
                        x.is_finite().then_some(x)
                    })
                    .collect();
                Column::new(name, v)
            }
        };
        out.push(col);
    }
    DataFrame::new(rows.len(), out).map_err(polars_err)
}

/// UDUNITS spelling of a numeric column's unit (`W m-2`, `K day-1`, `1`, `degrees_north`);
/// `None` for text, times and row numbers. Efficiencies are W m-2 per unit AOD, and AOD is
/// dimensionless, so their unit is `W m-2` (the long name says "per unit AOD").
pub fn udunits(c: &ColumnDef) -> Option<&'static str> {
    if !c.class.is_numeric() || c.class == Class::Count {
        return None;
    }
    Some(match c.unit {
        "W m⁻²" | "W m⁻² per AOD" => "W m-2",
        "K day⁻¹" => "K day-1",
        "unitless" | "" => "1",
        "deg N" => "degrees_north",
        "deg E" => "degrees_east",
        "deg" => "degree",
        "km above surface" | "km" => "km",
        "m" => "m",
        "hPa" => "hPa",
        "nm" => "nm",
        // UDUNITS: Dobson unit, 4.462e-4 mol m-2 (an amount of ozone per area).
        "DU" => "DU",
        "cm" => "cm",
        "h" => "h",
        // Normalised efficiency: ΔF / (AOD · incident flux), a pure number per unit AOD.
        "per AOD, fraction of incident TOA flux" => "1",
        // Sensitivities to a stated input step (the step is in the column's long name).
        u if u.starts_with("W m⁻² per ") => "W m-2",
        _ => return None,
    })
}

/// CF standard name of a Results column, where the CF standard-name table (version 93) has
/// one for that quantity; `None` otherwise (heating rate, efficiencies, ΔF at the surface
/// and in the atmosphere, fluxes of the aerosol-free column other than the incoming one,
/// layer heights and day length have none).
///
/// - ΔF_TOA is the instantaneous (unadjusted) shortwave forcing by the aerosol at the top of
///   the atmosphere, positive downward: `toa_instantaneous_shortwave_forcing`; the 24-hour
///   mean keeps the name (its long name says it is a mean over the day).
/// - Fluxes with aerosol are clear-sky fluxes (`…_assuming_clear_sky`); the table has no
///   direct-beam clear-sky name at the surface.
pub fn standard_name(key: &str) -> Option<&'static str> {
    let base = key.strip_suffix("_24h").unwrap_or(key);
    Some(match base {
        "latitude_deg" => "latitude",
        "longitude_deg" => "longitude",
        "altitude_m" => "altitude",
        "time_utc" => "time",
        "pressure_hpa" => "surface_air_pressure",
        "aod" | "aod_550" => "atmosphere_optical_thickness_due_to_ambient_aerosol_particles",
        "aod_wavelength_nm" => "radiation_wavelength",
        "angstrom" => "angstrom_exponent_of_ambient_aerosol_in_air",
        "ssa_550" => "single_scattering_albedo_in_air_due_to_ambient_aerosol_particles",
        "asymmetry_550" => "asymmetry_factor_of_ambient_aerosol_particles",
        "albedo" => "surface_albedo",
        "ozone_du" => "atmosphere_mole_content_of_ozone",
        "water_cm" => "lwe_thickness_of_atmosphere_mass_content_of_water_vapor",
        "solar_zenith_deg" => "solar_zenith_angle",
        "dre_toa" => "toa_instantaneous_shortwave_forcing",
        "toa_down_aerosol" | "toa_down_clean" => "toa_incoming_shortwave_flux",
        "toa_up_aerosol" => "toa_outgoing_shortwave_flux_assuming_clear_sky",
        "toa_net_aerosol" => "toa_net_downward_shortwave_flux_assuming_clear_sky",
        "sfc_down_diffuse_aerosol" => {
            "surface_diffuse_downwelling_shortwave_flux_in_air_assuming_clear_sky"
        }
        "sfc_up_aerosol" => "surface_upwelling_shortwave_flux_in_air_assuming_clear_sky",
        "sfc_net_aerosol" => "surface_net_downward_shortwave_flux_assuming_clear_sky",
        _ => return None,
    })
}

/// Long name of a column in the NetCDF files: the header, with what the displayed unit adds.
fn long_name(c: &ColumnDef) -> String {
    match c.unit {
        "W m⁻² per AOD" => format!("{}, per unit AOD at 550 nm", c.header),
        "km above surface" => format!("{} above the surface", c.header),
        _ => c.header.clone(),
    }
}

/// Flag names of the `flags` variable in mask order (the names of the csv/parquet `flags`
/// column, [`Flags::names`]).
pub const FLAG_MEANINGS: [&str; 8] = [
    "sun-below-horizon",
    "low-sun",
    "ssa-extrapolated",
    "g-extrapolated",
    "polar-night",
    "polar-day",
    "ssa-one-wavelength",
    "g-one-wavelength",
];

/// The flags of one result as bits 1, 2, 4, … in the order of [`FLAG_MEANINGS`].
pub fn flag_bits(f: &Flags) -> i16 {
    [
        f.sun_below_horizon,
        f.low_sun,
        f.ssa_extrapolated,
        f.asymmetry_extrapolated,
        f.polar_night,
        f.polar_day,
        f.ssa_one_wavelength,
        f.asymmetry_one_wavelength,
    ]
    .iter()
    .enumerate()
    .filter(|(_, set)| **set)
    .map(|(i, _)| 1i16 << i)
    .sum()
}

/// An in-memory `Write + Seek` that the NetCDF writer can own (it wants a `'static` box).
#[derive(Clone, Default)]
struct SharedBuffer(Rc<RefCell<Cursor<Vec<u8>>>>);

impl Write for SharedBuffer {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.0.borrow_mut().write(buf)
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

impl Seek for SharedBuffer {
    fn seek(&mut self, pos: SeekFrom) -> std::io::Result<u64> {
        self.0.borrow_mut().seek(pos)
    }
}

fn nc_err(e: impl std::fmt::Debug) -> ReportError {
    ReportError::Input {
        message: format!("NetCDF side output: {e:?}"),
    }
}

/// Data of one NetCDF variable, written after the header.
enum Data {
    F64(Vec<f64>),
    I32(Vec<i32>),
    I16(Vec<i16>),
    Chars(Vec<u8>),
}

/// A data set being defined, with the data to write once the header is fixed.
struct Builder {
    ds: DataSet,
    data: Vec<(String, Data)>,
}

impl Builder {
    fn new() -> Self {
        Self {
            ds: DataSet::new(),
            data: Vec::new(),
        }
    }

    fn dim(&mut self, name: &str, size: usize) -> Result<(), ReportError> {
        self.ds.add_fixed_dim(name, size).map_err(nc_err)
    }

    fn text(&mut self, var: &str, attr: &str, value: &str) -> Result<(), ReportError> {
        self.ds
            .add_var_attr_string(var, attr, value)
            .map_err(nc_err)
    }

    fn global(&mut self, attr: &str, value: &str) -> Result<(), ReportError> {
        self.ds.add_global_attr_string(attr, value).map_err(nc_err)
    }

    /// A double variable with `_FillValue`; non-finite values become the fill value.
    fn f64_var(&mut self, name: &str, dims: &[&str], values: Vec<f64>) -> Result<(), ReportError> {
        self.ds.add_var_f64(name, dims).map_err(nc_err)?;
        self.ds
            .add_var_attr_f64(name, "_FillValue", vec![FILL_DOUBLE])
            .map_err(nc_err)?;
        let v = values
            .into_iter()
            .map(|x| if x.is_finite() { x } else { FILL_DOUBLE })
            .collect();
        self.data.push((name.into(), Data::F64(v)));
        Ok(())
    }

    /// A double variable without a fill value (coordinates, which are always present).
    fn coord_var(
        &mut self,
        name: &str,
        dims: &[&str],
        values: Vec<f64>,
    ) -> Result<(), ReportError> {
        self.ds.add_var_f64(name, dims).map_err(nc_err)?;
        self.data.push((name.into(), Data::F64(values)));
        Ok(())
    }

    fn i32_var(&mut self, name: &str, dims: &[&str], values: Vec<i32>) -> Result<(), ReportError> {
        self.ds.add_var_i32(name, dims).map_err(nc_err)?;
        self.data.push((name.into(), Data::I32(values)));
        Ok(())
    }

    /// A character variable `name(dim, name_strlen)` of UTF-8 strings, padded with NUL bytes.
    fn string_var(
        &mut self,
        name: &str,
        dim: &str,
        values: &[Cow<str>],
        long_name: &str,
    ) -> Result<(), ReportError> {
        let len = values.iter().map(|s| s.len()).max().unwrap_or(0).max(1);
        let strlen = format!("{name}_strlen");
        self.dim(&strlen, len)?;
        self.ds
            .add_var_u8(name, &[dim, strlen.as_str()])
            .map_err(nc_err)?;
        self.text(name, "long_name", long_name)?;
        // netCDF4-python and xarray decode character arrays with this encoding (NUG).
        self.text(name, "_Encoding", "utf-8")?;
        let mut bytes = Vec::with_capacity(len * values.len());
        for s in values {
            bytes.extend_from_slice(s.as_bytes());
            bytes.resize(bytes.len() + len - s.len(), 0);
        }
        self.data.push((name.into(), Data::Chars(bytes)));
        Ok(())
    }

    /// Write the header and the data: NetCDF-3 64-bit offset format, deterministic bytes.
    fn finish(self) -> Result<Vec<u8>, ReportError> {
        let buf = SharedBuffer::default();
        {
            let mut w = FileWriter::open_seek_write("hazebook.nc", Box::new(buf.clone()))
                .map_err(nc_err)?;
            w.set_def(&self.ds, Version::Offset64Bit, 0)
                .map_err(nc_err)?;
            for (name, d) in &self.data {
                match d {
                    Data::F64(v) => w.write_var_f64(name, v),
                    Data::I32(v) => w.write_var_i32(name, v),
                    Data::I16(v) => w.write_var_i16(name, v),
                    Data::Chars(v) => w.write_var_u8(name, v),
                }
                .map_err(nc_err)?;
            }
            w.close().map_err(nc_err)?;
        }
        let bytes = std::mem::take(buf.0.borrow_mut().get_mut());
        Ok(bytes)
    }
}

/// One instance of the timeSeries geometry: a site at one position.
struct Instance {
    site: String,
    id: String,
    latitude: f64,
    longitude: f64,
    altitude: f64,
}

/// The instances of the rows (sorted by site, then position) and each row's instance.
/// A site whose rows all share one position is one instance named by the site; a site seen
/// at several positions gets one instance per position, named `site (lat, lon, alt m)`.
fn instances(rows: &[Row]) -> (Vec<Instance>, Vec<i32>) {
    let key = |r: &Row| {
        (
            r.site.to_string(),
            r.obs.latitude_deg,
            r.obs.longitude_deg,
            r.obs.altitude_m,
        )
    };
    let cmp = |a: &(String, f64, f64, f64), b: &(String, f64, f64, f64)| {
        a.0.cmp(&b.0)
            .then(a.1.total_cmp(&b.1))
            .then(a.2.total_cmp(&b.2))
            .then(a.3.total_cmp(&b.3))
    };
    let mut keys: Vec<(String, f64, f64, f64)> = rows.iter().map(key).collect();
    keys.sort_by(cmp);
    keys.dedup_by(|a, b| cmp(&*a, &*b).is_eq());
    let list: Vec<Instance> = keys
        .iter()
        .map(|(site, lat, lon, alt)| {
            let several = keys.iter().filter(|k| k.0 == *site).count() > 1;
            Instance {
                site: site.clone(),
                id: if several {
                    format!("{site} ({lat}, {lon}, {alt} m)")
                } else {
                    site.clone()
                },
                latitude: *lat,
                longitude: *lon,
                altitude: *alt,
            }
        })
        .collect();
    let index = rows
        .iter()
        .map(|r| {
            let k = key(r);
            keys.binary_search_by(|x| cmp(x, &k)).unwrap_or(0) as i32
        })
        .collect();
    (list, index)
}

/// The station variables shared by both files: `station_id` (the timeseries_id), `site`,
/// `latitude`, `longitude`, `altitude`.
fn station_vars(b: &mut Builder, inst: &[Instance]) -> Result<(), ReportError> {
    b.dim("station", inst.len())?;
    let ids: Vec<Cow<str>> = inst.iter().map(|i| Cow::Borrowed(i.id.as_str())).collect();
    b.string_var(
        "station_id",
        "station",
        &ids,
        "site (and position) identifier",
    )?;
    b.text("station_id", "cf_role", "timeseries_id")?;
    let sites: Vec<Cow<str>> = inst
        .iter()
        .map(|i| Cow::Borrowed(i.site.as_str()))
        .collect();
    b.string_var("site", "station", &sites, "site name")?;
    for (name, std, units, long, values) in [
        (
            "latitude",
            "latitude",
            "degrees_north",
            "latitude of the site",
            inst.iter().map(|i| i.latitude).collect::<Vec<_>>(),
        ),
        (
            "longitude",
            "longitude",
            "degrees_east",
            "longitude of the site",
            inst.iter().map(|i| i.longitude).collect(),
        ),
        (
            "altitude",
            "altitude",
            "m",
            "altitude of the site above sea level",
            inst.iter().map(|i| i.altitude).collect(),
        ),
    ] {
        b.coord_var(name, &["station"], values)?;
        b.text(name, "standard_name", std)?;
        b.text(name, "long_name", long)?;
        b.text(name, "units", units)?;
    }
    b.text("altitude", "positive", "up")?;
    b.text("altitude", "axis", "Z")?;
    Ok(())
}

/// Global attributes shared by both files.
fn globals(
    b: &mut Builder,
    input: &ReportInput,
    meta: &SideMeta,
    what: &str,
) -> Result<(), ReportError> {
    let a = &input.about;
    b.global("Conventions", CF_CONVENTIONS)?;
    b.global("featureType", "timeSeries")?;
    b.global(
        "title",
        &format!("Aerosol direct radiative effect: {}{what}", a.job_name),
    )?;
    if let Some(inst) = meta.institution.as_deref().filter(|s| !s.trim().is_empty()) {
        b.global("institution", inst)?;
    }
    let s = input.settings;
    b.global(
        "source",
        &format!(
            "hazebook {}: clear-sky shortwave aerosol direct radiative effect, {} two-stream closure with the adding method, band set {}, computed from campaign observations",
            a.version,
            serde_name(&s.closure),
            serde_name(&s.band_set)
        ),
    )?;
    let settings = serde_json::to_string(s).unwrap_or_default();
    let files: Vec<String> = input
        .ingested
        .files
        .iter()
        .map(|f| format!("{} (sha256 {})", f.path, f.sha256))
        .collect();
    let created = a.created_utc.format("%Y-%m-%dT%H:%M:%SZ");
    b.global(
        "history",
        &format!(
            "{created} {}; hazebook {}; settings {settings}; inputs: {}",
            meta.command.as_deref().unwrap_or("hazebook"),
            a.version,
            files.join(", ")
        ),
    )?;
    b.global("hazebook_version", &a.version)?;
    b.global("hazebook_settings", &settings)?;
    b.global("input_files", &files.join("\n"))?;
    if let Some(p) = &a.period {
        b.global("period", p)?;
    }
    if !a.template_name.is_empty() {
        b.global("template", &a.template_name)?;
    }
    let refs: Vec<String> = crate::physics::references::METHODS
        .iter()
        .map(|r| r.citation.to_string())
        .collect();
    b.global("references", &refs.join("\n"))?;
    b.global(
        "comment",
        "Net flux is down minus up; DRE = net(with aerosol) - net(without aerosol); negative values cool. Instantaneous values are zero with the sun below the horizon (flag sun-below-horizon).",
    )?;
    Ok(())
}

/// The serde (job file) name of a setting: `delta-eddington`, `astm-g173`.
fn serde_name(v: &impl serde::Serialize) -> String {
    serde_json::to_string(v)
        .unwrap_or_default()
        .trim_matches('"')
        .to_string()
}

/// The `coordinates` attribute of an obs variable.
fn obs_coordinates(key: &str) -> String {
    let mut c = String::from("time latitude longitude altitude station_id");
    if key == "aod" {
        c.push_str(" aod_wavelength_nm");
    }
    if key.ends_with("_550") {
        c.push_str(" wavelength_550");
    }
    c
}

/// The observations file: CF-1.8 timeSeries, indexed ragged array (one `obs` per Results
/// row, `station_index` into the `station` dimension), every Results column as a variable
/// named by its key (latitude, longitude and altitude as the station coordinates; `flags` as
/// a CF flag variable), values at full precision, non-finite values as `_FillValue`.
///
/// Errors: [`ReportError::Input`] when there is no computed row (NetCDF-3 has no empty fixed
/// dimension) or the rows do not line up with the results.
pub fn netcdf_results(input: &ReportInput, meta: &SideMeta) -> Result<Vec<u8>, ReportError> {
    let rows = build_rows(input)?;
    if rows.is_empty() {
        return Err(ReportError::Input {
            message: "the NetCDF side output needs at least one computed row".into(),
        });
    }
    let (inst, index) = instances(&rows);
    let mut b = Builder::new();
    station_vars(&mut b, &inst)?;
    b.dim("obs", rows.len())?;
    b.i32_var("station_index", &["obs"], index)?;
    b.text(
        "station_index",
        "long_name",
        "index of the station of this observation",
    )?;
    b.text("station_index", "instance_dimension", "station")?;

    b.coord_var(
        "time",
        &["obs"],
        rows.iter()
            .map(|r| r.obs.time_utc.timestamp_millis() as f64 / 1000.0)
            .collect(),
    )?;
    b.text("time", "standard_name", "time")?;
    b.text("time", "long_name", "time of the observation (UTC)")?;
    b.text("time", "units", "seconds since 1970-01-01 00:00:00")?;
    b.text("time", "calendar", "standard")?;
    b.text("time", "axis", "T")?;

    b.ds.add_var_f64("wavelength_550", &[] as &[&str])
        .map_err(nc_err)?;
    b.data
        .push(("wavelength_550".into(), Data::F64(vec![550.0])));
    b.text("wavelength_550", "standard_name", "radiation_wavelength")?;
    b.text(
        "wavelength_550",
        "long_name",
        "wavelength of the 550 nm values",
    )?;
    b.text("wavelength_550", "units", "nm")?;

    let cols = frame::drop_empty_uncertainty(
        frame::available(frame::columns().iter().collect(), input.settings),
        &rows,
    );
    for c in cols {
        let key = c.key.as_str();
        match key {
            "site" | "time_utc" | "latitude_deg" | "longitude_deg" | "altitude_m" => continue,
            "flags" => {
                b.ds.add_var_i16("flags", &["obs"]).map_err(nc_err)?;
                b.data.push((
                    "flags".into(),
                    Data::I16(rows.iter().map(|r| flag_bits(&r.res.flags)).collect()),
                ));
                b.text("flags", "long_name", "computation flags")?;
                b.ds.add_var_attr_i16(
                    "flags",
                    "flag_masks",
                    (0..FLAG_MEANINGS.len()).map(|i| 1i16 << i).collect(),
                )
                .map_err(nc_err)?;
                b.ds.add_var_attr_i16(
                    "flags",
                    "valid_range",
                    vec![0, (1i16 << FLAG_MEANINGS.len()) - 1],
                )
                .map_err(nc_err)?;
                b.text("flags", "flag_meanings", &FLAG_MEANINGS.join(" "))?;
                b.text("flags", "coordinates", &obs_coordinates(key))?;
                continue;
            }
            _ => {}
        }
        match c.class {
            Class::Text => {
                let v: Vec<Cow<str>> = rows
                    .iter()
                    .map(|r| match c.value(r) {
                        Value::Text(s) => s,
                        _ => Cow::Borrowed(""),
                    })
                    .collect();
                b.string_var(key, "obs", &v, &long_name(c))?;
            }
            Class::Time => continue,
            Class::Count => {
                let v = rows
                    .iter()
                    .map(|r| {
                        let x = c.number(r);
                        if x.is_finite() { x as i32 } else { FILL_INT }
                    })
                    .collect();
                b.i32_var(key, &["obs"], v)?;
                b.ds.add_var_attr_i32(key, "_FillValue", vec![FILL_INT])
                    .map_err(nc_err)?;
                b.text(
                    key,
                    "long_name",
                    &format!("{} in the input sheet, as shown", c.header),
                )?;
            }
            _ => {
                b.f64_var(key, &["obs"], rows.iter().map(|r| c.number(r)).collect())?;
                b.text(key, "long_name", &long_name(c))?;
                if let Some(u) = udunits(c) {
                    b.text(key, "units", u)?;
                }
                if let Some(s) = standard_name(key) {
                    b.text(key, "standard_name", s)?;
                }
                b.text(key, "coordinates", &obs_coordinates(key))?;
            }
        }
    }
    globals(&mut b, input, meta, "")?;
    b.finish()
}

/// CF `cell_methods` of a statistic over the month, where CF has the method.
fn cell_method(stat: &str) -> Option<&'static str> {
    Some(match stat {
        "mean" => "time: mean",
        "sd" => "time: standard_deviation",
        "median" => "time: median",
        "min" => "time: minimum",
        "max" => "time: maximum",
        _ => return None,
    })
}

fn statistic_long_name(stat: &str) -> &'static str {
    match stat {
        "count" => "number of values",
        "mean" => "mean",
        "sd" => "sample standard deviation",
        "se" => "standard error of the mean",
        "ci95_low" => "lower end of the 95% Student-t confidence interval of the mean",
        "ci95_high" => "upper end of the 95% Student-t confidence interval of the mean",
        "median" => "median",
        "p5" => "5th percentile",
        "p25" => "25th percentile",
        "p75" => "75th percentile",
        "p95" => "95th percentile",
        "min" => "minimum",
        "max" => "maximum",
        _ => "",
    }
}

/// The summaries file: CF-1.8 timeSeries, orthogonal multidimensional array of station ×
/// month (`time` at the start of each month, with `time_bnds` to the start of the next), one
/// variable `<quantity>_<statistic>` per quantity and statistic (count, mean, SD, SE, 95 %
/// interval, median, P5–P95, min, max; [`super::stats::summarise`], with instantaneous values
/// left out while the sun is below the horizon, as on the summary sheets). A station without
/// rows in a month has the fill value (count 0).
///
/// Errors: as [`netcdf_results`].
pub fn netcdf_summary(input: &ReportInput, meta: &SideMeta) -> Result<Vec<u8>, ReportError> {
    let rows = build_rows(input)?;
    if rows.is_empty() {
        return Err(ReportError::Input {
            message: "the NetCDF side output needs at least one computed row".into(),
        });
    }
    let (inst, index) = instances(&rows);
    let month = |r: &Row| (r.obs.time_utc.year(), r.obs.time_utc.month());
    let mut months: Vec<(i32, u32)> = rows.iter().map(month).collect();
    months.sort_unstable();
    months.dedup();
    let start = |(y, m): (i32, u32)| {
        Utc.with_ymd_and_hms(y, m, 1, 0, 0, 0)
            .single()
            .map_or(f64::NAN, |t| t.timestamp() as f64)
    };
    let next = |(y, m): (i32, u32)| if m == 12 { (y + 1, 1) } else { (y, m + 1) };

    let mut b = Builder::new();
    station_vars(&mut b, &inst)?;
    b.dim("time", months.len())?;
    b.dim("nv", 2)?;
    b.coord_var(
        "time",
        &["time"],
        months.iter().map(|&m| start(m)).collect(),
    )?;
    b.text("time", "standard_name", "time")?;
    b.text("time", "long_name", "start of the month (UTC)")?;
    b.text("time", "units", "seconds since 1970-01-01 00:00:00")?;
    b.text("time", "calendar", "standard")?;
    b.text("time", "axis", "T")?;
    b.text("time", "bounds", "time_bnds")?;
    b.coord_var(
        "time_bnds",
        &["time", "nv"],
        months
            .iter()
            .flat_map(|&m| [start(m), start(next(m))])
            .collect(),
    )?;

    // Rows of each (station, month) cell.
    let n_t = months.len();
    let mut cells: Vec<Vec<usize>> = vec![Vec::new(); inst.len() * n_t];
    for (i, r) in rows.iter().enumerate() {
        let t = months.binary_search(&month(r)).unwrap_or(0);
        cells[index[i] as usize * n_t + t].push(i);
    }
    let quantities: Vec<&ColumnDef> = frame::available(
        super::DEFAULT_SUMMARY_QUANTITIES
            .iter()
            .filter_map(|q| frame::column(q))
            .collect(),
        input.settings,
    );
    let stats_names = super::template::STATISTICS;
    for q in quantities {
        let summaries: Vec<super::stats::Summary> = cells
            .iter()
            .map(|rs| {
                super::stats::summarise(rs.iter().map(|&i| super::xlsx::stat_value(q, &rows[i])))
            })
            .collect();
        for stat in stats_names {
            let name = format!("{}_{stat}", q.key);
            let long = format!(
                "{}: {} over the month",
                long_name(q),
                statistic_long_name(stat)
            );
            if *stat == "count" {
                b.i32_var(
                    &name,
                    &["station", "time"],
                    summaries.iter().map(|s| s.n as i32).collect(),
                )?;
                b.text(&name, "long_name", &long)?;
                // No standard name: the `number_of_observations` modifier is deprecated.
                b.text(&name, "units", "1")?;
            } else {
                b.f64_var(
                    &name,
                    &["station", "time"],
                    summaries
                        .iter()
                        .map(|s| s.get(stat).unwrap_or(f64::NAN))
                        .collect(),
                )?;
                b.text(&name, "long_name", &long)?;
                if let Some(u) = udunits(q) {
                    b.text(&name, "units", u)?;
                }
                let sn = standard_name(&q.key);
                match (*stat, sn) {
                    ("se", Some(sn)) => {
                        b.text(&name, "standard_name", &format!("{sn} standard_error"))?
                    }
                    (s, Some(sn)) if cell_method(s).is_some() => {
                        b.text(&name, "standard_name", sn)?
                    }
                    _ => {}
                }
                if let Some(m) = cell_method(stat) {
                    b.text(&name, "cell_methods", m)?;
                }
            }
            b.text(
                &name,
                "coordinates",
                "latitude longitude altitude station_id",
            )?;
        }
    }
    globals(&mut b, input, meta, " (site × month summaries)")?;
    b.finish()
}

/// The command line of this process as a shell would take it back (arguments with spaces or
/// shell characters in single quotes), for the NetCDF `history` attribute.
pub fn command_line() -> String {
    std::env::args()
        .enumerate()
        .map(|(i, a)| {
            let a = if i == 0 {
                Path::new(&a)
                    .file_name()
                    .map_or(a.clone(), |n| n.to_string_lossy().into_owned())
            } else {
                a
            };
            let plain = !a.is_empty()
                && a.chars()
                    .all(|c| c.is_ascii_alphanumeric() || "-_./=:,+@%".contains(c));
            if plain {
                a
            } else {
                format!("'{}'", a.replace('\'', r"'\''"))
            }
        })
        .collect::<Vec<_>>()
        .join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every flag a result can carry has its mask and meaning, in the order of the text names,
    /// so that the NetCDF `flags` decode to the csv/parquet `flags` text.
    #[test]
    fn every_flag_has_a_mask_and_meaning() {
        let all = Flags {
            sun_below_horizon: true,
            low_sun: true,
            ssa_extrapolated: true,
            asymmetry_extrapolated: true,
            polar_night: true,
            polar_day: true,
            ssa_one_wavelength: true,
            asymmetry_one_wavelength: true,
        };
        assert_eq!(all.names(), FLAG_MEANINGS.to_vec());
        assert_eq!(flag_bits(&all), (1i16 << FLAG_MEANINGS.len()) - 1);
        let one = Flags {
            asymmetry_one_wavelength: true,
            ..Flags::default()
        };
        assert_eq!(flag_bits(&one), 1 << 7);
    }
}
