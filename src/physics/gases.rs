//! Gas absorption: ozone, water vapour and uniformly mixed gases, reduced to band-effective
//! absorption optical depths.
//!
//! Source: Bird & Riordan (1986), J. Climate Appl. Meteor. 25, 87–97, eqs. 2-8 to 2-11,
//! with the constants of NREL's `spectrl2_2.c` as followed by pvlib's `spectrl2` (whose
//! coefficient tables `tests/reference/derive_bands.py` turns into the sub-wavelengths of
//! each band, weighted by the G173 irradiance; see [`super::spectrum`]). For a path u of
//! absorber along the beam the spectral transmittances are
//!
//! * ozone: T_o = exp(−a_o u_o), u_o = O₃ [atm-cm] × m (eq. 2-9);
//! * water vapour: T_w = exp(−0.2385 a_w u_w / (1 + 20.07 a_w u_w)^0.45), u_w = W [cm] × m
//!   (eq. 2-8);
//! * mixed gases: T_u = exp(−1.41 a_u u_u / (1 + 118.3 a_u u_u)^0.45), u_u = m p/1013.25 hPa
//!   (eq. 2-11 with the pressure-corrected air mass M′ = m p/p₀; the report prints 118.93,
//!   NREL's `spectrl2_2.c` and pvlib use 118.3, which we follow so that the pvlib check
//!   compares like with like; pvlib takes p₀ = 1013.00 hPa, we 1013.25, a 0.025 % difference).
//!
//! Water vapour takes the relative air mass m (Kasten & Young 1989) without pressure
//! correction, as eq. 2-8 and pvlib do. Ozone, which lies high in the atmosphere, takes the
//! ozone air mass of eq. 2-10, M_o = (1 + h_o/R_E) / (cos²z + 2 h_o/R_E)^½ with the height of
//! the ozone maximum h_o = 22 km and R_E = 6370 km ([`ozone_airmass_bird_riordan1986`]);
//! it is within 1 % of m up to 60° zenith and 7 % smaller at 80° (5.21 against 5.60).
//!
//! The band-effective vertical optical depth of each gas for air mass m is
//! τ = −ln(Σᵢ Eᵢ Tᵢ(u) / Σᵢ Eᵢ) / m over the band's sub-wavelengths (weights Eᵢ, the G173
//! irradiance), so that exp(−τ m) is the band-mean transmittance of that gas at the path of
//! the case. The three gases are reduced separately (their overlap inside a band is
//! neglected). To make a call O(1), y(u) = −ln(band-mean T) is tabulated once per band and
//! gas on a grid uniform in ln u (48 points per decade, u from 1e-6 to 1e4) and interpolated
//! linearly in ln u; below the grid y ∝ u (the weak-absorption limit), above it the last
//! segment is extended. The grid is the same for every band, so for the paths of one sun
//! position ln u is taken once per gas ([`GasPaths`]) and the depths of all bands are read
//! from the tables side by side ([`GasPaths::depths_all`]).

use std::sync::OnceLock;

/// Vertical absorption optical depths of one band [unitless].
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct GasDepths {
    pub ozone: f64,
    pub water: f64,
    pub mixed: f64,
}

/// 1 DU = 1e-3 atm-cm.
const DU_PER_ATM_CM: f64 = 1000.0;
/// Lowest absorber path of the table, 1e-6, and its logarithm.
const U_MIN: f64 = 1e-6;
const LN_U_MIN: f64 = -6.0 * std::f64::consts::LN_10;
const POINTS_PER_DECADE: usize = 48;
const N_GRID: usize = 10 * POINTS_PER_DECADE + 1;
const STEP: f64 = std::f64::consts::LN_10 / POINTS_PER_DECADE as f64;

/// The three gases.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Gas {
    Ozone,
    Water,
    Mixed,
}

impl Gas {
    const ALL: [Gas; 3] = [Gas::Ozone, Gas::Water, Gas::Mixed];

    /// Spectral transmittance of Bird & Riordan (1986) eqs. 2-8, 2-9, 2-11 for absorption
    /// coefficient `k` and absorber path `u` (see the module documentation) [unitless].
    pub fn transmittance(self, k: f64, u: f64) -> f64 {
        (-self.exponent(k, u)).exp()
    }

