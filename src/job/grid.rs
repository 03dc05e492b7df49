//! `hazebook grid`: idealised sensitivity tables over the Cartesian product of AOD, SSA, g,
//! albedo and cos(solar zenith) (or latitude and date for 24-hour means).
//!
//! By default the idealised switches apply (README, "Usage"): one band at the reference wavelength
//! carrying the whole solar constant, Rayleigh and gases off, no Earth–Sun distance
//! correction for fixed-zenith cases. The CSV carries every input of each case and the
//! fluxes at full precision (the shortest decimal that reads back to the same double).

use std::fmt::Write as _;
use std::path::Path;

use anyhow::{Context as _, bail};
use chrono::{NaiveDate, TimeZone, Utc};
use rayon::prelude::*;

use super::output::write_atomic;
use crate::cli::{GridArgs, SolverArg, Status};
use crate::physics::discrete_ordinates::MAX_STREAMS;
use crate::physics::forcing::{Context, compute_observation};
use crate::physics::{
    AerosolLayer, BandSet, Effect, Fluxes, Observation, ObservationResult, Settings, SpectralValue,
    Surface,
};

/// One case of the grid.
struct Case {
    obs: Observation,
    settings: Settings,
    mu0: Option<f64>,
    latitude: Option<f64>,
    date: Option<NaiveDate>,
}

/// Build, compute and write the table.
pub fn grid(a: &GridArgs) -> anyhow::Result<Status> {
    let cases = cases(a)?;
    // The context depends only on the band set and the solar constant, which every case
    // shares; the cases differ in geometry and aerosol.
    let ctx = match cases.first() {
        Some(c) => Context::new(&c.settings),
        None => return Ok(Status::Success),
    };
    let results: Vec<ObservationResult> = cases
        .par_iter()
        .map(|c| compute_observation(&c.obs, &c.settings, &ctx))
        .collect();
    let csv = to_csv(a, &cases, &results);
    let out = &a.out;
    if out.as_os_str() == "-" {
        print!("{csv}");
    } else if out
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("xlsx"))
    {
        write_xlsx(out, &csv)?;
        println!("{}", out.display());
    } else {
        write_atomic(out, csv.as_bytes())
            .with_context(|| format!("{}: cannot write", out.display()))?;
        println!("{}", out.display());
    }
    Ok(Status::Success)
}

fn check_list(name: &str, v: &[f64], lo: f64, hi: f64, lo_open: bool) -> anyhow::Result<()> {
    if v.is_empty() {
        bail!("--{name}: give at least one value");
    }
    for &x in v {
        let ok = x.is_finite() && x <= hi && if lo_open { x > lo } else { x >= lo };
        if !ok {
            let open = if lo_open { "(" } else { "[" };
            bail!("--{name} {x}: expected values in {open}{lo}, {hi}]");
        }
    }
    Ok(())
}

/// Most cases of one table (the product of the list lengths).
const MAX_CASES: usize = 1_000_000;

/// The single-valued options, with the ranges of the job file's `[solver]` and
/// `[atmosphere]` values, and the size of the product.
fn check_scalars(a: &GridArgs) -> anyhow::Result<()> {
    let s = a.solar_constant;
    if !(s.is_finite() && (1000.0..=1500.0).contains(&s)) {
        bail!(
            "--solar-constant {s}: expected a value in 1000–1500 W m⁻² (about 1361 today, Kopp & Lean 2011)"
        );
    }
    for (name, key, v) in [
        ("angstrom", "angstrom", a.angstrom),
        ("ozone-du", "ozone_du", a.ozone_du),
        ("water-cm", "water_cm", a.water_cm),
        ("pressure-hpa", "pressure_hpa", a.pressure_hpa),
    ] {
        if let Err(why) = crate::ingest::check_job_value(key, v) {
            bail!("--{name} {v}: {why}");
        }
    }
    let geometry = if a.latitude.is_empty() && a.date.is_empty() {
        a.mu0.len().max(if a.mu0.is_empty() { 4 } else { 1 })
    } else {
        a.latitude.len().max(1).saturating_mul(a.date.len().max(1))
    };
    let n = [
        a.aod.len(),
        a.ssa.len(),
        a.g.len(),
        a.albedo.len(),
        geometry,
    ]
    .into_iter()
    .fold(1usize, |p, k| p.saturating_mul(k));
    if n > MAX_CASES {
        bail!(
            "the lists make {n} cases, more than the {MAX_CASES} of one table: split the grid into several runs"
        );
    }
    Ok(())
}

