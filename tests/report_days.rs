//! Days as the unit of the statistics: a small invented campaign with several observations
//! per day, summarised by the report code and compared with a hand computation over days.

use chrono::{TimeZone, Utc};
use hazebook::ingest::{Ingested, RowOrigin};
use hazebook::physics::uncertainty::{QUANTITY_COUNT, Quantity, RowUncertainty};
use hazebook::physics::{
    AerosolLayer, Effect, Observation, ObservationResult, Settings, SpectralValue, Surface,
};
use hazebook::report::days::summarise_group;
use hazebook::report::frame::{self, Row};
use hazebook::report::{About, ReportInput, template};

/// Invented rows: (day of June 2026, hour UTC, ΔF [W m⁻²]) at one site on the Greenwich
/// meridian (so the local mean-solar date is the UTC date). The same ΔF is used as the
/// instantaneous and the 24-hour value.
const ROWS: [(u32, u32, f64); 6] = [
    (1, 9, -10.0),
    (1, 12, -12.0),
    (1, 15, -14.0),
    (2, 11, -20.0),
    (3, 10, -5.0),
    (3, 14, -7.0),
];

fn build(rows: &[(u32, u32, f64)], unc: Option<(f64, f64)>) -> (Ingested, Vec<ObservationResult>) {
    let mut ing = Ingested::default();
    let mut res = Vec::new();
    for (k, &(day, hour, dre)) in rows.iter().enumerate() {
        ing.observations.push(Observation {
            time_utc: Utc.with_ymd_and_hms(2026, 6, day, hour, 0, 0).unwrap(),
            latitude_deg: 50.0,
            longitude_deg: 0.0,
            altitude_m: 0.0,
            pressure_hpa: None,
            aod: 0.2,
            aod_wavelength_nm: 550.0,
            angstrom: 1.3,
            ssa: vec![SpectralValue {
                wavelength_nm: 550.0,
                value: 0.9,
            }],
            asymmetry: vec![SpectralValue {
                wavelength_nm: 550.0,
                value: 0.7,
            }],
            surface: Surface::Lambertian { albedo: 0.15 },
            ozone_du: 300.0,
            water_cm: 1.5,
            layer: AerosolLayer::default(),
        });
        ing.sites.push("Saltmarsh".into());
        ing.origins.push(RowOrigin {
            file: "invented.xlsx".into(),
            sheet: "optics".into(),
            row: k as u32 + 3,
        });
        ing.row_warnings.push(Vec::new());
        let e = Effect {
            dre_toa: dre,
            dre_sfc: 2.0 * dre,
            dre_atm: -dre,
            ..Effect::default()
        };
        res.push(ObservationResult {
            aod_550: 0.2,
            pressure_hpa: 1013.25,
            solar_zenith_deg: 40.0,
            instantaneous: e,
            daily: e,
            daylight_hours: 16.0,
            uncertainty: unc.map(|(r, s)| RowUncertainty {
                random: [r; QUANTITY_COUNT],
                systematic: [s; QUANTITY_COUNT],
                ..RowUncertainty::default()
            }),
            ..ObservationResult::default()
        });
    }
    (ing, res)
}

fn rows_of<'a>(ing: &'a Ingested, res: &'a [ObservationResult]) -> Vec<Row<'a>> {
    let mut rows: Vec<Row<'a>> = (0..res.len())
        .map(|i| Row {
            origin: &ing.origins[i],
            site: &ing.sites[i],
            obs: &ing.observations[i],
            res: &res[i],
            warnings: &[],
            day: 0,
        })
        .collect();
    hazebook::report::days::number_days(&mut rows);
    rows
}

fn close(a: Option<f64>, b: f64) {
    let a = a.expect("statistic present");
    assert!((a - b).abs() < 1e-9, "{a} vs {b}");
}

/// Hand computation (Python `statistics`, t(0.975, 2) = 4.302653 from standard tables, from
/// memory): day means −12, −20, −6 → n = 3 days, mean −12.666667, SD 7.023769, SE 4.055175,
/// 95 % CI (−30.114677, 4.781343); 6 observations.
#[test]
fn daily_quantity_statistics_are_over_days() {
    let (ing, res) = build(&ROWS, None);
    let rows = rows_of(&ing, &res);
    let idx: Vec<usize> = (0..rows.len()).collect();
    let q = frame::column("dre_toa_24h").unwrap();
    let s = summarise_group(q, &rows, &idx, 1);
    assert_eq!((s.n, s.days, s.observations), (3, 3, 6));
    close(s.mean, -12.666_666_666_666_666);
    close(s.sd, 7.023_769_168_568_492);
    close(s.se, 4.055_175_020_198_813);
    close(s.ci95.map(|c| c.0), -30.114_676_537_593_1);
    close(s.ci95.map(|c| c.1), 4.781_343_204_259_768);
    close(s.median, -12.0);
    // At least two observations a day: day 2 drops out; days −12 and −6.
    let s = summarise_group(q, &rows, &idx, 2);
    assert_eq!((s.n, s.days, s.observations), (2, 2, 5));
    close(s.mean, -9.0);
    close(s.se, 3.0);
}