    /// −ln of [`Gas::transmittance`] [unitless].
    pub fn exponent(self, k: f64, u: f64) -> f64 {
        let x = k * u;
        match self {
            Gas::Ozone => x,
            Gas::Water => 0.2385 * x / (1.0 + 20.07 * x).powf(0.45),
            Gas::Mixed => 1.41 * x / (1.0 + 118.3 * x).powf(0.45),
        }
    }

    fn coefficient(self, s: &super::spectrum::SubWavelength) -> f64 {
        match self {
            Gas::Ozone => s.ozone_k,
            Gas::Water => s.water_k,
            Gas::Mixed => s.mixed_k,
        }
    }
}

/// y(u) = −ln(band-mean transmittance) of gas `gas` in band `band_index` at absorber path
/// `u`, summed directly over the band's sub-wavelengths (the reference the table is built
/// from and checked against) [unitless].
pub fn band_absorption_direct(band_index: usize, gas: Gas, u: f64) -> f64 {
    let subs = super::spectrum::band_sub_wavelengths(band_index);
    let total: f64 = subs.iter().map(|s| s.weight_wm2).sum();
    if subs.is_empty() || total.is_nan() || total <= 0.0 {
        return 0.0;
    }
    // −ln Σ wᵢ exp(−aᵢ) / Σ wᵢ, evaluated as a log-sum-exp so that it stays finite when
    // every sub-wavelength is saturated.
    let a: Vec<f64> = subs
        .iter()
        .map(|s| gas.exponent(gas.coefficient(s), u))
        .collect();
    let a_min = a.iter().copied().fold(f64::INFINITY, f64::min);
    let sum: f64 = subs
        .iter()
        .zip(&a)
        .map(|(s, &ai)| s.weight_wm2 * (a_min - ai).exp())
        .sum();
    a_min - (sum / total).ln()
}

/// Table of y at the grid points for one band and gas; `None` when the gas does not absorb
/// in the band.
type Curve = Option<Box<[f64; N_GRID]>>;

fn tables() -> &'static Vec<[Curve; 3]> {
    static TABLES: OnceLock<Vec<[Curve; 3]>> = OnceLock::new();
    TABLES.get_or_init(|| {
        let n = super::spectrum::astm_g173_bands().len();
        (0..n)
            .map(|b| {
                Gas::ALL.map(|gas| {
                    let subs = super::spectrum::band_sub_wavelengths(b);
                    if subs.iter().all(|s| gas.coefficient(s) <= 0.0) {
                        return None;
                    }
                    let mut y = Box::new([0.0; N_GRID]);
                    for (j, v) in y.iter_mut().enumerate() {
                        let u = (LN_U_MIN + j as f64 * STEP).exp();
                        *v = band_absorption_direct(b, gas, u);
                    }
                    Some(y)
                })
            })
            .collect()
    })
}

/// Where an absorber path u falls on the table grid: found once per path and reused for
/// every band (the grid is the same for all bands and gases, so ln u is taken only once).
#[derive(Clone, Copy, Debug, PartialEq)]
enum GridPoint {
    /// u ≤ 0 or NaN: no absorption.
    Zero,
    /// Below the grid: y ∝ u (the weak-absorption limit).
    Below(f64),
    /// Segment `j` of the grid, fraction `f` along it (linear in ln u).
    At(usize, f64),
}

impl GridPoint {
    #[inline]
    fn new(u: f64) -> Self {
        if u <= 0.0 || u.is_nan() {
            return Self::Zero;
        }
        let s = (u.ln() - LN_U_MIN) / STEP;
        if s < 0.0 {
            return Self::Below(u);
        }
        let j = (s as usize).min(N_GRID - 2);
        Self::At(j, s - j as f64)
    }

    /// y at this point of `curve`, interpolated linearly in ln u.
    #[inline]
    fn on(self, curve: &[f64; N_GRID]) -> f64 {
        match self {
            Self::Zero => 0.0,
            Self::Below(u) => curve[0] * u / U_MIN,
            Self::At(j, f) => curve[j] + f * (curve[j + 1] - curve[j]),
        }
    }
}

/// y(u) from the table, interpolated linearly in ln u.
#[cfg(test)]
fn lookup(curve: &[f64; N_GRID], u: f64) -> f64 {
    GridPoint::new(u).on(curve)
}

/// The tables of all bands side by side: for each gas, y at grid point j of band b at
/// `y[j * bands + b]` (0 where the gas does not absorb), so that the depths of all bands at
/// one path are read from two contiguous rows.
struct Transposed {
    bands: usize,
    y: [Vec<f64>; 3],
    absorbs: [Vec<bool>; 3],
}

