//! Generates the invented sample inputs under `sample-inputs/`.
//!
//! Every number written here is INVENTED: the "Brine-and-Fell Haze Study 2026" is a scenario
//! of our own with three fictitious sites (Brinemouth, coastal; Kelvergate, urban; Tarnfell,
//! upland). The values are drawn from a small seeded pseudo-random generator (SplitMix64) around
//! plausible climatological levels so that the files look like a real campaign and exercise
//! the reader, the physics and the report, but they are not measurements of anything.
//!
//! Run from the crate root:
//!
//! ```text
//! cargo run --release --example make_samples
//! ```
//!
//! The output is deterministic: the same generator gives the same bytes (fixed seeds, fixed
//! document creation time, fixed zip timestamps).
//!
//! The benchmark `benches/pipeline.rs` includes this file as a module and calls
//! [`write_campaign_rows`] to make larger workbooks of the same kind.

use std::f64::consts::PI;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use chrono::{Datelike, Duration, FixedOffset, NaiveDate, NaiveDateTime, TimeZone, Timelike};
use rust_xlsxwriter::{DocProperties, ExcelDateTime, Format, Workbook, Worksheet, XlsxError};

/// Short name of the invented campaign, used in every file name.
pub const CAMPAIGN: &str = "brinefell";

/// Title of the invented campaign.
pub const CAMPAIGN_TITLE: &str = "Brine-and-Fell Haze Study 2026";

/// Text placed in every workbook (About sheet, title rows, document properties).
pub const INVENTED_NOTE: &str = "INVENTED SAMPLE DATA. The Brine-and-Fell Haze Study 2026, its \
     sites (Brinemouth, Kelvergate, Tarnfell), coordinates and every value in this file are \
     invented for testing and demonstrating hazebook. They are not measurements.";

// ---------------------------------------------------------------------------------------------
// Pseudo-random numbers
// ---------------------------------------------------------------------------------------------

/// SplitMix64 pseudo-random generator (Steele, Lea & Flood 2014, "Fast splittable pseudorandom
/// number generators", OOPSLA; constants as published there and in Vigna's reference code).
pub struct SplitMix64 {
    state: u64,
    spare_normal: Option<f64>,
}

impl SplitMix64 {
    pub fn new(seed: u64) -> Self {
        Self {
            state: seed,
            spare_normal: None,
        }
    }

    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1) with 53 random bits.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Uniform integer in [lo, hi] (inclusive).
    pub fn range(&mut self, lo: usize, hi: usize) -> usize {
        lo + (self.next_u64() % ((hi - lo + 1) as u64)) as usize
    }

    /// Standard normal deviate by the Box–Muller transform (Box & Muller 1958).
    pub fn normal(&mut self) -> f64 {
        if let Some(z) = self.spare_normal.take() {
            return z;
        }
        let u1 = 1.0 - self.uniform(); // (0, 1]
        let u2 = self.uniform();
        let r = (-2.0 * u1.ln()).sqrt();
        self.spare_normal = Some(r * (2.0 * PI * u2).sin());
        r * (2.0 * PI * u2).cos()
    }
}

// ---------------------------------------------------------------------------------------------
// Invented sites and their aerosol character
// ---------------------------------------------------------------------------------------------

/// An invented site and the invented climatology its values are drawn around.
pub struct Site {
    pub name: &'static str,
    pub character: &'static str,
    /// [deg N]
    pub latitude: f64,
    /// [deg E] (negative west)
    pub longitude: f64,
    /// [m]
    pub altitude_m: f64,
    /// Broadband surface albedo [-] (land sites; the ocean site uses the ocean option).
    pub albedo: f64,
    /// `land` or `ocean`
    pub surface: &'static str,
    /// Offset of the local standard clock from UTC [h].
    pub utc_offset_hours: f64,
    /// Annual-mean AOD at 500 nm [-].
    aod_base: f64,
    /// Relative amplitude of the seasonal AOD cycle (maximum in July).
    aod_season: f64,
    /// Day-to-day standard deviation of ln AOD.
    aod_day_sd: f64,
    /// Relative amplitude and phase [local solar hour of the maximum] of the diurnal AOD cycle.
    aod_diurnal: (f64, f64),
    angstrom_mean: f64,
    angstrom_sd: f64,
    ssa_mean: f64,
    ssa_sd: f64,
    g_mean: f64,
    g_sd: f64,
    /// Multiplier of the regional precipitable water.
    water_factor: f64,
    /// Minute past the hour of the routine observations.
    minute: u32,
    /// Spectral SSA and g at 440, 675, 870, 1020 nm of the retrievals sheet.
    ssa_spectral: [f64; 4],
    g_spectral: [f64; 4],
    /// Curvature of ln AOD against ln wavelength (positive: fine-mode dominated).
    aod_curvature: f64,
}

/// Brinemouth (coastal), Kelvergate (urban), Tarnfell (upland): all invented.
pub const SITES: [Site; 3] = [
    Site {
        name: "Brinemouth",
        character: "coastal headland; sea-salt dominated, weakly absorbing, ocean surface",
        latitude: 54.497,
        longitude: -3.612,
        altitude_m: 6.0,
        albedo: 0.06,
        surface: "ocean",
        utc_offset_hours: 0.0,
        aod_base: 0.105,
        aod_season: 0.25,
        aod_day_sd: 0.32,
        aod_diurnal: (0.06, 14.0),
        angstrom_mean: 0.50,
        angstrom_sd: 0.14,
        ssa_mean: 0.970,
        ssa_sd: 0.010,
        g_mean: 0.725,
        g_sd: 0.018,
        water_factor: 1.05,
        minute: 5,
        ssa_spectral: [0.968, 0.974, 0.976, 0.977],
        g_spectral: [0.742, 0.723, 0.714, 0.711],
        aod_curvature: -0.05,
    },
    Site {
        name: "Kelvergate",
        character: "town centre rooftop; traffic and domestic heating, absorbing, land",
        latitude: 54.781,
        longitude: -3.268,
        altitude_m: 32.0,
        albedo: 0.14,
        surface: "land",
        utc_offset_hours: 0.0,
        aod_base: 0.215,
        aod_season: 0.30,
        aod_day_sd: 0.36,
        aod_diurnal: (0.12, 15.0),
        angstrom_mean: 1.50,
        angstrom_sd: 0.13,
        ssa_mean: 0.872,
        ssa_sd: 0.020,
        g_mean: 0.630,
        g_sd: 0.020,
        water_factor: 1.0,
        minute: 20,
        ssa_spectral: [0.892, 0.866, 0.848, 0.838],
        g_spectral: [0.684, 0.603, 0.565, 0.548],
        aod_curvature: 0.16,
    },
    Site {
        name: "Tarnfell",
        character: "upland fell summit at 905 m; clean free-tropospheric air, grass and rock",
        latitude: 54.452,
        longitude: -3.037,
        altitude_m: 905.0,
        albedo: 0.18,
        surface: "land",
        utc_offset_hours: 0.0,
        aod_base: 0.058,
        aod_season: 0.40,
        aod_day_sd: 0.38,
        aod_diurnal: (0.15, 16.0),
        angstrom_mean: 1.25,
        angstrom_sd: 0.20,
        ssa_mean: 0.945,
        ssa_sd: 0.018,
        g_mean: 0.670,
        g_sd: 0.020,
        water_factor: 0.68,
        minute: 35,
        ssa_spectral: [0.951, 0.942, 0.934, 0.930],
        g_spectral: [0.705, 0.642, 0.612, 0.601],
        aod_curvature: 0.06,
    },
];

