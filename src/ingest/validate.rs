//! Physical ranges of each quantity. A value outside its range rejects the row; a value
//! inside but unusual gives a warning. Percent-looking values are rejected with a hint,
//! never rescaled by guess.

use super::cells::format_number;
use super::detect::Kind;

/// Largest AOD accepted (common practice: direct-sun photometry saturates well below it, and
/// `hazebook grid` takes the same bound).
pub(crate) const MAX_AOD: f64 = 10.0;

/// Outcome of a range check.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Check {
    Ok,
    Warn(String),
    Reject(String),
}

/// Check `value` (already in canonical units) of quantity `kind`. `found` is the cell as the
/// user wrote it (for the message).
///
/// Ranges: AOD in [0, 10] (warning above 3), SSA in (0, 1], g in [−1, 1] (warning outside
/// [0.3, 0.9]), albedo in [0, 1], latitude in [−90, 90], longitude in [−180, 360), ozone in
/// [100, 700] DU, precipitable water in [0, 10] cm, pressure in [300, 1100] hPa: physical bounds
/// of each quantity (common practice). Altitude in [−500, 9000] m, aerosol layer top in
/// (0, 20] km, Ångström exponent in [−1, 4] and UTC offsets in [−14, 14] h are common practice.
pub(crate) fn check(kind: Kind, value: f64, found: &str) -> Check {
    let v = value;
    let reject = |range: &str, hint: &str| {
        Check::Reject(format!("expected a number in {range}, found {found}{hint}"))
    };
    match kind {
        Kind::Aod => {
            if v < 0.0 {
                Check::Reject(format!("expected an AOD ≥ 0, found {found}"))
            } else if v > MAX_AOD {
                Check::Reject(format!(
                    "expected an AOD in [0, {}], found {found}: no sun photometer measures so thick a column, and the row cannot be computed",
                    format_number(MAX_AOD)
                ))
            } else if v > 3.0 {
                Check::Warn(format!(
                    "AOD {} is above 3: unusually high, check the value",
                    format_number(v)
                ))
            } else {
                Check::Ok
            }
        }
        Kind::Ssa => {
            if v > 0.0 && v <= 1.0 {
                Check::Ok
            } else if (5.0..=100.0).contains(&v) {
                reject(
                    "(0, 1]",
                    &format!(
                        "; this looks like a percentage: give SSA as a fraction ({}), or write % as the column's unit",
                        format_number(v / 100.0)
                    ),
                )
            } else {
                reject("(0, 1]", "")
            }
        }
        Kind::Asymmetry => {
            if !(-1.0..=1.0).contains(&v) {
                reject("[−1, 1]", "")
            } else if !(0.3..=0.9).contains(&v) {
                Check::Warn(format!(
                    "asymmetry factor {} is outside the usual aerosol range [0.3, 0.9]",
                    format_number(v)
                ))
            } else {
                Check::Ok
            }
        }
        Kind::Albedo => {
            if (0.0..=1.0).contains(&v) {
                Check::Ok
            } else if v > 1.5 && v <= 100.0 {
                reject(
                    "[0, 1]",
                    &format!(
                        "; this looks like a percentage: give the albedo as a fraction ({})",
                        format_number(v / 100.0)
                    ),
                )
            } else {
                reject("[0, 1]", "")
            }
        }
        Kind::Latitude => range(v, -90.0, 90.0, true, "[−90, 90] degrees north", found),
        Kind::Longitude => range(v, -180.0, 360.0, false, "[−180, 360) degrees east", found),
        Kind::Ozone => {
            if (100.0..=700.0).contains(&v) {
                Check::Ok
            } else if (0.1..=0.7).contains(&v) {
                reject(
                    "[100, 700] DU",
                    "; this looks like atm-cm: write atm-cm as the column's unit, or give DU",
                )
            } else {
                reject("[100, 700] DU", "")
            }
        }
        Kind::Water => {
            if (0.0..=10.0).contains(&v) {
                Check::Ok
            } else if v > 10.0 && v <= 100.0 {
                reject(
                    "[0, 10] cm",
                    "; if the column is in mm, say so in the header or units row (e.g. \"pw [mm]\")",
                )
            } else {
                reject("[0, 10] cm", "")
            }
        }
        Kind::Pressure => {
            if (300.0..=1100.0).contains(&v) {
                Check::Ok
            } else if (30.0..=110.0).contains(&v) {
                reject(
                    "[300, 1100] hPa",
                    "; this looks like kPa: write kPa as the column's unit",
                )
            } else {
                reject("[300, 1100] hPa", "")
            }
        }
        Kind::Altitude => range(v, -500.0, 9000.0, true, "[−500, 9000] m", found),
        Kind::LayerTop => {
            if v > 0.0 && v <= 20.0 {
                Check::Ok
            } else if v > 20.0 && v <= 20_000.0 {
                reject(
                    "(0, 20] km",
                    "; this looks like metres: write m as the column's unit",
                )
            } else {
                reject("(0, 20] km", "")
            }
        }
        Kind::Angstrom => range(v, -1.0, 4.0, true, "[−1, 4]", found),
        Kind::UtcOffset => range(v, -14.0, 14.0, true, "[−14, 14] h", found),
        _ => Check::Ok,
    }
}

