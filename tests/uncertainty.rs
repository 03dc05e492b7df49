//! Propagated input uncertainty: the linearised propagation against a Monte Carlo of the same
//! inputs, the sensitivities against finer central differences, and their sign and size.

use chrono::{TimeZone, Utc};
use hazebook::physics::forcing::{Context, compute_observation};
use hazebook::physics::uncertainty::{
    Declared, Input, InputSigma, Nature, Quantity, central_difference, monte_carlo, propagate,
};
use hazebook::physics::{AerosolLayer, Observation, Settings, SpectralValue, Surface};

/// A moderately absorbing continental aerosol at 30° N in June (invented case).
fn case(ssa: f64) -> Observation {
    Observation {
        time_utc: Utc.with_ymd_and_hms(2026, 6, 15, 10, 0, 0).unwrap(),
        latitude_deg: 30.0,
        longitude_deg: 0.0,
        altitude_m: 0.0,
        pressure_hpa: None,
        aod: 0.3,
        aod_wavelength_nm: 550.0,
        angstrom: 1.3,
        ssa: vec![SpectralValue {
            wavelength_nm: 550.0,
            value: ssa,
        }],
        asymmetry: vec![SpectralValue {
            wavelength_nm: 550.0,
            value: 0.7,
        }],
        surface: Surface::Lambertian { albedo: 0.15 },
        ozone_du: 300.0,
        water_cm: 1.5,
        layer: AerosolLayer::default(),
    }
}

fn sigma(absolute: f64, nature: Nature) -> InputSigma {
    InputSigma {
        absolute,
        relative: 0.0,
        nature,
    }
}

/// Typical sun-photometer and retrieval uncertainties (as the built-in values of the job's
/// `[uncertainty]` section): AOD 0.02, SSA 0.03, g 0.03, albedo 0.02.
fn typical() -> Declared {
    let mut d = Declared::default();
    d.set(Input::Aod, sigma(0.02, Nature::Systematic));
    d.set(Input::Ssa, sigma(0.03, Nature::Random));
    d.set(Input::Asymmetry, sigma(0.03, Nature::Random));
    d.set(Input::Albedo, sigma(0.02, Nature::Systematic));
    d
}

const DRES: [Quantity; 6] = [
    Quantity::DreToa,
    Quantity::DreSfc,
    Quantity::DreAtm,
    Quantity::DreToa24h,
    Quantity::DreSfc24h,
    Quantity::DreAtm24h,
];

/// Linearised 1σ against the SD of 4,000 Monte Carlo draws (seed 20261202) of the same
/// inputs. Tolerance 6 %: the sampling error of an SD from 4,000 normal draws is
/// 1/√(2·4000) ≈ 1.1 % (common practice), the rest is the curvature over ±1σ.
#[test]
fn linear_propagation_agrees_with_monte_carlo_for_typical_sigma() {
    let s = Settings::default();
    let ctx = Context::new(&s);
    let obs = case(0.90);
    let base = compute_observation(&obs, &s, &ctx);
    let d = typical();
    let lin = propagate(&obs, &s, &ctx, &base, &d);
    let mc = monte_carlo(&obs, &s, &ctx, &d, 4000, 20_261_202);
    for q in DRES {
        let k = q as usize;
        let (l, m) = (lin.total(q), mc[k].1);
        assert!(l > 0.0 && m > 0.0, "{q:?}: {l} {m}");
        let rel = (l - m).abs() / m;
        eprintln!(
            "{q:?}: linear {l:.4}, Monte Carlo {m:.4}, {:.1} %",
            100.0 * rel
        );
        assert!(rel < 0.06, "{q:?}: linear {l}, Monte Carlo {m}");
    }
}

