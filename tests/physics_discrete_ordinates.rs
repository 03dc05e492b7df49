//! The discrete-ordinate solver against DISORT and against textbook limits.
//!
//! Reference: `tests/fixtures/disort_streams.csv`, written by
//! `tests/reference/disort_streams_reference.py` with DISORT (PyPI `disortpp` 1.2.1; Stamnes,
//! Tsay, Wiscombe & Jayaweera 1988, Appl. Opt. 27, 2502) at 4, 8, 16 and 32 streams with
//! delta-M, for 1, 2 and 3 layers (Rayleigh over aerosol, aerosol over Rayleigh, a mixed
//! layer between two molecular layers), albedo 0 and 0.6, μ0 0.05–1 and at a quadrature
//! cosine.

use hazebook::physics::discrete_ordinates::{
    LayerModes, Quadrature, ScatteringLayer, solve_column,
};

const STREAMS_CSV: &str = include_str!("fixtures/disort_streams.csv");

/// One row of `disort_streams.csv`.
struct Case {
    streams: usize,
    layers: Vec<ScatteringLayer>,
    spelled: String,
    mu0: f64,
    albedo: f64,
    /// toa_up, sfc_dn_direct, sfc_dn_diffuse, sfc_up
    disort: [f64; 4],
}

fn cases() -> Vec<Case> {
    let mut lines = STREAMS_CSV.lines();
    let header = lines.next().unwrap();
    assert_eq!(
        header,
        "streams,layers,mu0,albedo,toa_up,sfc_dn_direct,sfc_dn_diffuse,sfc_up"
    );
    lines
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            let layers = f[1]
                .split('|')
                .map(|lay| {
                    let v: Vec<f64> = lay.split(':').map(|s| s.parse().unwrap()).collect();
                    ScatteringLayer {
                        tau: v[0],
                        ssa: v[1],
                        rayleigh_share: v[2],
                        aerosol_g: v[3],
                    }
                })
                .collect();
            let x: Vec<f64> = f[2..].iter().map(|s| s.parse().unwrap()).collect();
            Case {
                streams: f[0].parse().unwrap(),
                layers,
                spelled: f[1].to_string(),
                mu0: x[0],
                albedo: x[1],
                disort: [x[2], x[3], x[4], x[5]],
            }
        })
        .collect()
}

/// toa_up, sfc_dn_direct, sfc_dn_diffuse, sfc_net of our solver for a case at `streams`.
fn ours(c: &Case, streams: usize) -> [f64; 4] {
    let f = solve_column(&c.layers, c.mu0, c.albedo, streams, true);
    [
        f.toa_up,
        f.sfc_down_direct,
        f.sfc_down_diffuse,
        f.sfc_down_direct + f.sfc_down_diffuse - f.sfc_up,
    ]
}

fn disort_net(c: &Case) -> [f64; 4] {
    let d = c.disort;
    [d[0], d[1], d[2], d[1] + d[2] - d[3]]
}

/// Implementation equivalence: at the same N (4, 8, 16, 32) with delta-M, TOA up, surface
/// down direct and diffuse and surface net agree with DISORT to 1e-6 relative (plus 1e-12
/// absolute for fluxes that are 0); the largest relative difference is printed with
/// `--nocapture`.
#[test]
fn same_streams_as_disort() {
    let names = ["toa_up", "sfc_dn_direct", "sfc_dn_diffuse", "sfc_net"];
    let mut worst: f64 = 0.0;
    let all = cases();
    assert_eq!(all.len(), 640);
    for c in &all {
        let o = ours(c, c.streams);
        let d = disort_net(c);
        for k in 0..4 {
            let err = (o[k] - d[k]).abs();
            worst = worst.max(err / d[k].abs().max(1e-6));
            assert!(
                err <= 1e-6 * d[k].abs() + 1e-12,
                "N {} {} μ0 {} A {}: {} ours {} DISORT {}",
                c.streams,
                c.spelled,
                c.mu0,
                c.albedo,
                names[k],
                o[k],
                d[k]
            );
        }
    }
    println!("largest relative difference from DISORT at the same N: {worst:.1e}");
}

