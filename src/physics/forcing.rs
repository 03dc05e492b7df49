//! The per-observation driver: the clear-sky column with and without aerosol, at the
//! measurement time and as a 24-hour mean, and the aerosol direct radiative effect.
//!
//! **Column.** Layers, top first:
//!
//! 1. *Upper layer* — from the aerosol top to the top of the atmosphere: its pressure share of
//!    the Rayleigh optical depth and of the mixed-gas absorption, and all the ozone.
//! 2. *Aerosol layer* — from the aerosol base to its top: the aerosol, its pressure share of
//!    Rayleigh and mixed gases, and water vapour (all of it for a boundary-layer aerosol).
//! 3. *Lower layer* — only for an elevated aerosol (base > 0): the pressure share of Rayleigh
//!    and mixed gases below the base and the remaining water vapour.
//!
//! Rayleigh scattering and the absorption of uniformly mixed gases are proportional to the
//! mass of air, so they are split exactly by pressure thickness (p(z) of the U.S. Standard
//! Atmosphere 1976, [`super::rayleigh::pressure_from_altitude_hpa`] continued isothermally
//! above 11 km, as a ratio to the station's level so that a measured surface pressure is
//! honoured). For an elevated
//! aerosol, water vapour is split between the aerosol and the lower layer by pressure
//! thickness too (a simplification: the real profile is more bottom-heavy; all of it stays
//! below the aerosol top, README "Methods"). Gas optical depths are the band-effective
//! depths of [`super::gases`] for the path of the sun of each evaluation (Bird & Riordan
//! 1986: air mass m of Kasten & Young 1989 for water vapour and mixed gases, the ozone air
//! mass M_o for ozone), referred to the plane-parallel slant factor 1/μ0 of the solver, so
//! that the beam's e^(−τ/μ0) is the band-mean gas transmittance along the real path.
//! Within a layer, optical depths add, ω = (τ_R + ω_a τ_a)/τ and g = ω_a τ_a g_a/(τ_R + ω_a
//! τ_a) (Rayleigh g = 0).
//!
//! **Reuse.** Per evaluation (band, zenith) the upper and lower layers are solved once and
//! shared by the columns with and without aerosol; only the aerosol layer is solved twice.
//! Everything that does not depend on the sun (band irradiances, Rayleigh depths, aerosol
//! optics per band, the vertical split, the diffuse albedo) is prepared once per
//! observation; per sun position the gas depths of all bands come from one look-up of the
//! paths ([`super::gases::GasPaths`]), the layers of all bands — upper, aerosol layer with
//! and without aerosol, lower — are solved side by side in one batch
//! ([`super::two_stream::solve_batch`]) and added side by side
//! ([`super::column::add_slices`]). Work arrays are kept per thread and reused, so an
//! observation allocates nothing once the first one has run; the loops over bands are
//! compiled for AVX-512 or AVX2 where the CPU has them (the same bits: no operation is
//! fused or reordered).
//! The aerosol-free column goes through exactly the same arithmetic with τ_a = 0, so an AOD
//! of 0 gives a DRE of exactly 0.
//!
//! **Surface.** The beam is reflected with the albedo of [`super::surface::surface_albedo`] at
//! the beam's μ0; diffuse light with its cosine-weighted hemispheric mean 2∫α(μ)μ dμ
//! (8-point Gauss–Legendre; equal to the albedo for a Lambertian surface).
//!
//! **Idealised runs.** [`BandSet::Single`] is one band at the AOD reference wavelength with
//! the whole solar constant; its Rayleigh depth is Bodhaine's at that wavelength, and no gas
//! absorption is applied (the gas tables are band means of the G173 bands).
//!
//! **Means.** The instantaneous value is at the measurement time (SPA zenith; Earth–Sun
//! distance factor of the UTC day from Spencer's series, as for the 24-hour mean). The
//! 24-hour mean is Σ wᵢ F(μᵢ) over the Gauss–Legendre hour-angle nodes of
//! [`super::diurnal::day_geometry`] for the local mean-solar date at the station (UTC
//! shifted by longitude/15 h), with the row's properties held all day.
//!
//! **Derived quantities.** ΔF = net(with) − net(without) at TOA and surface (net = down − up),
//! ΔF_ATM = ΔF_TOA − ΔF_SFC; forcing efficiency ΔF/AOD(550 nm), NaN when AOD(550) is not
//! positive (no efficiency is defined; the report leaves the cell empty); heating rate of the
//! aerosol layer (g/c_p) ΔF_ATM/Δp × 86 400 s day⁻¹ [K day⁻¹], with g = 9.80665 m s⁻² (standard
//! gravity, CGPM 1901) and c_p = 1004 J kg⁻¹ K⁻¹ (dry air, common practice), Δp [Pa] the
//! pressure thickness of the aerosol layer.

use super::aerosol::{aerosol_optics, aod_at_wavelength};
use super::column::ColumnFluxes;
use super::column::{ColumnBatch, add_slices};
use super::discrete_ordinates::{LayerModes, Quadrature, ScatteringLayer, solve_modes_surface};
use super::discrete_ordinates_fixed::{FixedModes, FixedQuadrature, FixedWork, solve_fixed};
use super::diurnal::day_geometry;
use super::diurnal::spencer_distance_factor;
use super::gases::{GasDepths, GasPaths, ozone_airmass_bird_riordan1986};
use super::rayleigh::{
    STANDARD_PRESSURE_HPA, band_rayleigh_optical_depth, pressure_from_altitude_hpa,
    rayleigh_optical_depth_bodhaine1999,
};
use super::solar::{relative_airmass_kasten_young1989, solar_zenith_deg};
use super::spectrum::{astm_g173_bands, scaled_band_irradiance};
use super::surface::surface_albedo;
use super::two_stream::{LayerOptics, ResponseBatch, beam_transmission_batch, solve_batch};
use super::{
    BandSet, Effect, Flags, Fluxes, Method, Observation, ObservationResult, Settings, SolverError,
    Surface,
};
use chrono::Datelike;
use rayon::prelude::*;

/// Standard acceleration of gravity [m s⁻²] (CGPM 1901).
pub const GRAVITY: f64 = 9.80665;
/// Specific heat of dry air at constant pressure [J kg⁻¹ K⁻¹] (common practice).
pub const CP_DRY_AIR: f64 = 1004.0;
/// Solar zenith above which the two-stream error grows (flag `low_sun`) [deg].
pub const LOW_SUN_ZENITH_DEG: f64 = 80.0;

