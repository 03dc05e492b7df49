//! Unit tests of each step of reading a row, on invented one-sheet grids.

use calamine::{Data, Range};

use super::super::cells::{FillValues, Grid};
use super::super::detect::Kind;
use super::super::read::{Layout, SheetContext, data_layout};
use super::super::resolve::SiteTable;
use super::super::types::InputSpec;
use super::*;

/// A sheet: a header row and data rows of text or numbers ("" is an empty cell).
fn grid(header: &[&str], rows: &[&[&str]]) -> Grid {
    let h = rows.len() + 1;
    let w = header.len();
    let mut range = Range::new((0, 0), (h as u32 - 1, w as u32 - 1));
    for (c, name) in header.iter().enumerate() {
        range.set_value((0, c as u32), Data::String(name.to_string()));
    }
    for (r, row) in rows.iter().enumerate() {
        for (c, v) in row.iter().enumerate() {
            let d = match v.parse::<f64>() {
                _ if v.is_empty() => Data::Empty,
                Ok(x) => Data::Float(x),
                Err(_) => Data::String(v.to_string()),
            };
            range.set_value((r as u32 + 1, c as u32), d);
        }
    }
    Grid::Range(range)
}

struct Sheet {
    grid: Grid,
    layout: Layout,
    fill: FillValues,
    sites: SiteTable,
    spec: InputSpec,
}

impl Sheet {
    fn new(header: &[&str], rows: &[&[&str]], spec: InputSpec) -> Self {
        let grid = grid(header, rows);
        let layout = data_layout(&grid, &spec, "t.xlsx", "obs").expect("layout");
        Sheet {
            fill: FillValues::new(&spec.fill_values),
            sites: SiteTable::merge(&[], &spec.sites),
            grid,
            layout,
            spec,
        }
    }

    fn ctx(&self) -> SheetContext<'_> {
        SheetContext {
            file: "t.xlsx",
            sheet: "obs",
            grid: &self.grid,
            layout: &self.layout,
            is_1904: false,
            fill: &self.fill,
            sites: &self.sites,
            spec: &self.spec,
        }
    }
}

const HEADER: &[&str] = &[
    "time_utc",
    "latitude",
    "longitude",
    "AOD 500 nm",
    "AOD 870 nm",
    "SSA 550 nm",
    "g 550 nm",
];

fn one_row(row: &[&str]) -> Sheet {
    Sheet::new(HEADER, &[row], InputSpec::default())
}

fn reason(r: Result<impl Sized, Problem>) -> String {
    match r {
        Ok(_) => panic!("expected a rejection"),
        Err(p) => p.reason,
    }
}

const GOOD: &[&str] = &[
    "2024-06-01 10:00:00",
    "45.5",
    "10.25",
    "0.3",
    "0.15",
    "0.9",
    "0.7",
];

#[test]
fn typed_values_of_a_row() {
    let s = one_row(GOOD);
    let t = typed::read_cells(&s.ctx(), 1).ok().expect("readable");
    assert_eq!(t.values.aod, vec![(500.0, 0.3), (870.0, 0.15)]);
    assert_eq!(t.values.ssa, vec![(550.0, 0.9)]);
    assert_eq!(t.values.asymmetry, vec![(550.0, 0.7)]);
    assert_eq!(t.values.latitude, Some(45.5));
    assert_eq!(t.values.longitude, Some(10.25));
    assert!(t.values.time.is_some());
    assert!(t.warnings.is_empty() && t.missing_cells.is_empty());
}

#[test]
fn typed_rejects_text_in_a_number_column_and_notes_empty_cells() {
    let mut row = GOOD.to_vec();
    row[3] = "cloudy";
    let s = one_row(&row);
    let why = reason(typed::read_cells(&s.ctx(), 1));
    assert!(why.contains("\"cloudy\""), "{why}");
    let mut row = GOOD.to_vec();
    row[4] = "";
    let s = one_row(&row);
    let t = typed::read_cells(&s.ctx(), 1).ok().expect("readable");
    assert_eq!(t.values.aod, vec![(500.0, 0.3)]);
    assert_eq!(t.missing_cells.len(), 1);
    assert_eq!(t.missing_cells[0].0, "aod");
    assert_eq!(t.missing_cells[0].2, 870.0);
}

#[test]
fn checks_reject_a_value_out_of_range_with_the_cell_shown() {
    let s = one_row(GOOD);
    let ctx = s.ctx();
    let m = first_col(&ctx, Kind::Ssa).unwrap();
    let mut warnings = Vec::new();
    let why = reason(checks::check_number(
        ctx.grid,
        1,
        m,
        &Cell::Number(1.5),
        1.5,
        &mut warnings,
    ));
    assert!(why.contains("1.5"), "{why}");
    assert!(checks::check_number(ctx.grid, 1, m, &Cell::Number(0.9), 0.9, &mut warnings).is_ok());
}

