//! Input uncertainty carried to the aerosol direct radiative effect.
//!
//! **Linearised propagation** (first-order Taylor expansion; JCGM 100:2008, *Guide to the
//! expression of uncertainty in measurement* (GUM), eq. 10, for uncorrelated inputs): for each
//! declared input x_i with standard uncertainty σ_i the sensitivity c_i = ∂ΔF/∂x_i is taken
//! by a one-sided finite difference with the step σ_i itself (a secant over one standard
//! uncertainty: the step is +σ_i, or −σ_i where +σ_i would leave the physical range), and
//!
//! σ(ΔF)² = Σ_i (c_i σ_i)²,
//!
//! summed separately over the inputs declared *random* (varying from day to day) and
//! *systematic* (calibration, retrieval bias: the same sign on every day).
//!
//! Each perturbed evaluation goes through [`forcing::compute_observation`] with the
//! instantaneous cos(solar zenith) of the unperturbed result fixed (so the solar position is
//! not recomputed; the bits of the instantaneous geometry are the same), so an input costs
//! about three quarters of an unperturbed observation.
//!
//! **Spectral inputs.** SSA and g given at several wavelengths are shifted together (an error
//! fully correlated across wavelengths); AOD is perturbed at its reference wavelength with
//! the Ångström exponent held (and the Ångström exponent with the reference AOD held).
//!
//! **Validity.** The linearisation is checked against a Monte Carlo propagation of the same
//! inputs ([`monte_carlo`]; `tests/uncertainty.rs` states the tolerance). It stops agreeing
//! when the response is strongly curved over ±σ: an SSA within about σ of 1 (the draws are
//! cut at 1, the distribution is one-sided), g near its bounds, or σ_SSA ≳ 0.1.
//!
//! [`forcing::compute_observation`]: super::forcing::compute_observation

use super::forcing::{Context, compute_observation};
use super::{Observation, ObservationResult, Settings, Surface};
use rayon::prelude::*;

/// An input that can carry an uncertainty.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Input {
    /// AOD at the reference wavelength [unitless].
    Aod,
    /// Ångström exponent [unitless].
    Angstrom,
    /// Single-scattering albedo, all wavelengths together [unitless].
    Ssa,
    /// Asymmetry factor, all wavelengths together [unitless].
    Asymmetry,
    /// Broadband Lambertian surface albedo [unitless] (no effect on the ocean surface).
    Albedo,
    /// Ozone column [DU].
    Ozone,
    /// Precipitable water [cm].
    Water,
    /// Aerosol layer top above the surface [km].
    LayerTop,
}

/// Number of [`Input`]s.
pub const INPUT_COUNT: usize = 8;

impl Input {
    /// Every input, in the order of the arrays of [`RowUncertainty`].
    pub const ALL: [Input; INPUT_COUNT] = [
        Input::Aod,
        Input::Angstrom,
        Input::Ssa,
        Input::Asymmetry,
        Input::Albedo,
        Input::Ozone,
        Input::Water,
        Input::LayerTop,
    ];

    /// Position in [`Input::ALL`].
    pub fn index(self) -> usize {
        self as usize
    }

    /// Machine name (job-file key, column keys).
    pub fn key(self) -> &'static str {
        match self {
            Input::Aod => "aod",
            Input::Angstrom => "angstrom",
            Input::Ssa => "ssa",
            Input::Asymmetry => "asymmetry",
            Input::Albedo => "albedo",
            Input::Ozone => "ozone",
            Input::Water => "water",
            Input::LayerTop => "layer_top",
        }
    }

    /// Name as shown.
    pub fn label(self) -> &'static str {
        match self {
            Input::Aod => "AOD",
            Input::Angstrom => "Ångström exponent",
            Input::Ssa => "SSA",
            Input::Asymmetry => "g",
            Input::Albedo => "surface albedo",
            Input::Ozone => "ozone",
            Input::Water => "precipitable water",
            Input::LayerTop => "aerosol layer top",
        }
    }

    /// The step researchers quote sensitivities per ("W m⁻² per 0.01 SSA"), in the input's
    /// unit, and its text.
    pub fn quote_step(self) -> (f64, &'static str) {
        match self {
            Input::Aod => (0.01, "W m⁻² per 0.01 AOD"),
            Input::Angstrom => (0.1, "W m⁻² per 0.1 Ångström exponent"),
            Input::Ssa => (0.01, "W m⁻² per 0.01 SSA"),
            Input::Asymmetry => (0.01, "W m⁻² per 0.01 g"),
            Input::Albedo => (0.01, "W m⁻² per 0.01 albedo"),
            Input::Ozone => (10.0, "W m⁻² per 10 DU ozone"),
            Input::Water => (0.1, "W m⁻² per 0.1 cm water"),
            Input::LayerTop => (0.1, "W m⁻² per 0.1 km layer top"),
        }
    }
}

