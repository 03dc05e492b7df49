//! Geometry of one day for 24-hour means: Gauss–Legendre nodes in hour angle over the
//! daylight part of the day.
//!
//! The declination δ and the eccentricity factor (r₀/r)² of the day come from the Fourier
//! series of Spencer (1971), Search 2(5), 172, as given by Iqbal (1983), An Introduction to
//! Solar Radiation, eqs. 1.2.1 and 1.3.1, with the day angle Γ = 2π(d − 1)/365 for day of
//! year d. The half-day length h₀ follows the sunrise equation cos h₀ = −tan φ tan δ
//! (geometric sunrise, sun centre on the horizon, no refraction), h₀ = π for polar day and
//! 0 for polar night.
//!
//! With μ₀(h) = sin φ sin δ + cos φ cos δ cos h, the 24-hour mean of a flux F(μ₀) is
//! (r₀/r)² (1/2π) ∫_{−h₀}^{h₀} F(μ₀(h)) dh. For a fixed declination the integrand is even
//! in h (symmetric about solar noon), so the 2n-node Gauss–Legendre rule on [−h₀, h₀]
//! (sunrise to sunset), whose nodes are symmetric, needs F at only n distinct hour angles:
//! its n nodes on (0, h₀] are kept, each with twice its weight. This is exactly the 2n-node
//! rule for the whole day, at the cost of n zenith angles (about ten times more accurate,
//! for typical flux integrands and n = 12, than n nodes placed on [0, h₀] alone).

use chrono::{Datelike, NaiveDate};
use std::f64::consts::PI;
use std::sync::OnceLock;

/// Zenith angles and quadrature weights of one day.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct DayGeometry {
    /// cos(solar zenith) at the nodes [unitless, ≥ 0], from noon towards sunset.
    pub cos_zenith: Vec<f64>,
    /// Fraction of 24 h represented by each node [unitless]; Σ = daylight fraction.
    pub weights: Vec<f64>,
    /// Length of the day from geometric sunrise to sunset [h].
    pub daylight_hours: f64,
    /// (1 AU / r)² of the day [unitless].
    pub distance_factor: f64,
    /// The sun does not set on this day.
    pub polar_day: bool,
    /// The sun does not rise on this day: no nodes.
    pub polar_night: bool,
}

/// Day angle Γ = 2π(d − 1)/365 [rad] of Spencer (1971) for day of year `day_of_year`
/// [1–366].
fn day_angle(day_of_year: u32) -> f64 {
    2.0 * PI * (f64::from(day_of_year) - 1.0) / 365.0
}

/// Solar declination [rad] of Spencer (1971) (Iqbal 1983, eq. 1.3.1) for day of year
/// `day_of_year` [1–366]; maximum error about 0.0006 rad (Iqbal 1983).
pub fn spencer_declination_rad(day_of_year: u32) -> f64 {
    let g = day_angle(day_of_year);
    0.006918 - 0.399912 * g.cos() + 0.070257 * g.sin() - 0.006758 * (2.0 * g).cos()
        + 0.000907 * (2.0 * g).sin()
        - 0.002697 * (3.0 * g).cos()
        + 0.00148 * (3.0 * g).sin()
}

/// Eccentricity correction factor (r₀/r)² [unitless] of Spencer (1971) (Iqbal 1983, eq.
/// 1.2.1) for day of year `day_of_year` [1–366]; accuracy about 1e-4.
pub fn spencer_distance_factor(day_of_year: u32) -> f64 {
    let g = day_angle(day_of_year);
    1.000110
        + 0.034221 * g.cos()
        + 0.001280 * g.sin()
        + 0.000719 * (2.0 * g).cos()
        + 0.000077 * (2.0 * g).sin()
}

/// Half-day length h₀ [rad, 0–π] from the sunrise equation cos h₀ = −tan φ tan δ for
/// latitude `latitude_rad` and declination `declination_rad` [rad].
pub fn sunset_hour_angle_rad(latitude_rad: f64, declination_rad: f64) -> f64 {
    let c = -latitude_rad.tan() * declination_rad.tan();
    if c.is_nan() {
        return f64::NAN;
    }
    c.clamp(-1.0, 1.0).acos()
}