fn cases(a: &GridArgs) -> anyhow::Result<Vec<Case>> {
    check_list("aod", &a.aod, 0.0, 10.0, false)?;
    check_list("ssa", &a.ssa, 0.0, 1.0, true)?;
    check_list("g", &a.g, -1.0, 1.0, false)?;
    check_list("albedo", &a.albedo, 0.0, 1.0, false)?;
    if !(a.wavelength.is_finite() && (280.0..=4000.0).contains(&a.wavelength)) {
        bail!("--wavelength {}: expected 280–4000 nm", a.wavelength);
    }
    if !(2..=MAX_STREAMS).contains(&a.streams) || !a.streams.is_multiple_of(2) {
        bail!(
            "--streams {}: expected an even number from 2 to {MAX_STREAMS}",
            a.streams
        );
    }
    if let Some(t) = a.rayleigh_above {
        check_list("rayleigh-above", &[t], 0.0, 10.0, false)?;
    }
    check_scalars(a)?;
    let daily = !a.latitude.is_empty() || !a.date.is_empty();
    let geometry: Vec<(Option<f64>, Option<f64>, Option<NaiveDate>)> = if daily {
        if a.latitude.is_empty() || a.date.is_empty() {
            bail!(
                "24-hour means need both --latitude and --date (e.g. --latitude 0,30,60 --date 2026-03-20,2026-06-21)"
            );
        }
        check_list("latitude", &a.latitude, -90.0, 90.0, false)?;
        let mut dates = Vec::new();
        for d in &a.date {
            dates.push(
                NaiveDate::parse_from_str(d, "%Y-%m-%d")
                    .with_context(|| format!("--date {d:?}: expected YYYY-MM-DD"))?,
            );
        }
        let mut g = Vec::new();
        for &lat in &a.latitude {
            for &d in &dates {
                g.push((None, Some(lat), Some(d)));
            }
        }
        g
    } else {
        let mu = if a.mu0.is_empty() {
            vec![0.25, 0.5, 0.75, 1.0]
        } else {
            a.mu0.clone()
        };
        check_list("mu0", &mu, 0.0, 1.0, true)?;
        mu.into_iter().map(|m| (Some(m), None, None)).collect()
    };
    let base = Settings {
        solar_constant_wm2: a.solar_constant,
        closure: a.closure.into(),
        band_set: if a.spectral {
            BandSet::AstmG173
        } else {
            BandSet::Single
        },
        rayleigh: a.rayleigh,
        gases: a.gases,
        method: a.solver.into(),
        streams: a.streams,
        rayleigh_above_tau: a.rayleigh_above,
        ..Settings::default()
    };
    let mut out = Vec::new();
    for &(mu0, lat, date) in &geometry {
        for &aod in &a.aod {
            for &ssa in &a.ssa {
                for &g in &a.g {
                    for &albedo in &a.albedo {
                        let day = date
                            .unwrap_or_else(|| NaiveDate::from_ymd_opt(2026, 3, 20).expect("date"));
                        let time = Utc.from_utc_datetime(&day.and_hms_opt(12, 0, 0).expect("noon"));
                        let obs = Observation {
                            time_utc: time,
                            latitude_deg: lat.unwrap_or(0.0),
                            longitude_deg: 0.0,
                            altitude_m: 0.0,
                            pressure_hpa: Some(a.pressure_hpa),
                            aod,
                            aod_wavelength_nm: a.wavelength,
                            angstrom: a.angstrom,
                            ssa: vec![SpectralValue {
                                wavelength_nm: a.wavelength,
                                value: ssa,
                            }],
                            asymmetry: vec![SpectralValue {
                                wavelength_nm: a.wavelength,
                                value: g,
                            }],
                            surface: Surface::Lambertian { albedo },
                            ozone_du: a.ozone_du,
                            water_cm: a.water_cm,
                            layer: AerosolLayer::default(),
                        };
                        let settings = Settings {
                            fixed_cos_zenith: mu0,
                            daily_mean: daily,
                            earth_sun_distance: daily,
                            ..base.clone()
                        };
                        out.push(Case {
                            obs,
                            settings,
                            mu0,
                            latitude: lat,
                            date,
                        });
                    }
                }
            }
        }
    }
    Ok(out)
}

const FLUX_NAMES: [&str; 7] = [
    "toa_down",
    "toa_up",
    "toa_net",
    "sfc_down_direct",
    "sfc_down_diffuse",
    "sfc_up",
    "sfc_net",
];

fn flux_values(f: &Fluxes) -> [f64; 7] {
    [
        f.toa_down,
        f.toa_up,
        f.toa_net,
        f.sfc_down_direct,
        f.sfc_down_diffuse,
        f.sfc_up,
        f.sfc_net,
    ]
}

/// A command-line value as the command line spells it.
fn spelled(v: &impl clap::ValueEnum) -> String {
    v.to_possible_value()
        .map(|p| p.get_name().to_string())
        .unwrap_or_default()
}

