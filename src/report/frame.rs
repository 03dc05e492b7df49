//! The Results table: one row per computed observation, built from the ingested rows and the
//! physics results. The same column definitions drive the Results sheets, the summaries and
//! the Parquet/CSV side output.

use std::borrow::Cow;
use std::sync::LazyLock;

use chrono::{DateTime, Datelike, Utc};

use crate::ingest::{RowOrigin, RowWarning};
use crate::physics::uncertainty::{Input, Quantity, RowUncertainty};
use crate::physics::{
    Effect, Fluxes, Observation, ObservationResult, Settings, SpectralValue, Surface,
};

/// Kind of a column's values; decides the cell type and number format.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Class {
    Text,
    /// UTC date and time (written as an Excel date serial).
    Time,
    /// Whole numbers (row numbers).
    Count,
    Dre,
    Flux,
    Aod,
    Ssa,
    Asymmetry,
    Efficiency,
    Heating,
    Angle,
    Coordinate,
    General,
    Fraction,
}

impl Class {
    /// True for classes written as numbers.
    pub fn is_numeric(self) -> bool {
        !matches!(self, Class::Text | Class::Time)
    }
}

/// One cell value of the Results table.
#[derive(Debug, Clone, PartialEq)]
pub enum Value<'a> {
    Num(f64),
    /// Milliseconds since the Unix epoch (UTC) of a time.
    Time(i64),
    Text(Cow<'a, str>),
    Empty,
}

/// One accepted row with its result.
#[derive(Debug, Clone, Copy)]
pub struct Row<'a> {
    pub origin: &'a RowOrigin,
    pub site: &'a str,
    pub obs: &'a Observation,
    pub res: &'a ObservationResult,
    pub warnings: &'a [RowWarning],
    /// Rank of the row's (site, local mean-solar date) among the site-days of the report, in
    /// (site, date) order; set by [`super::days::number_days`].
    pub day: u32,
}

#[derive(Debug, Clone, Copy)]
enum Source {
    Get(fn(&Row) -> Value<'static>),
    Text(for<'a> fn(&Row<'a>) -> Value<'a>),
    /// A field of the instantaneous (`false`) or daily (`true`) effect.
    Effect(bool, fn(&Effect) -> f64),
    /// A flux of the clean (`false`) or aerosol (`true`) column, instantaneous or daily.
    Flux(bool, bool, fn(&Fluxes) -> f64),
    /// A value of the row's propagated uncertainty (`fn(uncertainty, index)`).
    Uncertainty(fn(&RowUncertainty, usize) -> f64, usize),
    /// A two-stream error ([`crate::physics::SolverError`]).
    Error(fn(&Row) -> f64),
}

/// Definition of one Results column.
#[derive(Debug, Clone)]
pub struct ColumnDef {
    /// Stable machine name (also the Parquet/CSV column name).
    pub key: String,
    /// Header as shown.
    pub header: String,
    /// Unit as shown under the header.
    pub unit: &'static str,
    pub class: Class,
    /// Column group (`identity`, `inputs`, …).
    pub group: &'static str,
    /// Needs the 24-hour means.
    pub daily: bool,
    /// Instantaneous value that is only meaningful with the sun above the horizon.
    pub sunlit: bool,
    source: Source,
}

impl ColumnDef {
    /// The value of this column for one row.
    pub fn value<'a>(&self, row: &Row<'a>) -> Value<'a> {
        match self.source {
            Source::Get(f) => f(row),
            Source::Text(f) => f(row),
            Source::Effect(daily, f) => Value::Num(f(if daily {
                &row.res.daily
            } else {
                &row.res.instantaneous
            })),
            Source::Flux(daily, aerosol, f) => {
                let e = if daily {
                    &row.res.daily
                } else {
                    &row.res.instantaneous
                };
                Value::Num(f(if aerosol { &e.aerosol } else { &e.clean }))
            }
            Source::Uncertainty(f, i) => match &row.res.uncertainty {
                Some(u) => Value::Num(f(u, i)),
                None => Value::Empty,
            },
            Source::Error(f) => Value::Num(f(row)),
        }
    }

    /// The numeric value (NaN for text, empty and non-numeric cells).
    pub fn number(&self, row: &Row) -> f64 {
        match self.value(row) {
            Value::Num(x) => x,
            _ => f64::NAN,
        }
    }
}

