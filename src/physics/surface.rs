//! Lower boundary: broadband Lambertian reflection.

use super::Surface;

/// Broadband surface albedo [unitless, 0–1] for `surface` at cos(solar zenith)
/// `cos_zenith` [unitless, 0–1]:
///
/// * `Lambertian { albedo }`: the given albedo, independent of the sun;
/// * `OceanTaylor1996`: the open-ocean parameterisation of Taylor, Edwards, Glew, Hignett &
///   Slingo (1996), Q. J. R. Meteorol. Soc. 122, 839–861, α = 0.037 / (1.1 μ₀^1.4 + 0.15),
///   fitted to aircraft observations for cloud-free skies (≈ 0.030 with the sun overhead,
///   rising to ≈ 0.25 at the horizon). μ₀ is clamped to [0, 1].
pub fn surface_albedo(surface: &Surface, cos_zenith: f64) -> f64 {
    match *surface {
        Surface::Lambertian { albedo } => albedo,
        Surface::OceanTaylor1996 => {
            let mu = cos_zenith.clamp(0.0, 1.0);
            0.037 / (1.1 * mu.powf(1.4) + 0.15)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn taylor_ocean_albedo() {
        // Taylor et al. (1996): 0.037 / 1.25 at μ₀ = 1; 0.037 / 0.15 at μ₀ = 0.
        let s = Surface::OceanTaylor1996;
        assert!((surface_albedo(&s, 1.0) - 0.037 / 1.25).abs() < 1e-15);
        assert!((surface_albedo(&s, 0.0) - 0.037 / 0.15).abs() < 1e-15);
        let mut prev = 0.0;
        for i in (0..=100).rev() {
            let a = surface_albedo(&s, f64::from(i) / 100.0);
            assert!(a > prev);
            prev = a;
        }
        assert_eq!(surface_albedo(&s, 1.5), surface_albedo(&s, 1.0));
    }

    proptest::proptest! {
        #[test]
        fn ocean_albedo_is_bounded_for_any_finite_mu(mu in -1e6f64..1e6) {
            let a = surface_albedo(&Surface::OceanTaylor1996, mu);
            proptest::prop_assert!((0.037 / 1.25..=0.037 / 0.15).contains(&a));
        }
    }

    #[test]
    fn lambertian_is_independent_of_the_sun() {
        let s = Surface::Lambertian { albedo: 0.17 };
        assert_eq!(surface_albedo(&s, 0.2), 0.17);
        assert_eq!(surface_albedo(&s, 0.9), 0.17);
    }
}