fn transposed() -> &'static Transposed {
    static T: OnceLock<Transposed> = OnceLock::new();
    T.get_or_init(|| {
        let t = tables();
        let bands = t.len();
        let y = std::array::from_fn(|g| {
            let mut y = vec![0.0; N_GRID * bands];
            for (b, curves) in t.iter().enumerate() {
                if let Some(c) = &curves[g] {
                    for j in 0..N_GRID {
                        y[j * bands + b] = c[j];
                    }
                }
            }
            y
        });
        let absorbs = std::array::from_fn(|g| t.iter().map(|c| c[g].is_some()).collect());
        Transposed { bands, y, absorbs }
    })
}

/// The absorber paths of one sun position located on the table grid once, for the depths
/// of every band ([`GasPaths::depths`]); the same numbers as [`band_gas_optical_depths`]
/// band by band, at a fraction of the cost (one logarithm per gas instead of one per gas and
/// band).
#[derive(Clone, Copy, Debug)]
pub struct GasPaths {
    points: [GridPoint; 3],
    divisor: f64,
}

impl GasPaths {
    /// Paths of [`band_gas_optical_depths`] for ozone column `ozone_du` [DU], precipitable
    /// water `water_cm` [cm], surface pressure `pressure_hpa` [hPa] and relative air mass
    /// `airmass` [unitless, ≥ 1] (Bird & Riordan 1986; see the module documentation).
    pub fn new(ozone_du: f64, water_cm: f64, pressure_hpa: f64, airmass: f64) -> Self {
        Self::along(
            ozone_du / DU_PER_ATM_CM * airmass,
            water_cm * airmass,
            airmass * pressure_hpa / super::rayleigh::STANDARD_PRESSURE_HPA,
            airmass,
        )
    }

    fn along(u_ozone: f64, u_water: f64, u_mixed: f64, divisor: f64) -> Self {
        Self {
            points: [
                GridPoint::new(u_ozone),
                GridPoint::new(u_water),
                GridPoint::new(u_mixed),
            ],
            divisor,
        }
    }

    /// [`GasPaths::depths`] of every band at once, band `b` at index `b` of `ozone`, `water`
    /// and `mixed` (each resized to the number of bands) [unitless]; the same bits.
    #[inline(always)]
    pub fn depths_all(&self, ozone: &mut Vec<f64>, water: &mut Vec<f64>, mixed: &mut Vec<f64>) {
        let t = transposed();
        let nb = t.bands;
        let divisor = self.divisor;
        for (g, out) in [ozone, water, mixed].into_iter().enumerate() {
            out.clear();
            out.resize(nb, 0.0);
            if divisor.is_nan() || divisor <= 0.0 {
                out.fill(f64::NAN);
                continue;
            }
            let absorbs = &t.absorbs[g][..nb];
            let y = &t.y[g];
            let out = &mut out[..nb];
            match self.points[g] {
                GridPoint::Zero => {
                    for (o, &a) in out.iter_mut().zip(absorbs) {
                        *o = if a { 0.0 / divisor } else { 0.0 };
                    }
                }
                GridPoint::Below(u) => {
                    let y0 = &y[..nb];
                    for b in 0..nb {
                        let v = y0[b] * u / U_MIN / divisor;
                        out[b] = if absorbs[b] { v } else { 0.0 };
                    }
                }
                GridPoint::At(j, f) => {
                    let y0 = &y[j * nb..(j + 1) * nb];
                    let y1 = &y[(j + 1) * nb..(j + 2) * nb];
                    for b in 0..nb {
                        let v = (y0[b] + f * (y1[b] - y0[b])) / divisor;
                        out[b] = if absorbs[b] { v } else { 0.0 };
                    }
                }
            }
        }
    }

    /// Vertical absorption optical depths [unitless] of band `band_index` at these paths:
    /// y(u)/`airmass`; NaN for a band index out of range or a non-positive air mass.
    #[inline]
    pub fn depths(&self, band_index: usize) -> GasDepths {
        let nan = GasDepths {
            ozone: f64::NAN,
            water: f64::NAN,
            mixed: f64::NAN,
        };
        let Some(curves) = tables().get(band_index) else {
            return nan;
        };
        let divisor = self.divisor;
        if divisor.is_nan() || divisor <= 0.0 {
            return nan;
        }
        let depth = |curve: &Curve, p: GridPoint| curve.as_ref().map_or(0.0, |c| p.on(c) / divisor);
        GasDepths {
            ozone: depth(&curves[0], self.points[0]),
            water: depth(&curves[1], self.points[1]),
            mixed: depth(&curves[2], self.points[2]),
        }
    }
}

