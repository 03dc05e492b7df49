//! Physical invariants of the solver and the driver as property tests: energy
//! conservation at SSA = 1, zero effect at zero AOD, monotonic response to SSA and albedo,
//! finite outputs for finite in-range input, no panic for any input.

use chrono::{TimeDelta, TimeZone, Utc};
use hazebook::physics::column::add_layers;
use hazebook::physics::forcing::{Context, compute_observation};
use hazebook::physics::two_stream::{LayerOptics, solve_layer};
use hazebook::physics::{
    AerosolLayer, BandSet, Closure, Observation, ObservationResult, Settings, SpectralValue,
    Surface,
};
use proptest::prelude::*;

const CLOSURES: [Closure; 5] = [
    Closure::DeltaEddington,
    Closure::Eddington,
    Closure::Quadrature,
    Closure::HemisphericMean,
    Closure::Pifm,
];

fn closure() -> impl Strategy<Value = Closure> {
    (0usize..5).prop_map(|i| CLOSURES[i])
}

#[allow(clippy::too_many_arguments)]
fn observation(
    minutes: i64,
    lat: f64,
    lon: f64,
    aod: f64,
    angstrom: f64,
    ssa: f64,
    g: f64,
    albedo: f64,
) -> Observation {
    Observation {
        time_utc: Utc.with_ymd_and_hms(2023, 1, 1, 0, 0, 0).unwrap() + TimeDelta::minutes(minutes),
        latitude_deg: lat,
        longitude_deg: lon,
        altitude_m: 100.0,
        pressure_hpa: None,
        aod,
        aod_wavelength_nm: 500.0,
        angstrom,
        ssa: vec![SpectralValue {
            wavelength_nm: 550.0,
            value: ssa,
        }],
        asymmetry: vec![SpectralValue {
            wavelength_nm: 550.0,
            value: g,
        }],
        surface: Surface::Lambertian { albedo },
        ozone_du: 300.0,
        water_cm: 1.5,
        layer: AerosolLayer::default(),
    }
}

fn all_finite(r: &ObservationResult) -> bool {
    let e = [r.instantaneous, r.daily];
    r.aod_550.is_finite()
        && r.pressure_hpa.is_finite()
        && r.solar_zenith_deg.is_finite()
        && r.daylight_hours.is_finite()
        && e.iter().all(|e| {
            let f = [e.clean, e.aerosol];
            e.dre_toa.is_finite()
                && e.dre_sfc.is_finite()
                && e.dre_atm.is_finite()
                && e.heating_rate_k_day.is_finite()
                && (e.efficiency_toa.is_finite() || r.aod_550 == 0.0)
                && f.iter().all(|f| {
                    [
                        f.toa_down,
                        f.toa_up,
                        f.toa_net,
                        f.sfc_down_direct,
                        f.sfc_down_diffuse,
                        f.sfc_up,
                        f.sfc_net,
                    ]
                    .iter()
                    .all(|x| x.is_finite())
                })
        })
}

