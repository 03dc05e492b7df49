//! Checks of whole calculations against the facts of the trade ("common practice") and
//! against outside references that say where those rough facts hold: DISORT broadband daily
//! means (`tests/fixtures/disort_broadband.csv`, written by
//! `tests/reference/practice_reference.py` on the G173 table's own wavelength grid, with and
//! without gases, with a surface-based and an elevated aerosol) and pvlib's spectrl2 global
//! irradiance (`tests/fixtures/spectrl2_global.csv`, written by
//! `tests/reference/pvlib_reference.py`). Each check names its source beside it; values that
//! are only the model's own (regression pins) are kept apart and called so. Every measured
//! number quoted below is printed by the test that measures it
//! (`cargo test --test physics_practice -- --nocapture`).

use chrono::{TimeZone, Utc};
use hazebook::physics::forcing::{Context, compute_observation};
use hazebook::physics::{
    AerosolLayer, ObservationResult, Settings, SpectralValue, Surface, rayleigh, spectrum,
};
use hazebook::physics::{BandSet, Observation};

/// Rows of a committed fixture CSV (header skipped), as numbers.
fn fixture(name: &str) -> Vec<Vec<f64>> {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(name);
    let path = if path.exists() {
        path
    } else {
        std::path::Path::new(file!())
            .with_file_name("fixtures")
            .join(name)
    };
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    text.lines()
        .skip(1)
        .filter(|l| !l.trim().is_empty())
        .map(|l| {
            l.split(',')
                .map(|s| s.trim().parse().unwrap_or_else(|_| panic!("{name}: {s}")))
                .collect()
        })
        .collect()
}

/// A sea-level observation at noon UTC on the Greenwich meridian (the local solar date is
/// the UTC date): AOD at 550 nm, one SSA and one g for all wavelengths, Lambertian surface,
/// 300 DU ozone and 1.4 cm water (the mid-latitude values of common practice).
#[allow(clippy::too_many_arguments)]
fn observation(
    latitude_deg: f64,
    (month, day): (u32, u32),
    aod_550: f64,
    angstrom: f64,
    ssa: f64,
    g: f64,
    albedo: f64,
) -> Observation {
    Observation {
        time_utc: Utc.with_ymd_and_hms(2023, month, day, 12, 0, 0).unwrap(),
        latitude_deg,
        longitude_deg: 0.0,
        altitude_m: 0.0,
        pressure_hpa: Some(1013.25),
        aod: aod_550,
        aod_wavelength_nm: 550.0,
        angstrom,
        ssa: vec![SpectralValue {
            wavelength_nm: 550.0,
            value: ssa,
        }],
        asymmetry: vec![SpectralValue {
            wavelength_nm: 550.0,
            value: g,
        }],
        surface: Surface::Lambertian { albedo },
        ozone_du: 300.0,
        water_cm: 1.4,
        layer: AerosolLayer::default(),
    }
}

fn run(o: &Observation, s: &Settings) -> ObservationResult {
    compute_observation(o, s, &Context::new(s))
}

/// Annual mean of the 24-hour-mean TOA forcing efficiency [W m⁻² per unit AOD(550)]: the
/// mean ΔF_TOA of 24 days (the 7th and 22nd of each month) divided by AOD(550).
fn annual_efficiency(latitude_deg: f64, aod: f64, ssa: f64, g: f64, albedo: f64) -> f64 {
    let s = Settings::default();
    let ctx = Context::new(&s);
    let mut sum = 0.0;
    let mut n = 0.0;
    for month in 1..=12 {
        for day in [7, 22] {
            let o = observation(latitude_deg, (month, day), aod, 1.3, ssa, g, albedo);
            sum += compute_observation(&o, &s, &ctx).daily.dre_toa;
            n += 1.0;
        }
    }
    sum / n / aod
}