/// Convergence: against DISORT-32 on the same grid the largest error (fraction of the
/// incident flux, over TOA up, surface direct, diffuse and net) falls with N, and 16 streams
/// are within 3e-4 everywhere (the errors per N are printed with `--nocapture`).
#[test]
fn converges_to_disort_32() {
    let reference: Vec<Case> = cases().into_iter().filter(|c| c.streams == 32).collect();
    // μ0 at the quadrature cosine of N = 32 repeats nothing for the others; keep all rows.
    let mut last = f64::INFINITY;
    for n in [4, 6, 8, 12, 16] {
        let worst = reference
            .iter()
            .map(|c| {
                let (o, d) = (ours(c, n), disort_net(c));
                (0..4).map(|k| (o[k] - d[k]).abs()).fold(0.0, f64::max)
            })
            .fold(0.0, f64::max);
        println!("N = {n}: largest error against DISORT-32 {worst:.2e}");
        assert!(worst < last, "N = {n}: {worst} not below {last}");
        last = worst;
    }
    assert!(last < 3e-4, "16 streams: {last}");
}

/// Energy conservation at ω = 1 over a black surface: R + T = 1 to 1e-12, for one to three
/// layers, optical depths up to 10 and N = 2–32, including μ0 at a quadrature cosine.
#[test]
fn conservative_columns_conserve_energy() {
    let aerosol = |tau, g| ScatteringLayer {
        tau,
        ssa: 1.0,
        rayleigh_share: 0.0,
        aerosol_g: g,
    };
    let rayleigh = |tau| ScatteringLayer {
        tau,
        ssa: 1.0,
        rayleigh_share: 1.0,
        aerosol_g: 0.0,
    };
    let mixed = |tau| ScatteringLayer {
        tau,
        ssa: 1.0,
        rayleigh_share: 0.4,
        aerosol_g: 0.8,
    };
    for n in [2, 4, 6, 8, 16, 32] {
        let quad_mu = Quadrature::new(n).unwrap().cosines()[0];
        for mu0 in [0.03, 0.3, 1.0, quad_mu] {
            for tau in [1e-5, 0.5, 3.0, 10.0] {
                let columns = [
                    vec![aerosol(tau, 0.7)],
                    vec![rayleigh(0.3), aerosol(tau, 0.6)],
                    vec![aerosol(tau, 0.85), rayleigh(0.1), mixed(tau)],
                ];
                for col in &columns {
                    let f = solve_column(col, mu0, 0.0, n, true);
                    let sum = f.toa_up + f.sfc_down_direct + f.sfc_down_diffuse;
                    assert!(
                        (sum - 1.0).abs() < 1e-12,
                        "N {n} μ0 {mu0} τ {tau} {} layers: R + T = {sum}",
                        col.len()
                    );
                    let absorbed: f64 = f.layer_absorption.iter().sum();
                    assert!(absorbed.abs() < 1e-12, "{absorbed}");
                }
            }
        }
    }
}

/// The conservative limit is continuous: ω = 1 − 10⁻⁸ (solved with the eigen-solutions)
/// differs from ω = 1 (solved with the diffusion solution) by less than 10⁻⁶ of the incident
/// flux.
#[test]
fn conservative_limit_is_continuous() {
    for tau in [0.1, 2.0, 10.0] {
        let layer = |ssa| ScatteringLayer {
            tau,
            ssa,
            rayleigh_share: 0.0,
            aerosol_g: 0.7,
        };
        for n in [4, 16] {
            let a = solve_column(&[layer(1.0)], 0.6, 0.2, n, true);
            let b = solve_column(&[layer(1.0 - 1e-8)], 0.6, 0.2, n, true);
            assert!((a.toa_up - b.toa_up).abs() < 1e-6, "{a:?} {b:?}");
            assert!((a.sfc_net() - b.sfc_net()).abs() < 1e-6, "{a:?} {b:?}");
        }
    }
}