fn fixed(mu0: f64) -> Settings {
    Settings {
        fixed_cos_zenith: Some(mu0),
        daily_mean: false,
        ..Settings::default()
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    /// SSA = 1: every layer reflects or transmits all it receives, and the column absorbs
    /// nothing (TOA net = surface net).
    #[test]
    fn conservative_scattering_conserves_energy(
        c in closure(),
        taus in prop::collection::vec(0.0f64..50.0, 1..4),
        gs in prop::collection::vec(-0.9f64..0.99, 3),
        mu0 in 0.01f64..=1.0,
        albedo in 0.0f64..=1.0,
    ) {
        let optics: Vec<_> = taus.iter().zip(&gs).map(|(&tau, &g)| LayerOptics { tau, ssa: 1.0, g }).collect();
        let layers: Vec<_> = optics.iter().map(|o| solve_layer(*o, mu0, c)).collect();
        for l in &layers {
            let d = l.direct;
            prop_assert!((d.reflectance + d.diffuse_transmittance + d.direct_transmittance - 1.0).abs() < 1e-12);
            prop_assert!((l.diffuse.reflectance + l.diffuse.transmittance - 1.0).abs() < 1e-12);
        }
        let tau: f64 = taus.iter().sum();
        let f = add_layers(&layers, (-tau / mu0).exp(), albedo, albedo);
        prop_assert!((f.toa_net() - f.sfc_net()).abs() < 1e-12);
        prop_assert!(f.layer_absorption.iter().all(|a| a.abs() < 1e-12));
    }

    /// AOD = 0 gives exactly zero effect, whatever the other properties and settings.
    #[test]
    fn zero_aod_gives_exactly_zero_effect(
        minutes in 0i64..525_600, lat in -89.0f64..89.0, lon in -180.0f64..180.0,
        ssa in 0.3f64..=1.0, g in -0.5f64..0.95, albedo in 0.0f64..=1.0,
        c in closure(), elevated in any::<bool>(), single in any::<bool>(),
    ) {
        let mut o = observation(minutes, lat, lon, 0.0, 1.2, ssa, g, albedo);
        if elevated {
            o.layer = AerosolLayer { base_km: 1.5, top_km: 4.0 };
        }
        let s = Settings {
            closure: c,
            band_set: if single { BandSet::Single } else { BandSet::AstmG173 },
            diurnal_nodes: 6,
            ..Settings::default()
        };
        let r = compute_observation(&o, &s, &Context::new(&s));
        for e in [r.instantaneous, r.daily] {
            prop_assert_eq!(e.dre_toa, 0.0);
            prop_assert_eq!(e.dre_sfc, 0.0);
            prop_assert_eq!(e.dre_atm, 0.0);
        }
    }

    /// Over a dark surface, more scattering (higher SSA) makes the TOA effect more negative;
    /// lowering SSA never raises the net flux at the surface. Only for the delta-scaled
    /// closures: without delta scaling the beam's backscatter fraction γ3 turns negative for
    /// g μ0 > 2/3 (Eddington) or > 1/√3 (quadrature, hemispheric mean) (Meador & Weaver 1980,
    /// Table 1), so that scattering there lowers the reflectance — the failure of the plain
    /// Eddington method for forward-peaked phase functions that motivated delta-Eddington
    /// (Joseph, Wiscombe & Weinman 1976).
    #[test]
    fn monotonic_in_ssa(
        mu0 in 0.05f64..=1.0, aod in 0.01f64..2.0, g in 0.3f64..0.85,
        ssa_lo in 0.5f64..1.0, step in 0.001f64..0.5, albedo in 0.0f64..0.1,
        pifm in any::<bool>(),
    ) {
        let c = if pifm { Closure::Pifm } else { Closure::DeltaEddington };
        let ssa_hi = (ssa_lo + step).min(1.0);
        let s = Settings { closure: c, ..fixed(mu0) };
        let ctx = Context::new(&s);
        let lo = compute_observation(&observation(0, 40.0, 0.0, aod, 1.0, ssa_lo, g, albedo), &s, &ctx);
        let hi = compute_observation(&observation(0, 40.0, 0.0, aod, 1.0, ssa_hi, g, albedo), &s, &ctx);
        prop_assert!(hi.instantaneous.dre_toa <= lo.instantaneous.dre_toa + 1e-9);
        prop_assert!(lo.instantaneous.aerosol.sfc_net <= hi.instantaneous.aerosol.sfc_net + 1e-9);
    }

    /// Lowering SSA never raises the surface net flux, for any surface.
    #[test]
    fn lower_ssa_never_raises_surface_net(
        mu0 in 0.02f64..=1.0, aod in 0.01f64..3.0, g in 0.0f64..0.9,
        ssa_lo in 0.3f64..1.0, step in 0.001f64..0.7, albedo in 0.0f64..=1.0,
        c in closure(),
    ) {
        let ssa_hi = (ssa_lo + step).min(1.0);
        let s = Settings { closure: c, ..fixed(mu0) };
        let ctx = Context::new(&s);
        let lo = compute_observation(&observation(0, 40.0, 0.0, aod, 1.0, ssa_lo, g, albedo), &s, &ctx);
        let hi = compute_observation(&observation(0, 40.0, 0.0, aod, 1.0, ssa_hi, g, albedo), &s, &ctx);
        prop_assert!(lo.instantaneous.aerosol.sfc_net <= hi.instantaneous.aerosol.sfc_net + 1e-9);
    }

    /// A brighter surface makes the TOA effect of an absorbing aerosol (ω ≤ 0.9) less
    /// negative (more positive), over the whole range of surfaces up to fresh snow (A 0.95).
    ///
    /// Where the property holds is taken from DISORT, not from this model
    /// (`albedo_response_against_disort` in `tests/physics_disort.rs`): DISORT's TOA effect
    /// rises with A in every case up to A = 0.6, and over bright surfaces (A 0.6–0.95) it
    /// falls only for near-conservative aerosol (ω ≥ 0.95) under a high sun (μ0 ≥ 0.6) —
    /// the layer then reflects the light coming up from the surface back down more than it
    /// reflects the beam — never for ω = 0.85. Hence two properties: this one for ω ≤ 0.9
    /// at every sun, and `monotonic_in_albedo_under_a_low_sun` for any ω.
    #[test]
    fn monotonic_in_albedo(
        mu0 in 0.05f64..=1.0, aod in 0.01f64..2.0, g in 0.3f64..0.85, ssa in 0.6f64..=0.9,
        a_lo in 0.0f64..0.95, step in 0.001f64..0.3,
    ) {
        let a_hi = (a_lo + step).min(0.95);
        let s = fixed(mu0);
        let ctx = Context::new(&s);
        let lo = compute_observation(&observation(0, 40.0, 0.0, aod, 1.0, ssa, g, a_lo), &s, &ctx);
        let hi = compute_observation(&observation(0, 40.0, 0.0, aod, 1.0, ssa, g, a_hi), &s, &ctx);
        prop_assert!(hi.instantaneous.dre_toa >= lo.instantaneous.dre_toa - 1e-9);
    }

    /// Under a low sun (μ0 ≤ 0.3) a brighter surface makes the TOA effect less negative for
    /// any aerosol, ω up to 1, up to A 0.95: DISORT shows no fall at μ0 = 0.3 over bright
    /// surfaces (see `monotonic_in_albedo`).
    #[test]
    fn monotonic_in_albedo_under_a_low_sun(
        mu0 in 0.05f64..=0.3, aod in 0.01f64..2.0, g in 0.3f64..0.85, ssa in 0.6f64..=1.0,
        a_lo in 0.0f64..0.95, step in 0.001f64..0.3,
    ) {
        let a_hi = (a_lo + step).min(0.95);
        let s = fixed(mu0);
        let ctx = Context::new(&s);
        let lo = compute_observation(&observation(0, 40.0, 0.0, aod, 1.0, ssa, g, a_lo), &s, &ctx);
        let hi = compute_observation(&observation(0, 40.0, 0.0, aod, 1.0, ssa, g, a_hi), &s, &ctx);
        prop_assert!(hi.instantaneous.dre_toa >= lo.instantaneous.dre_toa - 1e-9);
    }

    /// Finite outputs for every finite input in its physical range.
    #[test]
    fn finite_for_in_range_input(
        minutes in 0i64..5_256_000, lat in -90.0f64..=90.0, lon in -180.0f64..=180.0,
        alt in -400.0f64..6000.0, aod in 0.0f64..6.0, angstrom in -0.5f64..3.0,
        ssa in 0.0f64..=1.0, g in -1.0f64..=1.0, albedo in 0.0f64..=1.0,
        ozone in 0.0f64..700.0, water in 0.0f64..10.0, base in 0.0f64..8.0, depth in 0.01f64..6.0,
        c in closure(), ocean in any::<bool>(), single in any::<bool>(),
        fixed_mu in prop::option::of(0.0f64..=1.0),
    ) {
        let mut o = observation(minutes, lat, lon, aod, angstrom, ssa, g, albedo);
        o.altitude_m = alt;
        o.ozone_du = ozone;
        o.water_cm = water;
        o.layer = AerosolLayer { base_km: base, top_km: base + depth };
        if ocean {
            o.surface = Surface::OceanTaylor1996;
        }
        let s = Settings {
            closure: c,
            band_set: if single { BandSet::Single } else { BandSet::AstmG173 },
            fixed_cos_zenith: fixed_mu,
            diurnal_nodes: 8,
            ..Settings::default()
        };
        let r = compute_observation(&o, &s, &Context::new(&s));
        prop_assert!(all_finite(&r), "{r:?}");
    }

    /// No panic for any input at all, NaN and infinities included; a NaN AOD or optical depth
    /// comes out as NaN.
    #[test]
    fn no_panic_for_any_input(
        x in prop::collection::vec(prop_oneof![any::<f64>(), Just(f64::NAN), Just(f64::INFINITY), Just(-0.0)], 16),
        empty in any::<bool>(), nodes in 0usize..50, c in closure(), single in any::<bool>(),
    ) {
        let mut o = observation(0, x[0], x[1], x[2], x[3], x[4], x[5], x[6]);
        o.altitude_m = x[7];
        o.pressure_hpa = Some(x[8]);
        o.aod_wavelength_nm = x[9];
        o.ozone_du = x[10];
        o.water_cm = x[11];
        o.layer = AerosolLayer { base_km: x[12], top_km: x[13] };
        if empty {
            o.ssa.clear();
            o.asymmetry.clear();
        }
        let s = Settings {
            closure: c,
            band_set: if single { BandSet::Single } else { BandSet::AstmG173 },
            solar_constant_wm2: x[14],
            fixed_cos_zenith: if x[15] > 0.0 { Some(x[15]) } else { None },
            diurnal_nodes: nodes,
            ..Settings::default()
        };
        let r = compute_observation(&o, &s, &Context::new(&s));
        // A NaN AOD on a sunlit day is a NaN effect, never a number.
        if x[2].is_nan() && r.daily.clean.toa_down > 0.0 {
            prop_assert!(r.daily.dre_toa.is_nan() && r.daily.dre_sfc.is_nan(), "{r:?}");
        }
        let l = solve_layer(LayerOptics { tau: x[0], ssa: x[1], g: x[2] }, x[3], c);
        if x[0].is_nan() && x[3] > 0.0 {
            prop_assert!(l.direct.reflectance.is_nan() && l.diffuse.transmittance.is_nan(), "{l:?}");
        }
    }
}

/// The shrunk counterexample proptest once found for `monotonic_in_ssa` with the plain
/// Eddington closure (its seed is gone from the regression file: the property no longer
/// draws that closure, so the seed no longer replays the case). Kept as a plain test of
/// why the property is restricted to delta-scaled closures: at μ0 = 0.983, g = 0.847
/// (g μ0 > 2/3, so Eddington's beam backscatter γ3 < 0; Meador & Weaver 1980, Table 1)
/// raising ω from 0.5 to 0.501 makes Eddington's TOA effect less negative, while
/// delta-Eddington's becomes more negative as it should.
#[test]
fn plain_eddington_breaks_ssa_monotonicity_where_delta_scaling_holds() {
    let effect = |c: Closure, ssa: f64| {
        let s = Settings {
            closure: c,
            ..fixed(0.983_273_796_991_941_6)
        };
        let o = observation(0, 40.0, 0.0, 0.01, 1.0, ssa, 0.846_503_620_622_696_2, 0.0);
        compute_observation(&o, &s, &Context::new(&s))
            .instantaneous
            .dre_toa
    };
    let (lo, hi) = (0.5, 0.501);
    assert!(effect(Closure::Eddington, hi) > effect(Closure::Eddington, lo));
    assert!(effect(Closure::DeltaEddington, hi) < effect(Closure::DeltaEddington, lo));
}

/// A NaN in any optical or surface input of a sunlit row comes out as NaN in the effect,
/// instantaneous and 24-hour, never as a plausible number (the reader rejects such rows
/// before they get here; this guards the physics on its own). It would catch a NaN
/// swallowed by `f64::max`/`min` or a comparison on the way (as a NaN depth once was in the
/// two-stream solver).
#[test]
fn nan_inputs_propagate_to_the_effect() {
    let s = Settings::default();
    let ctx = Context::new(&s);
    let noon = || observation(12 * 60, 40.0, 0.0, 0.3, 1.2, 0.9, 0.7, 0.2);
    type Setter = fn(&mut Observation);
    let setters: [(&str, Setter); 6] = [
        ("aod", |o| o.aod = f64::NAN),
        ("angstrom", |o| o.angstrom = f64::NAN),
        ("aod wavelength", |o| o.aod_wavelength_nm = f64::NAN),
        ("ssa", |o| o.ssa[0].value = f64::NAN),
        ("g", |o| o.asymmetry[0].value = f64::NAN),
        ("albedo", |o| {
            o.surface = Surface::Lambertian { albedo: f64::NAN }
        }),
    ];
    let good = compute_observation(&noon(), &s, &ctx);
    assert!(good.instantaneous.dre_toa.is_finite() && !good.flags.sun_below_horizon);
    for (what, set) in setters {
        let mut o = noon();
        set(&mut o);
        let r = compute_observation(&o, &s, &ctx);
        for e in [r.instantaneous, r.daily] {
            assert!(
                e.dre_toa.is_nan() && e.dre_sfc.is_nan() && e.dre_atm.is_nan(),
                "NaN {what}: {e:?}"
            );
        }
    }
}