/// One row of `disort_broadband.csv` (written by `tests/reference/practice_reference.py`).
#[derive(Debug)]
struct Broadband {
    latitude_deg: f64,
    month: u32,
    day: u32,
    aod_550: f64,
    angstrom: f64,
    ssa: f64,
    g: f64,
    albedo: f64,
    toa_down: f64,
    dre_toa: f64,
    dre_sfc: f64,
    /// 0 (with water 0): gases off.
    ozone_du: f64,
    water_cm: f64,
    base_km: f64,
    top_km: f64,
}

fn broadband() -> Vec<Broadband> {
    fixture("disort_broadband.csv")
        .into_iter()
        .map(|r| Broadband {
            latitude_deg: r[0],
            month: r[2] as u32,
            day: r[3] as u32,
            aod_550: r[4],
            angstrom: r[5],
            ssa: r[6],
            g: r[7],
            albedo: r[8],
            toa_down: r[9],
            dre_toa: r[10],
            dre_sfc: r[11],
            ozone_du: r[12],
            water_cm: r[13],
            base_km: r[14],
            top_km: r[15],
        })
        .collect()
}

impl Broadband {
    fn gases(&self) -> bool {
        self.ozone_du > 0.0 || self.water_cm > 0.0
    }

    /// The fixture row whose case matches, from the optics, surface and gases.
    fn find(ssa: f64, g: f64, aod: f64, albedo: f64, gases: bool, elevated: bool) -> Broadband {
        broadband()
            .into_iter()
            .find(|b| {
                b.latitude_deg == 30.0
                    && (b.ssa, b.g, b.aod_550, b.albedo) == (ssa, g, aod, albedo)
                    && b.gases() == gases
                    && (b.base_km > 0.0) == elevated
            })
            .unwrap_or_else(|| panic!("no DISORT case ω {ssa} g {g} AOD {aod} A {albedo}"))
    }

    /// Our 24-hour means for the same column: the default settings without the Earth–Sun
    /// distance factor (the reference has none), gases as in the case.
    fn ours(&self) -> ObservationResult {
        let s = Settings {
            gases: self.gases(),
            earth_sun_distance: false,
            ..Settings::default()
        };
        let mut o = observation(
            self.latitude_deg,
            (self.month, self.day),
            self.aod_550,
            self.angstrom,
            self.ssa,
            self.g,
            self.albedo,
        );
        if self.gases() {
            o.ozone_du = self.ozone_du;
            o.water_cm = self.water_cm;
        }
        o.layer = AerosolLayer {
            base_km: self.base_km,
            top_km: self.top_km,
        };
        run(&o, &s)
    }
}