/// Azimuthally averaged Henyey–Greenstein phase function between a beam from above at μ0 and
/// a direction of cosine μ (μ > 0 upward): p = (1 − g²)/(1 + g² − 2g cosΘ)^{3/2} averaged
/// over the azimuth by the trapezoidal rule (exact for a periodic smooth integrand to
/// rounding with 720 points).
fn hg_azimuthal_mean(g: f64, mu0: f64, mu: f64) -> f64 {
    let m = 720;
    let (s0, s) = ((1.0 - mu0 * mu0).sqrt(), (1.0 - mu * mu).sqrt());
    (0..m)
        .map(|i| {
            let phi = 2.0 * std::f64::consts::PI * i as f64 / m as f64;
            let cos_theta = -mu0 * mu + s0 * s * phi.cos();
            (1.0 - g * g) / (1.0 + g * g - 2.0 * g * cos_theta).powf(1.5)
        })
        .sum::<f64>()
        / m as f64
}

/// Single scattering for τ → 0 (e.g. Liou 2002, § 6.2, from memory): the diffuse reflectance
/// tends to ω τ β(μ0)/μ0 and the diffuse transmittance to ω τ (1 − β(μ0))/μ0, with the
/// backscattered fraction β(μ0) = ½∫₀¹ p(μ, −μ0) dμ of the phase function (integrated here
/// from the closed-form Henyey–Greenstein function, 2000-point midpoint rule). Without
/// delta-M, N = 32, g = 0.5 (truncated moments below 0.5³² ≈ 2e-10); τ = 1e-6, relative
/// tolerance 1e-4 (the second-order terms are ~τ/μ0, the angular quadrature of the solver
/// ~1e-6). Rayleigh: β = ½ exactly (∫₀¹ P₂ dμ = 0).
#[test]
fn single_scattering_limit() {
    let tau = 1e-6;
    let ssa = 0.9;
    for mu0 in [0.2, 0.5, 1.0] {
        let beta: f64 = {
            let m = 2000;
            (0..m)
                .map(|i| hg_azimuthal_mean(0.5, mu0, (i as f64 + 0.5) / m as f64))
                .sum::<f64>()
                / m as f64
                * 0.5
        };
        let hg = ScatteringLayer {
            tau,
            ssa,
            rayleigh_share: 0.0,
            aerosol_g: 0.5,
        };
        let f = solve_column(&[hg], mu0, 0.0, 32, false);
        let r = ssa * tau * beta / mu0;
        let t = ssa * tau * (1.0 - beta) / mu0;
        assert!(
            (f.toa_up / r - 1.0).abs() < 1e-4,
            "μ0 {mu0}: {} vs {r}",
            f.toa_up
        );
        assert!(
            (f.sfc_down_diffuse / t - 1.0).abs() < 1e-4,
            "μ0 {mu0}: {} vs {t}",
            f.sfc_down_diffuse
        );
        let ray = ScatteringLayer {
            tau,
            ssa,
            rayleigh_share: 1.0,
            aerosol_g: 0.0,
        };
        let f = solve_column(&[ray], mu0, 0.0, 4, false);
        let r = ssa * tau * 0.5 / mu0;
        assert!((f.toa_up / r - 1.0).abs() < 1e-4, "Rayleigh μ0 {mu0}");
    }
}