/// Where the linearisation stops agreeing: SSA 0.985 with σ 0.05 — the draws are cut at
/// SSA = 1 and the response is one-sided, so the one-sided secant (a step of −σ) and the
/// Monte Carlo SD differ by more than 10 %.
#[test]
fn linear_propagation_stops_agreeing_near_conservative_scattering() {
    let s = Settings::default();
    let ctx = Context::new(&s);
    let obs = case(0.985);
    let base = compute_observation(&obs, &s, &ctx);
    let mut d = Declared::default();
    d.set(Input::Ssa, sigma(0.05, Nature::Random));
    let lin = propagate(&obs, &s, &ctx, &base, &d);
    let mc = monte_carlo(&obs, &s, &ctx, &d, 4000, 20_261_202);
    let k = Quantity::DreAtm24h as usize;
    let rel = (lin.total(Quantity::DreAtm24h) - mc[k].1).abs() / mc[k].1;
    eprintln!(
        "near SSA 1: linear {}, Monte Carlo {}",
        lin.total(Quantity::DreAtm24h),
        mc[k].1
    );
    assert!(rel > 0.10, "{rel}");
}

/// The one-sided sensitivities with step σ against central differences with a step ten
/// times finer (σ/10): within 5 % for SSA, g, AOD and albedo at typical σ.
#[test]
fn sensitivities_match_finer_central_differences() {
    let s = Settings::default();
    let ctx = Context::new(&s);
    let obs = case(0.90);
    let base = compute_observation(&obs, &s, &ctx);
    let d = typical();
    let lin = propagate(&obs, &s, &ctx, &base, &d);
    for i in [Input::Aod, Input::Ssa, Input::Asymmetry, Input::Albedo] {
        let h = d.get(i).unwrap().absolute / 10.0;
        let c = central_difference(&obs, &s, &ctx, i, h).unwrap();
        for (got, want) in [
            (
                lin.sensitivity_toa_24h[i.index()],
                c[Quantity::DreToa24h as usize],
            ),
            (
                lin.sensitivity_sfc_24h[i.index()],
                c[Quantity::DreSfc24h as usize],
            ),
        ] {
            let rel = (got - want).abs() / want.abs();
            assert!(rel < 0.05, "{i:?}: {got} vs central {want}");
        }
    }
}

/// Sign and size against common practice: as SSA falls the 24-hour TOA DRE gets less
/// negative and the SFC DRE more negative, so ∂ΔF_TOA/∂SSA < 0 and ∂ΔF_SFC/∂SSA > 0; for
/// AOD(550) 0.3 at 30° N in June a change of 0.01 in SSA moves the 24-hour TOA DRE by a few
/// tenths of a W m⁻² and the surface DRE by a little less (common practice: at AOD 0.3 the
/// TOA DRE changes by roughly 10–20 W m⁻² between SSA 1 and 0.85; from memory).
#[test]
fn ssa_sensitivity_has_the_expected_sign_and_size() {
    let s = Settings::default();
    let ctx = Context::new(&s);
    let obs = case(0.90);
    let base = compute_observation(&obs, &s, &ctx);
    let mut d = Declared::default();
    d.set(Input::Ssa, sigma(0.03, Nature::Random));
    let u = propagate(&obs, &s, &ctx, &base, &d);
    let toa = u.sensitivity_toa_24h[Input::Ssa.index()] * 0.01;
    let sfc = u.sensitivity_sfc_24h[Input::Ssa.index()] * 0.01;
    eprintln!("per 0.01 SSA: TOA {toa:.3}, SFC {sfc:.3} W m⁻²");
    assert!(toa < 0.0 && sfc > 0.0, "{toa} {sfc}");
    assert!((0.05..2.0).contains(&toa.abs()), "{toa}");
    assert!((0.05..2.0).contains(&sfc.abs()), "{sfc}");
    // Lower SSA, less negative TOA and more negative surface DRE, directly.
    let lower = compute_observation(&case(0.85), &s, &ctx);
    assert!(lower.daily.dre_toa > base.daily.dre_toa);
    assert!(lower.daily.dre_sfc < base.daily.dre_sfc);
}