/// Whether an uncertainty varies from day to day or is common to all days.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Nature {
    /// Independent from one day to the next: averages down over days.
    #[default]
    Random,
    /// Calibration or retrieval bias, the same on every day: does not average down.
    Systematic,
}

/// One declared standard uncertainty (1σ): σ = √(absolute² + (relative·x)²).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InputSigma {
    /// Absolute part [unit of the input].
    pub absolute: f64,
    /// Relative part [fraction of the value].
    pub relative: f64,
    pub nature: Nature,
}

impl InputSigma {
    /// σ at the value `x` [unit of the input].
    pub fn sigma(&self, x: f64) -> f64 {
        self.absolute.hypot(self.relative * x)
    }
}

/// The uncertainties declared for a run, one optional entry per [`Input`].
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Declared {
    pub inputs: [Option<InputSigma>; INPUT_COUNT],
}

impl Declared {
    /// The entry of an input.
    pub fn get(&self, i: Input) -> Option<InputSigma> {
        self.inputs[i.index()]
    }

    /// Set the entry of an input.
    pub fn set(&mut self, i: Input, s: InputSigma) {
        self.inputs[i.index()] = Some(s);
    }

    /// True when no input carries a non-zero uncertainty.
    pub fn is_empty(&self) -> bool {
        self.inputs
            .iter()
            .flatten()
            .all(|s| s.absolute == 0.0 && s.relative == 0.0)
    }
}

/// A quantity whose uncertainty is propagated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    DreToa,
    DreSfc,
    DreAtm,
    EfficiencyToa,
    EfficiencySfc,
    DreToa24h,
    DreSfc24h,
    DreAtm24h,
    EfficiencyToa24h,
    EfficiencySfc24h,
    Aod550,
}

/// Number of [`Quantity`]s.
pub const QUANTITY_COUNT: usize = 11;

impl Quantity {
    /// Every quantity, in the order of the arrays of [`RowUncertainty`].
    pub const ALL: [Quantity; QUANTITY_COUNT] = [
        Quantity::DreToa,
        Quantity::DreSfc,
        Quantity::DreAtm,
        Quantity::EfficiencyToa,
        Quantity::EfficiencySfc,
        Quantity::DreToa24h,
        Quantity::DreSfc24h,
        Quantity::DreAtm24h,
        Quantity::EfficiencyToa24h,
        Quantity::EfficiencySfc24h,
        Quantity::Aod550,
    ];

    /// Key of the Results column this is the uncertainty of.
    pub fn key(self) -> &'static str {
        match self {
            Quantity::DreToa => "dre_toa",
            Quantity::DreSfc => "dre_sfc",
            Quantity::DreAtm => "dre_atm",
            Quantity::EfficiencyToa => "efficiency_toa",
            Quantity::EfficiencySfc => "efficiency_sfc",
            Quantity::DreToa24h => "dre_toa_24h",
            Quantity::DreSfc24h => "dre_sfc_24h",
            Quantity::DreAtm24h => "dre_atm_24h",
            Quantity::EfficiencyToa24h => "efficiency_toa_24h",
            Quantity::EfficiencySfc24h => "efficiency_sfc_24h",
            Quantity::Aod550 => "aod_550",
        }
    }

    /// The quantity of a Results column key.
    pub fn of_key(key: &str) -> Option<Quantity> {
        Self::ALL.into_iter().find(|q| q.key() == key)
    }

    /// Its value in a result.
    pub fn value(self, r: &ObservationResult) -> f64 {
        let (i, d) = (&r.instantaneous, &r.daily);
        match self {
            Quantity::DreToa => i.dre_toa,
            Quantity::DreSfc => i.dre_sfc,
            Quantity::DreAtm => i.dre_atm,
            Quantity::EfficiencyToa => i.efficiency_toa,
            Quantity::EfficiencySfc => i.efficiency_sfc,
            Quantity::DreToa24h => d.dre_toa,
            Quantity::DreSfc24h => d.dre_sfc,
            Quantity::DreAtm24h => d.dre_atm,
            Quantity::EfficiencyToa24h => d.efficiency_toa,
            Quantity::EfficiencySfc24h => d.efficiency_sfc,
            Quantity::Aod550 => r.aod_550,
        }
    }
}

