//! Flags on the spectral dependence of SSA and g that inform.
//!
//! - A property given at **one wavelength** is held constant over the whole spectrum: always
//!   flagged (`ssa-one-wavelength`, `g-one-wavelength`) and counted among the assumptions.
//! - A property given at **several wavelengths** is held at its end values beyond them; that
//!   is flagged (`ssa-extrapolated`, `g-extrapolated`) only when the held bands carry a
//!   meaningful share of the energy the aerosol intercepts: Σ F_b τ_b over the held bands /
//!   Σ F_b τ_b over all bands, F_b the band's incident irradiance and τ_b the Ångström-law
//!   AOD at its centre, at least [`HELD_SHARE_THRESHOLD`]. Holding SSA beyond 1020 nm, where
//!   the AOD is small, no longer flags every row.

use super::aerosol::aod_at_wavelength;
use super::spectrum::{astm_g173_bands, scaled_band_irradiance};
use super::{BandSet, Flags, Observation, Settings, SpectralValue};

/// Share of the aerosol-intercepted incident energy above which holding a property beyond
/// its given wavelengths is flagged [fraction] (our choice: a tenth, where a 0.05 error of
/// SSA in the held part moves ΔF by a few tenths of a per cent of the incident flux per unit
/// AOD; common practice treats such a share as material).
pub const HELD_SHARE_THRESHOLD: f64 = 0.10;

/// Fraction of Σ F_b τ_b (module documentation) in the bands whose centre lies outside the
/// wavelengths of `values`; 0 for one or no values (constant, nothing held at an end).
pub fn held_share(obs: &Observation, values: &[SpectralValue], settings: &Settings) -> f64 {
    if values.len() < 2 {
        return 0.0;
    }
    let (lo, hi) = (
        values[0].wavelength_nm,
        values[values.len() - 1].wavelength_nm,
    );
    let outside = |nm: f64| nm < lo || nm > hi;
    match settings.band_set {
        BandSet::Single => f64::from(u8::from(outside(obs.aod_wavelength_nm))),
        BandSet::AstmG173 => {
            let irr = scaled_band_irradiance(settings.solar_constant_wm2);
            let (mut held, mut all) = (0.0, 0.0);
            for (b, f) in astm_g173_bands().iter().zip(irr) {
                let nm = b.center_um * 1000.0;
                let w = f * aod_at_wavelength(obs.aod, obs.aod_wavelength_nm, obs.angstrom, nm);
                if w.is_finite() {
                    all += w;
                    if outside(nm) {
                        held += w;
                    }
                }
            }
            if all > 0.0 { held / all } else { 0.0 }
        }
    }
}

/// Set the one-wavelength flags and keep the extrapolation flags only where the held share
/// reaches [`HELD_SHARE_THRESHOLD`].
pub fn refine(obs: &Observation, settings: &Settings, flags: &mut Flags) {
    flags.ssa_one_wavelength = obs.ssa.len() == 1;
    flags.asymmetry_one_wavelength = obs.asymmetry.len() == 1;
    flags.ssa_extrapolated = held_share(obs, &obs.ssa, settings) >= HELD_SHARE_THRESHOLD;
    flags.asymmetry_extrapolated =
        held_share(obs, &obs.asymmetry, settings) >= HELD_SHARE_THRESHOLD;
}

#[cfg(test)]
mod tests {
    use super::super::{AerosolLayer, Surface};
    use super::*;

    fn obs(ssa: Vec<SpectralValue>, angstrom: f64) -> Observation {
        Observation {
            time_utc: chrono::DateTime::UNIX_EPOCH,
            latitude_deg: 0.0,
            longitude_deg: 0.0,
            altitude_m: 0.0,
            pressure_hpa: None,
            aod: 0.3,
            aod_wavelength_nm: 500.0,
            angstrom,
            asymmetry: ssa.clone(),
            ssa,
            surface: Surface::Lambertian { albedo: 0.1 },
            ozone_du: 300.0,
            water_cm: 1.0,
            layer: AerosolLayer::default(),
        }
    }

    fn sv(nm: f64, v: f64) -> SpectralValue {
        SpectralValue {
            wavelength_nm: nm,
            value: v,
        }
    }

    #[test]
    fn one_wavelength_is_always_flagged_and_not_as_extrapolation() {
        let o = obs(vec![sv(550.0, 0.9)], 1.3);
        let mut f = Flags::default();
        refine(&o, &Settings::default(), &mut f);
        assert!(f.ssa_one_wavelength && f.asymmetry_one_wavelength);
        assert!(!f.ssa_extrapolated && !f.asymmetry_extrapolated);
    }

    /// 440–1020 nm: the held parts (below 440 nm, above 1020 nm) carry part of the
    /// intercepted energy; it grows as the aerosol gets coarser (smaller Ångström exponent,
    /// more AOD in the near infrared) and a narrow range 500–675 nm is always flagged.
    #[test]
    fn held_share_depends_on_the_range_and_the_aerosol() {
        let s = Settings::default();
        let wide = vec![
            sv(440.0, 0.95),
            sv(675.0, 0.9),
            sv(870.0, 0.88),
            sv(1020.0, 0.87),
        ];
        let fine = held_share(&obs(wide.clone(), 1.8), &wide, &s);
        let coarse = held_share(&obs(wide.clone(), 0.3), &wide, &s);
        // About 0.40 (α 1.8) and 0.38 (α 0.3): the UV below 440 nm weighs more for fine
        // aerosol, the near infrared for coarse.
        assert!(
            fine > 0.3 && fine < 0.5 && coarse > 0.3 && coarse < 0.5,
            "{fine} {coarse}"
        );
        let narrow = vec![sv(500.0, 0.9), sv(675.0, 0.9)];
        assert!(held_share(&obs(narrow.clone(), 1.3), &narrow, &s) > 0.5);
        let full = vec![sv(280.0, 0.9), sv(4000.0, 0.9)];
        assert_eq!(held_share(&obs(full.clone(), 1.3), &full, &s), 0.0);
    }
}
