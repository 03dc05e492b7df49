//! Aerosol spectral model: Ångström law for the optical depth; single-scattering albedo and
//! asymmetry factor constant or interpolated in ln λ between measured wavelengths.

use super::{Observation, SpectralValue};

/// Aerosol optical properties at one wavelength.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AerosolOptics {
    /// Aerosol optical depth [unitless].
    pub tau: f64,
    /// Single-scattering albedo [unitless, 0–1].
    pub ssa: f64,
    /// Asymmetry factor [unitless, −1–1].
    pub g: f64,
    /// SSA held at an end value outside the measured wavelengths.
    pub ssa_extrapolated: bool,
    /// g held at an end value outside the measured wavelengths.
    pub g_extrapolated: bool,
}

/// Aerosol optical depth [unitless] at `wavelength_nm` [nm] from the Ångström (1929) law
/// τ(λ) = τ(λ₀) (λ/λ₀)^−α, with `aod` = τ(λ₀) [unitless] at `aod_wavelength_nm` λ₀ [nm] and
/// `angstrom` α [unitless]. Valid across the shortwave for the usual 0 ≤ α ≤ 2.5 (a single
/// exponent is an approximation; common practice).
pub fn aod_at_wavelength(
    aod: f64,
    aod_wavelength_nm: f64,
    angstrom: f64,
    wavelength_nm: f64,
) -> f64 {
    aod * (wavelength_nm / aod_wavelength_nm).powf(-angstrom)
}

/// Value of a spectral property at `wavelength_nm` [nm]: the single value when one is given;
/// otherwise linear in ln λ between the bracketing measured wavelengths, and held at the end
/// value outside the measured range (the flag is then `true`). Values must be in ascending
/// wavelength. NaN (not flagged) for an empty list.
pub fn interpolate_ln_wavelength(values: &[SpectralValue], wavelength_nm: f64) -> (f64, bool) {
    let (Some(first), Some(last)) = (values.first(), values.last()) else {
        return (f64::NAN, false);
    };
    if values.len() == 1 {
        return (first.value, false);
    }
    // A relative tolerance keeps the exact end wavelengths from being reported as
    // extrapolation after a nm/µm round trip.
    let tol = 1e-9 * wavelength_nm.abs();
    if wavelength_nm < first.wavelength_nm - tol {
        return (first.value, true);
    }
    if wavelength_nm > last.wavelength_nm + tol {
        return (last.value, true);
    }
    let i = values
        .partition_point(|v| v.wavelength_nm <= wavelength_nm)
        .clamp(1, values.len() - 1);
    let (a, b) = (values[i - 1], values[i]);
    if b.wavelength_nm <= a.wavelength_nm {
        return (a.value, false);
    }
    let f = ((wavelength_nm / a.wavelength_nm).ln() / (b.wavelength_nm / a.wavelength_nm).ln())
        .clamp(0.0, 1.0);
    (a.value + f * (b.value - a.value), false)
}

/// Aerosol optical depth, single-scattering albedo and asymmetry factor of observation `obs`
/// at `wavelength_um` [µm]: τ from the Ångström law ([`aod_at_wavelength`]); SSA and g
/// constant when given at one wavelength, else linear in ln λ between the given wavelengths
/// and held at the end values outside them, with the extrapolation flagged
/// ([`interpolate_ln_wavelength`]).
pub fn aerosol_optics(obs: &Observation, wavelength_um: f64) -> AerosolOptics {
    let nm = wavelength_um * 1000.0;
    let (ssa, ssa_extrapolated) = interpolate_ln_wavelength(&obs.ssa, nm);
    let (g, g_extrapolated) = interpolate_ln_wavelength(&obs.asymmetry, nm);
    AerosolOptics {
        tau: aod_at_wavelength(obs.aod, obs.aod_wavelength_nm, obs.angstrom, nm),
        ssa,
        g,
        ssa_extrapolated,
        g_extrapolated,
    }
}

#[cfg(test)]
mod tests {
    use super::super::{AerosolLayer, Surface};
    use super::*;
    use chrono::TimeZone;

    fn sv(wavelength_nm: f64, value: f64) -> SpectralValue {
        SpectralValue {
            wavelength_nm,
            value,
        }
    }