/// Propagated uncertainty of one observation. Arrays are indexed like [`Quantity::ALL`]
/// and [`Input::ALL`]; NaN where an input was not declared.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct RowUncertainty {
    /// 1σ from the random inputs [unit of the quantity].
    #[serde(with = "float_array")]
    pub random: [f64; QUANTITY_COUNT],
    /// 1σ from the systematic inputs [unit of the quantity].
    #[serde(with = "float_array")]
    pub systematic: [f64; QUANTITY_COUNT],
    /// ∂ΔF_TOA(24-h)/∂x [W m⁻² per unit of x].
    #[serde(with = "float_array")]
    pub sensitivity_toa_24h: [f64; INPUT_COUNT],
    /// ∂ΔF_SFC(24-h)/∂x [W m⁻² per unit of x].
    #[serde(with = "float_array")]
    pub sensitivity_sfc_24h: [f64; INPUT_COUNT],
    /// σ of each input at this row [unit of the input].
    #[serde(with = "float_array")]
    pub input_sigma: [f64; INPUT_COUNT],
}

impl RowUncertainty {
    /// Total 1σ of a quantity, √(random² + systematic²).
    pub fn total(&self, q: Quantity) -> f64 {
        let i = q as usize;
        self.random[i].hypot(self.systematic[i])
    }
}

/// Value of an input in an observation (SSA and g: the largest of the given values, which
/// decides how far they can move up; albedo NaN for the ocean surface).
pub fn input_value(obs: &Observation, i: Input) -> f64 {
    let max = |v: &[super::SpectralValue]| v.iter().map(|s| s.value).fold(f64::NAN, f64::max);
    match i {
        Input::Aod => obs.aod,
        Input::Angstrom => obs.angstrom,
        Input::Ssa => max(&obs.ssa),
        Input::Asymmetry => max(&obs.asymmetry),
        Input::Albedo => match obs.surface {
            Surface::Lambertian { albedo } => albedo,
            Surface::OceanTaylor1996 => f64::NAN,
        },
        Input::Ozone => obs.ozone_du,
        Input::Water => obs.water_cm,
        Input::LayerTop => obs.layer.top_km,
    }
}

/// Largest value an input may take [unit of the input] (SSA 1; g and albedo just below 1).
fn upper_bound(i: Input) -> f64 {
    match i {
        Input::Ssa => 1.0,
        Input::Asymmetry => 0.999,
        Input::Albedo => 1.0,
        _ => f64::INFINITY,
    }
}

/// Smallest value an input may take.
fn lower_bound(obs: &Observation, i: Input) -> f64 {
    match i {
        Input::Angstrom => f64::NEG_INFINITY,
        Input::Asymmetry => -0.999,
        Input::LayerTop => obs.layer.base_km.max(0.0) + 0.01,
        _ => 0.0,
    }
}

/// The observation with input `i` shifted by `delta`, cut to the input's physical range.
pub fn shifted(obs: &Observation, i: Input, delta: f64) -> Observation {
    let mut o = obs.clone();
    let (lo, hi) = (lower_bound(obs, i), upper_bound(i));
    let cut = |x: f64| (x + delta).clamp(lo, hi);
    match i {
        Input::Aod => o.aod = cut(o.aod),
        Input::Angstrom => o.angstrom = cut(o.angstrom),
        Input::Ssa => o.ssa.iter_mut().for_each(|s| s.value = cut(s.value)),
        Input::Asymmetry => o.asymmetry.iter_mut().for_each(|s| s.value = cut(s.value)),
        Input::Albedo => {
            if let Surface::Lambertian { albedo } = &mut o.surface {
                *albedo = cut(*albedo);
            }
        }
        Input::Ozone => o.ozone_du = cut(o.ozone_du),
        Input::Water => o.water_cm = cut(o.water_cm),
        Input::LayerTop => o.layer.top_km = cut(o.layer.top_km),
    }
    o
}

/// Settings for perturbed evaluations: the unperturbed result's cos(solar zenith) fixed, so
/// that SPA is not evaluated again (same instantaneous geometry, same bits).
fn perturbed_settings(settings: &Settings, base: &ObservationResult) -> Settings {
    let mut s = settings.clone();
    if s.fixed_cos_zenith.is_none() {
        s.fixed_cos_zenith = Some(base.solar_zenith_deg.to_radians().cos());
    }
    s
}