/// One invented observation (times in UTC).
#[derive(Clone, Debug)]
pub struct Obs {
    pub site: usize,
    pub time_utc: NaiveDateTime,
    pub aod_500: f64,
    pub angstrom: f64,
    pub ssa_550: f64,
    pub g_550: f64,
    pub ozone_du: f64,
    pub water_cm: f64,
    /// Spectral AOD at 440, 675, 870 nm.
    pub aod_spectral: [f64; 3],
    /// Spectral SSA and g at 440, 675, 870, 1020 nm.
    pub ssa_spectral: [f64; 4],
    pub g_spectral: [f64; 4],
    /// Approximate solar elevation [deg] (only used to place observations in daylight).
    pub elevation_deg: f64,
}

/// Approximate solar elevation [deg] at a UTC time, for placing invented observations in
/// daylight only (not used by hazebook's physics, which uses the NREL SPA).
///
/// Declination from Cooper (1969), δ = 23.45° sin(2π(284 + n)/365); equation of time
/// E = 9.87 sin 2B − 7.53 cos B − 1.5 sin B [min], B = 2π(n − 81)/364 (from memory; the usual
/// textbook approximation). Good to about half a degree, which is all a sample needs.
///
/// - `lat_deg`: latitude [deg N]; `lon_deg`: longitude [deg E]; `t`: time [UTC]
///
/// Returns the solar elevation above the horizon [deg], without refraction.
pub fn approx_solar_elevation_deg(lat_deg: f64, lon_deg: f64, t: NaiveDateTime) -> f64 {
    let n = f64::from(t.ordinal());
    let hours = f64::from(t.hour()) + f64::from(t.minute()) / 60.0 + f64::from(t.second()) / 3600.0;
    let decl = (23.45_f64).to_radians() * (2.0 * PI * (284.0 + n) / 365.0).sin();
    let b = 2.0 * PI * (n - 81.0) / 364.0;
    let eot_min = 9.87 * (2.0 * b).sin() - 7.53 * b.cos() - 1.5 * b.sin();
    let solar_hours = hours + lon_deg / 15.0 + eot_min / 60.0;
    let h = (15.0 * (solar_hours - 12.0)).to_radians();
    let lat = lat_deg.to_radians();
    (lat.sin() * decl.sin() + lat.cos() * decl.cos() * h.cos())
        .clamp(-1.0, 1.0)
        .asin()
        .to_degrees()
}

/// Seasonal phase: +1 in mid-July, −1 in mid-January.
fn season(date: NaiveDate) -> f64 {
    (2.0 * PI * (f64::from(date.ordinal()) - 105.0) / 365.0).sin()
}

fn round_to(x: f64, decimals: i32) -> f64 {
    let s = 10f64.powi(decimals);
    (x * s).round() / s
}

/// Day-to-day state of one site (first-order autoregressive anomalies).
#[derive(Default, Clone, Copy)]
struct DayState {
    ln_aod: f64,
    angstrom: f64,
    ssa: f64,
    g: f64,
}

/// How observations are scheduled within the selected days.
#[derive(Clone, Copy)]
pub struct Schedule {
    /// Probability that a day is clear enough to observe at a given site.
    pub day_probability: f64,
    /// Number of observations per observed day (inclusive range; capped by daylight).
    pub per_day: (usize, usize),
    /// Minimum solar elevation of an observation [deg].
    pub min_elevation: f64,
    /// Maximum solar elevation of an observation [deg] (retrievals prefer lower sun).
    pub max_elevation: f64,
    /// Spacing of the candidate times [min].
    pub step_min: u32,
}

/// Generates invented observations of the sites in `sites` for every day in [start, end],
/// sorted by time then site. Stops after `max_rows` rows when given.
pub fn generate(
    seed: u64,
    sites: &[usize],
    start: NaiveDate,
    end: NaiveDate,
    schedule: Schedule,
    max_rows: Option<usize>,
) -> Vec<Obs> {
    let mut rng = SplitMix64::new(seed);
    let mut states = [DayState::default(); 3];
    let mut out = Vec::new();
    let mut date = start;
    let mut ozone_anom = 0.0_f64;
    let mut water_anom = 0.0_f64;
    while date <= end {
        // Regional day-to-day weather, shared by the sites.
        ozone_anom = 0.75 * ozone_anom + 9.0 * rng.normal();
        water_anom = 0.7 * water_anom + 0.22 * rng.normal();
        let regional_clear = rng.uniform();
        let s = season(date);
        let ozone_day = 322.0
            + 38.0 * (2.0 * PI * (f64::from(date.ordinal()) - 95.0) / 365.0).cos()
            + ozone_anom;
        let water_day = (1.55 + 0.85 * s + water_anom).max(0.35);
        let mut day_rows = Vec::new();
        for &si in sites {
            let site = &SITES[si];
            let st = &mut states[si];
            st.ln_aod =
                0.72 * st.ln_aod + site.aod_day_sd * (1.0 - 0.72_f64.powi(2)).sqrt() * rng.normal();
            st.angstrom = 0.6 * st.angstrom + site.angstrom_sd * 0.8 * rng.normal();
            st.ssa = 0.6 * st.ssa + site.ssa_sd * 0.8 * rng.normal();
            st.g = 0.6 * st.g + site.g_sd * 0.8 * rng.normal();
            let own = rng.uniform();
            let p = schedule.day_probability;
            let observed = p >= 1.0 || (regional_clear < p.sqrt() && own < p.sqrt());
            if !observed {
                continue;
            }
            // Candidate times in daylight.
            let mut candidates = Vec::new();
            let mut minute = site.minute % schedule.step_min;
            while minute < 24 * 60 {
                let jitter = rng.range(0, 6) as i64 - 3;
                let t = date.and_hms_opt(0, 0, 0).expect("midnight exists")
                    + Duration::minutes(i64::from(minute) + jitter);
                let e = approx_solar_elevation_deg(site.latitude, site.longitude, t);
                if t.date() == date && e >= schedule.min_elevation && e <= schedule.max_elevation {
                    candidates.push((t, e));
                }
                minute += schedule.step_min;
            }
            let k = rng
                .range(schedule.per_day.0, schedule.per_day.1)
                .min(candidates.len());
            // Partial Fisher–Yates: choose k candidates, then restore time order.
            for i in 0..k {
                let j = rng.range(i, candidates.len() - 1);
                candidates.swap(i, j);
            }
            let mut chosen = candidates[..k].to_vec();
            chosen.sort_by_key(|c| c.0);
            for (t, e) in chosen {
                let local_solar =
                    f64::from(t.hour()) + f64::from(t.minute()) / 60.0 + site.longitude / 15.0;
                let (amp, peak) = site.aod_diurnal;
                let diurnal = amp * (2.0 * PI * (local_solar - peak + 6.0) / 24.0).sin();
                let ln_aod = (site.aod_base * (1.0 + site.aod_season * s)).ln()
                    + st.ln_aod
                    + diurnal
                    + 0.05 * rng.normal();
                let aod_500 = ln_aod.exp().clamp(0.008, 2.5);
                // Coastal sea-salt events: more AOD, lower Ångström exponent.
                let salt = if site.surface == "ocean" {
                    -0.35 * st.ln_aod
                } else {
                    0.0
                };
                let angstrom = (site.angstrom_mean + st.angstrom + salt + 0.04 * rng.normal())
                    .clamp(0.05, 2.4);
                let ssa_shift = st.ssa + 0.004 * rng.normal();
                let ssa_550 = (site.ssa_mean + ssa_shift).clamp(0.70, 0.995);
                let g_shift = st.g + 0.006 * rng.normal();
                let g_550 = (site.g_mean + g_shift).clamp(0.45, 0.85);
                let ozone_du = ozone_day + 3.0 * rng.normal();
                let water_cm = (water_day * site.water_factor + 0.05 * rng.normal()).max(0.2);
                let mut aod_spectral = [0.0; 3];
                for (v, wl) in aod_spectral.iter_mut().zip([440.0_f64, 675.0, 870.0]) {
                    let x = (wl / 500.0).ln();
                    let ln_tau = aod_500.ln() - angstrom * x - site.aod_curvature * x * x
                        + 0.01 * rng.normal();
                    *v = round_to(ln_tau.exp(), 4);
                }
                let mut ssa_spectral = [0.0; 4];
                for (v, base) in ssa_spectral.iter_mut().zip(site.ssa_spectral) {
                    *v = round_to(
                        (base + ssa_shift + 0.003 * rng.normal()).clamp(0.70, 0.995),
                        4,
                    );
                }
                let mut g_spectral = [0.0; 4];
                for (v, base) in g_spectral.iter_mut().zip(site.g_spectral) {
                    *v = round_to((base + g_shift + 0.004 * rng.normal()).clamp(0.40, 0.85), 4);
                }
                day_rows.push(Obs {
                    site: si,
                    time_utc: t,
                    aod_500: round_to(aod_500, 3),
                    angstrom: round_to(angstrom, 3),
                    ssa_550: round_to(ssa_550, 3),
                    g_550: round_to(g_550, 3),
                    ozone_du: round_to(ozone_du, 1),
                    water_cm: round_to(water_cm, 2),
                    aod_spectral,
                    ssa_spectral,
                    g_spectral,
                    elevation_deg: e,
                });
            }
        }
        day_rows.sort_by_key(|o| (o.time_utc, o.site));
        out.extend(day_rows);
        if let Some(max) = max_rows
            && out.len() >= max
        {
            out.truncate(max);
            break;
        }
        date = date.succ_opt().expect("date in range");
    }
    out
}