/// Instantaneous: per-observation mean −11.333333 and SD 5.354126 over 6 observations, but the
/// SE with days as blocks: √(D/(D−1) Σ n_d²(ȳ_d − ȳ)²)/N = √(1.5 × 192.888…)/6 = 2.834967, and
/// the interval with D − 1 = 2 degrees of freedom: (−23.531211, 0.864545).
#[test]
fn instantaneous_quantity_intervals_take_days_as_blocks() {
    let (ing, res) = build(&ROWS, None);
    let rows = rows_of(&ing, &res);
    let idx: Vec<usize> = (0..rows.len()).collect();
    let q = frame::column("dre_toa").unwrap();
    let s = summarise_group(q, &rows, &idx, 1);
    assert_eq!((s.n, s.days, s.observations), (6, 3, 6));
    close(s.mean, -11.333_333_333_333_334);
    close(s.sd, 5.354_126_134_736_337);
    close(s.se, 2.834_966_849_371_794);
    close(s.ci95.map(|c| c.0), -23.531_211_186_990_85);
    close(s.ci95.map(|c| c.1), 0.864_544_520_324_180_6);
    // The naive per-observation SE would be SD/√6 = 2.186: narrower than the blocked one.
    assert!(s.se.unwrap() > 5.354_126 / 6f64.sqrt());
}

/// The propagated random part of a mean over D days falls as 1/√D; the systematic part does
/// not (every row: random 1σ = 2, systematic 1σ = 0.5 W m⁻²).
#[test]
fn random_part_shrinks_with_days_and_systematic_does_not() {
    let q = frame::column("dre_toa_24h").unwrap();
    let mut seen = Vec::new();
    for days in [4u32, 16] {
        let rows_in: Vec<(u32, u32, f64)> = (0..days)
            .flat_map(|d| [(d + 1, 9, -10.0 - d as f64), (d + 1, 14, -11.0)])
            .collect();
        let (ing, res) = build(&rows_in, Some((2.0, 0.5)));
        let rows = rows_of(&ing, &res);
        let idx: Vec<usize> = (0..rows.len()).collect();
        let s = summarise_group(q, &rows, &idx, 1);
        assert_eq!(s.days, days as usize);
        close(s.u_random, 2.0 / (days as f64).sqrt());
        close(s.u_systematic, 0.5);
        let se = s.se.unwrap();
        close(s.u_total, (se * se + 4.0 / days as f64 + 0.25).sqrt());
        seen.push(s.u_random.unwrap());
    }
    close(Some(seen[0] / seen[1]), 2.0);
    assert!(Quantity::of_key("dre_toa_24h").is_some());
}

/// The full template's "Site x day" sheet shows one row per site-day with its observation
/// count, read back from the written workbook.
#[test]
fn site_by_day_sheet_in_the_full_template() {
    use calamine::{Data, Reader, Xlsx, open_workbook};
    let (ing, res) = build(&ROWS, None);
    let settings = Settings::default();
    let input = ReportInput {
        ingested: &ing,
        results: &res,
        settings: &settings,
        mapping: &[],
        about: About {
            job_name: "days".into(),
            ..About::default()
        },
    };
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("days.xlsx");
    let tpl = template::load("full").unwrap();
    hazebook::report::write_report(&path, &tpl, &input).unwrap();
    let mut wb: Xlsx<_> = open_workbook(&path).unwrap();
    let sh = wb.worksheet_range("Site x day").expect("Site x day sheet");
    let header: Vec<String> = sh
        .rows()
        .next()
        .unwrap()
        .iter()
        .map(|c| c.to_string())
        .collect();
    let col = |name: &str| {
        header
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("{name} in {header:?}"))
    };
    let (day, quantity, mean, obs) = (
        col("Day"),
        col("Quantity"),
        col("Mean"),
        col("Observations"),
    );
    let found: Vec<(String, f64, f64)> = sh
        .rows()
        .skip(2)
        .filter(|r| r[quantity] == "ΔF_TOA (24-h mean)")
        .map(|r| {
            let num = |d: &Data| match d {
                Data::Float(x) => *x,
                Data::Int(i) => *i as f64,
                _ => f64::NAN,
            };
            (r[day].to_string(), num(&r[mean]), num(&r[obs]))
        })
        .collect();
    assert_eq!(
        found,
        vec![
            ("2026-06-01".into(), -12.0, 3.0),
            ("2026-06-02".into(), -20.0, 1.0),
            ("2026-06-03".into(), -6.0, 2.0)
        ]
    );
}