/// Column groups that a template may name instead of single columns.
pub const COLUMN_GROUPS: &[&str] = &[
    "all",
    "identity",
    "inputs",
    "geometry",
    "instantaneous",
    "daily",
    "fluxes",
    "uncertainty",
    "solver_error",
    "status",
];

fn col(
    key: &str,
    header: &str,
    unit: &'static str,
    class: Class,
    group: &'static str,
    source: Source,
) -> ColumnDef {
    ColumnDef {
        key: key.into(),
        header: header.into(),
        unit,
        class,
        group,
        daily: false,
        sunlit: false,
        source,
    }
}

/// Linear interpolation in ln λ, end values held outside the given wavelengths (the rule of
/// the aerosol spectral model, README "Methods"), evaluated at `nm`.
pub fn interpolate_ln_wavelength(values: &[SpectralValue], nm: f64) -> f64 {
    match values {
        [] => f64::NAN,
        [only] => only.value,
        _ => {
            let first = values[0];
            let last = values[values.len() - 1];
            if nm <= first.wavelength_nm {
                return first.value;
            }
            if nm >= last.wavelength_nm {
                return last.value;
            }
            for w in values.windows(2) {
                let (a, b) = (w[0], w[1]);
                if nm >= a.wavelength_nm && nm <= b.wavelength_nm {
                    let t = (nm.ln() - a.wavelength_nm.ln())
                        / (b.wavelength_nm.ln() - a.wavelength_nm.ln());
                    return a.value + t * (b.value - a.value);
                }
            }
            last.value
        }
    }
}

fn spectral_text(values: &[SpectralValue]) -> String {
    values
        .iter()
        .map(|v| format!("{}@{}nm", v.value, v.wavelength_nm))
        .collect::<Vec<_>>()
        .join("; ")
}

/// Key, header, unit, class and getter of an effect column.
type EffectField = (
    &'static str,
    &'static str,
    &'static str,
    Class,
    fn(&Effect) -> f64,
);
/// Key, header and getter of a flux column.
type FluxField = (&'static str, &'static str, fn(&Fluxes) -> f64);

fn effect_columns(daily: bool) -> Vec<ColumnDef> {
    let (suffix, label, group) = if daily {
        ("_24h", " (24-h mean)", "daily")
    } else {
        ("", " (instantaneous)", "instantaneous")
    };
    let fields: [EffectField; 6] = [
        ("dre_toa", "ΔF_TOA", "W m⁻²", Class::Dre, |e| e.dre_toa),
        ("dre_sfc", "ΔF_SFC", "W m⁻²", Class::Dre, |e| e.dre_sfc),
        ("dre_atm", "ΔF_ATM", "W m⁻²", Class::Dre, |e| e.dre_atm),
        (
            "efficiency_toa",
            "Efficiency TOA",
            "W m⁻² per AOD",
            Class::Efficiency,
            |e| e.efficiency_toa,
        ),
        (
            "efficiency_sfc",
            "Efficiency SFC",
            "W m⁻² per AOD",
            Class::Efficiency,
            |e| e.efficiency_sfc,
        ),
        (
            "heating_rate",
            "Heating rate",
            "K day⁻¹",
            Class::Heating,
            |e| e.heating_rate_k_day,
        ),
    ];
    fields
        .into_iter()
        .map(|(key, header, unit, class, f)| ColumnDef {
            daily,
            sunlit: !daily,
            ..col(
                &format!("{key}{suffix}"),
                &format!("{header}{label}"),
                unit,
                class,
                group,
                Source::Effect(daily, f),
            )
        })
        .collect()
}

