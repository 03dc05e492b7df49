//! Synthetic but realistic report inputs built by hand, and calamine helpers to read reports
//! back. The numbers are invented: a linear response of ΔF to AOD with a deterministic
//! scatter, in the range seen for continental aerosol (24-hour TOA about −26 and surface about −48 W m⁻² per unit AOD).
#![allow(dead_code)]

use std::path::Path;

use calamine::{Data, Range, Reader, Xlsx, open_workbook};
use chrono::{DateTime, Duration, TimeZone, Utc};
use hazebook::ingest::{
    Assumption, Counts, Ingested, InputFile, MappedColumn, Rejection, RowOrigin, RowWarning,
    ValueSource,
};
use hazebook::physics::{
    AerosolLayer, Effect, Flags, Fluxes, Observation, ObservationResult, Settings, SpectralValue,
    Surface,
};
use hazebook::report::{About, ReportInput};

pub const SITES: [&str; 3] = ["Kestrel Ridge", "Marsh Point", "Brackwater"];

/// A deterministic pseudo-random number in [0, 1) from an integer (splitmix64).
pub fn unit(i: u64) -> f64 {
    let mut z = i.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^= z >> 31;
    (z >> 11) as f64 / (1u64 << 53) as f64
}

fn fluxes(toa_down: f64, reflect: f64, trans: f64, albedo: f64) -> Fluxes {
    let toa_up = toa_down * reflect;
    let sfc_down = toa_down * trans;
    let sfc_up = sfc_down * albedo;
    Fluxes {
        toa_down,
        toa_up,
        toa_net: toa_down - toa_up,
        sfc_down_direct: sfc_down * 0.8,
        sfc_down_diffuse: sfc_down * 0.2,
        sfc_up,
        sfc_net: sfc_down - sfc_up,
    }
}

fn effect(toa_down: f64, aod: f64, ssa: f64, j: u64) -> Effect {
    let clean = fluxes(toa_down, 0.12, 0.78, 0.15);
    let noise = 1.0 + 0.2 * (unit(j) - 0.5);
    let extra_reflect = 0.07 * aod * ssa * noise;
    let absorb = 0.8 * aod * (1.0 - ssa) * noise;
    let aerosol = fluxes(
        toa_down,
        0.12 + extra_reflect,
        0.78 - extra_reflect - absorb,
        0.15,
    );
    let dre_toa = aerosol.toa_net - clean.toa_net;
    let dre_sfc = aerosol.sfc_net - clean.sfc_net;
    let dre_atm = dre_toa - dre_sfc;
    Effect {
        clean,
        aerosol,
        dre_toa,
        dre_sfc,
        dre_atm,
        efficiency_toa: if aod > 0.0 { dre_toa / aod } else { f64::NAN },
        efficiency_sfc: if aod > 0.0 { dre_sfc / aod } else { f64::NAN },
        heating_rate_k_day: 8.43 * dre_atm / 200.0,
    }
}