/// Thin-layer limit: a layer of τ = 0 is the bare surface, and near a resonance k μ0 = 1
/// (a weakly scattering layer, μ0 at a quadrature cosine) the fluxes are continuous in μ0.
#[test]
fn thin_layer_and_resonance() {
    let empty = ScatteringLayer {
        tau: 0.0,
        ssa: 0.9,
        rayleigh_share: 0.5,
        aerosol_g: 0.7,
    };
    let f = solve_column(&[empty, empty], 0.4, 0.3, 8, true);
    assert!((f.toa_up - 0.3).abs() < 1e-14, "{f:?}");
    assert!((f.sfc_down_direct - 1.0).abs() < 1e-14);
    assert!(f.sfc_down_diffuse.abs() < 1e-14);
    let weak = ScatteringLayer {
        tau: 0.5,
        ssa: 1e-3,
        rayleigh_share: 0.0,
        aerosol_g: 0.6,
    };
    for n in [4, 8] {
        let quad = Quadrature::new(n).unwrap();
        let modes = LayerModes::new(&weak, &quad, true);
        for &k in modes.eigenvalues() {
            let mu = 1.0 / k;
            if mu > 1.0 {
                continue;
            }
            let at = solve_column(&[weak], mu, 0.2, n, true);
            assert!(at.toa_up.is_finite() && at.toa_up > 0.0, "{at:?}");
            for d in [1e-9, 1e-7, 1e-6, 1e-5, 1e-4] {
                for side in [-1.0, 1.0] {
                    let near = solve_column(&[weak], mu * (1.0 + side * d), 0.2, n, true);
                    let tol = 1e-9 + 2.0 * d;
                    assert!(
                        (near.toa_up - at.toa_up).abs() < tol
                            && (near.sfc_net() - at.sfc_net()).abs() < tol,
                        "N {n}, μ0 {mu} × (1 {side:+} {d}): {near:?} vs {at:?}"
                    );
                }
            }
        }
    }
}

mod driver {
    //! The solvers inside the forcing driver, on the cases of the two-stream's DISORT checks:
    //! one aerosol layer over a Lambertian surface (τ 0.02–2, ω 0.75–1, g 0.5–0.8 with a
    //! Henyey–Greenstein phase function, albedo 0.05–0.6), one band, no molecules or gases,
    //! 24-hour means at 30° N on the March equinox (12 diurnal nodes). The reference is our
    //! discrete-ordinate solver at 32 streams, which agrees with DISORT-32 to 1e-6 on the
    //! fixture grid (`same_streams_as_disort` above).

    use chrono::{TimeZone, Utc};
    use hazebook::physics::forcing::{Context, compute_observation};
    use hazebook::physics::{
        AerosolLayer, BandSet, DEFAULT_STREAMS, Method, Observation, ObservationResult, Settings,
        SpectralValue, Surface,
    };

    const TAUS: [f64; 6] = [0.02, 0.1, 0.3, 0.7, 1.2, 2.0];
    const SSAS: [f64; 4] = [0.75, 0.85, 0.95, 1.0];
    const GS: [f64; 3] = [0.5, 0.65, 0.8];
    const ALBEDOS: [f64; 3] = [0.05, 0.2, 0.6];

    fn observation(tau: f64, ssa: f64, g: f64, albedo: f64) -> Observation {
        let at = |value| {
            vec![SpectralValue {
                wavelength_nm: 550.0,
                value,
            }]
        };
        Observation {
            time_utc: Utc.with_ymd_and_hms(2021, 3, 20, 12, 0, 0).unwrap(),
            latitude_deg: 30.0,
            longitude_deg: 0.0,
            altitude_m: 0.0,
            pressure_hpa: Some(1013.25),
            aod: tau,
            aod_wavelength_nm: 550.0,
            angstrom: 0.0,
            ssa: at(ssa),
            asymmetry: at(g),
            surface: Surface::Lambertian { albedo },
            ozone_du: 300.0,
            water_cm: 1.0,
            layer: AerosolLayer::default(),
        }
    }

    fn settings(method: Method, streams: usize, mu0: Option<f64>) -> Settings {
        Settings {
            band_set: BandSet::Single,
            rayleigh: false,
            gases: false,
            earth_sun_distance: false,
            daily_mean: mu0.is_none(),
            fixed_cos_zenith: mu0,
            method,
            streams,
            ..Settings::default()
        }
    }

    fn run_all(s: &Settings) -> Vec<ObservationResult> {
        let ctx = Context::new(s);
        let mut out = Vec::new();
        for tau in TAUS {
            for ssa in SSAS {
                for g in GS {
                    for a in ALBEDOS {
                        out.push(compute_observation(&observation(tau, ssa, g, a), s, &ctx));
                    }
                }
            }
        }
        out
    }

