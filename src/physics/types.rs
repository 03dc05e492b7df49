//! The data that cross the boundary of the physics core: one observation in, one result out.

use chrono::{DateTime, Utc};

/// A value given at one wavelength.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SpectralValue {
    /// [nm]
    #[serde(with = "serde_float::float")]
    pub wavelength_nm: f64,
    /// [unitless]
    #[serde(with = "serde_float::float")]
    pub value: f64,
}

/// Lower boundary of the column.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Surface {
    /// Broadband Lambertian albedo [unitless, 0–1].
    Lambertian {
        #[serde(with = "serde_float::float")]
        albedo: f64,
    },
    /// Open ocean with the solar-zenith-dependent albedo of Taylor et al. (1996).
    OceanTaylor1996,
}

/// Vertical extent of the aerosol layer above the surface.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct AerosolLayer {
    /// Base height above the surface [km]; 0 for a boundary-layer aerosol.
    #[serde(with = "serde_float::float")]
    pub base_km: f64,
    /// Top height above the surface [km]; default 2.
    #[serde(with = "serde_float::float")]
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
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Observation {
    /// Measurement time, UTC.
    pub time_utc: DateTime<Utc>,
    /// [deg north, −90–90]
    #[serde(with = "serde_float::float")]
    pub latitude_deg: f64,
    /// [deg east]
    #[serde(with = "serde_float::float")]
    pub longitude_deg: f64,
    /// Station altitude above mean sea level [m].
    #[serde(with = "serde_float::float")]
    pub altitude_m: f64,
    /// Surface pressure [hPa]; `None` derives it from `altitude_m` (standard atmosphere).
    #[serde(with = "serde_float::opt_float")]
    pub pressure_hpa: Option<f64>,
    /// Aerosol optical depth at `aod_wavelength_nm` [unitless].
    #[serde(with = "serde_float::float")]
    pub aod: f64,
    /// Reference wavelength of `aod` [nm].
    #[serde(with = "serde_float::float")]
    pub aod_wavelength_nm: f64,
    /// Ångström exponent [unitless].
    #[serde(with = "serde_float::float")]
    pub angstrom: f64,
    /// Single-scattering albedo at one or more wavelengths, ascending wavelength, non-empty.
    pub ssa: Vec<SpectralValue>,
    /// Asymmetry factor at one or more wavelengths, ascending wavelength, non-empty.
    pub asymmetry: Vec<SpectralValue>,
    /// Surface reflection.
    pub surface: Surface,
    /// Total ozone column [DU].
    #[serde(with = "serde_float::float")]
    pub ozone_du: f64,
    /// Precipitable water [cm].
    #[serde(with = "serde_float::float")]
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

/// Flux solver of the main results.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, Hash, Default, serde::Serialize, serde::Deserialize,
)]
#[serde(rename_all = "kebab-case")]
pub enum Method {
    /// The two-stream [`Closure`] of the settings with the adding method.
    #[default]
    TwoStream,
    /// Discrete ordinates with delta-M (Stamnes et al. 1988) and
    /// [`Settings::streams`] streams ([`super::discrete_ordinates`]).
    DiscreteOrdinates,
}

impl Method {
    /// The name as job files and the command line spell it.
    pub fn name(self) -> &'static str {
        match self {
            Method::TwoStream => "two-stream",
            Method::DiscreteOrdinates => "discrete-ordinates",
        }
    }
}

/// Default number of streams of the discrete-ordinate solver: the fewest that meet the
/// accuracy goal of the accurate option (24-h ΔF median ≤ 1 %, P95 ≤ 3 % against 32 streams;
/// `accuracy_frontier_24h` in `tests/physics_discrete_ordinates.rs`). The README section
/// "Solvers" gives the frontier of error against cost.
pub const DEFAULT_STREAMS: usize = 6;