/// Work shared by every observation of a run: built once from the settings (its band set
/// and solar constant are the ones used by [`compute_observation`]).
#[derive(Debug, Clone)]
pub struct Context {
    /// The spectral bands this context was built for.
    band_set: BandSet,
    /// Band irradiance at 1 AU, scaled to the solar constant [W m⁻²]; one entry for
    /// [`BandSet::Single`].
    irradiance_wm2: Vec<f64>,
    /// Band-centre wavelengths [µm]; empty for [`BandSet::Single`] (it uses the AOD
    /// wavelength of each observation).
    center_um: Vec<f64>,
    /// Band Rayleigh optical depth at 1013.25 hPa [unitless] (τ_R ∝ p).
    rayleigh_standard: Vec<f64>,
}

impl Context {
    /// Band table, irradiances and Rayleigh depths for `settings`.
    pub fn new(settings: &Settings) -> Self {
        match settings.band_set {
            BandSet::AstmG173 => {
                let bands = astm_g173_bands();
                Self {
                    band_set: BandSet::AstmG173,
                    irradiance_wm2: scaled_band_irradiance(settings.solar_constant_wm2),
                    center_um: bands.iter().map(|b| b.center_um).collect(),
                    rayleigh_standard: (0..bands.len())
                        .map(|i| band_rayleigh_optical_depth(i, STANDARD_PRESSURE_HPA))
                        .collect(),
                }
            }
            BandSet::Single => Self {
                band_set: BandSet::Single,
                irradiance_wm2: vec![settings.solar_constant_wm2],
                center_um: Vec::new(),
                rayleigh_standard: Vec::new(),
            },
        }
    }

    /// Number of spectral bands.
    pub fn band_count(&self) -> usize {
        self.irradiance_wm2.len()
    }
}

/// One band of one observation: what does not depend on the sun.
#[derive(Debug, Clone, Copy)]
struct BandInput {
    /// Incident irradiance at 1 AU [W m⁻²].
    irradiance: f64,
    /// Column Rayleigh optical depth [unitless].
    tau_rayleigh: f64,
    /// Aerosol optical depth, SSA, g.
    aerosol: LayerOptics,
    /// Index into the gas tables; `None` for the single idealised band (no gas table).
    gas_band: Option<usize>,
}

/// Vertical split of one observation's column.
#[derive(Debug, Clone, Copy)]
struct Split {
    /// Pressure shares [unitless] of the upper, aerosol and lower layers (sum 1).
    upper: f64,
    aerosol: f64,
    lower: f64,
    /// Shares of the water vapour column in the aerosol and lower layers.
    water_aerosol: f64,
    water_lower: f64,
    /// Shares of the Rayleigh optical depth in the upper, aerosol and lower layers (the
    /// pressure shares, or 1, 0, 0 with [`Settings::rayleigh_above_tau`]).
    rayleigh_upper: f64,
    rayleigh_aerosol: f64,
    rayleigh_lower: f64,
    /// Whether a lower layer exists.
    elevated: bool,
    /// Pressure thickness of the aerosol layer [Pa].
    delta_p_pa: f64,
}

/// Everything of one observation that does not depend on the sun's position.
struct Prepared {
    bands: Vec<BandInput>,
    split: Split,
    surface: Surface,
    albedo_diffuse: f64,
    pressure_hpa: f64,
    ozone_du: f64,
    water_cm: f64,
    flags: Flags,
}

/// Sums of band fluxes [W m⁻²] for one column.
#[derive(Debug, Clone, Copy, Default)]
struct Sums {
    toa_down: f64,
    toa_up: f64,
    dir: f64,
    dif: f64,
    sfc_up: f64,
}

impl Sums {
    /// Adds one band's fluxes (fractions of `incident`).
    #[inline]
    fn add(&mut self, incident: f64, toa_up: f64, dir: f64, dif: f64, sfc_up: f64) {
        self.toa_down += incident;
        self.toa_up += incident * toa_up;
        self.dir += incident * dir;
        self.dif += incident * dif;
        self.sfc_up += incident * sfc_up;
    }

    fn fluxes(&self) -> Fluxes {
        Fluxes {
            toa_down: self.toa_down,
            toa_up: self.toa_up,
            toa_net: self.toa_down - self.toa_up,
            sfc_down_direct: self.dir,
            sfc_down_diffuse: self.dif,
            sfc_up: self.sfc_up,
            sfc_net: self.dir + self.dif - self.sfc_up,
        }
    }
}

/// Homogeneous mixture of Rayleigh scattering, gas absorption and aerosol in one layer.
///
/// τ = τ_R + τ_gas + τ_a, ω = (τ_R + ω_a τ_a)/τ, g = ω_a τ_a g_a / (τ_R + ω_a τ_a)
/// (optical depths of independent extinguishers add; the scattering-weighted mean of g,
/// with g = 0 for Rayleigh scattering; common practice). An empty layer is (0, 0, 0).
fn mix(tau_rayleigh: f64, tau_gas: f64, aerosol: LayerOptics) -> LayerOptics {
    let tau = tau_rayleigh + tau_gas + aerosol.tau;
    let aerosol_scattering = aerosol.ssa * aerosol.tau;
    let scattering = tau_rayleigh + aerosol_scattering;
    LayerOptics {
        tau,
        ssa: if tau > 0.0 { scattering / tau } else { 0.0 },
        g: if scattering > 0.0 {
            aerosol_scattering * aerosol.g / scattering
        } else {
            0.0
        },
    }
}

/// Diffuse albedo of the surface: 2∫₀¹ α(μ) μ dμ by 8-point Gauss–Legendre quadrature
/// (Abramowitz & Stegun 1964, Table 25.4); the albedo itself for a Lambertian surface.
fn diffuse_albedo(surface: &Surface) -> f64 {
    match *surface {
        Surface::Lambertian { albedo } => albedo,
        _ => {
            let (x, w) = super::diurnal::gauss_legendre(8);
            x.iter()
                .zip(&w)
                .map(|(xi, wi)| {
                    let mu = 0.5 * (1.0 + xi);
                    wi * mu * surface_albedo(surface, mu) // ∫₀¹ … dμ = ½ Σ wᵢ …, × 2
                })
                .sum()
        }
    }
}