fn flux_columns(daily: bool) -> Vec<ColumnDef> {
    let fields: [FluxField; 7] = [
        ("toa_down", "TOA down", |f| f.toa_down),
        ("toa_up", "TOA up", |f| f.toa_up),
        ("toa_net", "TOA net", |f| f.toa_net),
        ("sfc_down_direct", "SFC down direct", |f| f.sfc_down_direct),
        ("sfc_down_diffuse", "SFC down diffuse", |f| {
            f.sfc_down_diffuse
        }),
        ("sfc_up", "SFC up", |f| f.sfc_up),
        ("sfc_net", "SFC net", |f| f.sfc_net),
    ];
    let mut out = Vec::new();
    for aerosol in [true, false] {
        for (key, header, f) in fields {
            let (ks, hs) = if aerosol {
                ("aerosol", "with aerosol")
            } else {
                ("clean", "no aerosol")
            };
            let (kd, hd) = if daily {
                ("_24h", ", 24-h mean")
            } else {
                ("", "")
            };
            out.push(ColumnDef {
                daily,
                sunlit: !daily,
                ..col(
                    &format!("{key}_{ks}{kd}"),
                    &format!("{header}, {hs}{hd}"),
                    "W m⁻²",
                    Class::Flux,
                    "fluxes",
                    Source::Flux(daily, aerosol, f),
                )
            });
        }
    }
    out
}

/// ΔF / (AOD(550) · incident TOA flux), both 24-hour means [per unit AOD, as a fraction of
/// the incident flux]: a forcing efficiency with the day's insolation divided out, so that it
/// can be compared between seasons and latitudes (common practice).
fn normalised_efficiency_columns() -> Vec<ColumnDef> {
    fn norm(dre: f64, r: &Row) -> Value<'static> {
        let incident = r.res.daily.clean.toa_down;
        let aod = r.res.aod_550;
        if incident > 0.0 && aod > 0.0 {
            Value::Num(dre / (incident * aod))
        } else {
            Value::Empty
        }
    }
    [
        (
            "norm_efficiency_toa_24h",
            "Normalised efficiency TOA (24-h mean)",
            Source::Get(|r| norm(r.res.daily.dre_toa, r)),
        ),
        (
            "norm_efficiency_sfc_24h",
            "Normalised efficiency SFC (24-h mean)",
            Source::Get(|r| norm(r.res.daily.dre_sfc, r)),
        ),
    ]
    .into_iter()
    .map(|(key, header, source)| ColumnDef {
        daily: true,
        ..col(
            key,
            header,
            "per AOD, fraction of incident TOA flux",
            Class::Fraction,
            "daily",
            source,
        )
    })
    .collect()
}

/// Uncertainty columns (group `uncertainty`): the total 1σ of each propagated quantity
/// (`<key>_unc`) and the sensitivities of the 24-hour TOA and SFC DRE to each input, per the
/// step researchers quote (`sens_toa_24h_<input>`, `sens_sfc_24h_<input>`). Shown only when
/// uncertainties were propagated (see [`drop_empty_uncertainty`]).
fn uncertainty_columns(existing: &[ColumnDef]) -> Vec<ColumnDef> {
    let mut out = Vec::new();
    for (k, q) in Quantity::ALL.into_iter().enumerate() {
        let Some(base) = existing.iter().find(|c| c.key == q.key()) else {
            continue;
        };
        let daily = base.daily;
        out.push(ColumnDef {
            daily,
            sunlit: base.sunlit,
            ..col(
                &format!("{}_unc", q.key()),
                &format!("σ {}", base.header),
                base.unit,
                base.class,
                "uncertainty",
                Source::Uncertainty(|u, k| u.random[k].hypot(u.systematic[k]), k),
            )
        });
    }
    for (level, label, f) in [
        (
            "toa",
            "ΔF_TOA (24-h)",
            (|u: &RowUncertainty, i: usize| u.sensitivity_toa_24h[i] * Input::ALL[i].quote_step().0)
                as fn(&RowUncertainty, usize) -> f64,
        ),
        (
            "sfc",
            "ΔF_SFC (24-h)",
            (|u: &RowUncertainty, i: usize| u.sensitivity_sfc_24h[i] * Input::ALL[i].quote_step().0)
                as fn(&RowUncertainty, usize) -> f64,
        ),
    ] {
        for (i, input) in Input::ALL.into_iter().enumerate() {
            out.push(ColumnDef {
                daily: true,
                ..col(
                    &format!("sens_{level}_24h_{}", input.key()),
                    &format!("Sensitivity of {label} to {}", input.label()),
                    input.quote_step().1,
                    Class::Dre,
                    "uncertainty",
                    Source::Uncertainty(f, i),
                )
            });
        }
    }
    out
}

