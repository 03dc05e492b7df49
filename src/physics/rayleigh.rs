//! Molecular (Rayleigh) scattering optical depth and the surface pressure it scales with.
//! Rayleigh scattering has single-scattering albedo 1 and asymmetry factor 0.

use std::sync::OnceLock;

/// Standard sea-level pressure [hPa].
pub const STANDARD_PRESSURE_HPA: f64 = 1013.25;

/// Rayleigh optical depth of the whole column [unitless] at `wavelength_um` [µm] for a
/// surface pressure `pressure_hpa` [hPa]: Bodhaine, Wood, Dutton & Slusser (1999), J. Atmos.
/// Oceanic Technol. 16, 1854–1861, eq. 30 (fit for 1013.25 hPa, 45° latitude, sea level,
/// 360 ppm CO₂, 0.25–1.0 µm and beyond with accuracy better than 0.01 % in their range),
///
/// τ_R = 0.0021520 (1.0455996 − 341.29061 λ⁻² − 0.90230850 λ²) /
///       (1 + 0.0027059889 λ⁻² − 85.968563 λ²),
///
/// scaled by p / 1013.25 hPa (their eq. 24: τ is proportional to the column of air).
///
/// Eq. 30 is a fit over 0.25–1.0 µm. Beyond 1 µm its rational form drifts away from the
/// physics (τλ⁴ rises from 0.0086 at 1 µm to 0.0138 at 4 µm, 60 % above the λ⁻⁴ law, while
/// the refractive index of air and the King factor are nearly constant in the near infrared
/// and τλ⁴ should stay near its 1 µm value; Hansen & Travis 1974, eq. 2.29, agrees), so for
/// λ > 1 µm the depth is continued as τ(1 µm) λ⁻⁴ (common practice). The bands use
/// 0.28–4.0 µm; τ_R < 0.009 beyond 1 µm, so the continuation changes fluxes by far less than
/// 0.01 W m⁻².
pub fn rayleigh_optical_depth_bodhaine1999(wavelength_um: f64, pressure_hpa: f64) -> f64 {
    /// Upper end of the fitted range of eq. 30 [µm].
    const FIT_END_UM: f64 = 1.0;
    let eq30 = |l: f64| {
        let l2 = l * l;
        let inv = 1.0 / l2;
        0.0021520 * (1.0455996 - 341.29061 * inv - 0.90230850 * l2)
            / (1.0 + 0.0027059889 * inv - 85.968563 * l2)
    };
    let tau0 = if wavelength_um > FIT_END_UM {
        eq30(FIT_END_UM) * (FIT_END_UM / wavelength_um).powi(4)
    } else {
        eq30(wavelength_um)
    };
    tau0 * pressure_hpa / STANDARD_PRESSURE_HPA
}

fn band_tau_standard() -> &'static [f64] {
    static TABLE: OnceLock<Vec<f64>> = OnceLock::new();
    TABLE.get_or_init(|| {
        let n = super::spectrum::astm_g173_bands().len();
        (0..n)
            .map(|b| {
                let subs = super::spectrum::band_sub_wavelengths(b);
                let total: f64 = subs.iter().map(|s| s.weight_wm2).sum();
                let t: f64 = subs
                    .iter()
                    .map(|s| {
                        let tau = rayleigh_optical_depth_bodhaine1999(
                            s.wavelength_um,
                            STANDARD_PRESSURE_HPA,
                        );
                        s.weight_wm2 * (-tau).exp()
                    })
                    .sum();
                -(t / total).ln()
            })
            .collect()
    })
}

/// Band-effective Rayleigh optical depth [unitless] of band `band_index` of
/// [`super::spectrum::astm_g173_bands`] at surface pressure `pressure_hpa` [hPa]:
/// τ_b = (p / 1013.25) · (−ln Σᵢ Eᵢ exp(−τ_R(λᵢ)) / Σᵢ Eᵢ), the vertical-path transmittance-
/// consistent mean over the band's sub-wavelengths (weights Eᵢ, see
/// [`super::spectrum::band_sub_wavelengths`]) at standard pressure, with τ_R from
/// [`rayleigh_optical_depth_bodhaine1999`], scaled linearly with pressure. NaN for a band
/// index out of range.
pub fn band_rayleigh_optical_depth(band_index: usize, pressure_hpa: f64) -> f64 {
    band_tau_standard()
        .get(band_index)
        .map_or(f64::NAN, |t| t * pressure_hpa / STANDARD_PRESSURE_HPA)
}