/// Finite-difference sensitivities of every [`Quantity`] to input `i` with step `step`
/// (`+step`, or `−step` where `+step` would leave the input's range) [unit of the quantity
/// per unit of the input]; `None` when the input cannot move (ocean albedo, zero step).
///
/// `pset` are the settings of [`perturbed_settings`].
fn sensitivities(
    obs: &Observation,
    pset: &Settings,
    ctx: &Context,
    base: &ObservationResult,
    i: Input,
    step: f64,
) -> Option<[f64; QUANTITY_COUNT]> {
    let x = input_value(obs, i);
    if step.is_nan() || step <= 0.0 || !x.is_finite() {
        return None;
    }
    let h = if x + step > upper_bound(i) {
        -step
    } else {
        step
    };
    let o = shifted(obs, i, h);
    let moved = input_value(&o, i) - x;
    if moved == 0.0 {
        return None;
    }
    let r = compute_observation(&o, pset, ctx);
    Some(Quantity::ALL.map(|q| {
        let d = Quantity::value(q, &r) - Quantity::value(q, base);
        // NaN − NaN (efficiency at AOD 0) stays NaN; equal values give an exact 0.
        d / moved
    }))
}

/// Linearised propagation of the declared uncertainties through one observation whose
/// unperturbed result is `base` (module documentation: GUM eq. 10, one-sided differences
/// with step σ).
///
/// - `obs`, `settings`, `ctx`: as for [`compute_observation`]; `base` its result.
/// - `declared`: the 1σ uncertainties; inputs without an entry (or with σ = 0) are exact.
///
/// Returns the random and systematic 1σ of every [`Quantity`], the 24-hour TOA and SFC
/// sensitivities [W m⁻² per unit input] and the σ of each input. Never panics.
pub fn propagate(
    obs: &Observation,
    settings: &Settings,
    ctx: &Context,
    base: &ObservationResult,
    declared: &Declared,
) -> RowUncertainty {
    let pset = perturbed_settings(settings, base);
    let mut out = RowUncertainty {
        random: [0.0; QUANTITY_COUNT],
        systematic: [0.0; QUANTITY_COUNT],
        sensitivity_toa_24h: [f64::NAN; INPUT_COUNT],
        sensitivity_sfc_24h: [f64::NAN; INPUT_COUNT],
        input_sigma: [f64::NAN; INPUT_COUNT],
    };
    for i in Input::ALL {
        let Some(d) = declared.get(i) else { continue };
        let x = input_value(obs, i);
        if !x.is_finite() {
            continue;
        }
        let sigma = d.sigma(x);
        out.input_sigma[i.index()] = sigma;
        let Some(c) = sensitivities(obs, &pset, ctx, base, i, sigma) else {
            continue;
        };
        out.sensitivity_toa_24h[i.index()] = c[Quantity::DreToa24h as usize];
        out.sensitivity_sfc_24h[i.index()] = c[Quantity::DreSfc24h as usize];
        let acc = match d.nature {
            Nature::Random => &mut out.random,
            Nature::Systematic => &mut out.systematic,
        };
        for (a, ci) in acc.iter_mut().zip(c) {
            let u = ci * sigma;
            *a = if u.is_finite() { a.hypot(u) } else { f64::NAN };
        }
    }
    out
}

/// [`propagate`] for many observations in parallel (rayon), in input order.
pub fn propagate_batch(
    obs: &[Observation],
    base: &[ObservationResult],
    settings: &Settings,
    ctx: &Context,
    declared: &Declared,
) -> Vec<RowUncertainty> {
    obs.par_iter()
        .zip(base.par_iter())
        .map(|(o, b)| propagate(o, settings, ctx, b, declared))
        .collect()
}

/// Per-row 1σ read from a workbook's uncertainty columns, one optional entry per [`Input`]
/// (indexed like [`Input::ALL`]) [unit of the input; AOD absolute]. `None`: the row has no
/// value for that input and the declared (job or built-in) value applies.
pub type RowSigma = [Option<f64>; INPUT_COUNT];

/// The uncertainties that apply to one row: each per-row σ of `row` replaces the declared
/// entry of its input (absolute σ, no relative part), with the nature `row_nature` gives for
/// that input (per-row columns are random from day to day unless the job file says otherwise).
pub fn with_row_sigma(
    declared: &Declared,
    row: &RowSigma,
    row_nature: &[Nature; INPUT_COUNT],
) -> Declared {
    let mut d = *declared;
    for i in Input::ALL {
        if let Some(s) = row[i.index()] {
            d.set(
                i,
                InputSigma {
                    absolute: s,
                    relative: 0.0,
                    nature: row_nature[i.index()],
                },
            );
        }
    }
    d
}

