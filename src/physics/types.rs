//! The data that cross the boundary of the physics core: one observation in, one result out.

use chrono::{DateTime, Utc};

/// A value given at one wavelength.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpectralValue {
    /// [nm]
    pub wavelength_nm: f64,
    /// [unitless]
    pub value: f64,
}

/// Lower boundary of the column.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Surface {
    /// Broadband Lambertian albedo [unitless, 0–1].
    Lambertian { albedo: f64 },
    /// Open ocean with the solar-zenith-dependent albedo of Taylor et al. (1996).
    OceanTaylor1996,
}

/// Vertical extent of the aerosol layer above the surface.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AerosolLayer {
    /// Base height above the surface [km]; 0 for a boundary-layer aerosol.
    pub base_km: f64,
    /// Top height above the surface [km]; default 2.
    pub top_km: f64,
}

impl Default for AerosolLayer {
    fn default() -> Self {
        Self {
            base_km: 0.0,
            top_km: 2.0,
        }
    }
}

/// One observation of column aerosol optical properties, with everything the radiative
/// transfer needs already resolved (row, site, job or built-in defaults).
#[derive(Debug, Clone, PartialEq)]
pub struct Observation {
    /// Measurement time, UTC.
    pub time_utc: DateTime<Utc>,
    /// [deg north, −90–90]
    pub latitude_deg: f64,
    /// [deg east]
    pub longitude_deg: f64,
    /// Station altitude above mean sea level [m].
    pub altitude_m: f64,
    /// Surface pressure [hPa]; `None` derives it from `altitude_m` (standard atmosphere).
    pub pressure_hpa: Option<f64>,
    /// Aerosol optical depth at `aod_wavelength_nm` [unitless].
    pub aod: f64,
    /// Reference wavelength of `aod` [nm].
    pub aod_wavelength_nm: f64,
    /// Ångström exponent [unitless].
    pub angstrom: f64,
    /// Single-scattering albedo at one or more wavelengths, ascending wavelength, non-empty.
    pub ssa: Vec<SpectralValue>,
    /// Asymmetry factor at one or more wavelengths, ascending wavelength, non-empty.
    pub asymmetry: Vec<SpectralValue>,
    /// Surface reflection.
    pub surface: Surface,
    /// Total ozone column [DU].
    pub ozone_du: f64,
    /// Precipitable water [cm].
    pub water_cm: f64,
    /// Vertical placement of the aerosol.
    pub layer: AerosolLayer,
}

/// Two-stream closure for a homogeneous layer.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, Hash, Default, serde::Serialize, serde::Deserialize,
)]
#[serde(rename_all = "kebab-case")]
pub enum Closure {
    /// Joseph, Wiscombe & Weinman (1976).
    #[default]
    DeltaEddington,
    /// Eddington (Meador & Weaver 1980, Table 1).
    Eddington,
    /// Quadrature (Meador & Weaver 1980, Table 1).
    Quadrature,
    /// Hemispheric mean (Meador & Weaver 1980, Table 1).
    HemisphericMean,
    /// Practical improved flux method (Zdunkowski et al. 1980).
    Pifm,
}

/// Spectral resolution of the calculation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum BandSet {
    /// The shortwave bands derived from the ASTM G173 extraterrestrial spectrum.
    #[default]
    AstmG173,
    /// Idealised: one band at the AOD reference wavelength carrying the whole solar constant.
    Single,
}

/// Solver and atmosphere configuration shared by every observation of a run.
#[derive(Debug, Clone, PartialEq)]
pub struct Settings {
    /// Total solar irradiance at 1 AU [W m⁻²]; default 1361 (Kopp & Lean 2011).
    pub solar_constant_wm2: f64,
    pub closure: Closure,
    pub band_set: BandSet,
    /// Gauss–Legendre nodes in hour angle from sunrise to sunset; default 12.
    pub diurnal_nodes: usize,
    /// Molecular scattering on (Bodhaine et al. 1999).
    pub rayleigh: bool,
    /// Ozone, water vapour and mixed-gas absorption on (Bird & Riordan 1986).
    pub gases: bool,
    /// Idealised: fixed cos(solar zenith) for the instantaneous value instead of time and place.
    pub fixed_cos_zenith: Option<f64>,
    /// Scale the incident flux by the Earth–Sun distance of the day.
    pub earth_sun_distance: bool,
    /// Compute the 24-hour means.
    pub daily_mean: bool,
}