/// Pressure of the U.S. Standard Atmosphere 1976 [hPa] at geometric altitude `altitude_m`
/// [m]: the tropospheric barometric formula of [`pressure_from_altitude_hpa`] up to the
/// tropopause (geopotential H = 11 km), then the standard's isothermal layer (T = 216.65 K,
/// H = 11–20 km), p = p₁₁ exp(−g₀M(H − 11 km)/(R*T)), with H = r₀z/(r₀ + z), r₀ = 6 356 766 m,
/// g₀ = 9.80665 m s⁻², M = 0.0289644 kg mol⁻¹, R* = 8.31432 J mol⁻¹ K⁻¹ (same source);
/// continued isothermally above 20 km (an approximation: the standard warms by 1 K km⁻¹
/// there; the share of the column above 20 km is about 5 %).
fn standard_pressure_hpa(altitude_m: f64) -> f64 {
    const TROPOPAUSE_M: f64 = 11_000.0;
    const T11: f64 = 216.65;
    const G0: f64 = 9.80665;
    const M: f64 = 0.0289644;
    const R: f64 = 8.31432;
    const R0: f64 = 6_356_766.0;
    let geopotential = R0 * altitude_m / (R0 + altitude_m);
    if geopotential <= TROPOPAUSE_M {
        pressure_from_altitude_hpa(altitude_m)
    } else {
        let tropopause_geometric = R0 * TROPOPAUSE_M / (R0 - TROPOPAUSE_M);
        pressure_from_altitude_hpa(tropopause_geometric)
            * (-G0 * M * (geopotential - TROPOPAUSE_M) / (R * T11)).exp()
    }
}

/// Pressure shares of the layers and the aerosol layer's thickness.
fn split(obs: &Observation, pressure_hpa: f64) -> Split {
    let base_km = if obs.layer.base_km.is_finite() {
        obs.layer.base_km.max(0.0)
    } else {
        0.0
    };
    let top_km = if obs.layer.top_km.is_finite() {
        obs.layer.top_km.max(base_km + 1e-3)
    } else {
        base_km + 2.0
    };
    let alt = if obs.altitude_m.is_finite() {
        obs.altitude_m
    } else {
        0.0
    };
    let p_station = standard_pressure_hpa(alt);
    let ratio = |z_km: f64| standard_pressure_hpa(alt + 1000.0 * z_km) / p_station;
    let (at_base, at_top) = (ratio(base_km), ratio(top_km));
    let elevated = base_km > 0.0;
    let below_top = 1.0 - at_top;
    let (water_aerosol, water_lower) = if elevated && below_top > 0.0 {
        ((at_base - at_top) / below_top, (1.0 - at_base) / below_top)
    } else {
        (1.0, 0.0)
    };
    Split {
        upper: at_top,
        aerosol: at_base - at_top,
        lower: 1.0 - at_base,
        water_aerosol,
        water_lower,
        rayleigh_upper: at_top,
        rayleigh_aerosol: at_base - at_top,
        rayleigh_lower: 1.0 - at_base,
        elevated,
        delta_p_pa: 100.0 * pressure_hpa * (at_base - at_top),
    }
}

/// `bands` is a buffer to reuse (its contents are replaced).
fn prepare(
    obs: &Observation,
    settings: &Settings,
    ctx: &Context,
    mut bands: Vec<BandInput>,
) -> Prepared {
    let pressure_hpa = match obs.pressure_hpa {
        Some(p) if p.is_finite() && p > 0.0 => p,
        _ => pressure_from_altitude_hpa(obs.altitude_m),
    };
    let mut flags = Flags::default();
    let has_optics = !obs.ssa.is_empty() && !obs.asymmetry.is_empty();
    let optics_at = |wavelength_um: f64, flags: &mut Flags| -> LayerOptics {
        if !has_optics {
            return LayerOptics {
                tau: f64::NAN,
                ssa: f64::NAN,
                g: f64::NAN,
            };
        }
        let a = aerosol_optics(obs, wavelength_um);
        flags.ssa_extrapolated |= a.ssa_extrapolated;
        flags.asymmetry_extrapolated |= a.g_extrapolated;
        LayerOptics {
            tau: a.tau,
            ssa: a.ssa,
            g: a.g,
        }
    };
    // The band layout is the context's (built from the same settings in normal use); zipped
    // rather than indexed so that a mismatched context cannot panic.
    bands.clear();
    match ctx.band_set {
        BandSet::AstmG173 => bands.extend(
            ctx.irradiance_wm2
                .iter()
                .zip(&ctx.rayleigh_standard)
                .zip(&ctx.center_um)
                .enumerate()
                .map(|(i, ((&irradiance, &rayleigh), &center_um))| BandInput {
                    irradiance,
                    tau_rayleigh: if settings.rayleigh {
                        rayleigh * pressure_hpa / STANDARD_PRESSURE_HPA
                    } else {
                        0.0
                    },
                    aerosol: optics_at(center_um, &mut flags),
                    gas_band: Some(i),
                }),
        ),
        BandSet::Single => {
            let wavelength_um = obs.aod_wavelength_nm / 1000.0;
            bands.extend(
                ctx.irradiance_wm2
                    .iter()
                    .take(1)
                    .map(|&irradiance| BandInput {
                        irradiance,
                        tau_rayleigh: if settings.rayleigh {
                            rayleigh_optical_depth_bodhaine1999(wavelength_um, pressure_hpa)
                        } else {
                            0.0
                        },
                        aerosol: optics_at(wavelength_um, &mut flags),
                        gas_band: None,
                    }),
            );
        }
    }
    let mut split = split(obs, pressure_hpa);
    if let Some(tau) = settings.rayleigh_above_tau {
        for b in &mut bands {
            b.tau_rayleigh = tau.max(0.0);
        }
        (
            split.rayleigh_upper,
            split.rayleigh_aerosol,
            split.rayleigh_lower,
        ) = (1.0, 0.0, 0.0);
    }
    Prepared {
        bands,
        split,
        surface: obs.surface,
        albedo_diffuse: diffuse_albedo(&obs.surface),
        pressure_hpa,
        ozone_du: obs.ozone_du,
        water_cm: obs.water_cm,
        flags,
    }
}

/// Per-band work arrays of one evaluation, reused across sun positions and observations.
#[derive(Default)]
struct Scratch {
    /// The layers of all bands at one sun position, solved in one batch: the upper layers,
    /// then the aerosol layers with aerosol, then without, then (elevated aerosol only) the
    /// lower layers, `n` bands each.
    layers: Vec<LayerOptics>,
    responses: ResponseBatch,
    /// Optical depths of the aerosol layers with aerosol, for their unscaled beam.
    tau_aerosol: Vec<f64>,
    direct_clean: Vec<f64>,
    direct_aerosol: Vec<f64>,
    clean: ColumnBatch,
    aerosol: ColumnBatch,
    /// Band inputs of the observation ([`Prepared::bands`], lent while it is computed).
    bands: Vec<BandInput>,
    /// Sun positions of the 24-hour mean.
    suns: Vec<(f64, f64)>,
    /// Gas depths of all bands at one sun position (ozone, water vapour, mixed gases).
    gas: [Vec<f64>; 3],
}