/// [`propagate_batch`] with per-row σ: row `k` propagates [`with_row_sigma`] of `declared`
/// and `rows[k]` (`rows` aligned with `obs`).
pub fn propagate_batch_rows(
    obs: &[Observation],
    base: &[ObservationResult],
    settings: &Settings,
    ctx: &Context,
    declared: &Declared,
    rows: &[RowSigma],
    row_nature: &[Nature; INPUT_COUNT],
) -> Vec<RowUncertainty> {
    obs.par_iter()
        .zip(base.par_iter())
        .zip(rows.par_iter())
        .map(|((o, b), r)| {
            propagate(
                o,
                settings,
                ctx,
                b,
                &with_row_sigma(declared, r, row_nature),
            )
        })
        .collect()
}

/// Sensitivity of every [`Quantity`] to input `i` by a central difference
/// (f(x + h) − f(x − h))/(2h) [unit of the quantity per unit input]; for checks of the
/// one-sided differences of [`propagate`]. `None` when x ± h leaves the input's range.
pub fn central_difference(
    obs: &Observation,
    settings: &Settings,
    ctx: &Context,
    i: Input,
    h: f64,
) -> Option<[f64; QUANTITY_COUNT]> {
    let x = input_value(obs, i);
    // Written so that a NaN anywhere refuses the step.
    let inside = h > 0.0 && x + h <= upper_bound(i) && x - h >= lower_bound(obs, i);
    if !inside {
        return None;
    }
    let up = compute_observation(&shifted(obs, i, h), settings, ctx);
    let down = compute_observation(&shifted(obs, i, -h), settings, ctx);
    Some(Quantity::ALL.map(|q| (q.value(&up) - q.value(&down)) / (2.0 * h)))
}

/// Mean and standard deviation of every [`Quantity`] over Monte Carlo draws of the declared
/// inputs: each draw shifts every declared input by σ·z, z standard normal, independently
/// (random and systematic alike: for one observation they are the same kind of error), cut
/// to the input's physical range. Fixed `seed`: the same draws every time.
///
/// Normal deviates from SplitMix64 (Steele, Lea & Flood 2014, *Fast splittable pseudorandom
/// number generators*, OOPSLA) through the Box–Muller transform (Box & Muller 1958, Ann.
/// Math. Stat. 29, 610–611).
pub fn monte_carlo(
    obs: &Observation,
    settings: &Settings,
    ctx: &Context,
    declared: &Declared,
    draws: usize,
    seed: u64,
) -> [(f64, f64); QUANTITY_COUNT] {
    let mut rng = Normal::new(seed);
    let mut sum = [0.0; QUANTITY_COUNT];
    let mut sum2 = [0.0; QUANTITY_COUNT];
    let base = compute_observation(obs, settings, ctx);
    let pset = perturbed_settings(settings, &base);
    for _ in 0..draws {
        let mut o = obs.clone();
        for i in Input::ALL {
            if let Some(d) = declared.get(i) {
                let sigma = d.sigma(input_value(obs, i));
                let z = rng.sample();
                if sigma > 0.0 && sigma.is_finite() {
                    o = shifted(&o, i, sigma * z);
                }
            }
        }
        let r = compute_observation(&o, &pset, ctx);
        for (k, q) in Quantity::ALL.into_iter().enumerate() {
            let v = q.value(&r);
            sum[k] += v;
            sum2[k] += v * v;
        }
    }
    let n = draws as f64;
    let mut out = [(f64::NAN, f64::NAN); QUANTITY_COUNT];
    for k in 0..QUANTITY_COUNT {
        let mean = sum[k] / n;
        let var = ((sum2[k] - n * mean * mean) / (n - 1.0)).max(0.0);
        out[k] = (mean, var.sqrt());
    }
    out
}

/// Standard normal deviates: SplitMix64 (Steele, Lea & Flood 2014) and Box–Muller (1958).
#[derive(Debug, Clone)]
pub struct Normal {
    state: u64,
    spare: Option<f64>,
}

impl Normal {
    pub fn new(seed: u64) -> Self {
        Self {
            state: seed,
            spare: None,
        }
    }

