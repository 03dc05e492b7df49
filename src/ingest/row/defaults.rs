//! Step 4 of reading a row: resolution of what the row does not give. The site and its
//! coordinates, the atmosphere and surface, the UTC offset and the Ångström exponent come
//! from the row, else the site table, else the job file's defaults or built-in ones; each
//! value taken from elsewhere is recorded as an assumption, and an empty cell that fell back
//! says which value it took.

use std::sync::Arc;

use chrono::{DateTime, TimeDelta, Utc};

use super::super::cells::format_number;
use super::super::detect::Kind;
use super::super::read::{
    DEFAULT_WAVELENGTH_NM, NO_TIME_OF_DAY, SheetContext, Val, source_label, surface_name,
};
use super::super::resolve::{SiteEntry, Sourced, fit_angstrom, job_default_source, site_key};
use super::super::types::{AtmosphereDefaults, RowWarning, SurfaceType, ValueSource};
use super::checks::Placed;
use super::typed::RowValues;
use super::{Assumed, MissingCell, Problem, first_col};

/// Where a row was measured: its site (as the site table spells it) and coordinates.
pub(crate) struct Location<'a> {
    pub site_name: String,
    pub entry: Option<&'a SiteEntry>,
    /// The site as compared for duplicates and named in assumptions.
    pub site_rc: Arc<str>,
    pub latitude: f64,
    /// [deg east], in −180 … 180.
    pub longitude: f64,
}

/// Resolve the row's site and coordinates (row, else site table); a row without either is
/// rejected.
pub(crate) fn resolve_location<'a>(
    ctx: &SheetContext<'a>,
    r: usize,
    v: &mut RowValues,
    assumptions: &mut Vec<Assumed>,
    warnings: &mut Vec<RowWarning>,
) -> Result<Location<'a>, Problem> {
    let grid = ctx.grid;
    // Site.
    let site_name = match v.site.take() {
        Some(s) => s,
        None if !ctx.layout.has(Kind::Site) && ctx.sites.entries.len() == 1 => {
            let n = ctx.sites.entries[0].name.clone();
            let src = ctx.sites.entries[0]
                .latitude_deg
                .map_or(ValueSource::JobFile, |s| s.source);
            assumptions.push(("site", Val::Owned(n.clone()), src));
            n
        }
        None => String::new(),
    };
    let entry = ctx.sites.get(&site_name);
    // The site table's spelling names the site (` beta` and `Beta` are one site).
    let site_name = match entry {
        Some(e) if e.name != site_name => e.name.clone(),
        _ => site_name,
    };
    let site_rc: Arc<str> = entry.map_or_else(
        || Arc::from(site_key(&site_name).as_ref()),
        |e| e.rc.clone(),
    );
    let latitude = from_site(
        assumptions,
        &site_rc,
        "latitude_deg",
        v.latitude,
        entry.and_then(|e| e.latitude_deg),
    );
    let longitude = from_site(
        assumptions,
        &site_rc,
        "longitude_deg",
        v.longitude,
        entry.and_then(|e| e.longitude_deg),
    );
    let (Some(latitude), Some(mut longitude)) = (latitude, longitude) else {
        let site_col = first_col(ctx, Kind::Site);
        let reason = if site_name.is_empty() {
            "no latitude/longitude: the row gives none and names no site of the site table"
                .to_string()
        } else if entry.is_none() {
            format!(
                "no latitude/longitude: the row gives none and site \"{}\" is not in the site table",
                super::super::cells::clip(&site_name)
            )
        } else {
            format!(
                "no latitude/longitude: the row gives none and the site table gives none for \"{}\"",
                super::super::cells::clip(&site_name)
            )
        };
        return Err(Problem {
            col: site_col
                .map(|m| m.col)
                .or(first_col(ctx, Kind::Latitude).map(|m| m.col)),
            column: if site_col.is_some() {
                "site".into()
            } else {
                "latitude".into()
            },
            value: super::super::cells::clip(&site_name).into_owned(),
            reason,
        });
    };
    if longitude >= 180.0 {
        longitude -= 360.0;
    }
    if let (Some(e), Some(_), Some(_)) = (entry, v.latitude, v.longitude)
        && !ctx.spec.moving_platform
        && let Some(w) = super::super::sites::coordinate_warning(
            ctx.spec,
            e,
            latitude,
            longitude,
            first_col(ctx, Kind::Latitude).map(|m| grid.a1(r, m.col)),
        )
    {
        warnings.push(w);
    }
    Ok(Location {
        site_name,
        entry,
        site_rc,
        latitude,
        longitude,
    })
}