/// Ozone air mass of Bird & Riordan (1986), eq. 2-10 [unitless]: the slant path through a
/// thin ozone layer at height h_o = 22 km on a spherical Earth of radius 6370 km,
/// M_o = (1 + h_o/R_E) / (cos²z + 2 h_o/R_E)^½, for the solar zenith angle `zenith_deg` z [deg]
/// (as pvlib's `spectrl2` computes it). 1.000006 overhead, 12.07 at the horizon; zenith angles are
/// clamped to 0–90°. NaN for a NaN zenith.
pub fn ozone_airmass_bird_riordan1986(zenith_deg: f64) -> f64 {
    const H_OVER_R: f64 = 22.0 / 6370.0;
    let c = zenith_deg.clamp(0.0, 90.0).to_radians().cos();
    (1.0 + H_OVER_R) / (c * c + 2.0 * H_OVER_R).sqrt()
}

/// Band-effective vertical absorption optical depths [unitless] of ozone, water vapour and
/// mixed gases in band `band_index` of [`super::spectrum::astm_g173_bands`] for the sun at
/// `zenith_deg` [deg, 0–90], referred to the slant factor `path_airmass` [unitless, > 0] by
/// which the caller multiplies a vertical depth to get the slant one along the beam
/// (1/μ₀ in a plane-parallel solver; the relative air mass m for a Beer–Lambert beam).
///
/// The absorber paths are those of Bird & Riordan (1986): ozone O₃ [atm-cm] × M_o(z)
/// (eq. 2-10, [`ozone_airmass_bird_riordan1986`]), water vapour W [cm] × m(z) (eq. 2-8) and
/// the mixed gases m(z) p/1013.25 hPa (eq. 2-11), with m(z) the relative air mass of Kasten
/// & Young (1989). Each depth is τ = y(u)/`path_airmass`, y(u) = −ln of the band-mean
/// transmittance (see the module documentation), so that exp(−τ · `path_airmass`) is the
/// band-mean Bird & Riordan transmittance of that gas along the real path, whatever slant
/// factor the caller uses. Zero for zero amounts; NaN for a band index out of range, a NaN
/// zenith or a non-positive `path_airmass`.
pub fn band_gas_optical_depths_for_sun(
    band_index: usize,
    ozone_du: f64,
    water_cm: f64,
    pressure_hpa: f64,
    zenith_deg: f64,
    path_airmass: f64,
) -> GasDepths {
    let m = super::solar::relative_airmass_kasten_young1989(zenith_deg);
    let m_ozone = ozone_airmass_bird_riordan1986(zenith_deg);
    depths_along(
        band_index,
        ozone_du / DU_PER_ATM_CM * m_ozone,
        water_cm * m,
        m * pressure_hpa / super::rayleigh::STANDARD_PRESSURE_HPA,
        path_airmass,
    )
}

/// τ = y(u)/`divisor` for the three gases at absorber paths `u_ozone` [atm-cm],
/// `u_water` [cm] and `u_mixed` [unitless] (see [`band_gas_optical_depths_for_sun`]).
fn depths_along(
    band_index: usize,
    u_ozone: f64,
    u_water: f64,
    u_mixed: f64,
    divisor: f64,
) -> GasDepths {
    GasPaths::along(u_ozone, u_water, u_mixed, divisor).depths(band_index)
}