    /// Next uniform deviate in (0, 1): the top 53 bits of SplitMix64, offset by half a step.
    fn uniform(&mut self) -> f64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        ((z >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    /// Next standard normal deviate.
    pub fn sample(&mut self) -> f64 {
        if let Some(s) = self.spare.take() {
            return s;
        }
        let (u1, u2) = (self.uniform(), self.uniform());
        let r = (-2.0 * u1.ln()).sqrt();
        let t = std::f64::consts::TAU * u2;
        self.spare = Some(r * t.sin());
        r * t.cos()
    }
}

/// Serde for fixed arrays of `f64` as in [`super::serde_float::float`] (strings, NaN kept).
mod float_array {
    use serde::{Deserializer, Serializer, de, ser::SerializeSeq};

    pub fn serialize<S: Serializer, const N: usize>(v: &[f64; N], s: S) -> Result<S::Ok, S::Error> {
        let mut seq = s.serialize_seq(Some(N))?;
        for x in v {
            seq.serialize_element(&format!("{x:?}"))?;
        }
        seq.end()
    }

    pub fn deserialize<'de, D: Deserializer<'de>, const N: usize>(
        d: D,
    ) -> Result<[f64; N], D::Error> {
        struct V<const N: usize>;
        impl<'de, const N: usize> de::Visitor<'de> for V<N> {
            type Value = [f64; N];
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                write!(f, "a list of {N} numbers (as strings, \"NaN\" allowed)")
            }
            fn visit_seq<A: de::SeqAccess<'de>>(self, mut a: A) -> Result<[f64; N], A::Error> {
                let mut out = [f64::NAN; N];
                for (k, slot) in out.iter_mut().enumerate() {
                    let s: Num = a
                        .next_element()?
                        .ok_or_else(|| de::Error::invalid_length(k, &self))?;
                    *slot = s.0;
                }
                Ok(out)
            }
        }
        d.deserialize_seq(V::<N>)
    }

    /// One element: a string or a number, or null (NaN).
    struct Num(f64);
    impl<'de> serde::Deserialize<'de> for Num {
        fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
            #[derive(serde::Deserialize)]
            struct W(#[serde(with = "super::super::serde_float::float")] f64);
            W::deserialize(d).map(|w| Num(w.0))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The generator's normal deviates have mean ≈ 0 and SD ≈ 1 (standard error of the mean
    /// over 20 000 draws is 0.007).
    #[test]
    fn normal_deviates_are_standard() {
        let mut g = Normal::new(7);
        let v: Vec<f64> = (0..20_000).map(|_| g.sample()).collect();
        let m = v.iter().sum::<f64>() / v.len() as f64;
        let sd = (v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (v.len() - 1) as f64).sqrt();
        assert!(m.abs() < 0.03, "{m}");
        assert!((sd - 1.0).abs() < 0.03, "{sd}");
        // Fixed seed, fixed sequence.
        assert_eq!(Normal::new(7).sample(), Normal::new(7).sample());
    }

    #[test]
    fn shifted_stays_in_range() {
        let o = Observation {
            time_utc: chrono::DateTime::UNIX_EPOCH,
            latitude_deg: 0.0,
            longitude_deg: 0.0,
            altitude_m: 0.0,
            pressure_hpa: None,
            aod: 0.02,
            aod_wavelength_nm: 500.0,
            angstrom: 1.0,
            ssa: vec![super::super::SpectralValue {
                wavelength_nm: 550.0,
                value: 0.99,
            }],
            asymmetry: vec![super::super::SpectralValue {
                wavelength_nm: 550.0,
                value: 0.7,
            }],
            surface: Surface::Lambertian { albedo: 0.1 },
            ozone_du: 300.0,
            water_cm: 1.0,
            layer: super::super::AerosolLayer::default(),
        };
        assert_eq!(input_value(&shifted(&o, Input::Ssa, 0.05), Input::Ssa), 1.0);
        assert_eq!(shifted(&o, Input::Aod, -0.05).aod, 0.0);
        assert!(
            (input_value(&shifted(&o, Input::Albedo, 0.02), Input::Albedo) - 0.12).abs() < 1e-15
        );
        let ocean = Observation {
            surface: Surface::OceanTaylor1996,
            ..o.clone()
        };
        assert!(input_value(&ocean, Input::Albedo).is_nan());
        let s = InputSigma {
            absolute: 0.01,
            relative: 0.1,
            nature: Nature::Systematic,
        };
        assert!((s.sigma(0.2) - (0.0001f64 + 0.0004).sqrt()).abs() < 1e-15);
    }
}