/// A row value, else the site's (recorded as an assumption).
fn from_site(
    assumptions: &mut Vec<Assumed>,
    site: &Arc<str>,
    q: &'static str,
    row: Option<f64>,
    value: Option<Sourced<f64>>,
) -> Option<f64> {
    if row.is_some() {
        return row;
    }
    value.map(|s| {
        assumptions.push((q, Val::AtSite(s.value.to_bits(), site.clone()), s.source));
        s.value
    })
}

/// The row's atmosphere and surface, resolved.
pub(crate) struct Atmosphere {
    pub altitude_m: f64,
    /// `None`: from the altitude (standard atmosphere).
    pub pressure_hpa: Option<f64>,
    pub surface: SurfaceType,
    pub albedo: Option<f64>,
    pub ozone_du: f64,
    pub water_cm: f64,
    pub layer_top_km: f64,
}

/// The job file's source of a default (job file if set there, else built-in).
fn default_source(
    ctx: &SheetContext<'_>,
    key: &str,
    field: fn(&AtmosphereDefaults) -> f64,
) -> ValueSource {
    job_default_source(&ctx.spec.defaults_set, key, &ctx.spec.defaults, field)
}

/// Resolve altitude, pressure, surface and albedo, ozone, water and the aerosol layer top
/// (row, else site, else defaults); a layer top not above the base rejects the row.
pub(crate) fn resolve_atmosphere(
    ctx: &SheetContext<'_>,
    v: &RowValues,
    loc: &Location<'_>,
    assumptions: &mut Vec<Assumed>,
) -> Result<Atmosphere, Problem> {
    let d = &ctx.spec.defaults;
    let default_source =
        |key: &str, field: fn(&AtmosphereDefaults) -> f64| default_source(ctx, key, field);
    let (entry, site_rc) = (loc.entry, &loc.site_rc);
    let altitude_m = from_site(
        assumptions,
        site_rc,
        "altitude_m",
        v.altitude,
        entry.and_then(|e| e.altitude_m),
    )
    .unwrap_or_else(|| {
        assumptions.push((
            "altitude_m",
            Val::Num(d.altitude_m.to_bits()),
            default_source("altitude_m", |d| d.altitude_m),
        ));
        d.altitude_m
    });
    let pressure_hpa = from_site(
        assumptions,
        site_rc,
        "pressure_hpa",
        v.pressure,
        entry.and_then(|e| e.pressure_hpa),
    )
    .or_else(|| {
        if let Some(p) = d.pressure_hpa {
            assumptions.push(("pressure_hpa", Val::Num(p.to_bits()), ValueSource::JobFile));
            Some(p)
        } else {
            assumptions.push((
                "pressure_hpa",
                Val::Text("from altitude (standard atmosphere)"),
                ValueSource::BuiltIn,
            ));
            None
        }
    });
    // Surface: a row albedo is Lambertian; else the site's or job's surface type and albedo.
    let (surface, albedo) = if let Some(a) = v.albedo {
        (SurfaceType::Land, Some(a))
    } else {
        let surface_type = match (v.surface, entry.and_then(|e| e.surface)) {
            (Some(s), _) => s,
            (None, Some(s)) => {
                assumptions.push((
                    "surface",
                    Val::SurfaceAt(surface_name(s.value), site_rc.clone()),
                    s.source,
                ));
                s.value
            }
            (None, None) => {
                if d.surface == SurfaceType::Ocean {
                    assumptions.push((
                        "surface",
                        Val::Text("ocean"),
                        job_default_source(&ctx.spec.defaults_set, "surface", d, |d| d.surface),
                    ));
                }
                d.surface
            }
        };
        match surface_type {
            SurfaceType::Ocean => {
                // The ocean model wins over a site albedo: its albedo follows the sun.
                if let Some(a) = entry.and_then(|e| e.albedo) {
                    assumptions.push((
                        "albedo",
                        Val::Owned(format!(
                            "Taylor et al. (1996) ocean albedo, not the {} value {} (site {site_rc}): an ocean surface takes its albedo from the solar zenith angle; give surface = \"land\" to use a fixed albedo",
                            source_label(a.source),
                            format_number(a.value)
                        )),
                        a.source,
                    ));
                }
                (SurfaceType::Ocean, None)
            }
            SurfaceType::Land => match entry.and_then(|e| e.albedo) {
                Some(a) => {
                    assumptions.push((
                        "albedo",
                        Val::AtSite(a.value.to_bits(), site_rc.clone()),
                        a.source,
                    ));
                    (SurfaceType::Land, Some(a.value))
                }
                None => {
                    assumptions.push((
                        "albedo",
                        Val::Num(d.albedo.to_bits()),
                        default_source("albedo", |d| d.albedo),
                    ));
                    (SurfaceType::Land, Some(d.albedo))
                }
            },
        }
    };
    let mut or_default = |q: &'static str, row: Option<f64>, value: f64, src: ValueSource| {
        row.unwrap_or_else(|| {
            assumptions.push((q, Val::Num(value.to_bits()), src));
            value
        })
    };
    let ozone_du = or_default(
        "ozone_du",
        v.ozone,
        d.ozone_du,
        default_source("ozone_du", |d| d.ozone_du),
    );
    let water_cm = or_default(
        "water_cm",
        v.water,
        d.water_cm,
        default_source("water_cm", |d| d.water_cm),
    );
    let layer_top_km = or_default(
        "layer_top_km",
        v.layer_top,
        d.layer_top_km,
        default_source("layer_top_km", |d| d.layer_top_km),
    );
    if layer_top_km <= d.layer_base_km {
        let m = first_col(ctx, Kind::LayerTop);
        return Err(Problem {
            col: m.map(|m| m.col),
            column: "layer_top".into(),
            value: format_number(layer_top_km),
            reason: format!(
                "expected an aerosol layer top above the layer base ({} km), found {} km",
                format_number(d.layer_base_km),
                format_number(layer_top_km)
            ),
        });
    }
    Ok(Atmosphere {
        altitude_m,
        pressure_hpa,
        surface,
        albedo,
        ozone_du,
        water_cm,
        layer_top_km,
    })
}