/// Gauss–Legendre nodes (ascending) and weights on [−1, 1] for `n` points, by Newton
/// iteration on the Legendre polynomial Pₙ from the recurrence (Press et al., Numerical
/// Recipes, 3rd ed., §4.6). Exact for polynomials of degree ≤ 2n − 1.
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    let nf = n as f64;
    for i in 0..n.div_ceil(2) {
        // Initial guess (Tricomi), then Newton on P_n.
        let mut z = (PI * (i as f64 + 0.75) / (nf + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            let (mut p1, mut p2) = (1.0, 0.0);
            for j in 0..n {
                let jf = j as f64;
                let p3 = p2;
                p2 = p1;
                p1 = ((2.0 * jf + 1.0) * z * p2 - jf * p3) / (jf + 1.0);
            }
            dp = nf * (z * p1 - p2) / (z * z - 1.0);
            let dz = p1 / dp;
            z -= dz;
            if dz.abs() < 1e-15 {
                break;
            }
        }
        x[i] = -z;
        x[n - 1 - i] = z;
        let wi = 2.0 / ((1.0 - z * z) * dp * dp);
        w[i] = wi;
        w[n - 1 - i] = wi;
    }
    (x, w)
}

/// Gauss–Legendre rule for `n` nodes, cached (and borrowed, not copied) for n ≤ 128.
fn gauss_legendre_cached(n: usize) -> std::borrow::Cow<'static, (Vec<f64>, Vec<f64>)> {
    const MAX: usize = 128;
    static CACHE: OnceLock<Vec<(Vec<f64>, Vec<f64>)>> = OnceLock::new();
    if n > MAX {
        return std::borrow::Cow::Owned(gauss_legendre(n));
    }
    std::borrow::Cow::Borrowed(&CACHE.get_or_init(|| (0..=MAX).map(gauss_legendre).collect())[n])
}

/// Largest number of distinct hour angles [`day_geometry`] uses.
pub const MAX_NODES: usize = 1024;

