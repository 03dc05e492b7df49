//! Cost of the propagated input uncertainty: `cargo bench --bench uncertainty`.
//!
//! 100,000 varied observations with the default settings, on all cores (rayon): the physics
//! alone (`compute_batch`), then the linearised propagation of the four inputs the sample job
//! declares (AOD, SSA, g, albedo) and of all eight inputs. Prints seconds and the ratio of
//! physics with propagation to physics without.

use chrono::{TimeDelta, TimeZone, Utc};
use hazebook::physics::forcing::{Context, compute_batch_with_context};
use hazebook::physics::uncertainty::{Declared, Input, InputSigma, Nature, propagate_batch};
use hazebook::physics::{AerosolLayer, Observation, Settings, SpectralValue, Surface};
use std::time::Instant;

/// Deterministic pseudo-random numbers in [0, 1) (a 64-bit LCG, Knuth MMIX constants).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn observations(n: usize) -> Vec<Observation> {
    let mut r = Lcg(7);
    let start = Utc.with_ymd_and_hms(2024, 1, 1, 0, 0, 0).unwrap();
    (0..n)
        .map(|_| Observation {
            time_utc: start + TimeDelta::minutes((r.next() * 366.0 * 1440.0) as i64),
            latitude_deg: -70.0 + 140.0 * r.next(),
            longitude_deg: -180.0 + 360.0 * r.next(),
            altitude_m: 2000.0 * r.next(),
            pressure_hpa: None,
            aod: 0.02 + r.next(),
            aod_wavelength_nm: 500.0,
            angstrom: 0.2 + 1.6 * r.next(),
            ssa: vec![SpectralValue {
                wavelength_nm: 440.0,
                value: 0.8 + 0.19 * r.next(),
            }],
            asymmetry: vec![SpectralValue {
                wavelength_nm: 440.0,
                value: 0.6 + 0.15 * r.next(),
            }],
            surface: Surface::Lambertian {
                albedo: 0.05 + 0.3 * r.next(),
            },
            ozone_du: 250.0 + 100.0 * r.next(),
            water_cm: 0.3 + 4.0 * r.next(),
            layer: AerosolLayer::default(),
        })
        .collect()
}

fn declared(inputs: &[Input]) -> Declared {
    let mut d = Declared::default();
    for &i in inputs {
        d.set(
            i,
            InputSigma {
                absolute: 0.02,
                relative: 0.0,
                nature: Nature::Random,
            },
        );
    }
    d
}

fn main() {
    let n = 100_000;
    let obs = observations(n);
    let settings = Settings::default();
    let ctx = Context::new(&settings);
    // Warm-up (thread pool, page faults).
    let _ = compute_batch_with_context(&obs[..2000], &settings, &ctx);
    let t = Instant::now();
    let base = compute_batch_with_context(&obs, &settings, &ctx);
    let t_base = t.elapsed().as_secs_f64();
    println!(
        "physics without propagation, {n} rows, {} threads: {t_base:.2} s",
        rayon::current_num_threads()
    );
    for (label, inputs) in [
        (
            "4 inputs (AOD, SSA, g, albedo)",
            vec![Input::Aod, Input::Ssa, Input::Asymmetry, Input::Albedo],
        ),
        ("all 8 inputs", Input::ALL.to_vec()),
    ] {
        let d = declared(&inputs);
        let t = Instant::now();
        let u = propagate_batch(&obs, &base, &settings, &ctx, &d);
        let t_u = t.elapsed().as_secs_f64();
        std::hint::black_box(&u);
        println!(
            "propagation of {label}: {t_u:.2} s; physics with propagation {:.2} s = {:.2} × without",
            t_base + t_u,
            (t_base + t_u) / t_base
        );
    }
}