/// Drop the uncertainty columns that hold no finite value in `rows` (no uncertainty
/// propagated, or an input not declared).
pub fn drop_empty_uncertainty<'c>(cols: Vec<&'c ColumnDef>, rows: &[Row]) -> Vec<&'c ColumnDef> {
    cols.into_iter()
        .filter(|c| c.group != "uncertainty" || rows.iter().any(|r| c.number(r).is_finite()))
        .collect()
}

/// The two-stream's error of each DRE (two-stream minus discrete ordinates), computed only
/// with `[solver] error_estimate = true`.
fn solver_error_columns() -> Vec<ColumnDef> {
    type Field = (&'static str, &'static str, bool, fn(&Row) -> f64);
    let fields: [Field; 6] = [
        (
            "dre_toa_error",
            "ΔF_TOA two-stream error (instantaneous)",
            false,
            |r| r.res.solver_error.dre_toa,
        ),
        (
            "dre_sfc_error",
            "ΔF_SFC two-stream error (instantaneous)",
            false,
            |r| r.res.solver_error.dre_sfc,
        ),
        (
            "dre_atm_error",
            "ΔF_ATM two-stream error (instantaneous)",
            false,
            |r| r.res.solver_error.dre_atm,
        ),
        (
            "dre_toa_error_24h",
            "ΔF_TOA two-stream error (24-h mean)",
            true,
            |r| r.res.solver_error.dre_toa_24h,
        ),
        (
            "dre_sfc_error_24h",
            "ΔF_SFC two-stream error (24-h mean)",
            true,
            |r| r.res.solver_error.dre_sfc_24h,
        ),
        (
            "dre_atm_error_24h",
            "ΔF_ATM two-stream error (24-h mean)",
            true,
            |r| r.res.solver_error.dre_atm_24h,
        ),
    ];
    fields
        .into_iter()
        .map(|(key, header, daily, f)| ColumnDef {
            daily,
            sunlit: !daily,
            ..col(
                key,
                header,
                "W m⁻²",
                Class::Dre,
                "solver_error",
                Source::Error(f),
            )
        })
        .collect()
}

fn time_millis(t: &DateTime<Utc>) -> i64 {
    t.timestamp_millis()
}