/// Geometry of the day `date` (UTC calendar day) at `latitude_deg` [deg north, −90–90]
/// with `nodes` distinct hour angles (at least 1, at most [`MAX_NODES`]; values outside are
/// clamped): the 2·`nodes`-point Gauss–Legendre rule from sunrise to sunset folded at solar
/// noon (see the module documentation for the quadrature and its sources).
///
/// The 24-hour mean of a flux F(μ₀) is `distance_factor * Σ weights[i] · F(cos_zenith[i])`,
/// and Σ weights = daylight fraction = h₀/π. In polar night the vectors are empty and
/// `daylight_hours` is 0. A non-finite latitude gives polar night with NaN `daylight_hours`.
pub fn day_geometry(date: NaiveDate, latitude_deg: f64, nodes: usize) -> DayGeometry {
    let doy = date.ordinal();
    let delta = spencer_declination_rad(doy);
    let phi = latitude_deg.clamp(-90.0, 90.0).to_radians();
    let distance_factor = spencer_distance_factor(doy);
    let h0 = sunset_hour_angle_rad(phi, delta);
    if !h0.is_finite() {
        return DayGeometry {
            daylight_hours: f64::NAN,
            distance_factor,
            polar_night: true,
            ..DayGeometry::default()
        };
    }
    let polar_day = h0 >= PI;
    let polar_night = h0 <= 0.0;
    let daylight_hours = 24.0 * h0 / PI;
    if polar_night {
        return DayGeometry {
            daylight_hours: 0.0,
            distance_factor,
            polar_night: true,
            ..DayGeometry::default()
        };
    }
    let (a, b) = (phi.sin() * delta.sin(), phi.cos() * delta.cos());
    let n = nodes.clamp(1, MAX_NODES);
    let rule = gauss_legendre_cached(2 * n);
    let (x, w) = (&rule.0, &rule.1);
    // The 2n-node rule on [−1, 1] mapped onto [−h₀, h₀]: h = h₀ x, dh = h₀ dx; its upper n
    // nodes (x > 0, ascending: noon towards sunset) with doubled weights; divided by 2π for
    // the fraction of 24 h: weight = 2 h₀ wᵢ / (2π) = h₀ wᵢ / π.
    let mut cos_zenith = Vec::with_capacity(n);
    let mut weights = Vec::with_capacity(n);
    for (xi, wi) in x[n..].iter().zip(&w[n..]) {
        let h = h0 * xi;
        cos_zenith.push((a + b * h.cos()).max(0.0));
        weights.push(h0 * wi / PI);
    }
    DayGeometry {
        cos_zenith,
        weights,
        daylight_hours,
        distance_factor,
        polar_day,
        polar_night: false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn date(y: i32, m: u32, d: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, d).unwrap()
    }

    #[test]
    fn gauss_legendre_integrates_polynomials_exactly() {
        for n in 1..=20 {
            let (x, w) = gauss_legendre(n);
            assert!((w.iter().sum::<f64>() - 2.0).abs() < 1e-13);
            for k in 0..(2 * n) {
                let exact = if k % 2 == 0 {
                    2.0 / (k as f64 + 1.0)
                } else {
                    0.0
                };
                let q: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(k as i32)).sum();
                assert!((q - exact).abs() < 1e-12, "n={n} k={k}");
            }
        }
    }

    #[test]
    fn equator_at_equinox_has_twelve_hours() {
        // Spencer's declination on 20 March is about −0.4°, so ~12 h ± 0.01 h.
        let g = day_geometry(date(2024, 3, 20), 0.0, 12);
        assert!(
            (g.daylight_hours - 12.0).abs() < 0.01,
            "{}",
            g.daylight_hours
        );
        assert!((g.weights.iter().sum::<f64>() - 0.5).abs() < 1e-3);
        assert!(!g.polar_day && !g.polar_night);
    }

    #[test]
    fn polar_day_and_night_at_80_north() {
        let june = day_geometry(date(2024, 6, 21), 80.0, 12);
        assert!(june.polar_day && !june.polar_night);
        assert!((june.daylight_hours - 24.0).abs() < 1e-12);
        assert!((june.weights.iter().sum::<f64>() - 1.0).abs() < 1e-12);
        assert!(june.cos_zenith.iter().all(|&m| m > 0.0));
        let dec = day_geometry(date(2024, 12, 21), 80.0, 12);
        assert!(dec.polar_night && !dec.polar_day);
        assert!(dec.cos_zenith.is_empty() && dec.weights.is_empty());
        assert_eq!(dec.daylight_hours, 0.0);
        // And the other way round in the south.
        assert!(day_geometry(date(2024, 6, 21), -80.0, 12).polar_night);
        assert!(day_geometry(date(2024, 12, 21), -80.0, 12).polar_day);
    }

    /// Daily-mean insolation on a horizontal surface at the top of the atmosphere, Q/S₀ =
    /// (1/π)(r₀/r)² (h₀ sin φ sin δ + cos φ cos δ sin h₀) (e.g. Liou 2002, An Introduction
    /// to Atmospheric Radiation, eq. 2.2.21; Berger 1978).
    fn analytic_mean_mu(latitude_deg: f64, doy: u32) -> f64 {
        let phi = latitude_deg.to_radians();
        let d = spencer_declination_rad(doy);
        let h0 = sunset_hour_angle_rad(phi, d);
        (h0 * phi.sin() * d.sin() + phi.cos() * d.cos() * h0.sin()) / PI
    }

    #[test]
    fn daily_mean_mu_matches_the_analytic_insolation() {
        for &lat in &[
            -89.0, -66.0, -45.0, -10.0, 0.0, 23.0, 52.0, 70.0, 80.0, 89.9,
        ] {
            for m in 1..=12 {
                let d = date(2023, m, 15);
                let g = day_geometry(d, lat, 12);
                let exact = analytic_mean_mu(lat, d.ordinal());
                let q: f64 = g
                    .weights
                    .iter()
                    .zip(&g.cos_zenith)
                    .map(|(w, m)| w * m)
                    .sum();
                if exact < 1e-9 {
                    assert!(q.abs() < 1e-9);
                } else {
                    assert!(
                        ((q - exact) / exact).abs() < 1e-6,
                        "lat {lat} month {m}: {q} {exact}"
                    );
                }
            }
        }
    }

    /// A flux-like integrand: beam attenuation times a reflectance that rises at low sun.
    fn flux_like(mu: f64) -> f64 {
        mu * (-0.35 / mu).exp() * (0.2 + 0.3 * (1.0 - mu))
    }

    fn daily_mean(g: &DayGeometry, f: impl Fn(f64) -> f64) -> f64 {
        g.weights
            .iter()
            .zip(&g.cos_zenith)
            .map(|(w, &m)| if m > 0.0 { w * f(m) } else { 0.0 })
            .sum()
    }

    /// The folded 2n-point rule (Gauss–Legendre error theory; common practice for even
    /// integrands): 12 hour angles reproduce the daily mean of a non-polynomial flux to 1e-6
    /// of a 400-node reference. Placing 12 nodes on noon–sunset alone misses by 3e-6–8e-6
    /// on these days, so this would have caught the weaker rule.
    #[test]
    fn twelve_folded_nodes_integrate_a_flux_to_1e_6() {
        for (lat, d) in [
            (0.0, date(2023, 3, 21)),
            (35.0, date(2023, 6, 21)),
            (60.0, date(2023, 6, 21)),
            (45.0, date(2023, 3, 21)),
        ] {
            let reference = daily_mean(&day_geometry(d, lat, 400), flux_like);
            let q = daily_mean(&day_geometry(d, lat, 12), flux_like);
            assert!(
                ((q - reference) / reference).abs() < 1e-6,
                "lat {lat} {d}: {q} vs {reference}"
            );
        }
    }

    /// Latitude ±90° exactly at the solstices: the sun circles at a constant elevation equal
    /// to the declination (spherical astronomy; common practice), Spencer's δ ≈ ±23.44° on
    /// 21 June / 21 December (IAU obliquity 23.44°, from memory; Spencer's series is good
    /// to 0.0006 rad ≈ 0.03°, Iqbal 1983).
    #[test]
    fn poles_exactly_at_the_solstices() {
        let june = date(2023, 6, 21);
        let december = date(2023, 12, 21);
        let dj = spencer_declination_rad(june.ordinal()).to_degrees();
        let dd = spencer_declination_rad(december.ordinal()).to_degrees();
        assert!((dj - 23.44).abs() < 0.1, "{dj}");
        assert!((dd + 23.44).abs() < 0.1, "{dd}");
        for (lat, d, sun_up) in [
            (90.0, june, true),
            (90.0, december, false),
            (-90.0, june, false),
            (-90.0, december, true),
        ] {
            let g = day_geometry(d, lat, 12);
            assert_eq!(g.polar_day, sun_up, "{lat} {d}");
            assert_eq!(g.polar_night, !sun_up, "{lat} {d}");
            if sun_up {
                let elevation = spencer_declination_rad(d.ordinal()).abs().sin();
                assert_eq!(g.daylight_hours, 24.0);
                assert!((g.weights.iter().sum::<f64>() - 1.0).abs() < 1e-12);
                for &m in &g.cos_zenith {
                    assert!((m - elevation).abs() < 1e-12, "{m} vs {elevation}");
                }
            } else {
                assert!(g.weights.is_empty() && g.daylight_hours == 0.0);
            }
        }
        // The Arctic circle at the June solstice: the sun just grazes the horizon at
        // midnight, so the day is (nearly) 24 h long.
        let g = day_geometry(june, 66.6, 12);
        assert!(g.daylight_hours > 23.5, "{}", g.daylight_hours);
    }

    #[test]
    fn node_count_is_clamped_not_a_panic() {
        let g = day_geometry(date(2023, 3, 21), 10.0, 0);
        assert_eq!(g.cos_zenith.len(), 1);
        let g = day_geometry(date(2023, 3, 21), 10.0, usize::MAX);
        assert_eq!(g.cos_zenith.len(), MAX_NODES);
        assert!((g.weights.iter().sum::<f64>() - g.daylight_hours / 24.0).abs() < 1e-12);
    }

    #[test]
    fn distance_factor_peaks_in_january() {
        let jan = day_geometry(date(2024, 1, 3), 0.0, 4).distance_factor;
        let jul = day_geometry(date(2024, 7, 4), 0.0, 4).distance_factor;
        // (1/0.9833)² ≈ 1.0342 and (1/1.0167)² ≈ 0.9674 (from memory).
        assert!((jan - 1.0342).abs() < 1e-3, "{jan}");
        assert!((jul - 0.9674).abs() < 1e-3, "{jul}");
    }

    proptest! {
        #[test]
        fn weights_sum_to_the_daylight_fraction(lat in -90.0f64..90.0, doy in 1u32..366, n in 1usize..40) {
            let d = NaiveDate::from_yo_opt(2023, doy).unwrap();
            let g = day_geometry(d, lat, n);
            let sum: f64 = g.weights.iter().sum();
            prop_assert!((sum - g.daylight_hours / 24.0).abs() < 1e-12);
            prop_assert!(g.cos_zenith.iter().all(|m| (0.0..=1.0).contains(m)));
            prop_assert!(g.polar_night || g.cos_zenith.len() == n);
        }
    }
}
