//! Step 5 of reading a row: the observation. The resolved values become the physics
//! [`Observation`] and the accepted row with its warnings and assumptions.
//!
//! [`assemble_observation`] is the one place an accepted row is put together: values that
//! travel with each row (beside the observation) are added there.

use super::super::read::Accepted;
use super::super::types::{RowOrigin, RowWarning, SurfaceType};
use super::Assumed;
use super::defaults::{Aerosol, Atmosphere, Location};
use super::typed::RowValues;
use crate::physics::{AerosolLayer, Observation, SpectralValue, Surface};
use chrono::{DateTime, Utc};

/// Spectral points as the physics takes them: sorted by wavelength, one per wavelength.
pub(crate) fn spectral(mut pts: Vec<(f64, f64)>) -> Vec<SpectralValue> {
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    pts.dedup_by(|a, b| a.0 == b.0);
    pts.into_iter()
        .map(|(w, value)| SpectralValue {
            wavelength_nm: w,
            value,
        })
        .collect()
}

/// The row's resolved parts, ready to become an accepted row.
pub(crate) struct Resolved<'a> {
    pub values: RowValues,
    pub location: Location<'a>,
    pub atmosphere: Atmosphere,
    pub aerosol: Aerosol,
    pub time_utc: DateTime<Utc>,
    pub warnings: Vec<RowWarning>,
    pub assumptions: Vec<Assumed>,
}

/// Assemble the observation and the accepted row (its origin is set by the caller).
pub(crate) fn assemble_observation(
    layer_base_km: f64,
    default_albedo: f64,
    parts: Resolved<'_>,
) -> Accepted {
    let Resolved {
        values: v,
        location,
        atmosphere,
        aerosol,
        time_utc,
        warnings,
        assumptions,
    } = parts;
    let Location {
        site_name,
        site_rc,
        latitude,
        longitude,
        ..
    } = location;
    let Atmosphere {
        altitude_m,
        pressure_hpa,
        surface,
        albedo,
        ozone_du,
        water_cm,
        layer_top_km,
    } = atmosphere;
    let Aerosol {
        aod_measured: aod,
        aod_wavelength_nm,
        aod_ref,
        angstrom,
    } = aerosol;
    let observation = Observation {
        time_utc,
        latitude_deg: latitude,
        longitude_deg: longitude,
        altitude_m,
        pressure_hpa,
        aod: aod_ref,
        aod_wavelength_nm,
        angstrom,
        ssa: spectral(v.ssa),
        asymmetry: spectral(v.asymmetry),
        surface: match (surface, albedo) {
            (SurfaceType::Ocean, _) => Surface::OceanTaylor1996,
            (SurfaceType::Land, a) => Surface::Lambertian {
                albedo: a.unwrap_or(default_albedo),
            },
        },
        ozone_du,
        water_cm,
        layer: AerosolLayer {
            base_km: layer_base_km,
            top_km: layer_top_km,
        },
    };
    Accepted {
        origin: RowOrigin {
            file: String::new(),
            sheet: String::new(),
            row: 0,
        },
        site: site_name,
        site_key: site_rc,
        site_full_name: v.site_full_name,
        observation,
        warnings,
        assumptions,
        aod_measured: aod,
        albedo,
        surface,
    }
}