/// Layer of Rayleigh scattering and gas absorption only: [`mix`] with no aerosol, with the
/// same bits (its g is 0 and its ω is τ_R/τ).
#[inline]
fn mix_clear(tau_rayleigh: f64, tau_gas: f64) -> LayerOptics {
    // The `+ 0.0` are the aerosol terms of `mix` (they turn −0 into +0, nothing else).
    let tau = tau_rayleigh + tau_gas + 0.0;
    let scattering = tau_rayleigh + 0.0;
    LayerOptics {
        tau,
        ssa: if tau > 0.0 { scattering / tau } else { 0.0 },
        g: 0.0,
    }
}

/// Fluxes with and without aerosol for a set of sun positions, each (μ0, weight), weight the
/// incident-flux factor (fraction of the day × distance factor, or the distance factor).
///
/// For each sun position the layers of all bands — upper, aerosol layer with and without
/// aerosol, lower — are built first and then solved side by side in one batch
/// ([`solve_batch`]); the upper (and lower) layers are shared by both columns.
fn evaluate(
    prep: &Prepared,
    settings: &Settings,
    suns: &[(f64, f64)],
    w: &mut Scratch,
) -> (Fluxes, Fluxes) {
    if settings.method == Method::DiscreteOrdinates {
        return evaluate_discrete_ordinates(prep, settings, suns, w);
    }
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512f") {
            // SAFETY: the CPU supports AVX-512F (checked just above), the only requirement.
            // Same IEEE operations in the same order (no FMA contraction): the same bits.
            return unsafe { evaluate_avx512(prep, settings, suns, w) };
        }
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: as above, for AVX2.
            return unsafe { evaluate_avx2(prep, settings, suns, w) };
        }
    }
    evaluate_any(prep, settings, suns, w)
}

/// [`evaluate`] compiled for AVX-512 (its per-band loops vectorise eight wide).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
fn evaluate_avx512(
    prep: &Prepared,
    settings: &Settings,
    suns: &[(f64, f64)],
    w: &mut Scratch,
) -> (Fluxes, Fluxes) {
    evaluate_any(prep, settings, suns, w)
}

/// [`evaluate`] compiled for AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn evaluate_avx2(
    prep: &Prepared,
    settings: &Settings,
    suns: &[(f64, f64)],
    w: &mut Scratch,
) -> (Fluxes, Fluxes) {
    evaluate_any(prep, settings, suns, w)
}

#[inline(always)]
fn evaluate_any(
    prep: &Prepared,
    settings: &Settings,
    suns: &[(f64, f64)],
    w: &mut Scratch,
) -> (Fluxes, Fluxes) {
    let mut clean = Sums::default();
    let mut aerosol = Sums::default();
    let n = prep.bands.len();
    let closure = settings.closure;
    let s = prep.split;
    let stack = if s.elevated { 4 } else { 3 };
    for &(mu0, weight) in suns {
        if mu0.is_nan() || mu0 <= 0.0 {
            continue;
        }
        let (slant_scale, albedo_direct) = sun_gas_depths(prep, settings, mu0, &mut w.gas);
        // The layers without aerosol (upper, aerosol layer without it, lower) first, then the
        // aerosol layers with it, so that the solver meets long runs of layers of one kind.
        // Every entry is written below (the lower layers only exist for an elevated
        // aerosol), so the buffers are only resized, not cleared.
        w.layers.resize(stack * n, LayerOptics::default());
        w.tau_aerosol.resize(n, 0.0);
        {
            let (upper, rest) = w.layers.split_at_mut(n);
            let (without, rest) = rest.split_at_mut(n);
            let (lower, with) = rest.split_at_mut(rest.len() - n);
            let (go, gw, gm) = (&w.gas[0][..n], &w.gas[1][..n], &w.gas[2][..n]);
            let (upper, without, with) = (&mut upper[..n], &mut without[..n], &mut with[..n]);
            let tau_aerosol = &mut w.tau_aerosol[..n];
            for (i, band) in prep.bands.iter().enumerate().take(n) {
                let gas = GasDepths {
                    ozone: go[i] * slant_scale,
                    water: gw[i] * slant_scale,
                    mixed: gm[i] * slant_scale,
                };
                let tr = band.tau_rayleigh;
                upper[i] = mix_clear(tr * s.rayleigh_upper, gas.ozone + gas.mixed * s.upper);
                let gas_aerosol_layer = gas.water * s.water_aerosol + gas.mixed * s.aerosol;
                with[i] = mix(tr * s.rayleigh_aerosol, gas_aerosol_layer, band.aerosol);
                tau_aerosol[i] = with[i].tau;
                without[i] = mix_clear(tr * s.rayleigh_aerosol, gas_aerosol_layer);
                if let Some(l) = lower.get_mut(i) {
                    let gas_lower = gas.water * s.water_lower + gas.mixed * s.lower;
                    *l = mix_clear(tr * s.rayleigh_lower, gas_lower);
                }
            }
        }
        solve_batch(&w.layers, mu0, closure, &mut w.responses);
        let r = &w.responses;
        let upper_r = r.slices(0..n);
        let without_r = r.slices(n..2 * n);
        let with_r = r.slices((stack - 1) * n..stack * n);
        // Layers without aerosol have g = 0, so their delta-scaled beam transmission is the
        // unscaled one; only the aerosol layer needs e^(−τ/μ0) of its own.
        beam_transmission_batch(&w.tau_aerosol, mu0, &mut w.direct_aerosol);
        w.direct_clean.clear();
        w.direct_clean.extend_from_slice(without_r.tb);
        let (ad, af) = (albedo_direct, prep.albedo_diffuse);
        let direct_clean = &mut w.direct_clean[..n];
        let direct_aerosol = &mut w.direct_aerosol[..n];
        let upper_tb = &upper_r.tb[..n];
        if s.elevated {
            let lower_r = r.slices(2 * n..3 * n);
            let lower_tb = &lower_r.tb[..n];
            for i in 0..n {
                let above = upper_tb[i] * lower_tb[i];
                direct_clean[i] *= above;
                direct_aerosol[i] *= above;
            }
            let (u, l) = (upper_r, lower_r);
            add_slices([u, without_r, l], direct_clean, ad, af, &mut w.clean);
            add_slices([u, with_r, l], direct_aerosol, ad, af, &mut w.aerosol);
        } else {
            for i in 0..n {
                let above = upper_tb[i];
                direct_clean[i] *= above;
                direct_aerosol[i] *= above;
            }
            add_slices([upper_r, without_r], direct_clean, ad, af, &mut w.clean);
            add_slices([upper_r, with_r], direct_aerosol, ad, af, &mut w.aerosol);
        }
        let (c, a) = (&w.clean, &w.aerosol);
        let (c_up, c_dir, c_dif, c_sfc) = (
            &c.toa_up[..n],
            &c.sfc_down_direct[..n],
            &c.sfc_down_diffuse[..n],
            &c.sfc_up[..n],
        );
        let (a_up, a_dir, a_dif, a_sfc) = (
            &a.toa_up[..n],
            &a.sfc_down_direct[..n],
            &a.sfc_down_diffuse[..n],
            &a.sfc_up[..n],
        );
        for (i, band) in prep.bands.iter().enumerate().take(n) {
            let incident = band.irradiance * mu0 * weight;
            clean.add(incident, c_up[i], c_dir[i], c_dif[i], c_sfc[i]);
            aerosol.add(incident, a_up[i], a_dir[i], a_dif[i], a_sfc[i]);
        }
    }
    (clean.fluxes(), aerosol.fluxes())
}