fn default_streams() -> usize {
    DEFAULT_STREAMS
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
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Settings {
    /// Total solar irradiance at 1 AU [W m⁻²]; default 1361 (Kopp & Lean 2011).
    #[serde(with = "serde_float::float")]
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
    #[serde(with = "serde_float::opt_float")]
    pub fixed_cos_zenith: Option<f64>,
    /// Scale the incident flux by the Earth–Sun distance of the day.
    pub earth_sun_distance: bool,
    /// Compute the 24-hour means.
    pub daily_mean: bool,
    /// Flux solver of the main results.
    #[serde(default)]
    pub method: Method,
    /// Streams of the discrete-ordinate solver (even, 2–64); default [`DEFAULT_STREAMS`].
    #[serde(default = "default_streams")]
    pub streams: usize,
    /// Also compute every row with the other solver (the two-stream if [`Self::method`]
    /// is the discrete-ordinate one, else discrete ordinates with [`Self::streams`]) and
    /// report the two-stream's error, [`ObservationResult::solver_error`].
    #[serde(default)]
    pub error_estimate: bool,
    /// Idealised: all molecular scattering in one layer of this optical depth above the
    /// aerosol layer (the same in every band), instead of Bodhaine's depth shared by
    /// pressure; the aerosol and lower layers then hold no molecules.
    #[serde(default, with = "serde_float::opt_float")]
    pub rayleigh_above_tau: Option<f64>,
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
            method: Method::TwoStream,
            streams: DEFAULT_STREAMS,
            error_estimate: false,
            rayleigh_above_tau: None,
        }
    }
}

/// Broadband fluxes of one column [W m⁻²]; net = downward − upward.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct Fluxes {
    #[serde(with = "serde_float::float")]
    pub toa_down: f64,
    #[serde(with = "serde_float::float")]
    pub toa_up: f64,
    #[serde(with = "serde_float::float")]
    pub toa_net: f64,
    /// Unscattered direct beam at the surface, exp(−τ/μ₀) with the unscaled τ.
    #[serde(with = "serde_float::float")]
    pub sfc_down_direct: f64,
    /// Diffuse downward at the surface, including delta-scaled forward scattering.
    #[serde(with = "serde_float::float")]
    pub sfc_down_diffuse: f64,
    #[serde(with = "serde_float::float")]
    pub sfc_up: f64,
    #[serde(with = "serde_float::float")]
    pub sfc_net: f64,
}

/// Aerosol direct radiative effect: the column with and without aerosol.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct Effect {
    /// Fluxes without aerosol.
    pub clean: Fluxes,
    /// Fluxes with aerosol.
    pub aerosol: Fluxes,
    /// ΔF_TOA = net_aerosol − net_clean at TOA [W m⁻²]; negative cools.
    #[serde(with = "serde_float::float")]
    pub dre_toa: f64,
    /// ΔF_SFC [W m⁻²].
    #[serde(with = "serde_float::float")]
    pub dre_sfc: f64,
    /// ΔF_ATM = ΔF_TOA − ΔF_SFC [W m⁻²].
    #[serde(with = "serde_float::float")]
    pub dre_atm: f64,
    /// ΔF_TOA / AOD(550 nm) [W m⁻² per unit AOD]; NaN when AOD(550) is 0.
    #[serde(with = "serde_float::float")]
    pub efficiency_toa: f64,
    /// ΔF_SFC / AOD(550 nm) [W m⁻² per unit AOD]; NaN when AOD(550) is 0.
    #[serde(with = "serde_float::float")]
    pub efficiency_sfc: f64,
    /// Heating rate of the aerosol layer, (g/c_p)·ΔF_ATM/Δp [K day⁻¹].
    #[serde(with = "serde_float::float")]
    pub heating_rate_k_day: f64,
}

/// What was extrapolated, clamped or unusual in one calculation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
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
    /// SSA given at one wavelength and held over the whole spectrum
    /// ([`super::spectral_flags::refine`]).
    #[serde(default)]
    pub ssa_one_wavelength: bool,
    /// g given at one wavelength and held over the whole spectrum.
    #[serde(default)]
    pub asymmetry_one_wavelength: bool,
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
        if self.ssa_one_wavelength {
            v.push("ssa-one-wavelength");
        }
        if self.asymmetry_one_wavelength {
            v.push("g-one-wavelength");
        }
        v
    }
}

/// Everything computed for one observation.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct ObservationResult {
    /// AOD at 550 nm from the Ångström law [unitless].
    #[serde(with = "serde_float::float")]
    pub aod_550: f64,
    /// Surface pressure used [hPa].
    #[serde(with = "serde_float::float")]
    pub pressure_hpa: f64,
    /// Solar zenith angle at the measurement time [deg] (or of the fixed cos(zenith)).
    #[serde(with = "serde_float::float")]
    pub solar_zenith_deg: f64,
    /// Instantaneous effect at the measurement time (zero fluxes when the sun is down).
    pub instantaneous: Effect,
    /// 24-hour mean effect (the row's properties held over the day).
    pub daily: Effect,
    /// Daylight length of the day [h].
    #[serde(with = "serde_float::float")]
    pub daylight_hours: f64,
    pub flags: Flags,
    /// Propagated input uncertainty and sensitivities, when uncertainties were declared
    /// ([`super::uncertainty::propagate`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub uncertainty: Option<super::uncertainty::RowUncertainty>,
    /// Two-stream minus accurate DRE, when [`Settings::error_estimate`] is set (NaN
    /// otherwise).
    #[serde(default)]
    pub solver_error: SolverError,
}