/// Band-effective vertical absorption optical depths [unitless] of ozone, water vapour and
/// mixed gases in band `band_index` of [`super::spectrum::astm_g173_bands`], for ozone column
/// `ozone_du` [DU], precipitable water `water_cm` [cm], surface pressure `pressure_hpa`
/// [hPa] and relative air mass `airmass` [unitless, ≥ 1] of the path: Bird & Riordan (1986)
/// transmittances averaged over the band's sub-wavelengths, τ = −ln(Σᵢ Eᵢ Tᵢ(u)) / m (see the
/// module documentation; the mixed-gas path is pressure corrected, u = m p/1013.25). O(1):
/// a table look-up per gas, built once at first use. Zero for zero amounts; NaN for a band
/// index out of range or a non-positive air mass.
///
/// One air mass serves all three gases here, ozone included; Bird & Riordan's ozone path
/// (eq. 2-10) is shorter at low sun (7 % at 80° zenith). Prefer
/// [`band_gas_optical_depths_for_sun`], which takes each gas's own path.
pub fn band_gas_optical_depths(
    band_index: usize,
    ozone_du: f64,
    water_cm: f64,
    pressure_hpa: f64,
    airmass: f64,
) -> GasDepths {
    depths_along(
        band_index,
        ozone_du / DU_PER_ATM_CM * airmass,
        water_cm * airmass,
        airmass * pressure_hpa / super::rayleigh::STANDARD_PRESSURE_HPA,
        airmass,
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #[test]
        fn finite_non_negative_for_any_sensible_input(
            b in 0usize..31, o3 in 0.0f64..1000.0, w in 0.0f64..10.0,
            p in 300.0f64..1100.0, m in 1.0f64..40.0,
        ) {
            let g = band_gas_optical_depths(b, o3, w, p, m);
            for t in [g.ozone, g.water, g.mixed] {
                prop_assert!(t.is_finite() && t >= 0.0);
            }
        }

        #[test]
        fn no_nan_for_negative_or_extreme_amounts(b in 0usize..31, o3 in -1e6f64..1e6, w in -1e3f64..1e3) {
            let g = band_gas_optical_depths(b, o3, w, 1013.25, 2.0);
            prop_assert!(!g.ozone.is_nan() && !g.water.is_nan() && !g.mixed.is_nan());
        }
    }

    /// Direct sub-wavelength sum for the same inputs (the reference of the table).
    fn direct(b: usize, o3: f64, w: f64, p: f64, m: f64) -> GasDepths {
        GasDepths {
            ozone: band_absorption_direct(b, Gas::Ozone, o3 / 1000.0 * m) / m,
            water: band_absorption_direct(b, Gas::Water, w * m) / m,
            mixed: band_absorption_direct(b, Gas::Mixed, m * p / 1013.25) / m,
        }
    }

    #[test]
    fn table_interpolation_error_is_below_0_05_percent() {
        let mut worst: f64 = 0.0;
        let nb = super::super::spectrum::astm_g173_bands().len();
        for b in 0..nb {
            for &m in &[1.0, 1.37, 2.0, 3.3, 7.7, 15.0, 38.0] {
                for &(o3, w, p) in &[
                    (300.0, 1.5, 1013.25),
                    (180.0, 0.1, 600.0),
                    (470.0, 6.3, 1040.0),
                ] {
                    let t = band_gas_optical_depths(b, o3, w, p, m);
                    let d = direct(b, o3, w, p, m);
                    for (a, e) in [(t.ozone, d.ozone), (t.water, d.water), (t.mixed, d.mixed)] {
                        if e == 0.0 {
                            assert_eq!(a, 0.0);
                        } else {
                            worst = worst.max(((a - e) / e).abs());
                        }
                    }
                }
            }
        }
        eprintln!("gas table: worst relative interpolation error {worst:.2e}");
        assert!(worst < 5e-4, "worst relative interpolation error {worst}");
    }

    #[test]
    fn weak_absorption_limit_below_the_grid_is_linear() {
        // u = 1e-8 is below the grid: y ∝ u there.
        let a = band_absorption_direct(13, Gas::Ozone, 1e-8);
        let t = lookup(tables()[13][0].as_ref().unwrap(), 1e-8);
        assert!(((t - a) / a).abs() < 1e-5);
    }

    #[test]
    fn zero_amounts_absorb_nothing_and_bad_inputs_are_nan() {
        let g = band_gas_optical_depths(19, 0.0, 0.0, 0.0, 2.0);
        assert_eq!(g, GasDepths::default());
        assert!(
            band_gas_optical_depths(31, 300.0, 1.5, 1013.25, 1.0)
                .ozone
                .is_nan()
        );
        assert!(
            band_gas_optical_depths(3, 300.0, 1.5, 1013.25, 0.0)
                .water
                .is_nan()
        );
    }

    #[test]
    fn where_the_gases_absorb() {
        let at = |b| band_gas_optical_depths(b, 300.0, 1.5, 1013.25, 1.0);
        // Hartley–Huggins ozone in the UV, Chappuis ozone in the visible, no water vapour.
        assert!(at(0).ozone > 3.0 && at(0).water == 0.0);
        assert!(at(13).ozone > 0.02 && at(13).ozone < 0.04);
        // O₂ A band (0.76 µm) of the mixed gases, water vapour at 0.94 and 1.4 µm.
        assert!(at(19).mixed > 0.01);
        assert!(at(22).water > 0.05 && at(25).water > at(23).water);
    }

    #[test]
    fn ozone_airmass_of_eq_2_10() {
        // Bird & Riordan (1986), eq. 2-10 with h_o = 22 km: 1 overhead, (1 + h/R)/√(2h/R)
        // = 12.07 at the horizon; within 1 % of the Kasten & Young (1989) air mass to 60°.
        assert!((ozone_airmass_bird_riordan1986(0.0) - 1.0).abs() < 1e-5);
        let h: f64 = 22.0 / 6370.0;
        let horizon = (1.0 + h) / (2.0 * h).sqrt();
        assert!((ozone_airmass_bird_riordan1986(90.0) - horizon).abs() < 1e-12);
        assert!((horizon - 12.07).abs() < 0.01);
        let m60 = super::super::solar::relative_airmass_kasten_young1989(60.0);
        assert!((ozone_airmass_bird_riordan1986(60.0) / m60 - 1.0).abs() < 1e-2);
        let (mo, m) = (
            ozone_airmass_bird_riordan1986(80.0),
            super::super::solar::relative_airmass_kasten_young1989(80.0),
        );
        assert!((mo - 5.21).abs() < 0.01 && mo < 0.95 * m, "{mo} {m}");
    }

    #[test]
    fn for_sun_takes_each_gas_along_its_own_path() {
        let (o3, w, p) = (300.0, 1.5, 900.0);
        for z in [0.0f64, 45.0, 80.0, 86.0] {
            let m = super::super::solar::relative_airmass_kasten_young1989(z);
            let mo = ozone_airmass_bird_riordan1986(z);
            let mu0 = z.to_radians().cos();
            for b in [0usize, 5, 13, 19, 22, 25] {
                // Referred to the plane-parallel slant factor 1/μ₀: exp(−τ/μ₀) is the band-mean
                // transmittance along the real paths.
                let g = band_gas_optical_depths_for_sun(b, o3, w, p, z, 1.0 / mu0);
                let d_o = band_absorption_direct(b, Gas::Ozone, o3 / 1000.0 * mo);
                let d_w = band_absorption_direct(b, Gas::Water, w * m);
                let d_u = band_absorption_direct(b, Gas::Mixed, m * p / 1013.25);
                for (tau, y) in [(g.ozone, d_o), (g.water, d_w), (g.mixed, d_u)] {
                    let path = tau / mu0;
                    assert!(
                        (path - y).abs() <= 5e-4 * y,
                        "band {b} z {z}: {path} vs {y}"
                    );
                }
            }
        }
        assert!(
            band_gas_optical_depths_for_sun(3, o3, w, p, 30.0, 0.0)
                .ozone
                .is_nan()
        );
        assert!(
            band_gas_optical_depths_for_sun(31, o3, w, p, 30.0, 1.0)
                .water
                .is_nan()
        );
    }

    /// Below 295 nm the ozone column is opaque (Hartley band; the surface UV-B cut-off near
    /// 295–300 nm is common practice): with 300 DU overhead the 280–300 nm band passes under
    /// 2 % (almost all of it through the 300 nm half-hat), and under 1e-3 at 60°.
    #[test]
    fn the_280_300_nm_band_is_nearly_opaque() {
        let t = |z: f64| {
            let g = band_gas_optical_depths_for_sun(0, 300.0, 1.5, 1013.25, z, 1.0);
            (-g.ozone).exp()
        };
        assert!(t(0.0) < 0.02 && t(0.0) > 1e-4, "{}", t(0.0));
        assert!(t(60.0) < 1e-3, "{}", t(60.0));
    }

    #[test]
    fn depth_decreases_with_path_for_saturating_absorbers() {
        // Strong-line (curve-of-growth) behaviour: effective τ falls as the path grows.
        let w1 = band_gas_optical_depths(25, 300.0, 2.0, 1013.25, 1.0).water;
        let w5 = band_gas_optical_depths(25, 300.0, 2.0, 1013.25, 5.0).water;
        assert!(w5 < w1);
    }
}