/// Gas depths of every band at one sun position into `gas` (ozone, water vapour, mixed
/// gases; vertical, before the slant rescaling), and the slant factor m μ0 and the surface's
/// beam albedo at that sun.
///
/// Gas paths of Bird & Riordan (1986): air mass m (Kasten & Young) for water vapour and
/// mixed gases, M_o for ozone (passed as an equivalent ozone column at air mass m). The band
/// depths y(u)/m are rescaled by m μ0, so that the solver's beam term e^(−τ/μ0) is the
/// band-mean transmittance e^(−y(u)) along the real path.
#[inline]
fn sun_gas_depths(
    prep: &Prepared,
    settings: &Settings,
    mu0: f64,
    gas: &mut [Vec<f64>; 3],
) -> (f64, f64) {
    let n = prep.bands.len();
    let zenith_deg = mu0.min(1.0).acos().to_degrees();
    let airmass = relative_airmass_kasten_young1989(zenith_deg);
    let ozone_equivalent_du = prep.ozone_du * ozone_airmass_bird_riordan1986(zenith_deg) / airmass;
    let slant_scale = airmass * mu0;
    let albedo_direct = surface_albedo(&prep.surface, mu0);
    // The paths are the same in every band: located on the gas tables once.
    let paths = GasPaths::new(
        ozone_equivalent_du,
        prep.water_cm,
        prep.pressure_hpa,
        airmass,
    );
    // Vertical gas depths of every band before the slant rescaling: in table order (the
    // G173 set) all bands in one pass, otherwise band by band (none for the idealised
    // band or with gases off).
    let all_bands = settings.gases && {
        let [o, wv, m] = &mut *gas;
        paths.depths_all(o, wv, m);
        o.len() == n
            && prep
                .bands
                .iter()
                .enumerate()
                .all(|(i, b)| b.gas_band == Some(i))
    };
    if !all_bands {
        for g in gas.iter_mut() {
            g.clear();
            g.resize(n, 0.0);
        }
        for (i, band) in prep.bands.iter().enumerate() {
            if let Some(b) = band.gas_band
                && settings.gases
            {
                let d = paths.depths(b);
                (gas[0][i], gas[1][i], gas[2][i]) = (d.ozone, d.water, d.mixed);
            }
        }
    }
    (slant_scale, albedo_direct)
}

/// A layer of Rayleigh scattering, gas absorption and aerosol for the discrete-ordinate
/// solver: the optics of [`mix`], with the share of the scattering due to molecules kept
/// apart so that each keeps its own phase function.
fn mix_scattering(tau_rayleigh: f64, tau_gas: f64, aerosol: LayerOptics) -> ScatteringLayer {
    let m = mix(tau_rayleigh, tau_gas, aerosol);
    let aerosol_scattering = aerosol.ssa * aerosol.tau;
    let scattering = tau_rayleigh + aerosol_scattering;
    ScatteringLayer {
        tau: m.tau,
        ssa: m.ssa,
        rayleigh_share: if scattering > 0.0 {
            tau_rayleigh / scattering
        } else {
            1.0
        },
        aerosol_g: if aerosol.tau > 0.0 || aerosol.g.is_nan() {
            aerosol.g
        } else {
            0.0
        },
    }
}

/// The discrete-ordinate solver of one evaluation: the sun-independent solutions of a
/// layer and the column solve, on the fixed-size path
/// ([`super::discrete_ordinates_fixed`], N ≤ 16) or the general one.
trait OrdinateSolver {
    type Modes;
    /// Delta-M scaled homogeneous solutions of `layer`.
    fn modes(&self, layer: &ScatteringLayer) -> Self::Modes;
    /// Fluxes of `layers` (top first) over the surface, fractions of the incident flux;
    /// `column` (0 or 1) names the column, whose work arrays are kept for its next solve.
    fn solve(
        &mut self,
        column: usize,
        layers: &[&Self::Modes],
        mu0: f64,
        beam: f64,
        diffuse: f64,
    ) -> ColumnFluxes;
}

/// [`OrdinateSolver`] on the general (nalgebra, any N) path.
struct GeneralOrdinates(Quadrature);

impl OrdinateSolver for GeneralOrdinates {
    type Modes = LayerModes;
    fn modes(&self, layer: &ScatteringLayer) -> LayerModes {
        LayerModes::new(layer, &self.0, true)
    }
    fn solve(
        &mut self,
        _column: usize,
        layers: &[&LayerModes],
        mu0: f64,
        beam: f64,
        diffuse: f64,
    ) -> ColumnFluxes {
        solve_modes_surface(layers, &self.0, mu0, beam, diffuse)
    }
}

/// [`OrdinateSolver`] on the fixed-size path of F = 2H streams.
#[derive(Default)]
struct FixedOrdinates<const H: usize, const F: usize> {
    quad: FixedQuadrature<H, F>,
    /// Work arrays of the aerosol-free and the aerosol column.
    work: [FixedWork; 2],
}

impl<const H: usize, const F: usize> OrdinateSolver for FixedOrdinates<H, F> {
    type Modes = FixedModes<H, F>;
    fn modes(&self, layer: &ScatteringLayer) -> FixedModes<H, F> {
        FixedModes::new(layer, &self.quad, true)
    }
    fn solve(
        &mut self,
        column: usize,
        layers: &[&FixedModes<H, F>],
        mu0: f64,
        beam: f64,
        diffuse: f64,
    ) -> ColumnFluxes {
        let work = &mut self.work[column.min(1)];
        solve_fixed(layers, &self.quad, mu0, beam, diffuse, work)
    }
}