/// The two-stream's error in the DRE of one observation: two-stream minus discrete
/// ordinates [W m⁻²], instantaneous and 24-hour mean; NaN where not computed.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SolverError {
    #[serde(with = "serde_float::float")]
    pub dre_toa: f64,
    #[serde(with = "serde_float::float")]
    pub dre_sfc: f64,
    #[serde(with = "serde_float::float")]
    pub dre_atm: f64,
    #[serde(with = "serde_float::float")]
    pub dre_toa_24h: f64,
    #[serde(with = "serde_float::float")]
    pub dre_sfc_24h: f64,
    #[serde(with = "serde_float::float")]
    pub dre_atm_24h: f64,
}

impl Default for SolverError {
    fn default() -> Self {
        Self {
            dre_toa: f64::NAN,
            dre_sfc: f64::NAN,
            dre_atm: f64::NAN,
            dre_toa_24h: f64::NAN,
            dre_sfc_24h: f64::NAN,
            dre_atm_24h: f64::NAN,
        }
    }
}

/// Serde encodings of floating-point fields for files that must read back bit for bit (the
/// partial-results bundle of `hazebook run --partial`): JSON has no NaN, and a JSON number is
/// not read back exactly by every parser.
pub mod serde_float {
    /// `#[serde(with)]` for `f64`: the shortest decimal that reads back to the same double, as a
    /// string; `"NaN"`, `"inf"`, `"-inf"` for the non-finite values. Reads such strings, JSON
    /// numbers and `null` (as NaN).
    pub mod float {
        use serde::{Deserializer, Serializer, de};

        pub fn serialize<S: Serializer>(v: &f64, s: S) -> Result<S::Ok, S::Error> {
            // `{:?}` is the shortest representation that parses back to the same bits.
            s.collect_str(&format_args!("{v:?}"))
        }

        pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
            d.deserialize_any(FloatVisitor)
        }

        pub(super) struct FloatVisitor;

        impl<'de> de::Visitor<'de> for FloatVisitor {
            type Value = f64;

            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a number, a string holding a number, \"NaN\", \"inf\" or \"-inf\"")
            }

            fn visit_str<E: de::Error>(self, v: &str) -> Result<f64, E> {
                v.trim()
                    .parse::<f64>()
                    .map_err(|_| E::invalid_value(de::Unexpected::Str(v), &self))
            }

            fn visit_f64<E: de::Error>(self, v: f64) -> Result<f64, E> {
                Ok(v)
            }

            fn visit_i64<E: de::Error>(self, v: i64) -> Result<f64, E> {
                Ok(v as f64)
            }

            fn visit_u64<E: de::Error>(self, v: u64) -> Result<f64, E> {
                Ok(v as f64)
            }

            fn visit_unit<E: de::Error>(self) -> Result<f64, E> {
                Ok(f64::NAN)
            }

            fn visit_none<E: de::Error>(self) -> Result<f64, E> {
                Ok(f64::NAN)
            }
        }
    }

    /// `#[serde(with)]` for `Option<f64>`: `null` for `None`, else as [`float`].
    pub mod opt_float {
        use serde::{Deserializer, Serializer, de};

        pub fn serialize<S: Serializer>(v: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
            match v {
                Some(x) => s.collect_str(&format_args!("{x:?}")),
                None => s.serialize_none(),
            }
        }

        pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
            d.deserialize_option(OptVisitor)
        }

        struct OptVisitor;

        impl<'de> de::Visitor<'de> for OptVisitor {
            type Value = Option<f64>;

            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("null or a number as in `float`")
            }

            fn visit_none<E: de::Error>(self) -> Result<Self::Value, E> {
                Ok(None)
            }

            fn visit_unit<E: de::Error>(self) -> Result<Self::Value, E> {
                Ok(None)
            }

            fn visit_some<D: Deserializer<'de>>(self, d: D) -> Result<Self::Value, D::Error> {
                d.deserialize_any(super::float::FloatVisitor).map(Some)
            }
        }
    }
}