/// DISORT (16 streams; disortpp 1.2.1; Stamnes et al. 1988) broadband 24-hour means solved at
/// each of the 2002 wavelengths of the G173 table, built from the published methods alone
/// (Bodhaine Rayleigh, Bird & Riordan gases, U.S. Standard Atmosphere split; see the script):
/// 8 cases at the March equinox, 0° and 30° N — gas-free and with 300 DU ozone and 1.4 cm
/// water, ω 0.85–1, albedo 0.05 and 0.15, the aerosol in 0–2 km or elevated at 3–5 km.
/// Delta-Eddington is known to scatter too little back at high and moderate sun for
/// g ≈ 0.7 in thin layers and to err by a few per cent of the incident flux (King &
/// Harshvardhan 1986, from memory). Measured: ΔF_SFC 4.8–6.8 % less negative than DISORT in
/// every case; ΔF_TOA within 0.6 % for the scattering aerosol with gases and 5.6–6.8 % less
/// negative without, 5 % more negative for the absorbing one over A = 0.05 and 21 % (over
/// A = 0.15) and 29 % (elevated) more negative where the TOA effect is a small difference
/// near the critical SSA — there 0.67 and 0.76 W m⁻², 0.2 % of the incident flux, as in
/// the single-layer checks of `tests/physics_disort.rs`. Tolerance, per case and quantity:
/// |ours − DISORT| ≤ 7 % of |DISORT| + 0.2 % of the incident flux (largest share of it
/// used: 0.82 for ΔF_TOA, 0.59 for ΔF_SFC), and the incident flux (same day geometry) to 1e-6. It would catch
/// a lost band, a Rayleigh or gas depth in the wrong layer, a wrong day integral, or a
/// ΔF_SFC off by 10 % in the absorbing cases.
#[test]
fn broadband_daily_forcing_agrees_with_disort() {
    let mut worst: (f64, f64) = (0.0, 0.0);
    for b in broadband() {
        let ours = b.ours();
        // Same day geometry and solar constant: the incident flux agrees closely.
        assert!(
            (ours.daily.clean.toa_down / b.toa_down - 1.0).abs() < 1e-6,
            "{b:?}: {}",
            ours.daily.clean.toa_down
        );
        let e_toa = ours.daily.dre_toa / b.dre_toa - 1.0;
        let e_sfc = ours.daily.dre_sfc / b.dre_sfc - 1.0;
        println!(
            "lat {} ω {} A {} gases {} base {}: ΔF_TOA ours {:.3} DISORT {:.3} ({:+.1} %), \
             ΔF_SFC ours {:.3} DISORT {:.3} ({:+.1} %)",
            b.latitude_deg,
            b.ssa,
            b.albedo,
            b.gases(),
            b.base_km,
            ours.daily.dre_toa,
            b.dre_toa,
            100.0 * e_toa,
            ours.daily.dre_sfc,
            b.dre_sfc,
            100.0 * e_sfc
        );
        // Share of the bound 7 % |DISORT| + 0.2 % of the incident flux used.
        let used = |ours: f64, reference: f64| {
            (ours - reference).abs() / (0.07 * reference.abs() + 0.002 * b.toa_down)
        };
        let u = (
            used(ours.daily.dre_toa, b.dre_toa),
            used(ours.daily.dre_sfc, b.dre_sfc),
        );
        worst = (worst.0.max(u.0), worst.1.max(u.1));
        assert!(u.0 <= 1.0 && u.1 <= 1.0, "{b:?}: {u:?}");
    }
    println!(
        "share of the bound used: ΔF_TOA {:.2}, ΔF_SFC {:.2}",
        worst.0, worst.1
    );
}

/// (a) Common practice: a purely scattering aerosol over a dark surface gives a clear-sky
/// 24-hour TOA forcing efficiency of roughly −25 to −35 W m⁻² per unit AOD(550).
///
/// Checked against DISORT, not against this model: for the full column with gases at 30° N
/// at the March equinox (a latitude whose annual-mean insolation, ≈ 365 W m⁻², is close to
/// the global mean S₀/4 ≈ 340 W m⁻², where such rules are quoted; fixture
/// `disort_broadband.csv`) DISORT gives −46.2 W m⁻² per unit AOD(550) for ω = 1, g = 0.7,
/// AOD 0.1,
/// albedo 0.05 — beyond the rough range, so the range does not describe that idealised
/// aerosol — and −33.5 for what field campaigns call "mostly scattering"
/// aerosol (ω 0.97, g 0.75, AOD 0.3), inside it: that is where the rule of thumb comes from.
/// The test asserts both facts of the reference, and that our efficiencies are within 5 %
/// of DISORT's (measured +0.4 % for both: −46.40 against −46.20 and −33.61 against
/// −33.46). A model 10 % off, or one that met the rule of thumb for the idealised aerosol,
/// fails.
#[test]
fn scattering_aerosol_efficiency_against_disort() {
    let ideal = Broadband::find(1.0, 0.7, 0.1, 0.05, true, false);
    let typical = Broadband::find(0.97, 0.75, 0.3, 0.05, true, false);
    let rule = -35.0..=-25.0;
    let ref_ideal = ideal.dre_toa / ideal.aod_550;
    let ref_typical = typical.dre_toa / typical.aod_550;
    assert!(ref_ideal < -40.0, "DISORT, idealised: {ref_ideal}");
    assert!(
        rule.contains(&ref_typical),
        "DISORT, typical: {ref_typical}"
    );
    for (b, reference) in [(&ideal, ref_ideal), (&typical, ref_typical)] {
        let ours = b.ours().daily.efficiency_toa;
        println!(
            "ω {} g {} AOD {}: efficiency ours {ours:.2}, DISORT {reference:.2} W m⁻² ({:+.1} %)",
            b.ssa,
            b.g,
            b.aod_550,
            100.0 * (ours / reference - 1.0)
        );
        assert!((ours / reference - 1.0).abs() < 0.05, "{b:?}: {ours}");
    }
}