#[test]
fn checks_need_a_time_and_the_aerosol_quantities() {
    let mut row = GOOD.to_vec();
    row[0] = "";
    let s = one_row(&row);
    let ctx = s.ctx();
    let t = typed::read_cells(&ctx, 1).ok().unwrap();
    let why = reason(checks::place_in_time(
        &ctx,
        1,
        &t.values,
        t.bad_time_of_day,
        &mut Vec::new(),
    ));
    assert_eq!(
        why,
        "the measurement time is missing (empty or a fill value); the row cannot be computed"
    );
    let mut row = GOOD.to_vec();
    row[5] = "";
    let s = Sheet::new(
        HEADER,
        &[&row],
        InputSpec {
            fallback: Some(vec!["ssa".into()]),
            ..Default::default()
        },
    );
    let t = typed::read_cells(&s.ctx(), 1).ok().unwrap();
    let why = reason(checks::require_aerosol(&s.ctx(), &t.values));
    assert!(
        why.starts_with("the single-scattering albedo is missing"),
        "{why}"
    );
}

#[test]
fn checks_refuse_a_fallback_the_job_does_not_allow() {
    let mut row = GOOD.to_vec();
    row[4] = "";
    let s = one_row(&row);
    let t = typed::read_cells(&s.ctx(), 1).ok().unwrap();
    let why = reason(checks::refuse_unallowed_fallback(
        &s.ctx(),
        &t.missing_cells,
    ));
    assert!(why.contains("add \"aod\" to [input] fallback"), "{why}");
}

#[test]
fn defaults_fill_what_the_row_lacks_and_say_so() {
    let s = one_row(GOOD);
    let ctx = s.ctx();
    let mut t = typed::read_cells(&ctx, 1).ok().unwrap();
    let mut assumptions = Vec::new();
    let mut warnings = Vec::new();
    let loc = defaults::resolve_location(&ctx, 1, &mut t.values, &mut assumptions, &mut warnings)
        .ok()
        .unwrap();
    assert_eq!((loc.latitude, loc.longitude), (45.5, 10.25));
    assert!(assumptions.is_empty(), "coordinates come from the row");
    let atm = defaults::resolve_atmosphere(&ctx, &t.values, &loc, &mut assumptions)
        .ok()
        .unwrap();
    assert_eq!(atm.ozone_du, ctx.spec.defaults.ozone_du);
    let keys: Vec<&str> = assumptions.iter().map(|a| a.0).collect();
    for k in [
        "altitude_m",
        "pressure_hpa",
        "albedo",
        "ozone_du",
        "water_cm",
    ] {
        assert!(keys.contains(&k), "{k} in {keys:?}");
    }
    // Two AOD values and no Ångström column: the exponent is fitted.
    let aer = defaults::resolve_aerosol(&ctx, 1, &mut t.values, &mut assumptions, &mut warnings);
    let expected = (0.3f64 / 0.15).ln() / (870.0f64 / 500.0).ln();
    assert!((aer.angstrom - expected).abs() < 1e-9, "{}", aer.angstrom);
    assert_eq!(aer.aod_wavelength_nm, 500.0);
}

#[test]
fn defaults_reject_a_row_without_coordinates() {
    let row: Vec<&str> = vec!["2024-06-01 10:00:00", "", "", "0.3", "0.15", "0.9", "0.7"];
    let s = one_row(&row);
    let ctx = s.ctx();
    let mut t = typed::read_cells(&ctx, 1).ok().unwrap();
    let why = reason(defaults::resolve_location(
        &ctx,
        1,
        &mut t.values,
        &mut Vec::new(),
        &mut Vec::new(),
    ));
    assert_eq!(
        why,
        "no latitude/longitude: the row gives none and names no site of the site table"
    );
}

#[test]
fn observation_takes_sorted_spectra_one_per_wavelength() {
    let pts = observation::spectral(vec![(870.0, 0.8), (440.0, 0.9), (870.0, 0.7)]);
    let wl: Vec<f64> = pts.iter().map(|p| p.wavelength_nm).collect();
    assert_eq!(wl, vec![440.0, 870.0]);
    assert_eq!(pts[1].value, 0.8);
}

#[test]
fn a_whole_row_becomes_an_observation() {
    let s = one_row(GOOD);
    let acc = read_row(&s.ctx(), 1).ok().flatten().expect("accepted");
    let o = &acc.observation;
    assert_eq!(o.time_utc.to_rfc3339(), "2024-06-01T10:00:00+00:00");
    assert_eq!((o.latitude_deg, o.longitude_deg), (45.5, 10.25));
    assert_eq!((o.aod, o.aod_wavelength_nm), (0.3, 500.0));
    assert_eq!(o.ssa.len(), 1);
    assert_eq!(acc.aod_measured, vec![(500.0, 0.3), (870.0, 0.15)]);
}