/// [`evaluate`] with the discrete-ordinate solver ([`super::discrete_ordinates`]) of
/// [`Settings::streams`] streams and delta-M: the same layers, gas paths and surface (the
/// beam reflected with the beam albedo, diffuse light with the diffuse albedo, both
/// isotropically), band by band.
fn evaluate_discrete_ordinates(
    prep: &Prepared,
    settings: &Settings,
    suns: &[(f64, f64)],
    w: &mut Scratch,
) -> (Fluxes, Fluxes) {
    fn fixed<const H: usize, const F: usize>() -> FixedOrdinates<H, F> {
        FixedOrdinates::default()
    }
    let (p, s, w) = (prep, settings, w);
    match settings.streams {
        2 => evaluate_ordinates(p, s, suns, w, fixed::<1, 2>()),
        4 => evaluate_ordinates(p, s, suns, w, fixed::<2, 4>()),
        6 => evaluate_ordinates(p, s, suns, w, fixed::<3, 6>()),
        8 => evaluate_ordinates(p, s, suns, w, fixed::<4, 8>()),
        10 => evaluate_ordinates(p, s, suns, w, fixed::<5, 10>()),
        12 => evaluate_ordinates(p, s, suns, w, fixed::<6, 12>()),
        14 => evaluate_ordinates(p, s, suns, w, fixed::<7, 14>()),
        16 => evaluate_ordinates(p, s, suns, w, fixed::<8, 16>()),
        n => match Quadrature::new(n) {
            Some(quad) => evaluate_ordinates(p, s, suns, w, GeneralOrdinates(quad)),
            None => {
                let nan = Fluxes {
                    toa_down: f64::NAN,
                    toa_up: f64::NAN,
                    toa_net: f64::NAN,
                    sfc_down_direct: f64::NAN,
                    sfc_down_diffuse: f64::NAN,
                    sfc_up: f64::NAN,
                    sfc_net: f64::NAN,
                };
                (nan, nan)
            }
        },
    }
}

/// The modes of `layer` from `slot` if it holds the same layer, else computed into it.
fn cached_modes<'a, S: OrdinateSolver>(
    solver: &S,
    slot: &'a mut Option<(ScatteringLayer, S::Modes)>,
    layer: ScatteringLayer,
) -> &'a S::Modes {
    if !matches!(slot, Some((l, _)) if *l == layer) {
        *slot = Some((layer, solver.modes(&layer)));
    }
    &slot.as_ref().expect("just set").1
}

/// [`evaluate_discrete_ordinates`] with one solver.
///
/// Band by band, and within a band sun by sun: a layer whose optics do not change with the
/// sun (no gas absorbs in it in that band) keeps its homogeneous solutions from one sun
/// position to the next; only the particular solution and the boundary-value problem are
/// solved again.
fn evaluate_ordinates<S: OrdinateSolver>(
    prep: &Prepared,
    settings: &Settings,
    suns: &[(f64, f64)],
    w: &mut Scratch,
    mut solver: S,
) -> (Fluxes, Fluxes) {
    let mut clean = Sums::default();
    let mut aerosol = Sums::default();
    let s = prep.split;
    let n = prep.bands.len();
    // Per lit sun position: (μ0, weight, slant factor, beam albedo), and the vertical gas
    // depths of all bands (ozone, water vapour, mixed; n each).
    let mut lit: Vec<(f64, f64, f64, f64)> = Vec::with_capacity(suns.len());
    let mut gas_depths: Vec<f64> = Vec::with_capacity(3 * n * suns.len());
    for &(mu0, weight) in suns {
        if mu0.is_nan() || mu0 <= 0.0 {
            continue;
        }
        let (slant_scale, albedo_direct) = sun_gas_depths(prep, settings, mu0, &mut w.gas);
        lit.push((mu0, weight, slant_scale, albedo_direct));
        for g in &w.gas {
            gas_depths.extend_from_slice(&g[..n]);
        }
    }
    for (i, band) in prep.bands.iter().enumerate() {
        let mut slots: [Option<(ScatteringLayer, S::Modes)>; 4] = [None, None, None, None];
        for (k, &(mu0, weight, slant_scale, albedo_direct)) in lit.iter().enumerate() {
            let depth = |g: usize| gas_depths[(3 * k + g) * n + i] * slant_scale;
            let gas = GasDepths {
                ozone: depth(0),
                water: depth(1),
                mixed: depth(2),
            };
            let tr = band.tau_rayleigh;
            let none = LayerOptics::default();
            let gas_aerosol_layer = gas.water * s.water_aerosol + gas.mixed * s.aerosol;
            let [upper_slot, with_slot, without_slot, lower_slot] = &mut slots;
            let upper = cached_modes(
                &solver,
                upper_slot,
                mix_scattering(tr * s.rayleigh_upper, gas.ozone + gas.mixed * s.upper, none),
            );
            let with = cached_modes(
                &solver,
                with_slot,
                mix_scattering(tr * s.rayleigh_aerosol, gas_aerosol_layer, band.aerosol),
            );
            let without = cached_modes(
                &solver,
                without_slot,
                mix_scattering(tr * s.rayleigh_aerosol, gas_aerosol_layer, none),
            );
            let (ad, af) = (albedo_direct, prep.albedo_diffuse);
            let (c, a) = if s.elevated {
                let gas_lower = gas.water * s.water_lower + gas.mixed * s.lower;
                let lower = cached_modes(
                    &solver,
                    lower_slot,
                    mix_scattering(tr * s.rayleigh_lower, gas_lower, none),
                );
                (
                    solver.solve(0, &[upper, without, lower], mu0, ad, af),
                    solver.solve(1, &[upper, with, lower], mu0, ad, af),
                )
            } else {
                (
                    solver.solve(0, &[upper, without], mu0, ad, af),
                    solver.solve(1, &[upper, with], mu0, ad, af),
                )
            };
            let incident = band.irradiance * mu0 * weight;
            clean.add(
                incident,
                c.toa_up,
                c.sfc_down_direct,
                c.sfc_down_diffuse,
                c.sfc_up,
            );
            aerosol.add(
                incident,
                a.toa_up,
                a.sfc_down_direct,
                a.sfc_down_diffuse,
                a.sfc_up,
            );
        }
    }
    (clean.fluxes(), aerosol.fluxes())
}

/// ΔF and the quantities derived from it.
fn effect(clean: Fluxes, aerosol: Fluxes, aod_550: f64, delta_p_pa: f64) -> Effect {
    let dre_toa = aerosol.toa_net - clean.toa_net;
    let dre_sfc = aerosol.sfc_net - clean.sfc_net;
    let dre_atm = dre_toa - dre_sfc;
    let per_aod = |x: f64| {
        if aod_550 > 0.0 && aod_550.is_finite() {
            x / aod_550
        } else {
            f64::NAN
        }
    };
    Effect {
        clean,
        aerosol,
        dre_toa,
        dre_sfc,
        dre_atm,
        efficiency_toa: per_aod(dre_toa),
        efficiency_sfc: per_aod(dre_sfc),
        heating_rate_k_day: heating_rate_k_day(dre_atm, delta_p_pa),
    }
}