    fn quantile(mut v: Vec<f64>, q: f64) -> f64 {
        v.sort_by(f64::total_cmp);
        let i = ((v.len() - 1) as f64 * q).round() as usize;
        v[i]
    }

    /// Relative errors of the 24-h ΔF_TOA and ΔF_SFC against the reference on the cases with
    /// |ΔF| > 0.005 of the incident flux: (median, P95) for TOA and for SFC.
    fn daily_errors(
        test: &[ObservationResult],
        reference: &[ObservationResult],
    ) -> [(f64, f64); 2] {
        let mut out = [(0.0, 0.0); 2];
        for (k, pick) in [
            (|e: &hazebook::physics::Effect| e.dre_toa) as fn(&_) -> f64,
            |e| e.dre_sfc,
        ]
        .into_iter()
        .enumerate()
        {
            let rel: Vec<f64> = test
                .iter()
                .zip(reference)
                .filter(|(_, r)| pick(&r.daily).abs() > 0.005 * r.daily.clean.toa_down)
                .map(|(t, r)| ((pick(&t.daily) - pick(&r.daily)) / pick(&r.daily)).abs())
                .collect();
            out[k] = (quantile(rel.clone(), 0.5), quantile(rel, 0.95));
        }
        out
    }

    /// The accuracy frontier of the accurate option (24-h ΔF at TOA and surface, relative
    /// errors against 32 streams on the cases with |ΔF| > 0.005 of the incident flux).
    /// Measured (median / P95):
    ///
    /// | solver | TOA | SFC |
    /// |---|---|---|
    /// | delta-Eddington | 5.6 % / 38.6 % | 3.1 % / 16.6 % |
    /// | 4 streams | 1.14 % / 6.4 % | 0.90 % / 5.1 % |
    /// | 6 streams | 0.13 % / 1.24 % | 0.16 % / 2.0 % |
    /// | 8 streams | 0.03 % / 0.46 % | 0.04 % / 0.69 % |
    ///
    /// The goal of the accurate option, median ≤ 1 % and P95 ≤ 3 % at TOA and at the surface,
    /// is asserted for the default number of streams ([`DEFAULT_STREAMS`], 6: the fewest that
    /// meet it); 4 streams miss it (asserted, so the choice of default stays justified), and the
    /// errors fall with N (asserted). The delta-Eddington row shows the check can fail.
    #[test]
    fn accuracy_frontier_24h() {
        let reference = run_all(&settings(Method::DiscreteOrdinates, 32, None));
        let two = daily_errors(&run_all(&settings(Method::TwoStream, 4, None)), &reference);
        println!("delta-Eddington: TOA {:?}, SFC {:?}", two[0], two[1]);
        assert!(two[0].1 > 0.03, "the two-stream misses the goal: {two:?}");
        let mut last = f64::INFINITY;
        for n in [4, 6, 8] {
            let e = daily_errors(
                &run_all(&settings(Method::DiscreteOrdinates, n, None)),
                &reference,
            );
            println!("{n} streams: TOA {:?}, SFC {:?}", e[0], e[1]);
            let meets = e.iter().all(|&(median, p95)| median <= 0.01 && p95 <= 0.03);
            if n == DEFAULT_STREAMS {
                assert!(meets, "the default {n} streams miss the goal: {e:?}");
            }
            if n < DEFAULT_STREAMS {
                assert!(
                    !meets,
                    "{n} streams meet the goal: a cheaper default would do"
                );
            }
            assert!(e[0].1 < last, "{n} streams: no better than fewer");
            last = e[0].1;
        }
    }