// ---------------------------------------------------------------------------------------------
// Workbook helpers
// ---------------------------------------------------------------------------------------------

/// Excel serial day number (1900 date system) of a naive date-time.
pub fn excel_serial(t: NaiveDateTime) -> f64 {
    let epoch = NaiveDate::from_ymd_opt(1899, 12, 30)
        .expect("valid date")
        .and_hms_opt(0, 0, 0)
        .expect("valid time");
    let d = t - epoch;
    d.num_seconds() as f64 / 86_400.0
}

fn excel_datetime(t: NaiveDateTime) -> Result<ExcelDateTime, XlsxError> {
    ExcelDateTime::from_serial_datetime(excel_serial(t))
}

/// A workbook with fixed document properties, so that regenerating gives the same bytes.
fn new_workbook(title: &str) -> Result<Workbook, XlsxError> {
    let mut wb = Workbook::new();
    let created = ExcelDateTime::from_ymd(2026, 12, 1)?.and_hms(0, 0, 0)?;
    let props = DocProperties::new()
        .set_title(title)
        .set_subject("Invented sample inputs for hazebook")
        .set_author("hazebook sample generator (examples/make_samples.rs)")
        .set_keywords("invented, sample, AOD, SSA, asymmetry factor")
        .set_comment(INVENTED_NOTE)
        .set_creation_datetime(&created);
    wb.set_properties(&props);
    Ok(wb)
}

fn header_format() -> Format {
    Format::new().set_bold()
}

fn datetime_format() -> Format {
    Format::new().set_num_format("yyyy-mm-dd hh:mm:ss")
}

fn write_header(
    ws: &mut Worksheet,
    row: u32,
    headers: &[&str],
    fmt: &Format,
) -> Result<(), XlsxError> {
    for (c, h) in headers.iter().enumerate() {
        ws.write_string_with_format(row, c as u16, *h, fmt)?;
    }
    Ok(())
}

/// The About sheet that every sample workbook carries.
fn write_about(
    wb: &mut Workbook,
    file_role: &str,
    extra: &[(&str, &str)],
) -> Result<(), XlsxError> {
    let bold = header_format();
    let ws = wb.add_worksheet();
    ws.set_name("about")?;
    ws.write_string_with_format(0, 0, "item", &bold)?;
    ws.write_string_with_format(0, 1, "text", &bold)?;
    let mut rows: Vec<(&str, &str)> = vec![
        ("data", INVENTED_NOTE),
        ("campaign", CAMPAIGN_TITLE),
        ("this file", file_role),
    ];
    rows.extend_from_slice(extra);
    rows.push(("regenerate", "cargo run --release --example make_samples"));
    for (i, (k, v)) in rows.iter().enumerate() {
        ws.write_string(i as u32 + 1, 0, *k)?;
        ws.write_string(i as u32 + 1, 1, *v)?;
    }
    ws.set_column_width(0, 14)?;
    ws.set_column_width(1, 110)?;
    Ok(())
}

/// Headers of the observations sheet of the main campaign workbook (units in the header).
pub const CAMPAIGN_HEADERS: [&str; 8] = [
    "site",
    "time_utc",
    "AOD 500 nm [-]",
    "Angstrom exponent 440-870 nm [-]",
    "SSA 550 nm [-]",
    "asymmetry factor g 550 nm [-]",
    "ozone column [DU]",
    "precipitable water [cm]",
];

/// Headers of the site sheet.
pub const SITE_HEADERS: [&str; 7] = [
    "site",
    "latitude",
    "longitude",
    "altitude_m",
    "albedo",
    "surface",
    "utc_offset_hours",
];

/// Writes the "sites" sheet (all three invented sites, or those listed).
fn write_sites_sheet(wb: &mut Workbook, which: &[usize]) -> Result<(), XlsxError> {
    let bold = header_format();
    let ws = wb.add_worksheet();
    ws.set_name("sites")?;
    write_header(ws, 0, &SITE_HEADERS, &bold)?;
    for (i, &si) in which.iter().enumerate() {
        let s = &SITES[si];
        let r = i as u32 + 1;
        ws.write_string(r, 0, s.name)?;
        ws.write_number(r, 1, s.latitude)?;
        ws.write_number(r, 2, s.longitude)?;
        ws.write_number(r, 3, s.altitude_m)?;
        ws.write_number(r, 4, s.albedo)?;
        ws.write_string(r, 5, s.surface)?;
        ws.write_number(r, 6, s.utc_offset_hours)?;
    }
    ws.set_freeze_panes(1, 0)?;
    ws.set_column_width(0, 14)?;
    ws.set_column_range_width(1, 6, 12)?;
    Ok(())
}