/// Regression pins, not outside checks: the model's own annual-mean efficiencies at 30° N
/// (24 days, the 7th and 22nd of each month, full column with gases and the Earth–Sun
/// distance), as measured when the DISORT check above was written, ±4 %. The outside check
/// of the same quantities is `scattering_aerosol_efficiency_against_disort` (one day); these
/// pins only guard the annual mean against unnoticed change. Measured: −46.44 and −33.53
/// (and −40.54 for ω 1 at AOD 0.5, which must lie between the first and 0).
#[test]
fn regression_pins_annual_efficiency() {
    let ideal = annual_efficiency(30.0, 0.1, 1.0, 0.7, 0.05);
    let typical = annual_efficiency(30.0, 0.3, 0.97, 0.75, 0.05);
    let thick = annual_efficiency(30.0, 0.5, 1.0, 0.7, 0.05);
    println!(
        "annual mean at 30° N: ω 1, g 0.7, AOD 0.1: {ideal:.2}; ω 0.97, g 0.75, AOD 0.3: \
         {typical:.2}; ω 1, AOD 0.5: {thick:.2} W m⁻² per unit AOD(550)"
    );
    let pin = |x: f64, at: f64| (x / at - 1.0).abs() < 0.04;
    assert!(pin(ideal, PIN_IDEAL), "{ideal}");
    assert!(pin(typical, PIN_TYPICAL), "{typical}");
    // The efficiency weakens as AOD grows (multiple scattering saturates; common practice).
    assert!(thick > ideal && thick < 0.0, "{thick} vs {ideal}");
}

const PIN_IDEAL: f64 = -46.0;
const PIN_TYPICAL: f64 = -33.5;

/// (b) Common practice: the surface effect of an absorbing aerosol is several times its TOA
/// effect. ω = 0.85, g = 0.7, Ångström 1.3, AOD(550) 0.3, albedo 0.05 and 0.15, 30° N,
/// 24-hour means at the March equinox, with gases. DISORT (fixture `disort_broadband.csv`)
/// gives ΔF_SFC/ΔF_TOA = 3.52 and 7.74; ours 3.16 and 6.08 (the TOA effect shrinks towards
/// the critical SSA as the surface brightens, Chýlek & Wong 1995, checked in
/// `tests/physics_solver.rs`; there the ratio magnifies the small TOA error of
/// `broadband_daily_forcing_agrees_with_disort`). Both must be between 2.5 and 10 (several
/// times), ours within 25 % of DISORT's (measured −10 % and −21 %), rising with the albedo,
/// and the atmosphere must absorb (ΔF_ATM > 0).
#[test]
fn absorbing_aerosol_surface_effect_is_several_times_toa() {
    let mut ratios = Vec::new();
    for albedo in [0.05, 0.15] {
        let b = Broadband::find(0.85, 0.7, 0.3, albedo, true, false);
        let r = b.ours();
        let disort_ratio = b.dre_sfc / b.dre_toa;
        let ratio = r.daily.dre_sfc / r.daily.dre_toa;
        println!(
            "albedo {albedo}: ΔF_TOA {:.2}, ΔF_SFC {:.2}, ΔF_ATM {:.2} W m⁻², ratio {ratio:.2} \
             (DISORT {disort_ratio:.2})",
            r.daily.dre_toa, r.daily.dre_sfc, r.daily.dre_atm
        );
        assert!(r.daily.dre_toa < 0.0 && r.daily.dre_sfc < 0.0);
        assert!((2.5..=10.0).contains(&ratio), "albedo {albedo}: {ratio}");
        assert!(
            (2.5..=10.0).contains(&disort_ratio),
            "albedo {albedo}: {disort_ratio}"
        );
        assert!(r.daily.dre_atm > 0.0);
        assert!((ratio / disort_ratio - 1.0).abs() < 0.25, "albedo {albedo}");
        ratios.push(ratio);
    }
    assert!(ratios[1] > ratios[0]);
}