    /// Low sun (instantaneous, μ0 0.05–0.2), absolute ΔF_TOA error as a fraction of the
    /// incident flux against 32 streams, largest over the cases. Measured: delta-Eddington
    /// 0.143, 4 streams 0.065, 6 streams (the default) 0.032, 8 streams 0.015; the bounds sit
    /// above them with a margin.
    #[test]
    fn low_sun_errors() {
        for (method, n, bound) in [
            (Method::TwoStream, 4, f64::INFINITY),
            (Method::DiscreteOrdinates, 4, 0.08),
            (Method::DiscreteOrdinates, 6, 0.04),
            (Method::DiscreteOrdinates, 8, 0.02),
        ] {
            let mut worst: f64 = 0.0;
            for mu0 in [0.05, 0.1, 0.2] {
                let reference = run_all(&settings(Method::DiscreteOrdinates, 32, Some(mu0)));
                let test = run_all(&settings(method, n, Some(mu0)));
                for (t, r) in test.iter().zip(&reference) {
                    let inc = r.instantaneous.clean.toa_down;
                    worst =
                        worst.max((t.instantaneous.dre_toa - r.instantaneous.dre_toa).abs() / inc);
                }
            }
            println!("{method:?} {n}: largest low-sun ΔF_TOA error {worst:.4}");
            assert!(worst < bound, "{method:?} {n}: {worst}");
        }
    }

    /// `error_estimate`: the error columns are two-stream minus discrete ordinates, whichever
    /// solver produces the main columns, and NaN when the estimate is off.
    #[test]
    fn error_estimate_is_two_stream_minus_accurate() {
        let o = observation(0.5, 0.9, 0.7, 0.2);
        let base = Settings {
            daily_mean: true,
            fixed_cos_zenith: Some(0.5),
            ..settings(Method::TwoStream, 4, None)
        };
        let run = |s: &Settings| compute_observation(&o, s, &Context::new(s));
        let ts = run(&base);
        let dom = run(&Settings {
            method: Method::DiscreteOrdinates,
            ..base.clone()
        });
        assert!(ts.solver_error.dre_toa.is_nan() && ts.solver_error.dre_sfc_24h.is_nan());
        let want = [
            ts.instantaneous.dre_toa - dom.instantaneous.dre_toa,
            ts.instantaneous.dre_sfc - dom.instantaneous.dre_sfc,
            ts.daily.dre_toa - dom.daily.dre_toa,
            ts.daily.dre_atm - dom.daily.dre_atm,
        ];
        assert!(want[0].abs() > 1e-3, "the solvers differ: {want:?}");
        for method in [Method::TwoStream, Method::DiscreteOrdinates] {
            let r = run(&Settings {
                method,
                error_estimate: true,
                ..base.clone()
            });
            let e = r.solver_error;
            let got = [e.dre_toa, e.dre_sfc, e.dre_toa_24h, e.dre_atm_24h];
            for (g, w) in got.iter().zip(&want) {
                assert!(
                    (g - w).abs() < 1e-9 * w.abs().max(1.0),
                    "{method:?}: {got:?} vs {want:?}"
                );
            }
        }
    }

    /// `rayleigh_above_tau` (grid `--rayleigh-above`): the aerosol-free column is one purely
    /// molecular layer of that optical depth over the surface.
    #[test]
    fn molecular_layer_above_the_aerosol() {
        use hazebook::physics::discrete_ordinates::{ScatteringLayer, solve_column};
        let o = observation(0.3, 0.9, 0.7, 0.2);
        let s = Settings {
            rayleigh_above_tau: Some(0.3),
            ..settings(Method::DiscreteOrdinates, 8, Some(0.5))
        };
        let r = compute_observation(&o, &s, &Context::new(&s));
        let clean = r.instantaneous.clean;
        let alone = solve_column(
            &[ScatteringLayer {
                tau: 0.3,
                ssa: 1.0,
                rayleigh_share: 1.0,
                aerosol_g: 0.0,
            }],
            0.5,
            0.2,
            8,
            true,
        );
        let up = clean.toa_up / clean.toa_down;
        assert!(
            (up - alone.toa_up).abs() < 1e-12,
            "{up} vs {}",
            alone.toa_up
        );
        assert!(up > 0.2 + 0.01, "molecules reflect: {up}");
        assert!(r.instantaneous.dre_toa.is_finite());
    }
}