static COLUMNS: LazyLock<Vec<ColumnDef>> = LazyLock::new(|| {
    use Class::*;
    let mut v = vec![
        col(
            "site",
            "Site",
            "",
            Text,
            "identity",
            Source::Text(|r| Value::Text(Cow::Borrowed(r.site))),
        ),
        col(
            "time_utc",
            "Time",
            "UTC",
            Time,
            "identity",
            Source::Get(|r| Value::Time(time_millis(&r.obs.time_utc))),
        ),
        col(
            "file",
            "File",
            "",
            Text,
            "identity",
            Source::Text(|r| Value::Text(Cow::Borrowed(r.origin.file.as_str()))),
        ),
        col(
            "sheet",
            "Sheet",
            "",
            Text,
            "identity",
            Source::Text(|r| Value::Text(Cow::Borrowed(r.origin.sheet.as_str()))),
        ),
        col(
            "row",
            "Row",
            "",
            Count,
            "identity",
            Source::Get(|r| Value::Num(f64::from(r.origin.row))),
        ),
        col(
            "latitude_deg",
            "Latitude",
            "deg N",
            Coordinate,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.latitude_deg)),
        ),
        col(
            "longitude_deg",
            "Longitude",
            "deg E",
            Coordinate,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.longitude_deg)),
        ),
        col(
            "altitude_m",
            "Altitude",
            "m",
            General,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.altitude_m)),
        ),
        col(
            "pressure_hpa",
            "Surface pressure",
            "hPa",
            General,
            "inputs",
            Source::Get(|r| Value::Num(r.res.pressure_hpa)),
        ),
        col(
            "aod",
            "AOD",
            "unitless",
            Aod,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.aod)),
        ),
        col(
            "aod_wavelength_nm",
            "AOD wavelength",
            "nm",
            General,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.aod_wavelength_nm)),
        ),
        col(
            "angstrom",
            "Ångström exponent",
            "unitless",
            Aod,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.angstrom)),
        ),
        col(
            "aod_550",
            "AOD(550 nm)",
            "unitless",
            Aod,
            "inputs",
            Source::Get(|r| Value::Num(r.res.aod_550)),
        ),
        col(
            "ssa_550",
            "SSA(550 nm)",
            "unitless",
            Ssa,
            "inputs",
            Source::Get(|r| Value::Num(interpolate_ln_wavelength(&r.obs.ssa, 550.0))),
        ),
        col(
            "asymmetry_550",
            "g(550 nm)",
            "unitless",
            Asymmetry,
            "inputs",
            Source::Get(|r| Value::Num(interpolate_ln_wavelength(&r.obs.asymmetry, 550.0))),
        ),
        col(
            "ssa_input",
            "SSA as given",
            "value@wavelength",
            Text,
            "inputs",
            Source::Get(|r| Value::Text(Cow::Owned(spectral_text(&r.obs.ssa)))),
        ),
        col(
            "asymmetry_input",
            "g as given",
            "value@wavelength",
            Text,
            "inputs",
            Source::Get(|r| Value::Text(Cow::Owned(spectral_text(&r.obs.asymmetry)))),
        ),
        col(
            "surface",
            "Surface",
            "",
            Text,
            "inputs",
            Source::Get(|r| {
                Value::Text(Cow::Borrowed(match r.obs.surface {
                    Surface::Lambertian { .. } => "Lambertian",
                    Surface::OceanTaylor1996 => "ocean (Taylor et al. 1996)",
                }))
            }),
        ),
        col(
            "albedo",
            "Surface albedo",
            "unitless",
            Fraction,
            "inputs",
            Source::Get(|r| match r.obs.surface {
                Surface::Lambertian { albedo } => Value::Num(albedo),
                Surface::OceanTaylor1996 => Value::Empty,
            }),
        ),
        col(
            "ozone_du",
            "Ozone",
            "DU",
            General,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.ozone_du)),
        ),
        col(
            "water_cm",
            "Precipitable water",
            "cm",
            General,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.water_cm)),
        ),
        col(
            "layer_base_km",
            "Aerosol layer base",
            "km above surface",
            General,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.layer.base_km)),
        ),
        col(
            "layer_top_km",
            "Aerosol layer top",
            "km above surface",
            General,
            "inputs",
            Source::Get(|r| Value::Num(r.obs.layer.top_km)),
        ),
        col(
            "solar_zenith_deg",
            "Solar zenith angle",
            "deg",
            Angle,
            "geometry",
            Source::Get(|r| Value::Num(r.res.solar_zenith_deg)),
        ),
        col(
            "daylight_hours",
            "Daylight",
            "h",
            Angle,
            "geometry",
            Source::Get(|r| Value::Num(r.res.daylight_hours)),
        ),
    ];
    v.extend(effect_columns(false));
    v.extend(effect_columns(true));
    v.extend(normalised_efficiency_columns());
    v.extend(flux_columns(false));
    v.extend(flux_columns(true));
    let unc = uncertainty_columns(&v);
    v.extend(unc);
    v.extend(solver_error_columns());
    v.push(col(
        "flags",
        "Flags",
        "",
        Text,
        "status",
        Source::Get(|r| Value::Text(Cow::Owned(r.res.flags.names().join(", ")))),
    ));
    v.push(col(
        "warnings",
        "Warnings",
        "",
        Text,
        "status",
        Source::Text(|r| {
            if r.warnings.is_empty() {
                Value::Empty
            } else {
                Value::Text(Cow::Owned(
                    r.warnings
                        .iter()
                        .map(|w| {
                            if w.cell.is_empty() {
                                w.message.clone()
                            } else {
                                format!("{}: {}", w.cell, w.message)
                            }
                        })
                        .collect::<Vec<_>>()
                        .join("; "),
                ))
            }
        }),
    ));
    v
});