    fn obs(ssa: Vec<SpectralValue>, asymmetry: Vec<SpectralValue>) -> Observation {
        Observation {
            time_utc: chrono::Utc.with_ymd_and_hms(2024, 6, 1, 12, 0, 0).unwrap(),
            latitude_deg: 40.0,
            longitude_deg: 10.0,
            altitude_m: 0.0,
            pressure_hpa: None,
            aod: 0.3,
            aod_wavelength_nm: 500.0,
            angstrom: 1.5,
            ssa,
            asymmetry,
            surface: Surface::Lambertian { albedo: 0.1 },
            ozone_du: 300.0,
            water_cm: 1.5,
            layer: AerosolLayer::default(),
        }
    }

    proptest::proptest! {
        #[test]
        fn interpolated_values_stay_within_the_measured_ones(
            v in proptest::collection::vec(0.0f64..1.0, 1..6), l in 0.2f64..5.0,
        ) {
            let values: Vec<SpectralValue> =
                v.iter().enumerate().map(|(i, &x)| sv(400.0 + 150.0 * i as f64, x)).collect();
            let (y, flagged) = interpolate_ln_wavelength(&values, l * 1000.0);
            let lo = v.iter().cloned().fold(f64::INFINITY, f64::min);
            let hi = v.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            proptest::prop_assert!(y >= lo - 1e-12 && y <= hi + 1e-12);
            let inside = l * 1000.0 >= 400.0 && l * 1000.0 <= 400.0 + 150.0 * (v.len() - 1) as f64;
            proptest::prop_assert_eq!(flagged, v.len() > 1 && !inside);
        }
    }

    #[test]
    fn angstrom_law() {
        assert!((aod_at_wavelength(0.3, 500.0, 1.5, 500.0) - 0.3).abs() < 1e-15);
        let t = aod_at_wavelength(0.3, 500.0, 1.0, 1000.0);
        assert!((t - 0.15).abs() < 1e-15);
        // log-log slope is −α.
        let s = (aod_at_wavelength(1.0, 440.0, 1.3, 870.0) / 1.0).ln() / (870.0f64 / 440.0).ln();
        assert!((s + 1.3).abs() < 1e-12);
    }

    #[test]
    fn single_value_is_constant_and_not_flagged() {
        let o = obs(vec![sv(550.0, 0.9)], vec![sv(550.0, 0.7)]);
        for l in [0.3, 0.55, 2.0] {
            let a = aerosol_optics(&o, l);
            assert_eq!((a.ssa, a.g), (0.9, 0.7));
            assert!(!a.ssa_extrapolated && !a.g_extrapolated);
        }
    }

    #[test]
    fn linear_in_ln_lambda_and_held_outside() {
        let o = obs(
            vec![
                sv(440.0, 0.95),
                sv(675.0, 0.90),
                sv(870.0, 0.86),
                sv(1020.0, 0.85),
            ],
            vec![sv(440.0, 0.72), sv(1020.0, 0.62)],
        );
        // Geometric mean of 440 and 675 nm is halfway in ln λ.
        let mid = (440.0f64 * 675.0).sqrt() / 1000.0;
        let a = aerosol_optics(&o, mid);
        assert!((a.ssa - 0.925).abs() < 1e-12 && !a.ssa_extrapolated);
        let at675 = aerosol_optics(&o, 0.675);
        assert!((at675.ssa - 0.90).abs() < 1e-12);
        let f = (675.0f64 / 440.0).ln() / (1020.0f64 / 440.0).ln();
        assert!((at675.g - (0.72 + f * (0.62 - 0.72))).abs() < 1e-12);
        // Exact end wavelengths are not extrapolation.
        let e = aerosol_optics(&o, 0.44);
        assert!(!e.ssa_extrapolated && !e.g_extrapolated && (e.ssa - 0.95).abs() < 1e-12);
        let e = aerosol_optics(&o, 1.02);
        assert!(!e.ssa_extrapolated && (e.ssa - 0.85).abs() < 1e-12);
        let lo = aerosol_optics(&o, 0.3);
        assert!(lo.ssa_extrapolated && lo.g_extrapolated);
        assert_eq!((lo.ssa, lo.g), (0.95, 0.72));
        let hi = aerosol_optics(&o, 3.0);
        assert!(hi.ssa_extrapolated && hi.g_extrapolated);
        assert_eq!((hi.ssa, hi.g), (0.85, 0.62));
    }

    #[test]
    fn empty_list_gives_nan_without_panic() {
        let a = aerosol_optics(&obs(vec![], vec![]), 0.5);
        assert!(a.ssa.is_nan() && a.g.is_nan());
    }
}