/// Surface pressure [hPa] at `altitude_m` [m above sea level] from the barometric formula
/// of the U.S. Standard Atmosphere 1976 for its tropospheric layer (constant lapse rate):
/// p = p₀ (1 − L h / T₀)^(g₀ M / (R* L)), with p₀ = 1013.25 hPa, T₀ = 288.15 K,
/// L = 0.0065 K m⁻¹, g₀ = 9.80665 m s⁻², M = 0.0289644 kg mol⁻¹, R* = 8.31432 J mol⁻¹ K⁻¹
/// (the standard's gas constant; exponent 5.25588), at the geopotential altitude
/// H = r₀ z / (r₀ + z) of the geometric
/// altitude z, r₀ = 6 356 766 m (same source). Valid from below sea level to the tropopause
/// of the standard atmosphere, H = 11 km; higher altitudes are clamped to it.
pub fn pressure_from_altitude_hpa(altitude_m: f64) -> f64 {
    const T0: f64 = 288.15;
    const L: f64 = 0.0065;
    const G0: f64 = 9.80665;
    const M: f64 = 0.0289644;
    const R: f64 = 8.31432;
    const R0: f64 = 6_356_766.0;
    let h = (R0 * altitude_m / (R0 + altitude_m)).min(11_000.0);
    STANDARD_PRESSURE_HPA * (1.0 - L * h / T0).powf(G0 * M / (R * L))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bodhaine_at_550_nm() {
        // Bodhaine et al. (1999) Table 3: τ_R(0.55 µm) ≈ 0.0973 at 1013.25 hPa (from memory).
        let t = rayleigh_optical_depth_bodhaine1999(0.55, 1013.25);
        assert!((t - 0.0973).abs() < 0.0005, "{t}");
    }

    #[test]
    fn agrees_with_hansen_and_travis_1974_within_2_percent() {
        // Hansen & Travis (1974), Space Sci. Rev. 16, 527, eq. 2.29 (an independent published
        // formula): τ = 0.008569 λ⁻⁴ (1 + 0.0113 λ⁻² + 0.00013 λ⁻⁴) at 1013.25 hPa.
        // The near-infrared points check the λ⁻⁴ continuation beyond the fitted range of
        // eq. 30 (the raw fit is 20 % high at 3 µm and 60 % at 4 µm).
        for &l in &[
            0.3f64, 0.35, 0.4, 0.45, 0.5, 0.55, 0.6, 0.7, 0.8, 1.0, 1.2, 1.6, 2.2, 3.0, 4.0,
        ] {
            let ht = 0.008569 * l.powi(-4) * (1.0 + 0.0113 * l.powi(-2) + 0.00013 * l.powi(-4));
            let b = rayleigh_optical_depth_bodhaine1999(l, 1013.25);
            assert!(((b - ht) / ht).abs() < 0.02, "{l}: {b} vs {ht}");
        }
    }

    #[test]
    fn falls_about_as_lambda_to_the_minus_four_in_the_visible() {
        // Common practice: log-log slope between −4.2 and −3.9 in the visible.
        for w in [0.40, 0.45, 0.50, 0.55, 0.60, 0.65, 0.70].windows(2) {
            let (a, b) = (w[0], w[1]);
            let slope = (rayleigh_optical_depth_bodhaine1999(b, 1013.25).ln()
                - rayleigh_optical_depth_bodhaine1999(a, 1013.25).ln())
                / (b / a).ln();
            assert!((-4.2..=-3.9).contains(&slope), "{a}-{b}: {slope}");
        }
    }

    #[test]
    fn scales_linearly_with_pressure() {
        let t1 = rayleigh_optical_depth_bodhaine1999(0.5, 1013.25);
        let t2 = rayleigh_optical_depth_bodhaine1999(0.5, 506.625);
        assert!((t2 / t1 - 0.5).abs() < 1e-14);
        let b1 = band_rayleigh_optical_depth(10, 1013.25);
        let b2 = band_rayleigh_optical_depth(10, 800.0);
        assert!((b2 / b1 - 800.0 / 1013.25).abs() < 1e-14);
    }

    #[test]
    fn band_depth_is_close_to_the_depth_at_the_band_centre() {
        let bands = super::super::spectrum::astm_g173_bands();
        for (i, b) in bands.iter().enumerate() {
            let eff = band_rayleigh_optical_depth(i, 1013.25);
            let lo = rayleigh_optical_depth_bodhaine1999(b.upper_um, 1013.25);
            let hi = rayleigh_optical_depth_bodhaine1999(b.lower_um, 1013.25);
            assert!(eff > lo && eff < hi, "band {i}");
            if b.upper_um <= 0.6 {
                let c = rayleigh_optical_depth_bodhaine1999(b.center_um, 1013.25);
                assert!(((eff - c) / c).abs() < 0.01, "band {i}: {eff} vs {c}");
            }
        }
        assert!(band_rayleigh_optical_depth(99, 1013.25).is_nan());
    }

    #[test]
    fn standard_atmosphere_pressures() {
        // U.S. Standard Atmosphere 1976 tables (from memory): 1000 m → 898.76 hPa,
        // 5000 m → 540.48 hPa (geopotential altitude).
        assert!((pressure_from_altitude_hpa(0.0) - 1013.25).abs() < 1e-9);
        assert!((pressure_from_altitude_hpa(1000.0) - 898.76).abs() < 0.01);
        assert!((pressure_from_altitude_hpa(5000.0) - 540.48).abs() < 0.01);
        // 11 km geopotential (11.019 km geometric): 226.32 hPa, the tropopause of the
        // standard (from memory); clamped above.
        assert!((pressure_from_altitude_hpa(11_019.0) - 226.32).abs() < 0.05);
        assert_eq!(
            pressure_from_altitude_hpa(20_000.0),
            pressure_from_altitude_hpa(11_019.1)
        );
        assert!(pressure_from_altitude_hpa(-100.0) > 1013.25);
    }
}