/// Writes the "observations" sheet in the campaign layout. `drop_ssa` leaves out the SSA
/// column (for the bad-input sample).
fn write_observations_sheet(
    wb: &mut Workbook,
    obs: &[Obs],
    drop_ssa: bool,
) -> Result<(), XlsxError> {
    let bold = header_format();
    let dt = datetime_format();
    let ws = wb.add_worksheet();
    ws.set_name("observations")?;
    let headers: Vec<&str> = CAMPAIGN_HEADERS
        .iter()
        .copied()
        .filter(|h| !(drop_ssa && h.starts_with("SSA")))
        .collect();
    write_header(ws, 0, &headers, &bold)?;
    for (i, o) in obs.iter().enumerate() {
        let r = i as u32 + 1;
        let mut values = vec![o.aod_500, o.angstrom];
        if !drop_ssa {
            values.push(o.ssa_550);
        }
        values.extend([o.g_550, o.ozone_du, o.water_cm]);
        ws.write_string(r, 0, SITES[o.site].name)?;
        ws.write_datetime_with_format(r, 1, excel_datetime(o.time_utc)?, &dt)?;
        for (c, v) in values.into_iter().enumerate() {
            ws.write_number(r, c as u16 + 2, v)?;
        }
    }
    ws.set_freeze_panes(1, 0)?;
    ws.set_column_width(0, 13)?;
    ws.set_column_width(1, 20)?;
    ws.set_column_range_width(2, headers.len() as u16 - 1, 16)?;
    Ok(())
}

/// The campaign layout as an in-memory workbook: observations, sites, about.
fn campaign_workbook(obs: &[Obs], drop_ssa: bool, role: &str) -> Result<Workbook, XlsxError> {
    let mut wb = new_workbook(&format!("{CAMPAIGN_TITLE}: observations (invented)"))?;
    write_observations_sheet(&mut wb, obs, drop_ssa)?;
    write_sites_sheet(&mut wb, &[0, 1, 2])?;
    let sites_text = site_summary();
    write_about(
        &mut wb,
        role,
        &[
            ("sites", sites_text.as_str()),
            ("times", "time_utc holds true date-time cells in UTC."),
            (
                "quantities",
                "AOD at 500 nm with the Angstrom exponent 440-870 nm; SSA and asymmetry factor at 550 nm; ozone column and precipitable water of the row.",
            ),
        ],
    )?;
    Ok(wb)
}

fn site_summary() -> String {
    let mut s = String::new();
    for site in &SITES {
        let _ = write!(
            s,
            "{} ({}; {:.3} N, {:.3} E, {} m); ",
            site.name, site.character, site.latitude, site.longitude, site.altitude_m
        );
    }
    s.trim_end_matches("; ").to_string()
}

/// Campaign schedule of the main sample: a few clear days a month at each site, hourly.
pub const CAMPAIGN_SCHEDULE: Schedule = Schedule {
    day_probability: 0.27,
    per_day: (6, 12),
    min_elevation: 3.0,
    max_elevation: 90.0,
    step_min: 60,
};

/// Writes an invented campaign workbook of exactly `n_rows` observations (the layout of the
/// main sample: sheets observations, sites, about) to `path`, starting on 2020-01-01 and
/// observing every day at all three sites. Used by the pipeline benchmark.
///
/// Returns the number of rows written.
pub fn write_campaign_rows(path: &Path, n_rows: usize, seed: u64) -> Result<usize, XlsxError> {
    let schedule = Schedule {
        day_probability: 1.0,
        ..CAMPAIGN_SCHEDULE
    };
    let start = NaiveDate::from_ymd_opt(2020, 1, 1).expect("valid date");
    let end = NaiveDate::from_ymd_opt(2199, 12, 31).expect("valid date");
    let obs = generate(seed, &[0, 1, 2], start, end, schedule, Some(n_rows));
    let mut wb = campaign_workbook(
        &obs,
        false,
        "Invented benchmark campaign workbook (observations every day at all three sites).",
    )?;
    wb.save(path)?;
    Ok(obs.len())
}

// ---------------------------------------------------------------------------------------------
// The sample files
// ---------------------------------------------------------------------------------------------

fn date(y: i32, m: u32, d: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, d).expect("valid date")
}

/// Offset of UK-style civil time: UTC+1 from 01:00 UTC on the last Sunday of March to 01:00
/// UTC on the last Sunday of October, else UTC+0 (the invented sites keep that clock).
fn civil_offset_hours(t: NaiveDateTime) -> i32 {
    let last_sunday = |m: u32| {
        let mut d = date(t.year(), m, 31);
        while d.weekday() != chrono::Weekday::Sun {
            d = d.pred_opt().expect("date in range");
        }
        d.and_hms_opt(1, 0, 0).expect("valid time")
    };
    if t >= last_sunday(3) && t < last_sunday(10) {
        1
    } else {
        0
    }
}

fn local_iso(t: NaiveDateTime) -> String {
    let offset = FixedOffset::east_opt(civil_offset_hours(t) * 3600).expect("valid offset");
    offset
        .from_utc_datetime(&t)
        .format("%Y-%m-%dT%H:%M:%S%:z")
        .to_string()
}

/// 1. The main campaign workbook.
fn make_campaign(dir: &Path) -> Result<Vec<Obs>, XlsxError> {
    let obs = generate(
        20_260_301,
        &[0, 1, 2],
        date(2026, 3, 1),
        date(2026, 11, 30),
        CAMPAIGN_SCHEDULE,
        None,
    );
    let mut wb = campaign_workbook(
        &obs,
        false,
        "Main campaign workbook: clean header with units in the header, true date-time cells in UTC, a site sheet.",
    )?;
    wb.save(dir.join(format!("{CAMPAIGN}-campaign.xlsx")))?;
    Ok(obs)
}