/// An absorbing aerosol lifted to 3–5 km over a brighter surface (ω 0.85, AOD 0.3, albedo
/// 0.15, gases on) against the same aerosol in 0–2 km, in DISORT and in ours: DISORT gives
/// ΔF_TOA −2.67 against −3.18 W m⁻² (the lifted layer darkens more of the scattering air
/// below it: less negative), ours −3.44 against −3.85; ours must show the same sign of the
/// change, ΔF_TOA within the bound of `broadband_daily_forcing_agrees_with_disort` (7 % +
/// 0.2 % of the incident flux; measured 0.76 W m⁻²) and ΔF_SFC within 10 % (measured
/// −23.42 against −24.65, 5 %). It would catch the aerosol placed in the wrong layer of the
/// three-layer column.
#[test]
fn elevated_layer_against_disort() {
    let low = Broadband::find(0.85, 0.7, 0.3, 0.15, true, false);
    let high = Broadband::find(0.85, 0.7, 0.3, 0.15, true, true);
    let (ours_low, ours_high) = (low.ours().daily, high.ours().daily);
    println!(
        "ΔF_TOA 0–2 km: ours {:.3} DISORT {:.3}; 3–5 km: ours {:.3} DISORT {:.3}; \
         ΔF_SFC 3–5 km: ours {:.3} DISORT {:.3}",
        ours_low.dre_toa,
        low.dre_toa,
        ours_high.dre_toa,
        high.dre_toa,
        ours_high.dre_sfc,
        high.dre_sfc
    );
    assert!(high.dre_toa > low.dre_toa);
    assert!(ours_high.dre_toa > ours_low.dre_toa);
    let bound = 0.07 * high.dre_toa.abs() + 0.002 * high.toa_down;
    assert!((ours_high.dre_toa - high.dre_toa).abs() < bound);
    assert!((ours_high.dre_sfc / high.dre_sfc - 1.0).abs() < 0.10);
}