/// `n` rows over three sites and three months, three rejected rows, counts that reconcile.
pub fn sample(n: usize) -> (Ingested, Vec<ObservationResult>) {
    let t0: DateTime<Utc> = Utc.with_ymd_and_hms(2026, 6, 1, 9, 0, 0).unwrap();
    let mut ing = Ingested::default();
    let mut results = Vec::new();
    for i in 0..n {
        let site = SITES[i % 3];
        let t = t0 + Duration::hours((i as i64) * 7);
        let aod = if i == 5 {
            0.0
        } else {
            0.05 + 0.6 * unit(i as u64)
        };
        let ssa = 0.86 + 0.1 * unit(1000 + i as u64);
        let obs = Observation {
            time_utc: t,
            latitude_deg: 45.0 + (i % 3) as f64,
            longitude_deg: 7.5 - (i % 3) as f64,
            altitude_m: 120.0 * (i % 3) as f64,
            pressure_hpa: None,
            aod: aod * 1.1,
            aod_wavelength_nm: 500.0,
            angstrom: 1.3,
            ssa: vec![
                SpectralValue {
                    wavelength_nm: 440.0,
                    value: ssa + 0.01,
                },
                SpectralValue {
                    wavelength_nm: 870.0,
                    value: ssa - 0.02,
                },
            ],
            asymmetry: vec![SpectralValue {
                wavelength_nm: 550.0,
                value: 0.68,
            }],
            surface: Surface::Lambertian { albedo: 0.15 },
            ozone_du: 300.0,
            water_cm: 1.5,
            layer: AerosolLayer::default(),
        };
        let sun_down = i % 11 == 10;
        let inst = if sun_down {
            Effect::default()
        } else {
            effect(
                900.0 + 200.0 * unit(2000 + i as u64),
                aod,
                ssa,
                3000 + i as u64,
            )
        };
        let daily = effect(420.0, aod, ssa, 4000 + i as u64);
        let res = ObservationResult {
            aod_550: aod,
            pressure_hpa: 1013.25 - 0.12 * obs.altitude_m,
            solar_zenith_deg: if sun_down {
                95.0
            } else {
                30.0 + 40.0 * unit(5000 + i as u64)
            },
            instantaneous: inst,
            daily,
            daylight_hours: 15.2,
            flags: Flags {
                sun_below_horizon: sun_down,
                ssa_extrapolated: true,
                ..Flags::default()
            },
            uncertainty: None,
            solver_error: Default::default(),
        };
        ing.sites.push(site.to_string());
        ing.origins.push(RowOrigin {
            file: "campaign-2026.xlsx".into(),
            sheet: "optics".into(),
            row: (i + 3) as u32,
        });
        ing.row_warnings.push(if i == 7 {
            vec![RowWarning {
                cell: "F10".into(),
                message: "AOD above 3 is unusual".into(),
            }]
        } else {
            Vec::new()
        });
        ing.observations.push(obs);
        results.push(res);
    }
    ing.rejected = vec![
        Rejection {
            file: "campaign-2026.xlsx".into(),
            sheet: "optics".into(),
            row: 57,
            cell: "F57".into(),
            column: "ssa".into(),
            value: "1.07".into(),
            reason: "expected a number in (0, 1], found 1.07".into(),
        },
        Rejection {
            file: "campaign-2026.xlsx".into(),
            sheet: "optics".into(),
            row: 60,
            cell: "B60".into(),
            column: "time".into(),
            value: "".into(),
            reason: "no time".into(),
        },
        Rejection {
            file: "campaign-2026.xlsx".into(),
            sheet: "optics".into(),
            row: 61,
            cell: "".into(),
            column: "".into(),
            value: "".into(),
            reason: "row has no AOD".into(),
        },
    ];
    ing.mapping = vec![MappedColumn {
        file: "campaign-2026.xlsx".into(),
        sheet: "optics".into(),
        quantity: "aod".into(),
        wavelength_nm: Some(500.0),
        header: "AOD_500nm".into(),
        letter: "F".into(),
        unit: "".into(),
        how: "detected".into(),
        wavelength_pair_nm: None,
    }];
    ing.assumptions = vec![Assumption {
        quantity: "ozone".into(),
        value: "300 DU".into(),
        source: ValueSource::BuiltIn,
        rows: n,
    }];
    ing.files = vec![InputFile {
        path: "campaign-2026.xlsx".into(),
        sha256: "ab".repeat(32),
        sheets: vec!["optics".into(), "sites".into()],
    }];
    ing.warnings = vec!["sheet \"notes\" has no recognisable header; skipped".into()];
    ing.counts = Counts {
        read: n + 3 + 2,
        computed: n,
        rejected: 3,
        outside_period: 2,
    };
    (ing, results)
}

pub fn about() -> About {
    About {
        job_name: "kestrel-campaign".into(),
        version: "0.1.0".into(),
        job_text: Some("[input]\npaths = [\"campaign-2026.xlsx\"]\n".into()),
        template_name: "full".into(),
        period: Some("2026-06".into()),
        created_utc: Utc.with_ymd_and_hms(2026, 9, 1, 0, 0, 0).unwrap(),
        notes: vec!["closure from the job file".into()],
    }
}

pub fn input<'a>(
    ing: &'a Ingested,
    results: &'a [ObservationResult],
    settings: &'a Settings,
) -> ReportInput<'a> {
    ReportInput {
        ingested: ing,
        results,
        settings,
        mapping: &ing.mapping,
        about: about(),
    }
}

pub fn open(path: &Path) -> Xlsx<std::io::BufReader<std::fs::File>> {
    open_workbook(path).expect("report opens with calamine")
}

pub fn sheet(path: &Path, name: &str) -> Range<Data> {
    open(path).worksheet_range(name).expect("sheet exists")
}

pub fn text(r: &Range<Data>, row: usize, col: usize) -> String {
    match r.get((row, col)) {
        Some(Data::String(s)) => s.clone(),
        Some(Data::Empty) | None => String::new(),
        Some(other) => other.to_string(),
    }
}

pub fn num(r: &Range<Data>, row: usize, col: usize) -> Option<f64> {
    match r.get((row, col)) {
        Some(Data::Float(x)) => Some(*x),
        Some(Data::Int(x)) => Some(*x as f64),
        Some(Data::DateTime(d)) => Some(d.as_f64()),
        _ => None,
    }
}

/// Column index of a header in row 0.
pub fn col_of(r: &Range<Data>, header: &str) -> usize {
    (0..r.width())
        .find(|&c| text(r, 0, c) == header)
        .unwrap_or_else(|| panic!("no column {header:?}"))
}

/// Relative closeness at the workbook's 6 significant digits.
pub fn close6(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-5 * b.abs().max(1e-12)
}