/// 2. The multi-wavelength retrievals workbook (local ISO 8601 times, lat/lon in the row).
fn make_spectral(dir: &Path) -> Result<usize, XlsxError> {
    let schedule = Schedule {
        day_probability: 0.2,
        per_day: (2, 5),
        min_elevation: 5.0,
        max_elevation: 40.0,
        step_min: 30,
    };
    let obs = generate(
        20_260_714,
        &[0, 1, 2],
        date(2026, 3, 16),
        date(2026, 10, 31),
        schedule,
        None,
    );
    let mut wb = new_workbook(&format!(
        "{CAMPAIGN_TITLE}: multi-wavelength retrievals (invented)"
    ))?;
    let bold = header_format();
    let headers = [
        "site",
        "local_time",
        "latitude",
        "longitude",
        "altitude",
        "AOD 440nm",
        "AOD 675nm",
        "AOD 870nm",
        "SSA 440nm",
        "SSA 675nm",
        "SSA 870nm",
        "SSA 1020nm",
        "g 440nm",
        "g 675nm",
        "g 870nm",
        "g 1020nm",
    ];
    let units = [
        "", "ISO 8601", "deg N", "deg E", "m", "-", "-", "-", "-", "-", "-", "-", "-", "-", "-",
        "-",
    ];
    let ws = wb.add_worksheet();
    ws.set_name("retrievals")?;
    write_header(ws, 0, &headers, &bold)?;
    for (c, u) in units.iter().enumerate() {
        ws.write_string(1, c as u16, *u)?;
    }
    for (i, o) in obs.iter().enumerate() {
        let r = i as u32 + 2;
        let s = &SITES[o.site];
        ws.write_string(r, 0, s.name)?;
        ws.write_string(r, 1, local_iso(o.time_utc))?;
        ws.write_number(r, 2, s.latitude)?;
        ws.write_number(r, 3, s.longitude)?;
        ws.write_number(r, 4, s.altitude_m)?;
        let values = o
            .aod_spectral
            .iter()
            .chain(o.ssa_spectral.iter())
            .chain(o.g_spectral.iter());
        for (c, v) in values.enumerate() {
            ws.write_number(r, c as u16 + 5, *v)?;
        }
    }
    ws.set_freeze_panes(2, 0)?;
    ws.set_column_width(0, 13)?;
    ws.set_column_width(1, 27)?;
    ws.set_column_range_width(2, 15, 10)?;
    write_about(
        &mut wb,
        "Multi-wavelength retrievals: AOD at 440/675/870 nm (no Angstrom column, so it is fitted), SSA and asymmetry factor at 440/675/870/1020 nm, local times as ISO 8601 text with UTC offsets (+01:00 in summer time, +00:00 before 29 March and after 25 October), latitude/longitude/altitude in every row and no site sheet, a units row under the header, no ozone or water columns (defaults apply).",
        &[("sites", site_summary().as_str())],
    )?;
    wb.save(dir.join(format!("{CAMPAIGN}-spectral.xlsx")))?;
    Ok(obs.len())
}

/// A cell of the messy workbook.
#[derive(Clone, Debug)]
enum Cell {
    Num(f64),
    Text(String),
    /// Date as a true date cell.
    Date(NaiveDateTime),
    /// Time of day as a fraction of a day with an `hh:mm` format.
    Time(f64),
    Blank,
}