/// The row's time in UTC: an offset in the cell, else the row's UTC offset column, else the
/// time header's, else the site's, else the job's; a row placed on its date alone is put at
/// local mean-solar noon (with a warning).
pub(crate) fn resolve_time_utc(
    ctx: &SheetContext<'_>,
    r: usize,
    v: &RowValues,
    loc: &Location<'_>,
    placed: &Placed,
    assumptions: &mut Vec<Assumed>,
    warnings: &mut Vec<RowWarning>,
) -> DateTime<Utc> {
    let d = &ctx.spec.defaults;
    let default_source =
        |key: &str, field: fn(&AtmosphereDefaults) -> f64| default_source(ctx, key, field);
    let (entry, site_rc, longitude) = (loc.entry, &loc.site_rc, loc.longitude);
    let (parsed, date_only) = (&placed.parsed, &placed.date_only);
    // Time to UTC.
    let stated = first_col(ctx, Kind::Time).and_then(|m| m.stated_offset_hours);
    let offset_hours = if let Some(min) = parsed.offset_minutes {
        min as f64 / 60.0
    } else if let Some(h) = v.utc_offset {
        h
    } else if let Some(h) = stated {
        h
    } else if let Some(s) = entry.and_then(|e| e.utc_offset_hours) {
        assumptions.push((
            "utc_offset_hours",
            Val::OffsetAt(s.value.to_bits(), site_rc.clone()),
            s.source,
        ));
        s.value
    } else {
        let src = default_source("utc_offset_hours", |d| d.utc_offset_hours);
        let val = if d.utc_offset_hours == 0.0 {
            Val::Text("+00:00 (times without an offset read as UTC)")
        } else {
            Val::Offset(d.utc_offset_hours.to_bits())
        };
        assumptions.push(("utc_offset_hours", val, src));
        d.utc_offset_hours
    };
    let time_utc: DateTime<Utc> = match &date_only {
        // Local mean-solar noon of the date: the 24-hour mean is that of the date.
        Some(_) => date_only_time(parsed.naive.date(), longitude),
        None => (parsed.naive
            - TimeDelta::milliseconds((offset_hours * 3_600_000.0).round() as i64))
        .and_utc(),
    };
    if let Some((col, found)) = &date_only {
        warnings.push(RowWarning {
            cell: ctx.grid.a1(r, *col),
            message: format!(
                "{NO_TIME_OF_DAY} (found {found}): placed on its date; the 24-hour values are computed, the instantaneous values are left empty"
            ),
        });
    }
    time_utc
}

/// The row's AOD: as measured (sorted by wavelength), and the value nearest 550 nm with its
/// wavelength, and the Ångström exponent (row, else fitted to the AOD, else the default).
pub(crate) struct Aerosol {
    pub aod_measured: Vec<(f64, f64)>,
    pub aod_wavelength_nm: f64,
    pub aod_ref: f64,
    pub angstrom: f64,
}