fn to_csv(a: &GridArgs, cases: &[Case], results: &[ObservationResult]) -> String {
    let mut s = String::new();
    let mut header = vec![
        "case",
        "mode",
        "aod",
        "wavelength_nm",
        "angstrom",
        "ssa",
        "g",
        "albedo",
        "mu0",
        "latitude_deg",
        "date",
        "solar_constant_wm2",
        "closure",
        "solver",
        "streams",
        "band_set",
        "rayleigh",
        "gases",
        "ozone_du",
        "water_cm",
        "pressure_hpa",
        "rayleigh_above_tau",
        "solar_zenith_deg",
        "aod_550",
    ]
    .into_iter()
    .map(String::from)
    .collect::<Vec<_>>();
    for set in ["clean", "aerosol"] {
        for f in FLUX_NAMES {
            header.push(format!("{set}_{f}_wm2"));
        }
    }
    for q in [
        "dre_toa_wm2",
        "dre_sfc_wm2",
        "dre_atm_wm2",
        "efficiency_toa_wm2_per_aod",
        "efficiency_sfc_wm2_per_aod",
        "heating_rate_k_day",
    ] {
        header.push(q.into());
    }
    s.push_str(&header.join(","));
    s.push('\n');
    let num = |x: f64| {
        if x.is_finite() {
            format!("{x}")
        } else {
            String::new()
        }
    };
    for (i, (c, r)) in cases.iter().zip(results).enumerate() {
        let daily = c.settings.daily_mean;
        let e: &Effect = if daily { &r.daily } else { &r.instantaneous };
        let mut row = vec![
            (i + 1).to_string(),
            if daily {
                "24h-mean".into()
            } else {
                "instantaneous".into()
            },
            num(c.obs.aod),
            num(c.obs.aod_wavelength_nm),
            num(c.obs.angstrom),
            num(c.obs.ssa[0].value),
            num(c.obs.asymmetry[0].value),
            match c.obs.surface {
                Surface::Lambertian { albedo } => num(albedo),
                Surface::OceanTaylor1996 => "ocean".into(),
            },
            c.mu0.map(num).unwrap_or_default(),
            c.latitude.map(num).unwrap_or_default(),
            c.date.map(|d| d.to_string()).unwrap_or_default(),
            num(c.settings.solar_constant_wm2),
            spelled(&a.closure),
            spelled(&a.solver),
            if a.solver == SolverArg::DiscreteOrdinates {
                a.streams.to_string()
            } else {
                String::new()
            },
            if a.spectral { "spectral" } else { "single" }.into(),
            c.settings.rayleigh.to_string(),
            c.settings.gases.to_string(),
            num(a.ozone_du),
            num(a.water_cm),
            num(a.pressure_hpa),
            a.rayleigh_above.map(num).unwrap_or_default(),
            if daily {
                String::new()
            } else {
                num(r.solar_zenith_deg)
            },
            num(r.aod_550),
        ];
        for f in [&e.clean, &e.aerosol] {
            row.extend(flux_values(f).into_iter().map(num));
        }
        for x in [
            e.dre_toa,
            e.dre_sfc,
            e.dre_atm,
            e.efficiency_toa,
            e.efficiency_sfc,
            e.heating_rate_k_day,
        ] {
            row.push(num(x));
        }
        let _ = writeln!(s, "{}", row.join(","));
    }
    s
}

/// The same table as a workbook: header, frozen panes, autofilter; numbers at full precision.
fn write_xlsx(path: &Path, csv: &str) -> anyhow::Result<()> {
    use rust_xlsxwriter::{Format, Workbook};
    let mut wb = Workbook::new();
    let bold = Format::new().set_bold();
    let ws = wb.add_worksheet();
    ws.set_name("Grid")?;
    let mut ncols = 0u16;
    let mut nrows = 0u32;
    for (r, line) in csv.lines().enumerate() {
        for (c, cell) in line.split(',').enumerate() {
            let (r32, c16) = (r as u32, c as u16);
            if r == 0 {
                ws.write_string_with_format(r32, c16, cell, &bold)?;
            } else if let Ok(x) = cell.parse::<f64>() {
                ws.write_number(r32, c16, x)?;
            } else if !cell.is_empty() {
                ws.write_string(r32, c16, cell)?;
            }
            ncols = ncols.max(c16 + 1);
        }
        nrows = r as u32;
    }
    ws.set_freeze_panes(1, 0)?;
    if ncols > 0 {
        ws.autofilter(0, 0, nrows, ncols - 1)?;
    }
    ws.set_column_range_width(0, ncols.saturating_sub(1), 14.0)?;
    let bytes = wb.save_to_buffer()?;
    write_atomic(path, &bytes)?;
    Ok(())
}