/// Check a value of a job file's `[[sites]]` or `[atmosphere]` table (key as written there)
/// with the ranges a workbook value of the same quantity must meet. `Err` holds what was
/// expected; keys that are not numbers of a quantity pass.
pub fn check_job_value(key: &str, value: f64) -> Result<(), String> {
    let kind = match key {
        "latitude_deg" => Kind::Latitude,
        "longitude_deg" => Kind::Longitude,
        "altitude_m" => Kind::Altitude,
        "pressure_hpa" => Kind::Pressure,
        "albedo" => Kind::Albedo,
        "utc_offset_hours" => Kind::UtcOffset,
        "ozone_du" => Kind::Ozone,
        "water_cm" => Kind::Water,
        "layer_top_km" => Kind::LayerTop,
        "angstrom" => Kind::Angstrom,
        "layer_base_km" => {
            return if value.is_finite() && (0.0..20.0).contains(&value) {
                Ok(())
            } else {
                Err(format!(
                    "expected a number in [0, 20) km, found {}",
                    format_number(value)
                ))
            };
        }
        _ => return Ok(()),
    };
    if !value.is_finite() {
        return Err(format!("expected a finite number, found {value}"));
    }
    match check(kind, value, &format_number(value)) {
        Check::Reject(why) => Err(why),
        _ => Ok(()),
    }
}

fn range(v: f64, lo: f64, hi: f64, hi_inclusive: bool, text: &str, found: &str) -> Check {
    let ok = v >= lo && if hi_inclusive { v <= hi } else { v < hi };
    if ok {
        Check::Ok
    } else {
        Check::Reject(format!("expected a number in {text}, found {found}"))
    }
}

/// Check a resolved observation against the same ranges as the cells it is read from (for
/// observations that come from elsewhere than a workbook, such as a partial-results bundle
/// given to `hazebook merge`). Returns the first problem, naming the quantity.
pub fn check_observation(o: &crate::physics::Observation) -> Result<(), String> {
    use crate::physics::Surface;
    let mut values: Vec<(Kind, f64)> = vec![
        (Kind::Latitude, o.latitude_deg),
        (Kind::Longitude, o.longitude_deg),
        (Kind::Altitude, o.altitude_m),
        (Kind::Aod, o.aod),
        (Kind::Angstrom, o.angstrom),
        (Kind::Ozone, o.ozone_du),
        (Kind::Water, o.water_cm),
        (Kind::LayerTop, o.layer.top_km),
    ];
    if let Some(p) = o.pressure_hpa {
        values.push((Kind::Pressure, p));
    }
    if let Surface::Lambertian { albedo } = o.surface {
        values.push((Kind::Albedo, albedo));
    }
    if o.ssa.is_empty() || o.asymmetry.is_empty() {
        return Err("no single-scattering albedo or asymmetry factor".into());
    }
    values.extend(o.ssa.iter().map(|v| (Kind::Ssa, v.value)));
    values.extend(o.asymmetry.iter().map(|v| (Kind::Asymmetry, v.value)));
    for (kind, v) in values {
        let found = format_number(v);
        if !v.is_finite() {
            return Err(format!(
                "{}: expected a finite number, found {found}",
                kind.name()
            ));
        }
        if let Check::Reject(m) = check(kind, v, &found) {
            return Err(format!("{}: {m}", kind.name()));
        }
    }
    let wavelengths = std::iter::once(o.aod_wavelength_nm)
        .chain(o.ssa.iter().chain(&o.asymmetry).map(|v| v.wavelength_nm));
    for w in wavelengths {
        if !(w.is_finite() && w > 0.0) {
            return Err(format!(
                "wavelength: expected a positive number of nm, found {}",
                format_number(w)
            ));
        }
    }
    if !(o.layer.base_km >= 0.0 && o.layer.base_km < o.layer.top_km) {
        return Err(format!(
            "aerosol layer: expected 0 ≤ base < top, found base {} km, top {} km",
            format_number(o.layer.base_km),
            format_number(o.layer.top_km)
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bounds() {
        assert_eq!(check(Kind::Ssa, 1.0, "1"), Check::Ok);
        assert!(matches!(check(Kind::Ssa, 0.0, "0"), Check::Reject(_)));
        match check(Kind::Ssa, 95.0, "95") {
            Check::Reject(m) => assert!(m.contains("percentage") && m.contains("0.95"), "{m}"),
            other => panic!("{other:?}"),
        }
        match check(Kind::Ssa, 1.07, "1.07") {
            Check::Reject(m) => assert_eq!(m, "expected a number in (0, 1], found 1.07"),
            other => panic!("{other:?}"),
        }
        assert!(matches!(check(Kind::Aod, 3.5, "3.5"), Check::Warn(_)));
        assert!(matches!(check(Kind::Aod, -0.01, "-0.01"), Check::Reject(_)));
        assert!(matches!(check(Kind::Aod, 1e308, "1e308"), Check::Reject(_)));
        assert!(matches!(check(Kind::Aod, 10.0, "10"), Check::Warn(_)));
        assert!(matches!(
            check(Kind::Asymmetry, 0.95, "0.95"),
            Check::Warn(_)
        ));
        assert!(matches!(
            check(Kind::Asymmetry, 1.2, "1.2"),
            Check::Reject(_)
        ));
        assert!(matches!(
            check(Kind::Longitude, 360.0, "360"),
            Check::Reject(_)
        ));
        assert_eq!(check(Kind::Longitude, 359.9, "359.9"), Check::Ok);
        assert!(matches!(check(Kind::Water, 25.0, "25"), Check::Reject(_)));
        assert!(matches!(
            check(Kind::Pressure, 101.3, "101.3"),
            Check::Reject(_)
        ));
        assert_eq!(check(Kind::Ozone, 300.0, "300"), Check::Ok);
    }
}