/// Heating rate of a layer [K day⁻¹] from the flux it absorbs `absorbed_wm2` [W m⁻²] and its
/// pressure thickness `delta_p_pa` [Pa]: dT/dt = (g/c_p) ΔF/Δp (the first law for a layer of
/// mass Δp/g per unit area; e.g. Liou 2002, § 3.4, equation number not checked), × 86 400 s.
/// NaN for a non-positive thickness.
pub fn heating_rate_k_day(absorbed_wm2: f64, delta_p_pa: f64) -> f64 {
    if delta_p_pa > 0.0 {
        GRAVITY / CP_DRY_AIR * absorbed_wm2 / delta_p_pa * 86_400.0
    } else {
        f64::NAN
    }
}

/// Aerosol direct radiative effect of one observation, at the measurement time and as a
/// 24-hour mean (see the module documentation for the column, the means and the units).
///
/// Never panics; finite inputs in their physical ranges give finite outputs (the
/// efficiencies are NaN when AOD(550) is 0 and `daylight_hours` when the latitude is not
/// finite).
pub fn compute_observation(
    obs: &Observation,
    settings: &Settings,
    ctx: &Context,
) -> ObservationResult {
    thread_local! {
        static SCRATCH: std::cell::RefCell<Scratch> = std::cell::RefCell::new(Scratch::default());
    }
    SCRATCH.with(|cell| match cell.try_borrow_mut() {
        Ok(mut scratch) => compute_with(obs, settings, ctx, &mut scratch),
        Err(_) => compute_with(obs, settings, ctx, &mut Scratch::default()),
    })
}

/// [`compute_observation`] with work arrays that the caller reuses across observations.
fn compute_with(
    obs: &Observation,
    settings: &Settings,
    ctx: &Context,
    scratch: &mut Scratch,
) -> ObservationResult {
    let prep = prepare(obs, settings, ctx, std::mem::take(&mut scratch.bands));
    let mut flags = prep.flags;
    let aod_550 = aod_at_wavelength(obs.aod, obs.aod_wavelength_nm, obs.angstrom, 550.0);
    let dp = prep.split.delta_p_pa;

    // Instantaneous.
    let (mu0, zenith_deg) = match settings.fixed_cos_zenith {
        Some(mu) => (mu, mu.clamp(-1.0, 1.0).acos().to_degrees()),
        None => {
            let z = solar_zenith_deg(
                obs.time_utc,
                obs.latitude_deg,
                obs.longitude_deg,
                obs.altitude_m,
            );
            (z.to_radians().cos(), z)
        }
    };
    // A NaN zenith (a time or place the solar position cannot be computed for) is no
    // night: the sun cannot be placed, the instantaneous effect is NaN (not zero) and the
    // row is not flagged as below the horizon; the caller rejects such a row.
    let placed = zenith_deg.is_finite() && mu0.is_finite();
    let sun_up = placed && zenith_deg < 90.0 && mu0 > 0.0;
    flags.sun_below_horizon = placed && !sun_up;
    flags.low_sun = sun_up && zenith_deg > LOW_SUN_ZENITH_DEG;
    let instantaneous = if sun_up {
        // (1 AU/r)² of the UTC day from Spencer's series (accuracy ~1e-4; a second SPA
        // evaluation for the instant would cost as much as the zenith and change < 0.01 %).
        let distance = if settings.earth_sun_distance {
            spencer_distance_factor(obs.time_utc.ordinal())
        } else {
            1.0
        };
        let (c, a) = evaluate(&prep, settings, &[(mu0, distance)], scratch);
        effect(c, a, aod_550, dp)
    } else if placed {
        effect(Fluxes::default(), Fluxes::default(), aod_550, dp)
    } else {
        let unplaced = Fluxes {
            toa_down: f64::NAN,
            toa_up: f64::NAN,
            toa_net: f64::NAN,
            sfc_down_direct: f64::NAN,
            sfc_down_diffuse: f64::NAN,
            sfc_up: f64::NAN,
            sfc_net: f64::NAN,
        };
        effect(unplaced, unplaced, aod_550, dp)
    };

    // 24-hour mean (the day's geometry also gives the daylight length and polar flags when
    // the mean itself is not asked for).
    let day = day_geometry(
        local_solar_date(obs),
        obs.latitude_deg,
        settings.diurnal_nodes,
    );
    let daylight_hours = day.daylight_hours;
    flags.polar_day = day.polar_day;
    flags.polar_night = day.polar_night;
    let daily = if settings.daily_mean {
        let distance = if settings.earth_sun_distance {
            day.distance_factor
        } else {
            1.0
        };
        let mut suns = std::mem::take(&mut scratch.suns);
        suns.clear();
        suns.extend(
            day.cos_zenith
                .iter()
                .zip(&day.weights)
                .map(|(&mu, &w)| (mu, w * distance)),
        );
        let (c, a) = evaluate(&prep, settings, &suns, scratch);
        scratch.suns = suns;
        effect(c, a, aod_550, dp)
    } else {
        Effect::default()
    };

    let solver_error = if settings.error_estimate {
        estimate_error(
            &prep,
            settings,
            &instantaneous,
            &daily,
            (mu0, sun_up),
            obs,
            scratch,
        )
    } else {
        SolverError::default()
    };

    let pressure_hpa = prep.pressure_hpa;
    scratch.bands = prep.bands;
    ObservationResult {
        aod_550,
        pressure_hpa,
        solar_zenith_deg: zenith_deg,
        instantaneous,
        daily,
        daylight_hours,
        flags,
        uncertainty: None,
        solver_error,
    }
}