/// Random and systematic inputs are kept apart; undeclared inputs contribute nothing; the
/// same inputs give the same bits.
#[test]
fn random_and_systematic_parts_are_separate_and_deterministic() {
    let s = Settings::default();
    let ctx = Context::new(&s);
    let obs = case(0.90);
    let base = compute_observation(&obs, &s, &ctx);
    let mut d = Declared::default();
    d.set(Input::Ssa, sigma(0.03, Nature::Random));
    let only_ssa = propagate(&obs, &s, &ctx, &base, &d);
    assert!(only_ssa.systematic.iter().all(|x| *x == 0.0));
    assert!(only_ssa.sensitivity_toa_24h[Input::Aod.index()].is_nan());
    d.set(Input::Albedo, sigma(0.02, Nature::Systematic));
    let both = propagate(&obs, &s, &ctx, &base, &d);
    assert_eq!(both.random, only_ssa.random);
    assert!(both.systematic[Quantity::DreSfc24h as usize] > 0.0);
    let again = propagate(&obs, &s, &ctx, &base, &d);
    assert_eq!(format!("{both:?}"), format!("{again:?}"));
}

/// The perturbed evaluations fix the unperturbed cos(solar zenith) instead of evaluating SPA
/// again: that gives the same instantaneous result, bit for bit.
#[test]
fn fixed_zenith_of_the_base_result_reproduces_it() {
    let s = Settings::default();
    let ctx = Context::new(&s);
    let obs = case(0.90);
    let base = compute_observation(&obs, &s, &ctx);
    let fixed = Settings {
        fixed_cos_zenith: Some(base.solar_zenith_deg.to_radians().cos()),
        ..s.clone()
    };
    let again = compute_observation(&obs, &fixed, &ctx);
    assert_eq!(again.instantaneous, base.instantaneous);
    assert_eq!(again.daily, base.daily);
}

/// A per-row σ replaces the declared σ of its input: a row with a larger SSA σ gets a larger
/// propagated DRE σ, and a row σ gives exactly the propagation of the same σ declared for
/// the job (random, as per-row columns are by default).
#[test]
fn row_sigma_overrides_the_declared_value() {
    use hazebook::physics::uncertainty::{INPUT_COUNT, RowSigma, propagate_batch_rows};
    let s = Settings::default();
    let ctx = Context::new(&s);
    let obs = vec![case(0.9), case(0.9), case(0.9)];
    let base: Vec<_> = obs
        .iter()
        .map(|o| compute_observation(o, &s, &ctx))
        .collect();
    let d = typical();
    let mut small: RowSigma = [None; INPUT_COUNT];
    small[Input::Ssa.index()] = Some(0.01);
    let mut large = small;
    large[Input::Ssa.index()] = Some(0.05);
    large[Input::Aod.index()] = Some(0.04);
    let none: RowSigma = [None; INPUT_COUNT];
    let natures = [Nature::Random; INPUT_COUNT];
    let u = propagate_batch_rows(&obs, &base, &s, &ctx, &d, &[small, large, none], &natures);
    let q = Quantity::DreToa24h as usize;
    assert!(
        u[1].random[q] > u[0].random[q],
        "{} {}",
        u[1].random[q],
        u[0].random[q]
    );
    assert_eq!(u[1].input_sigma[Input::Ssa.index()], 0.05);
    // Row σ = job default with the same σ, bit for bit.
    let mut as_job = d;
    as_job.set(Input::Ssa, sigma(0.01, Nature::Random));
    same(&u[0], &propagate(&obs[0], &s, &ctx, &base[0], &as_job));
    let mut as_job = d;
    as_job.set(Input::Ssa, sigma(0.05, Nature::Random));
    as_job.set(Input::Aod, sigma(0.04, Nature::Random));
    same(&u[1], &propagate(&obs[1], &s, &ctx, &base[1], &as_job));
    // No row σ: the declared values.
    same(&u[2], &propagate(&obs[2], &s, &ctx, &base[2], &d));
}

/// Bit-for-bit equality of two propagations (NaN where an input was not declared equals NaN).
fn same(
    a: &hazebook::physics::uncertainty::RowUncertainty,
    b: &hazebook::physics::uncertainty::RowUncertainty,
) {
    assert_eq!(format!("{a:?}"), format!("{b:?}"));
}