/// Every Results column, in the order of the `all` selection.
pub fn columns() -> &'static [ColumnDef] {
    &COLUMNS
}

/// Keys of every Results column.
pub fn column_keys() -> Vec<&'static str> {
    COLUMNS.iter().map(|c| c.key.as_str()).collect()
}

/// Keys of the numeric Results columns (the quantities a summary can show).
pub fn numeric_keys() -> Vec<&'static str> {
    COLUMNS
        .iter()
        .filter(|c| c.class.is_numeric() && c.key != "row")
        .map(|c| c.key.as_str())
        .collect()
}

/// The column of a key.
pub fn column(key: &str) -> Option<&'static ColumnDef> {
    COLUMNS.iter().find(|c| c.key == key)
}

/// Resolve a template's column list (keys and groups) into columns, in the order given,
/// without repeats; `None` if a name is unknown.
pub fn select_columns(names: &[String]) -> Option<Vec<&'static ColumnDef>> {
    let mut out: Vec<&'static ColumnDef> = Vec::new();
    for name in names {
        let add: Vec<&'static ColumnDef> = if name == "all" {
            COLUMNS.iter().collect()
        } else if COLUMN_GROUPS.contains(&name.as_str()) {
            COLUMNS.iter().filter(|c| c.group == name).collect()
        } else {
            vec![column(name)?]
        };
        for c in add {
            if !out.iter().any(|o| o.key == c.key) {
                out.push(c);
            }
        }
    }
    Some(out)
}

/// Drop the columns that the settings did not compute (24-hour means when switched off, the
/// two-stream errors without `error_estimate`).
pub fn available<'c>(cols: Vec<&'c ColumnDef>, settings: &Settings) -> Vec<&'c ColumnDef> {
    cols.into_iter()
        .filter(|c| settings.daily_mean || !c.daily)
        .filter(|c| settings.error_estimate || c.group != "solver_error")
        .collect()
}

/// Value of a group key for one row, as text (for grouping) and as the cell shown.
pub fn group_value<'a>(key: &str, row: &Row<'a>) -> Value<'a> {
    let t = &row.obs.time_utc;
    match key {
        "site" => Value::Text(Cow::Borrowed(row.site)),
        "year" => Value::Num(f64::from(t.year())),
        "month" => Value::Num(f64::from(t.month())),
        "season" => Value::Text(Cow::Borrowed(season(t.month()))),
        "date" => Value::Text(Cow::Owned(t.format("%Y-%m-%d").to_string())),
        "day" => Value::Text(Cow::Owned(
            super::days::solar_date(row).format("%Y-%m-%d").to_string(),
        )),
        "file" => Value::Text(Cow::Borrowed(row.origin.file.as_str())),
        _ => Value::Empty,
    }
}

/// Header and unit of a group key.
pub fn group_header(key: &str) -> (&'static str, &'static str) {
    match key {
        "site" => ("Site", ""),
        "year" => ("Year", "UTC"),
        "month" => ("Month", "UTC, 1–12"),
        "season" => ("Season", "UTC months"),
        "date" => ("Date", "UTC"),
        "day" => ("Day", "local mean solar date"),
        "file" => ("File", ""),
        _ => ("", ""),
    }
}

/// Meteorological season of a calendar month (DJF, MAM, JJA, SON).
pub fn season(month: u32) -> &'static str {
    match month {
        12 | 1 | 2 => "DJF",
        3..=5 => "MAM",
        6..=8 => "JJA",
        _ => "SON",
    }
}

/// Sort rank of a season, so that DJF < MAM < JJA < SON.
pub fn season_rank(s: &str) -> u8 {
    match s {
        "DJF" => 0,
        "MAM" => 1,
        "JJA" => 2,
        "SON" => 3,
        _ => 4,
    }
}