/// The two-stream's error of one observation: the same column computed with the other
/// solver (discrete ordinates with [`Settings::streams`] streams when the main results are
/// two-stream, the two-stream closure of the settings otherwise), two-stream minus discrete
/// ordinates for each DRE. The 24-hour values are NaN when the means are off.
fn estimate_error(
    prep: &Prepared,
    settings: &Settings,
    instantaneous: &Effect,
    daily: &Effect,
    (mu0, sun_up): (f64, bool),
    obs: &Observation,
    scratch: &mut Scratch,
) -> SolverError {
    let other = Settings {
        method: match settings.method {
            Method::TwoStream => Method::DiscreteOrdinates,
            Method::DiscreteOrdinates => Method::TwoStream,
        },
        error_estimate: false,
        ..settings.clone()
    };
    let sign = if settings.method == Method::TwoStream {
        1.0
    } else {
        -1.0
    };
    let (inst, day) = {
        let inst = if sun_up {
            let distance = if settings.earth_sun_distance {
                spencer_distance_factor(obs.time_utc.ordinal())
            } else {
                1.0
            };
            let (c, a) = evaluate(prep, &other, &[(mu0, distance)], scratch);
            Some((c, a))
        } else {
            None
        };
        let day = settings.daily_mean.then(|| {
            let geometry = day_geometry(
                local_solar_date(obs),
                obs.latitude_deg,
                settings.diurnal_nodes,
            );
            let distance = if settings.earth_sun_distance {
                geometry.distance_factor
            } else {
                1.0
            };
            let suns: Vec<(f64, f64)> = geometry
                .cos_zenith
                .iter()
                .zip(&geometry.weights)
                .map(|(&mu, &w)| (mu, w * distance))
                .collect();
            evaluate(prep, &other, &suns, scratch)
        });
        (inst, day)
    };
    let diff = |main: &Effect, other: Option<(Fluxes, Fluxes)>| -> [f64; 3] {
        match other {
            Some((c, a)) => {
                let toa = (a.toa_net - c.toa_net) - main.dre_toa;
                let sfc = (a.sfc_net - c.sfc_net) - main.dre_sfc;
                [-sign * toa, -sign * sfc, -sign * (toa - sfc)]
            }
            None => [0.0; 3],
        }
    };
    let i = diff(instantaneous, inst);
    let d = if settings.daily_mean {
        diff(daily, day)
    } else {
        [f64::NAN; 3]
    };
    SolverError {
        dre_toa: i[0],
        dre_sfc: i[1],
        dre_atm: i[2],
        dre_toa_24h: d[0],
        dre_sfc_24h: d[1],
        dre_atm_24h: d[2],
    }
}

/// Local mean-solar date at the station: UTC shifted by longitude/15 h (UTC date when the
/// longitude is not finite).
fn local_solar_date(obs: &Observation) -> chrono::NaiveDate {
    let utc = obs.time_utc;
    if !obs.longitude_deg.is_finite() {
        return utc.date_naive();
    }
    let lon = obs.longitude_deg.clamp(-180.0, 180.0);
    let shift = chrono::TimeDelta::seconds((lon * 240.0).round() as i64); // 240 s per degree
    utc.checked_add_signed(shift).unwrap_or(utc).date_naive()
}

/// [`compute_observation`] for many observations in parallel on all cores (rayon), in input
/// order; each worker reuses its work arrays.
pub fn compute_batch(obs: &[Observation], settings: &Settings) -> Vec<ObservationResult> {
    compute_batch_with_context(obs, settings, &Context::new(settings))
}

/// [`compute_batch`] with a [`Context`] the caller keeps (e.g. across the chunks of a run
/// with a progress bar).
pub fn compute_batch_with_context(
    obs: &[Observation],
    settings: &Settings,
    ctx: &Context,
) -> Vec<ObservationResult> {
    obs.par_iter()
        .map_init(Scratch::default, |scratch, o| {
            compute_with(o, settings, ctx, scratch)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The diffuse albedo of the Taylor et al. (1996) ocean, 2∫α(μ)μ dμ: 0.06 is the value
    /// commonly used for diffuse light over open ocean (from memory); the quadrature gives
    /// 0.066.
    #[test]
    fn ocean_diffuse_albedo() {
        let a = diffuse_albedo(&Surface::OceanTaylor1996);
        assert!((0.055..0.075).contains(&a), "{a}");
        assert_eq!(diffuse_albedo(&Surface::Lambertian { albedo: 0.3 }), 0.3);
    }

    /// U.S. Standard Atmosphere 1976, its Table 1 (from memory): 226.32 hPa at geopotential
    /// 11 km (geometric 11 019 m), 54.75 hPa at geopotential 20 km (geometric 20 063 m);
    /// continuous at the tropopause.
    #[test]
    fn standard_pressure_above_the_tropopause() {
        let z11 = 6_356_766.0 * 11_000.0 / (6_356_766.0 - 11_000.0);
        let z20 = 6_356_766.0 * 20_000.0 / (6_356_766.0 - 20_000.0);
        let below = standard_pressure_hpa(z11 - 1e-3);
        let above = standard_pressure_hpa(z11 + 1e-3);
        assert!((below - above).abs() < 1e-3);
        assert!((standard_pressure_hpa(z11) - 226.32).abs() < 0.05);
        assert!((standard_pressure_hpa(z20) - 54.75).abs() < 0.05);
    }

    /// (g/c_p) ΔF/Δp: 10 W m⁻² absorbed in 100 hPa heats by 9.80665/1004 × 10/10⁴ × 86 400
    /// = 0.8439 K day⁻¹.
    #[test]
    fn heating_rate_formula() {
        let h = heating_rate_k_day(10.0, 1.0e4);
        assert!((h - 0.843_94).abs() < 1e-4, "{h}");
        assert!(heating_rate_k_day(10.0, 0.0).is_nan());
    }

    #[test]
    fn mixing_rules() {
        let aerosol = LayerOptics {
            tau: 0.3,
            ssa: 0.9,
            g: 0.7,
        };
        let m = mix(0.1, 0.05, aerosol);
        assert!((m.tau - 0.45).abs() < 1e-15);
        assert!((m.ssa - (0.1 + 0.27) / 0.45).abs() < 1e-15);
        assert!((m.g - 0.27 * 0.7 / 0.37).abs() < 1e-15);
        assert_eq!(
            mix(0.0, 0.0, LayerOptics::default()),
            LayerOptics::default()
        );
    }

    #[test]
    fn local_solar_date_follows_longitude() {
        use chrono::TimeZone;
        let mut o = Observation {
            time_utc: chrono::Utc.with_ymd_and_hms(2024, 3, 1, 22, 0, 0).unwrap(),
            latitude_deg: 0.0,
            longitude_deg: 150.0,
            altitude_m: 0.0,
            pressure_hpa: None,
            aod: 0.1,
            aod_wavelength_nm: 500.0,
            angstrom: 1.0,
            ssa: vec![],
            asymmetry: vec![],
            surface: Surface::Lambertian { albedo: 0.1 },
            ozone_du: 300.0,
            water_cm: 1.0,
            layer: super::super::AerosolLayer::default(),
        };
        assert_eq!(local_solar_date(&o).to_string(), "2024-03-02");
        o.longitude_deg = -150.0;
        assert_eq!(local_solar_date(&o).to_string(), "2024-03-01");
    }
}