/// (c) Common practice: the solar constant is about 1361–1367 W m⁻², and Rayleigh
/// optical depth falls about as λ⁻⁴. The default incident flux at TOA with the sun overhead
/// and no distance factor is the solar constant 1361 W m⁻² (Kopp & Lean 2011); the G173
/// file itself holds 1347.9 W m⁻² (fixture `astm_g173_integral.csv`), 1.0–1.4 % below the
/// common range, the rest of the spectrum lying outside 0.28–4 µm. The band-effective
/// Rayleigh depths of neighbouring ultraviolet and visible bands fall with a log-log slope
/// between −4.4 and −3.9 (λ⁻⁴ with the dispersion of air, steeper in the ultraviolet), and
/// the whole column at 550 nm is 0.097 (Bodhaine et al. 1999, from memory).
#[test]
fn solar_constant_and_rayleigh_sanity() {
    let s = Settings {
        fixed_cos_zenith: Some(1.0),
        earth_sun_distance: false,
        daily_mean: false,
        ..Settings::default()
    };
    let r = run(&observation(30.0, (6, 21), 0.1, 1.3, 0.95, 0.7, 0.2), &s);
    let toa = r.instantaneous.clean.toa_down;
    assert!((toa - 1361.0).abs() < 1e-9, "{toa}");
    assert!((1361.0..=1367.0).contains(&toa));
    let one = Settings {
        band_set: BandSet::Single,
        ..s.clone()
    };
    let r1 = run(&observation(30.0, (6, 21), 0.1, 1.3, 0.95, 0.7, 0.2), &one);
    assert!((r1.instantaneous.clean.toa_down - 1361.0).abs() < 1e-9);
    let g173: f64 = spectrum::astm_g173_bands()
        .iter()
        .map(|b| b.irradiance_wm2)
        .sum();
    let short = 1.0 - g173 / 1361.0;
    assert!((0.008..0.015).contains(&short), "{g173}");

    let bands = spectrum::astm_g173_bands();
    for i in 1..15 {
        let (a, b) = (&bands[i - 1], &bands[i]);
        let slope = (rayleigh::band_rayleigh_optical_depth(i, 1013.25)
            / rayleigh::band_rayleigh_optical_depth(i - 1, 1013.25))
        .ln()
            / (b.center_um / a.center_um).ln();
        assert!(
            (-4.4..=-3.9).contains(&slope),
            "bands {} {i}: {slope}",
            i - 1
        );
    }
    let t550 = rayleigh::rayleigh_optical_depth_bodhaine1999(0.55, 1013.25);
    assert!((t550 - 0.097).abs() < 0.001, "{t550}");
}

/// (d) Common practice, from memory: clear-sky global horizontal irradiance at sea level
/// with a high sun is ~1000–1100 W m⁻² for AOD ~0.1. Conditions: sun overhead (μ₀ = 1),
/// AOD(500) 0.1, Ångström 1.3, ω 0.92, g 0.7, 1.4 cm water, 300 DU, albedo 0.2, 1361 W m⁻²
/// at 1 AU. Measured: 1121 W m⁻² (direct 1001, diffuse 120). pvlib's spectrl2 (Bird &
/// Riordan 1986) gives a global transmittance of 0.828 for the same sky, i.e. 1127 W m⁻²
/// (fixture `spectrl2_global.csv`): the remembered upper end 1100 is a little low for the
/// sun exactly overhead, so the band checked is 1000–1150 W m⁻². Against spectrl2 at 0, 30
/// and 60° (measured −0.6 % to +0.2 %; spectrl2's diffuse part is an empirical
/// parameterisation), tolerance 3 %.
#[test]
fn clean_sky_global_irradiance_common_practice() {
    for r in fixture("spectrl2_global.csv") {
        let (zenith, global_ref) = (r[0], r[1]);
        let mu0 = zenith.to_radians().cos();
        let s = Settings {
            fixed_cos_zenith: Some(mu0),
            earth_sun_distance: false,
            daily_mean: false,
            ..Settings::default()
        };
        let mut o = observation(30.0, (6, 21), 0.1, 1.3, 0.92, 0.7, 0.2);
        o.aod_wavelength_nm = 500.0;
        let f = run(&o, &s).instantaneous.aerosol;
        let global = f.sfc_down_direct + f.sfc_down_diffuse;
        let t = global / f.toa_down;
        println!(
            "zenith {zenith}: global {global:.1} W m⁻² (direct {:.1}, diffuse {:.1}), \
             transmittance {t:.4} vs spectrl2 {global_ref:.4} ({:+.2} %)",
            f.sfc_down_direct,
            f.sfc_down_diffuse,
            100.0 * (t / global_ref - 1.0)
        );
        assert!((t / global_ref - 1.0).abs() < 0.03, "zenith {zenith}");
        if zenith == 0.0 {
            assert!((1000.0..=1150.0).contains(&global), "{global}");
        }
    }
}
