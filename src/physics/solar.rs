//! Instantaneous solar geometry: zenith angle, Earth–Sun distance and relative air mass.

use chrono::{DateTime, Datelike, Utc};
use solar_positioning::{Location, PreparedPositions, SolarPositions, delta_t};
use std::cell::Cell;

/// ΔT = TT − UT1 [s] for the time, from the Espenak & Meeus polynomials as updated in the
/// `solar-positioning` crate; 69 s (its value around 2020–2026) outside their range
/// (years −500 to 3000). ΔT only shifts the ephemeris time: 1 s moves the Sun by about
/// 1e-5° in ecliptic longitude, so the fallback is harmless for the zenith angle.
fn delta_t_seconds(time_utc: &DateTime<Utc>) -> f64 {
    delta_t::estimate_from_date_like(time_utc).unwrap_or(69.0)
}

/// Topocentric solar zenith angle [deg, 0–180] at `time_utc` for a place at
/// `latitude_deg` [deg north, −90–90], `longitude_deg` [deg east, −180–180] and
/// `altitude_m` [m above sea level], from the NREL Solar Position Algorithm (Reda & Andreas
/// 2004, Solar Energy 76, 577–589) as implemented by the `solar-positioning` crate (stated
/// uncertainty ±0.0003°, years −2000 to 6000).
///
/// No atmospheric refraction correction is applied (the true, not the apparent, zenith):
/// the plane-parallel two-stream solution wants the geometric direction of the beam.
/// Returns NaN for coordinates outside the ranges above, a non-finite altitude, or a time
/// outside the algorithm's years.
pub fn solar_zenith_deg(
    time_utc: DateTime<Utc>,
    latitude_deg: f64,
    longitude_deg: f64,
    altitude_m: f64,
) -> f64 {
    let location = Location {
        latitude: latitude_deg,
        longitude: longitude_deg,
    };
    prepared_for(time_utc)
        .and_then(|p| p.at(location, altitude_m, None).ok())
        .map_or(f64::NAN, |p| p.zenith_angle())
}

/// The time-dependent part of the SPA (heliocentric position, nutation, aberration,
/// sidereal time; about 90 % of its cost) for `time_utc`, from the crate's
/// [`SolarPositions::for_time`]; `None` outside its years. The last result of each thread is
/// kept, so that observations at the same instant (several sites or instruments of a network
/// sampled together) share it; the values are those of a fresh computation, bit for bit.
fn prepared_for(time_utc: DateTime<Utc>) -> Option<PreparedPositions> {
    thread_local! {
        static LAST: Cell<Option<(DateTime<Utc>, PreparedPositions)>> = const { Cell::new(None) };
    }
    LAST.with(|last| {
        if let Some((t, p)) = last.get()
            && t == time_utc
        {
            return Some(p);
        }
        let p = SolarPositions::new()
            .for_time(&time_utc, delta_t_seconds(&time_utc))
            .ok()?;
        last.set(Some((time_utc, p)));
        Some(p)
    })
}

/// Earth–Sun distance [AU] at `time_utc`: the heliocentric radius vector R of the NREL SPA
/// (Reda & Andreas 2004, §3.2.4, from the VSOP87 periodic terms) via the
/// `solar-positioning` crate. Outside the algorithm's years (−2000 to 6000) it falls back to
/// the Spencer (1971) Fourier series of the eccentricity factor for the day of year.
pub fn earth_sun_distance_au(time_utc: DateTime<Utc>) -> f64 {
    SolarPositions::new()
        .for_time(&time_utc, delta_t_seconds(&time_utc))
        .ok()
        .and_then(|p| p.earth_radius_vector())
        .unwrap_or_else(|| {
            let factor = super::diurnal::spencer_distance_factor(time_utc.ordinal());
            1.0 / factor.sqrt()
        })
}