/// Resolve the row's AOD reference value and Ångström exponent.
pub(crate) fn resolve_aerosol(
    ctx: &SheetContext<'_>,
    r: usize,
    v: &mut RowValues,
    assumptions: &mut Vec<Assumed>,
    warnings: &mut Vec<RowWarning>,
) -> Aerosol {
    let grid = ctx.grid;
    let d = &ctx.spec.defaults;
    let default_source =
        |key: &str, field: fn(&AtmosphereDefaults) -> f64| default_source(ctx, key, field);
    // Aerosol spectral quantities.
    let mut aod = std::mem::take(&mut v.aod);
    aod.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (aod_wavelength_nm, aod_ref) = *aod
        .iter()
        .min_by(|a, b| (a.0 - 550.0).abs().total_cmp(&(b.0 - 550.0).abs()))
        .unwrap_or(&(DEFAULT_WAVELENGTH_NM, 0.0));
    if first_col(ctx, Kind::Aod).is_some_and(|m| m.wavelength_nm.is_none()) {
        assumptions.push((
            "aod_wavelength_nm",
            Val::Num(DEFAULT_WAVELENGTH_NM.to_bits()),
            ValueSource::BuiltIn,
        ));
    }
    let angstrom = if let Some(a) = v.angstrom {
        if let Some(m) = first_col(ctx, Kind::Angstrom)
            && let Some(w) = super::super::accounting::outside_angstrom_pair(m, aod_wavelength_nm)
        {
            warnings.push(RowWarning {
                cell: grid.a1(r, m.col),
                message: w,
            });
        }
        a
    } else if let Some(a) = fit_angstrom(&aod) {
        let wls: Vec<String> = aod
            .iter()
            .filter(|p| p.1 > 0.0)
            .map(|p| format_number(p.0))
            .collect();
        assumptions.push((
            "angstrom",
            Val::Owned(format!(
                "fitted to AOD at {} nm (least squares in ln AOD, ln λ)",
                wls.join(", ")
            )),
            ValueSource::Workbook,
        ));
        a
    } else {
        if aod.len() >= 2 {
            warnings.push(RowWarning {
                cell: String::new(),
                message: "fewer than two AOD values above zero: the Ångström exponent cannot be fitted; the default is used".into(),
            });
        }
        assumptions.push((
            "angstrom",
            Val::Num(d.angstrom.to_bits()),
            default_source("angstrom", |d| d.angstrom),
        ));
        d.angstrom
    };
    Aerosol {
        aod_measured: aod,
        aod_wavelength_nm,
        aod_ref,
        angstrom,
    }
}

/// One warning per empty or fill-value cell that fell back, saying which value was used.
pub(crate) fn fallback_warnings(
    ctx: &SheetContext<'_>,
    r: usize,
    missing_cells: &[MissingCell],
    assumptions: &[Assumed],
    warnings: &mut Vec<RowWarning>,
) {
    for (q, col, wl, found) in missing_cells {
        warnings.push(RowWarning {
            cell: ctx.grid.a1(r, *col),
            message: fallback_message(q, *wl, found, assumptions),
        });
    }
}

/// The warning of a row whose empty or fill-value cell took a value from elsewhere.
pub(crate) fn fallback_message(
    quantity: &str,
    wavelength_nm: f64,
    found: &str,
    assumptions: &[Assumed],
) -> String {
    let used = |key: &str, unit: &str| {
        assumptions
            .iter()
            .rev()
            .find(|a| a.0 == key)
            .map(|(_, val, src)| format!("{}{unit} ({}) is used", val.text(), source_label(*src)))
            .unwrap_or_else(|| "the value from elsewhere is used".into())
    };
    match quantity {
        "aod" | "ssa" | "asymmetry" => format!(
            "{quantity} at {} nm is {found}: it is left out and the other wavelengths are used ([input] fallback allows it)",
            format_number(wavelength_nm)
        ),
        "angstrom" => format!("angstrom is {found}: {}", used("angstrom", "")),
        "ozone" => format!("ozone is {found}: {}", used("ozone_du", " DU")),
        "water" => format!("water is {found}: {}", used("water_cm", " cm")),
        "pressure" => format!("pressure is {found}: {}", used("pressure_hpa", "")),
        "altitude" => format!("altitude is {found}: {}", used("altitude_m", " m")),
        "albedo" => format!("albedo is {found}: {}", used("albedo", "")),
        "layer_top" => format!("layer_top is {found}: {}", used("layer_top_km", " km")),
        other => format!("{other} is {found}: the value from elsewhere is used"),
    }
}
/// Local mean-solar noon of `date` at `longitude_deg` [deg east], in UTC: 12:00 − λ/15 h,
/// kept within the date (the day whose 24-hour mean the physics computes, as its local
/// solar date is UTC + λ/15 h).
pub(crate) fn date_only_time(date: chrono::NaiveDate, longitude_deg: f64) -> DateTime<Utc> {
    let shift_s = (longitude_deg.clamp(-179.99, 180.0) * 240.0).round() as i64;
    (date.and_time(chrono::NaiveTime::MIN) + TimeDelta::seconds(12 * 3600 - shift_s)).and_utc()
}