impl Default for Settings {
    fn default() -> Self {
        Self {
            solar_constant_wm2: 1361.0,
            closure: Closure::DeltaEddington,
            band_set: BandSet::AstmG173,
            diurnal_nodes: 12,
            rayleigh: true,
            gases: true,
            fixed_cos_zenith: None,
            earth_sun_distance: true,
            daily_mean: true,
        }
    }
}

/// Broadband fluxes of one column [W m⁻²]; net = downward − upward.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Fluxes {
    pub toa_down: f64,
    pub toa_up: f64,
    pub toa_net: f64,
    /// Unscattered direct beam at the surface, exp(−τ/μ₀) with the unscaled τ.
    pub sfc_down_direct: f64,
    /// Diffuse downward at the surface, including delta-scaled forward scattering.
    pub sfc_down_diffuse: f64,
    pub sfc_up: f64,
    pub sfc_net: f64,
}

/// Aerosol direct radiative effect: the column with and without aerosol.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Effect {
    /// Fluxes without aerosol.
    pub clean: Fluxes,
    /// Fluxes with aerosol.
    pub aerosol: Fluxes,
    /// ΔF_TOA = net_aerosol − net_clean at TOA [W m⁻²]; negative cools.
    pub dre_toa: f64,
    /// ΔF_SFC [W m⁻²].
    pub dre_sfc: f64,
    /// ΔF_ATM = ΔF_TOA − ΔF_SFC [W m⁻²].
    pub dre_atm: f64,
    /// ΔF_TOA / AOD(550 nm) [W m⁻² per unit AOD]; NaN when AOD(550) is 0.
    pub efficiency_toa: f64,
    /// ΔF_SFC / AOD(550 nm) [W m⁻² per unit AOD]; NaN when AOD(550) is 0.
    pub efficiency_sfc: f64,
    /// Heating rate of the aerosol layer, (g/c_p)·ΔF_ATM/Δp [K day⁻¹].
    pub heating_rate_k_day: f64,
}

/// What was extrapolated, clamped or unusual in one calculation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Flags {
    /// The sun was below the horizon at the measurement time: instantaneous effect is zero.
    pub sun_below_horizon: bool,
    /// Solar zenith above 80° at the measurement time: larger two-stream errors.
    pub low_sun: bool,
    /// SSA held at its end value outside the measured wavelengths.
    pub ssa_extrapolated: bool,
    /// Asymmetry factor held at its end value outside the measured wavelengths.
    pub asymmetry_extrapolated: bool,
    /// No daylight on the day: the 24-hour mean is zero.
    pub polar_night: bool,
    /// No sunset on the day.
    pub polar_day: bool,
}

impl Flags {
    /// Short machine-readable names of the flags that are set, in a fixed order.
    pub fn names(&self) -> Vec<&'static str> {
        let mut v = Vec::new();
        if self.sun_below_horizon {
            v.push("sun-below-horizon");
        }
        if self.low_sun {
            v.push("low-sun");
        }
        if self.ssa_extrapolated {
            v.push("ssa-extrapolated");
        }
        if self.asymmetry_extrapolated {
            v.push("g-extrapolated");
        }
        if self.polar_night {
            v.push("polar-night");
        }
        if self.polar_day {
            v.push("polar-day");
        }
        v
    }
}

/// Everything computed for one observation.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ObservationResult {
    /// AOD at 550 nm from the Ångström law [unitless].
    pub aod_550: f64,
    /// Surface pressure used [hPa].
    pub pressure_hpa: f64,
    /// Solar zenith angle at the measurement time [deg] (or of the fixed cos(zenith)).
    pub solar_zenith_deg: f64,
    /// Instantaneous effect at the measurement time (zero fluxes when the sun is down).
    pub instantaneous: Effect,
    /// 24-hour mean effect (the row's properties held over the day).
    pub daily: Effect,
    /// Daylight length of the day [h].
    pub daylight_hours: f64,
    pub flags: Flags,
}