/// Relative optical air mass of Kasten & Young (1989), Appl. Opt. 28, 4735–4738:
/// m = 1 / (cos z + 0.50572 (96.07995° − z)^−1.6364), with `zenith_deg` z the true
/// (unrefracted) solar zenith angle [deg], the direction the plane-parallel solver uses.
/// pvlib documents the formula as taking the apparent (refracted) zenith; refraction is
/// under 0.1° up to 80° zenith (where it changes m by 0.8 %) and about 0.5° at the horizon
/// (common practice), so the choice matters only for the low-sun cases the results flag.
/// Valid from 0 to 90° (m ≈ 37.92 at 90°); zenith angles below 0 or above 90° are clamped
/// to that range (the sun is below the horizon and callers treat its flux as zero). Returns
/// [unitless] ≥ 1; NaN for a NaN zenith.
pub fn relative_airmass_kasten_young1989(zenith_deg: f64) -> f64 {
    let z = zenith_deg.clamp(0.0, 90.0);
    1.0 / (z.to_radians().cos() + 0.50572 * (96.07995 - z).powf(-1.6364))
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::TimeZone;

    #[test]
    fn airmass_is_one_overhead_and_about_38_at_the_horizon() {
        // Kasten & Young (1989): the formula gives m(90°) = 37.92, within 0.5 % of the value
        // 38.09 they integrated for the ISO standard atmosphere (from memory).
        assert!((relative_airmass_kasten_young1989(0.0) - 1.0).abs() < 1e-3);
        let m90 = relative_airmass_kasten_young1989(90.0);
        assert!((m90 - 37.92).abs() < 0.01, "{m90}");
        assert!((m90 / 38.0868 - 1.0).abs() < 0.005);
        // Close to sec z at moderate zenith angles (common practice).
        let m60 = relative_airmass_kasten_young1989(60.0);
        assert!((m60 - 2.0).abs() < 0.01, "{m60}");
        assert_eq!(
            relative_airmass_kasten_young1989(120.0),
            relative_airmass_kasten_young1989(90.0)
        );
    }

    #[test]
    fn distance_is_near_perihelion_in_january_and_aphelion_in_july() {
        let jan = earth_sun_distance_au(Utc.with_ymd_and_hms(2024, 1, 3, 12, 0, 0).unwrap());
        let jul = earth_sun_distance_au(Utc.with_ymd_and_hms(2024, 7, 5, 12, 0, 0).unwrap());
        // Perihelion ≈ 0.9833 AU, aphelion ≈ 1.0167 AU (from memory).
        assert!((jan - 0.9833).abs() < 3e-4, "{jan}");
        assert!((jul - 1.0167).abs() < 3e-4, "{jul}");
    }

    proptest::proptest! {
        #[test]
        fn zenith_is_finite_anywhere_on_earth(
            secs in 0i64..4_000_000_000, lat in -90.0f64..=90.0, lon in -180.0f64..=180.0,
            alt in -400.0f64..8000.0,
        ) {
            let t = DateTime::from_timestamp(secs, 0).unwrap();
            let z = solar_zenith_deg(t, lat, lon, alt);
            proptest::prop_assert!((0.0..=180.0).contains(&z), "{}", z);
            let r = earth_sun_distance_au(t);
            proptest::prop_assert!((0.98..1.02).contains(&r));
        }
    }

    /// The kept time-dependent part gives the crate's own result, bit for bit, whatever the
    /// order of the calls.
    #[test]
    fn kept_time_dependent_part_changes_nothing() {
        let t1 = Utc.with_ymd_and_hms(2024, 6, 21, 9, 30, 0).unwrap();
        let t2 = Utc.with_ymd_and_hms(2023, 12, 2, 15, 0, 0).unwrap();
        let fresh = |t: DateTime<Utc>, lat: f64, lon: f64| {
            SolarPositions::new()
                .at(
                    &t,
                    Location {
                        latitude: lat,
                        longitude: lon,
                    },
                    250.0,
                    delta_t_seconds(&t),
                    None,
                )
                .unwrap()
                .zenith_angle()
        };
        for (t, lat, lon) in [
            (t1, 40.0, 10.0),
            (t1, -33.0, 151.0),
            (t2, 40.0, 10.0),
            (t1, 40.0, 10.0),
            (t2, 70.0, -150.0),
        ] {
            assert_eq!(
                solar_zenith_deg(t, lat, lon, 250.0).to_bits(),
                fresh(t, lat, lon).to_bits()
            );
        }
    }

    #[test]
    fn bad_coordinates_give_nan_not_a_panic() {
        let t = Utc.with_ymd_and_hms(2024, 6, 21, 12, 0, 0).unwrap();
        assert!(solar_zenith_deg(t, 95.0, 0.0, 0.0).is_nan());
        assert!(solar_zenith_deg(t, 10.0, 0.0, f64::NAN).is_nan());
        let z = solar_zenith_deg(t, 23.44, 0.0, 0.0);
        assert!(z < 1.0, "{z}");
    }
}