/// Faults of one messy row: column index, description, expected handling.
type RowFaults = Vec<(usize, String, &'static str)>;

/// A deliberate fault of the messy workbook, with what a reader should do about it.
pub struct Fault {
    pub row: u32,
    pub cell: String,
    pub column: &'static str,
    pub fault: String,
    pub expected: &'static str,
}

fn col_letter(c: usize) -> char {
    (b'A' + c as u8) as char
}

/// 3. The messy field log, and the csv sample.
fn make_messy(dir: &Path) -> Result<Vec<Fault>, XlsxError> {
    let schedule = Schedule {
        day_probability: 0.45,
        per_day: (4, 8),
        min_elevation: 3.0,
        max_elevation: 90.0,
        step_min: 60,
    };
    let obs = generate(
        20_261_019,
        &[1, 2],
        date(2026, 10, 19),
        date(2026, 11, 24),
        schedule,
        None,
    );
    assert!(
        obs.len() >= 110,
        "messy sample needs at least 110 rows, got {}",
        obs.len()
    );

    // Columns: A site, B date (Excel serial number), C time UTC, D AOD, E Angstrom, F SSA,
    // G g, H ozone, I water, J remarks.
    let column_names = [
        "site",
        "date",
        "time",
        "aod",
        "angstrom",
        "ssa",
        "asymmetry",
        "ozone",
        "water",
        "remarks",
    ];
    let row_of = |o: &Obs| -> Vec<Cell> {
        let day = o.time_utc.date().and_hms_opt(0, 0, 0).expect("valid time");
        let frac = f64::from(o.time_utc.num_seconds_from_midnight()) / 86_400.0;
        vec![
            Cell::Text(SITES[o.site].name.to_string()),
            Cell::Num(excel_serial(day)),
            Cell::Time(frac),
            Cell::Num(o.aod_500),
            Cell::Num(o.angstrom),
            Cell::Num(o.ssa_550),
            Cell::Num(o.g_550),
            Cell::Num(o.ozone_du),
            Cell::Num(o.water_cm),
            Cell::Blank,
        ]
    };
    // Data rows (None = a blank row inside the data), with a fault description per row.
    let mut rows: Vec<Option<(Vec<Cell>, RowFaults)>> = Vec::new();
    let remarks = [
        "thin haze to the east",
        "sky clear, light wind",
        "contrail near the sun",
        "",
        "fresh NW wind",
        "",
        "dew on the window, wiped",
    ];
    for (i, o) in obs.iter().enumerate() {
        let mut cells = row_of(o);
        let mut faults: RowFaults = Vec::new();
        if i % 9 == 4 {
            cells[9] = Cell::Text(remarks[(i / 9) % remarks.len()].to_string());
        }
        match i {
            3 => {
                cells[3] = Cell::Num(-999.0);
                faults.push((3, "fill value -999 in AOD".into(), "reject: AOD missing"));
            }
            8 => {
                cells[5] = Cell::Num(-9999.0);
                faults.push((5, "fill value -9999 in SSA".into(), "reject: SSA missing"));
            }
            14 => {
                cells[6] = Cell::Text("N/A".into());
                faults.push((
                    6,
                    "fill value N/A in asymmetry factor".into(),
                    "reject: asymmetry factor missing",
                ));
            }
            19 => {
                cells[7] = Cell::Blank;
                faults.push((
                    7,
                    "empty ozone cell".into(),
                    "accept: default ozone applies, with a row warning naming the cell and the value used",
                ));
            }
            23 => {
                cells[8] = Cell::Num(-999.0);
                faults.push((
                    8,
                    "fill value -999 in precipitable water".into(),
                    "accept: default water applies, with a row warning naming the cell and the value used",
                ));
            }
            27 => {
                cells[4] = Cell::Text("N/A".into());
                faults.push((
                    4,
                    "fill value N/A in Angstrom exponent".into(),
                    "reject: Angstrom exponent missing in a provided column (accept with a row warning when [input] fallback lists angstrom)",
                ));
            }
            31..=33 => {
                let pct = round_to(o.ssa_550 * 100.0, 1);
                cells[5] = Cell::Num(pct);
                cells[9] = Cell::Text("SSA noted in %".into());
                faults.push((
                    5,
                    format!("SSA written in percent ({pct}) instead of as a fraction"),
                    "read as a fraction (value/100) with a row warning, or reject as out of range [0, 1]; never used as given",
                ));
            }
            40 => {
                cells[1] = Cell::Text("31/02/2026".into());
                faults.push((
                    1,
                    "impossible date text 31/02/2026".into(),
                    "reject: date cannot be read",
                ));
            }
            45 => {
                cells[3] = Cell::Text("0.2?".into());
                faults.push((
                    3,
                    "text 0.2? in the AOD column".into(),
                    "reject: AOD is not a number",
                ));
            }
            56 => {
                cells[1] = Cell::Date(o.time_utc.date().and_hms_opt(0, 0, 0).expect("valid time"));
                faults.push((
                    1,
                    "date as a true date cell (the others are serial numbers)".into(),
                    "accept: same date",
                ));
            }
            57 => {
                cells[1] = Cell::Text(o.time_utc.format("%Y-%m-%d").to_string());
                faults.push((1, "date as ISO 8601 text".into(), "accept: same date"));
            }
            62 => {
                cells[2] = Cell::Text("not recorded".into());
                faults.push((
                    2,
                    "time text not recorded".into(),
                    "accept: placed on its date; 24-hour values computed, instantaneous left empty, with a row warning",
                ));
            }
            67 => {
                cells[2] = Cell::Text(o.time_utc.format("%H:%M").to_string());
                faults.push((
                    2,
                    "time as hh:mm text (the others are time cells)".into(),
                    "accept: same time",
                ));
            }
            71 => {
                cells[0] = Cell::Text(format!("{} ", SITES[o.site].name));
                faults.push((
                    0,
                    "site name with a trailing space".into(),
                    "accept: matched to the site after trimming",
                ));
            }
            78 => {
                let night = o
                    .time_utc
                    .date()
                    .and_hms_opt(21, 40, 0)
                    .expect("valid time");
                cells[2] = Cell::Time(f64::from(night.num_seconds_from_midnight()) / 86_400.0);
                cells[9] = Cell::Text("logged after dark".into());
                faults.push((
                    2,
                    "time 21:40 UTC, sun below the horizon".into(),
                    "accept: no instantaneous effect (sun down), 24-hour mean computed",
                ));
            }
            84 => {
                cells[3] = Cell::Num(-0.015);
                faults.push((3, "negative AOD -0.015".into(), "reject: AOD below zero"));
            }
            90 => {
                cells[3] = Cell::Blank;
                faults.push((3, "empty AOD cell".into(), "reject: AOD missing"));
            }
            _ => {}
        }
        rows.push(Some((cells.clone(), faults)));
        if i == 50 {
            // The same observation entered twice.
            rows.push(Some((
                cells,
                vec![(0, String::new(), "duplicate")], // filled in below with the row number
            )));
        }
        if i == 60 {
            rows.push(None);
        }
    }

    let mut wb = new_workbook(&format!("{CAMPAIGN_TITLE}: field log (invented)"))?;
    let bold = header_format();
    let time_fmt = Format::new().set_num_format("hh:mm");
    let date_fmt = Format::new().set_num_format("yyyy-mm-dd");
    let ws = wb.add_worksheet();
    ws.set_name("Field log")?;
    ws.write_string_with_format(
        0,
        0,
        format!("{CAMPAIGN_TITLE} - field log, Kelvergate and Tarnfell (INVENTED DATA)"),
        &bold,
    )?;
    ws.write_string(
        1,
        0,
        "Hand-copied from the operator notebook. Date as a day number, time in UTC.",
    )?;
    ws.write_string(2, 0, "Note: -999, -9999 and N/A mean not measured. These values are invented for testing and are not measurements.")?;
    // Row 4 (index 3) is left blank.
    let header_row = 4u32; // spreadsheet row 5
    let headers = [
        "Site",
        "Date",
        "Time (UTC)",
        "AOD 500nm",
        "Angstrom 440-870",
        "SSA 550nm",
        "g 550nm",
        "Ozone",
        "Water vapour",
        "Remarks",
    ];
    let units = [
        "",
        "Excel day number",
        "hh:mm",
        "-",
        "-",
        "-",
        "-",
        "DU",
        "cm",
        "",
    ];
    write_header(ws, header_row, &headers, &bold)?;
    for (c, u) in units.iter().enumerate() {
        ws.write_string(header_row + 1, c as u16, *u)?;
    }
    let first_data = header_row + 2; // 0-based index of spreadsheet row 7
    let mut faults: Vec<Fault> = Vec::new();
    let mut previous_row = 0u32;
    for (k, row) in rows.iter().enumerate() {
        let r = first_data + k as u32;
        let Some((cells, row_faults)) = row else {
            faults.push(Fault {
                row: r + 1,
                cell: String::new(),
                column: "",
                fault: "blank row inside the data".into(),
                expected: "skip: not an observation (may be noted)",
            });
            continue;
        };
        for (c, cell) in cells.iter().enumerate() {
            let c16 = c as u16;
            match cell {
                Cell::Num(v) => {
                    ws.write_number(r, c16, *v)?;
                }
                Cell::Text(s) if !s.is_empty() => {
                    ws.write_string(r, c16, s)?;
                }
                Cell::Text(_) | Cell::Blank => {}
                Cell::Date(d) => {
                    ws.write_datetime_with_format(r, c16, excel_datetime(*d)?, &date_fmt)?;
                }
                Cell::Time(f) => {
                    ws.write_number_with_format(r, c16, *f, &time_fmt)?;
                }
            }
        }
        for (c, text, expected) in row_faults {
            let (fault, column) = if *expected == "duplicate" {
                (
                    format!("duplicate of row {previous_row} (same site, time and values)"),
                    "",
                )
            } else {
                (text.clone(), column_names[*c])
            };
            let expected = if *expected == "duplicate" {
                "flag: duplicate site and time (reject the second copy or warn; never count it silently)"
            } else {
                expected
            };
            faults.push(Fault {
                row: r + 1,
                cell: if column.is_empty() {
                    String::new()
                } else {
                    format!("{}{}", col_letter(*c), r + 1)
                },
                column,
                fault,
                expected,
            });
        }
        previous_row = r + 1;
    }
    let after = first_data + rows.len() as u32;
    // Spreadsheet row `after + 1` is blank; notes follow.
    ws.write_string(after + 1, 0, "End of log.")?;
    ws.write_string(
        after + 2,
        0,
        "Checked 2026-11-30 by the site operator (invented).",
    )?;
    for (i, text) in ["trailing note row", "trailing note row"]
        .iter()
        .enumerate()
    {
        faults.push(Fault {
            row: after + 2 + i as u32,
            cell: format!("A{}", after + 2 + i as u32),
            column: "",
            fault: (*text).into(),
            expected: "not data: ignored as a note below the table, or rejected with a reason; never computed",
        });
    }
    ws.set_freeze_panes(first_data, 0)?;
    ws.set_column_width(0, 13)?;
    ws.set_column_range_width(1, 8, 12)?;
    ws.set_column_width(9, 26)?;
    write_sites_sheet(&mut wb, &[1, 2])?;
    write_about(
        &mut wb,
        "Messy field log: title and note rows above the header, a units row, fill values, SSA in percent, bad dates and text in numeric cells, a duplicate, a blank row, Excel day numbers with separate time cells, trailing notes. See brinefell-messy.faults.csv for every deliberate fault with its row and cell.",
        &[],
    )?;
    wb.save(dir.join(format!("{CAMPAIGN}-messy.xlsx")))?;
    faults.sort_by_key(|f| f.row);
    Ok(faults)
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn write_faults_csv(path: &Path, faults: &[Fault]) -> std::io::Result<()> {
    let mut s = String::from(
        "# INVENTED sample data: deliberate faults of brinefell-messy.xlsx, sheet \"Field log\"\n",
    );
    s.push_str("row,cell,column,fault,expected\n");
    for f in faults {
        let _ = writeln!(
            s,
            "{},{},{},{},{}",
            f.row,
            f.cell,
            f.column,
            csv_field(&f.fault),
            csv_field(f.expected)
        );
    }
    std::fs::write(path, s)
}

/// The csv sample: the first 12 November rows of each site of the main campaign, with two
/// fill values. Returns the number of data lines.
fn make_csv(dir: &Path, obs: &[Obs]) -> std::io::Result<usize> {
    let mut picked: Vec<&Obs> = Vec::new();
    for si in 0..3 {
        picked.extend(
            obs.iter()
                .filter(|o| o.site == si && o.time_utc.month() == 11)
                .take(12),
        );
    }
    picked.sort_by_key(|o| (o.time_utc, o.site));
    let mut s = String::from(
        "site,time_utc,latitude_deg,longitude_deg,altitude_m,aod_500nm,angstrom_440_870,ssa_550nm,g_550nm,ozone_du,water_cm\n",
    );
    for (i, o) in picked.iter().enumerate() {
        let site = &SITES[o.site];
        let angstrom = if i == 7 {
            "N/A".to_string()
        } else {
            format!("{}", o.angstrom)
        };
        let water = if i == 15 {
            "-999".to_string()
        } else {
            format!("{}", o.water_cm)
        };
        let _ = writeln!(
            s,
            "{},{},{},{},{},{},{},{},{},{},{}",
            site.name,
            o.time_utc.format("%Y-%m-%dT%H:%M:%SZ"),
            site.latitude,
            site.longitude,
            site.altitude_m,
            o.aod_500,
            angstrom,
            o.ssa_550,
            o.g_550,
            o.ozone_du,
            water
        );
    }
    std::fs::write(dir.join(format!("{CAMPAIGN}-sample.csv")), s)?;
    Ok(picked.len())
}

/// The deliberately bad inputs under `bad/`.
fn make_bad(dir: &Path, obs: &[Obs]) -> Result<(), Box<dyn std::error::Error>> {
    std::fs::create_dir_all(dir)?;
    let few: Vec<Obs> = obs.iter().take(24).cloned().collect();

    let mut wb = campaign_workbook(
        &few,
        true,
        "BAD INPUT on purpose: the observations sheet has no SSA column.",
    )?;
    wb.save(dir.join("missing-ssa.xlsx"))?;

    let mut wb = new_workbook("Empty sheet (invented bad input)")?;
    let ws = wb.add_worksheet();
    ws.set_name("observations")?;
    wb.save(dir.join("empty-sheet.xlsx"))?;

    let mut wb = campaign_workbook(
        &few,
        false,
        "A small good workbook whose first half is saved as truncated.xlsx.",
    )?;
    let bytes = wb.save_to_buffer()?;
    std::fs::write(dir.join("truncated.xlsx"), &bytes[..bytes.len() / 2])?;
    println!(
        "bad/truncated.xlsx: first {} of {} bytes of a good 24-row workbook",
        bytes.len() / 2,
        bytes.len()
    );

    std::fs::write(
        dir.join("not-a-workbook.xlsx"),
        "This is a plain text file with an .xlsx name (invented bad input for hazebook tests).\n\
         site,time_utc,aod_500\nKelvergate,2026-11-02T10:20:00Z,0.21\n",
    )?;
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// A single-site station workbook with a key/value metadata sheet (xlsx and ods)
// ---------------------------------------------------------------------------------------------

/// Short name of the invented single-site station, used in its file names.
pub const STATION: &str = "scaurhowe";

/// A cell of the station workbook, written the same way to xlsx and ods.
#[derive(Clone, Debug, PartialEq)]
enum StationCell {
    Text(String),
    Num(f64),
    /// A date-time cell (local clock of the logger).
    DateTime(NaiveDateTime),
}

/// One sheet of the station workbook: name and rows of cells.
type StationSheet = (&'static str, Vec<Vec<StationCell>>);

/// The invented station: one site, no site or coordinate columns in the data sheet, a
/// key/value metadata sheet (label | value | unit or note, the site name in the first row) and
/// a metadata line above the header saying part of the same. Returns the sheets.
fn station_sheets() -> Vec<StationSheet> {
    use StationCell::{DateTime, Num, Text};
    let t = |s: &str| Text(s.to_string());
    let meta = vec![
        vec![t("Scaur Howe \u{2014} fell station, invented data")],
        vec![t("Latitude"), Num(54.6121), t("deg N")],
        vec![t("Longitude"), Num(3.1042), t("deg W")],
        vec![t("Elevation"), Num(1024.0), t("ft")],
        vec![
            t("Surface albedo (broadband)"),
            Num(0.17),
            t("grass and heather"),
        ],
        vec![
            t("Time zone"),
            t("local summer time = UTC+1"),
            t("the logger clock is not changed in winter"),
        ],
        vec![t("Instrument"), t("invented sun photometer")],
        vec![t("Note"), t(INVENTED_STATION_NOTE)],
    ];
    let mut rng = SplitMix64::new(20_260_402);
    let mut data = vec![
        vec![t(
            "Scaur Howe sun-photometer log: INVENTED sample data for hazebook",
        )],
        vec![t(
            "Site: Scaur Howe; Latitude: 54.6121 N; Longitude: 3.1042 W",
        )],
        [
            "Time (local)",
            "AOD 500nm",
            "Angstrom 440-870",
            "SSA 550nm",
            "g 550nm",
            "Water vapour (cm)",
        ]
        .iter()
        .map(|h| t(h))
        .collect(),
    ];
    let mut n = 0;
    let mut day = date(2026, 4, 2);
    while day <= date(2026, 6, 28) {
        if rng.uniform() < 0.3 {
            let k = rng.range(3, 6);
            let mut minute = 9 * 60 + rng.range(0, 50);
            for _ in 0..k {
                let time =
                    day.and_hms_opt(0, 0, 0).expect("midnight") + Duration::minutes(minute as i64);
                let aod = round_to(0.06 * (0.35 * rng.normal()).exp() + 0.02, 3);
                let angstrom = round_to(1.2 + 0.15 * rng.normal(), 2);
                let ssa = round_to((0.95 + 0.015 * rng.normal()).min(0.995), 3);
                let g = round_to(0.68 + 0.02 * rng.normal(), 3);
                let water = round_to(1.1 + 0.25 * rng.normal().abs(), 2);
                data.push(vec![
                    DateTime(time),
                    Num(aod),
                    Num(angstrom),
                    Num(ssa),
                    Num(g),
                    Num(water),
                ]);
                n += 1;
                minute += 50 + rng.range(0, 60);
            }
        }
        day += Duration::days(1);
    }
    debug_assert!(n > 0);
    vec![("observations", data), ("Station", meta)]
}

/// Says, in the station workbook, that its data are invented.
pub const INVENTED_STATION_NOTE: &str = "INVENTED SAMPLE DATA. The Scaur Howe station, its \
     coordinates and every value in this file are invented for testing and demonstrating \
     hazebook. They are not measurements.";

fn write_station_xlsx(path: &Path, sheets: &[StationSheet]) -> Result<(), XlsxError> {
    let mut wb = new_workbook("Scaur Howe fell station: sun-photometer log (invented)")?;
    let when = datetime_format();
    for (name, rows) in sheets {
        let ws = wb.add_worksheet();
        ws.set_name(*name)?;
        for (r, row) in rows.iter().enumerate() {
            for (c, cell) in row.iter().enumerate() {
                let (r, c) = (r as u32, c as u16);
                match cell {
                    StationCell::Text(s) => ws.write_string(r, c, s)?,
                    StationCell::Num(v) => ws.write_number(r, c, *v)?,
                    StationCell::DateTime(t) => {
                        ws.write_datetime_with_format(r, c, excel_datetime(*t)?, &when)?
                    }
                };
            }
        }
        ws.set_column_width(0, 28)?;
        ws.set_column_range_width(1, 5, 16)?;
    }
    wb.save(path)
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// The content.xml of an OpenDocument spreadsheet (OASIS OpenDocument 1.2, part 1, §9.1
/// tables): one `table:table` per sheet, strings as `office:value-type="string"`, numbers as
/// `float`, date-times as `date` with an ISO 8601 `office:date-value`.
fn ods_content(sheets: &[StationSheet]) -> String {
    let mut x = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<office:document-content \
         xmlns:office=\"urn:oasis:names:tc:opendocument:xmlns:office:1.0\" \
         xmlns:table=\"urn:oasis:names:tc:opendocument:xmlns:table:1.0\" \
         xmlns:text=\"urn:oasis:names:tc:opendocument:xmlns:text:1.0\" office:version=\"1.2\">\
         <office:body><office:spreadsheet>",
    );
    for (name, rows) in sheets {
        let _ = write!(x, "<table:table table:name=\"{}\">", xml_escape(name));
        for row in rows {
            x.push_str("<table:table-row>");
            for cell in row {
                match cell {
                    StationCell::Text(s) => {
                        let s = xml_escape(s);
                        let _ = write!(
                            x,
                            "<table:table-cell office:value-type=\"string\"><text:p>{s}</text:p></table:table-cell>"
                        );
                    }
                    StationCell::Num(v) => {
                        let _ = write!(
                            x,
                            "<table:table-cell office:value-type=\"float\" office:value=\"{v}\"><text:p>{v}</text:p></table:table-cell>"
                        );
                    }
                    StationCell::DateTime(t) => {
                        let iso = t.format("%Y-%m-%dT%H:%M:%S");
                        let shown = t.format("%Y-%m-%d %H:%M:%S");
                        let _ = write!(
                            x,
                            "<table:table-cell office:value-type=\"date\" office:date-value=\"{iso}\"><text:p>{shown}</text:p></table:table-cell>"
                        );
                    }
                }
            }
            x.push_str("</table:table-row>");
        }
        x.push_str("</table:table>");
    }
    x.push_str("</office:spreadsheet></office:body></office:document-content>\n");
    x
}

/// A zip archive of stored (uncompressed) entries in the given order, with the zip format's
/// earliest timestamp on every entry so that the bytes are the same on every run (written with
/// the `zip` crate).
fn stored_zip(entries: &[(&str, &[u8])]) -> Vec<u8> {
    use std::io::Write;
    let mut w = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let options = zip::write::SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Stored)
        .last_modified_time(zip::DateTime::default());
    for (name, data) in entries {
        w.start_file(*name, options).expect("zip entry");
        w.write_all(data).expect("zip entry data");
    }
    w.finish().expect("zip archive").into_inner()
}

/// Write an OpenDocument spreadsheet: the `mimetype` entry first and stored (OpenDocument 1.2,
/// part 3, §3.3), then a manifest, the metadata and the content, all stored; the bytes are
/// the same on every run.
fn write_station_ods(path: &Path, sheets: &[StationSheet]) -> std::io::Result<()> {
    let manifest = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<manifest:manifest \
          xmlns:manifest=\"urn:oasis:names:tc:opendocument:xmlns:manifest:1.0\" manifest:version=\"1.2\">\n \
          <manifest:file-entry manifest:full-path=\"/\" manifest:version=\"1.2\" \
          manifest:media-type=\"application/vnd.oasis.opendocument.spreadsheet\"/>\n \
          <manifest:file-entry manifest:full-path=\"content.xml\" manifest:media-type=\"text/xml\"/>\n \
          <manifest:file-entry manifest:full-path=\"meta.xml\" manifest:media-type=\"text/xml\"/>\n\
          </manifest:manifest>\n";
    let meta = format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<office:document-meta \
         xmlns:office=\"urn:oasis:names:tc:opendocument:xmlns:office:1.0\" \
         xmlns:meta=\"urn:oasis:names:tc:opendocument:xmlns:meta:1.0\" \
         xmlns:dc=\"http://purl.org/dc/elements/1.1/\" office:version=\"1.2\"><office:meta>\
         <meta:generator>hazebook sample generator (examples/make_samples.rs)</meta:generator>\
         <dc:title>Scaur Howe fell station: sun-photometer log (invented)</dc:title>\
         <dc:description>{}</dc:description>\
         <meta:creation-date>2026-12-01T00:00:00</meta:creation-date>\
         </office:meta></office:document-meta>\n",
        xml_escape(INVENTED_STATION_NOTE)
    );
    let content = ods_content(sheets);
    let bytes = stored_zip(&[
        (
            "mimetype",
            b"application/vnd.oasis.opendocument.spreadsheet",
        ),
        ("META-INF/manifest.xml", manifest.as_bytes()),
        ("meta.xml", meta.as_bytes()),
        ("content.xml", content.as_bytes()),
    ]);
    std::fs::write(path, bytes)
}

/// 6. The single-site station workbook, as xlsx and as ods (same cells).
fn make_station(dir: &Path) -> Result<usize, Box<dyn std::error::Error>> {
    let sheets = station_sheets();
    write_station_xlsx(&dir.join(format!("{STATION}-station.xlsx")), &sheets)?;
    write_station_ods(&dir.join(format!("{STATION}-station.ods")), &sheets)?;
    Ok(sheets[0].1.len() - 3)
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let dir: PathBuf = std::env::args_os()
        .nth(1)
        .map(PathBuf::from)
        .unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-inputs"));
    std::fs::create_dir_all(&dir)?;

    let campaign = make_campaign(&dir)?;
    println!("{CAMPAIGN}-campaign.xlsx: {} observations", campaign.len());
    for (si, site) in SITES.iter().enumerate() {
        let rows: Vec<&Obs> = campaign.iter().filter(|o| o.site == si).collect();
        let low = rows.iter().filter(|o| o.elevation_deg < 10.0).count();
        let nov = rows.iter().filter(|o| o.time_utc.month() == 11).count();
        println!(
            "  {:<11} {} rows ({} with solar elevation < 10 deg, {} in 2026-11)",
            site.name,
            rows.len(),
            low,
            nov
        );
    }
    let n = make_spectral(&dir)?;
    println!("{CAMPAIGN}-spectral.xlsx: {n} retrievals");
    let faults = make_messy(&dir)?;
    write_faults_csv(&dir.join(format!("{CAMPAIGN}-messy.faults.csv")), &faults)?;
    println!(
        "{CAMPAIGN}-messy.xlsx: {} deliberate faults (see {CAMPAIGN}-messy.faults.csv)",
        faults.len()
    );
    let n = make_csv(&dir, &campaign)?;
    println!("{CAMPAIGN}-sample.csv: {n} rows");
    let n = make_station(&dir)?;
    println!("{STATION}-station.xlsx, {STATION}-station.ods: {n} observations, metadata sheet");
    make_bad(&dir.join("bad"), &campaign)?;
    println!("bad/: missing-ssa.xlsx, empty-sheet.xlsx, truncated.xlsx, not-a-workbook.xlsx");
    Ok(())
}
