//! Random workbooks: reading never panics, the row counts always reconcile, and no valid row
//! is lost.
//!
//! Two generators. `layout_sheet` draws random headers, cell types, blanks and junk; most of
//! its sheets stop at a layout error (no time column, no AOD, ...), which checks the error
//! path. `valid_sheet` starts from a header that maps every required quantity (plus a random
//! choice of optional columns) and randomises the cells — each cell valid or, with
//! probability ¼, junk — so that the row-by-row reading is what is exercised: every row that
//! holds only valid cells must be accepted with its values (a silently dropped or misread
//! row fails), every other row is accepted or rejected with a reason naming a cell of its own
//! row.

mod ingest_support;

use hazebook::ingest::read_inputs;
use ingest_support::{W, assert_reconciles, spec, write_xlsx};
use proptest::prelude::*;

const HEADERS: &[&str] = &[
    "time",
    "Time (UTC)",
    "date",
    "site",
    "lat",
    "lon",
    "aod_500",
    "AOD 440 nm",
    "AOD 870nm",
    "angstrom",
    "SSA(675)",
    "ssa_550",
    "g_550",
    "asymmetry 870nm",
    "albedo",
    "ozone [DU]",
    "pw [mm]",
    "pressure",
    "altitude",
    "layer top",
    "utc offset",
    "surface",
    "remarks",
    "",
];

fn cell() -> impl Strategy<Value = W> {
    prop_oneof![
        Just(W::Blank),
        (-2.0f64..2.0).prop_map(W::N),
        (0.0f64..1.0).prop_map(W::N),
        (-1000.0f64..50_000.0).prop_map(W::N),
        prop_oneof![Just(-999.0), Just(-9999.0), Just(95.0), Just(45413.5)].prop_map(W::N),
        prop_oneof![
            Just("N/A"),
            Just("-"),
            Just("NaN"),
            Just("abc"),
            Just("2024-05-01T10:00:00Z"),
            Just("2024-05-01"),
            Just("10:30"),
            Just("ocean"),
            Just("S1"),
            Just("0,5"),
            Just("UTC+8"),
        ]
        .prop_map(W::S),
        Just(W::D("2024-05-01 10:00:00")),
        Just(W::D("2024-05-01 11:00:00")),
    ]
}

fn layout_sheet() -> impl Strategy<Value = Vec<Vec<W>>> {
    (1usize..8, 0usize..3).prop_flat_map(|(width, title_rows)| {
        let header =
            proptest::collection::vec(proptest::sample::select(HEADERS), width).prop_map(|h| {
                h.into_iter()
                    .map(|s| W::Str(s.to_string()))
                    .collect::<Vec<W>>()
            });
        let rows =
            proptest::collection::vec(proptest::collection::vec(cell(), 0..width + 2), 0..12);
        (header, rows).prop_map(move |(h, rows)| {
            let mut all: Vec<Vec<W>> = (0..title_rows).map(|_| vec![W::S("Title")]).collect();
            all.push(h);
            all.extend(rows);
            all
        })
    })
}

/// The columns of `valid_sheet`: header and the range of a valid value (numbers drawn
/// uniformly in it); site and time are built from the row number.
#[derive(Clone, Copy, Debug)]
enum Col {
    Site,
    Time,
    Number(&'static str, f64, f64),
    Remarks,
}

const REQUIRED: [Col; 7] = [
    Col::Site,
    Col::Time,
    Col::Number("Lat", -60.0, 60.0),
    Col::Number("Lon", -170.0, 170.0),
    Col::Number("AOD 500 nm", 0.01, 2.0),
    Col::Number("SSA(550)", 0.7, 1.0),
    Col::Number("g 550nm", 0.4, 0.8),
];

const OPTIONAL: [Col; 5] = [
    Col::Number("Angstrom", 0.5, 2.0),
    Col::Number("Ozone [DU]", 250.0, 400.0),
    Col::Number("albedo", 0.05, 0.5),
    Col::Number("layer top", 1.0, 4.0),
    Col::Remarks,
];

fn header_of(c: Col) -> &'static str {
    match c {
        Col::Site => "Site",
        Col::Time => "Time (UTC)",
        Col::Number(h, _, _) => h,
        Col::Remarks => "remarks",
    }
}

/// A valid cell of column `c` in data row `i` (sites alternate; times are unique per row
/// and in 2025, apart from the junk times of [`cell`], so no valid row is a duplicate).
fn valid_cell(c: Col, i: usize, x: f64) -> W {
    match c {
        Col::Site => W::S(if i.is_multiple_of(2) { "Alpha" } else { "Beta" }),
        Col::Time => W::Str(format!(
            "2025-03-{:02}T{:02}:{:02}:00Z",
            1 + i / 24,
            i % 24,
            (i * 7) % 60
        )),
        Col::Number(_, lo, hi) => W::N(lo + x * (hi - lo)),
        Col::Remarks => W::S("ok"),
    }
}

/// A sheet with a valid header and random cells, and for each data row whether all its
/// cells are valid.
fn valid_sheet() -> impl Strategy<Value = (Vec<Col>, Vec<Vec<W>>, Vec<bool>)> {
    let optional = proptest::sample::subsequence(OPTIONAL.to_vec(), 0..=OPTIONAL.len());
    (optional, 1usize..15)
        .prop_flat_map(|(opt, n)| {
            let cols: Vec<Col> = REQUIRED.iter().copied().chain(opt).collect();
            let width = cols.len();
            // Per cell: a uniform draw for a valid value, and junk in a quarter of the cells.
            let cells = proptest::collection::vec(
                proptest::collection::vec(
                    (0.0f64..1.0, prop::option::weighted(0.25, cell())),
                    width,
                ),
                n,
            );
            (Just(cols), cells)
        })
        .prop_map(|(cols, cells)| {
            let mut rows = vec![cols.iter().map(|&c| W::S(header_of(c))).collect::<Vec<_>>()];
            let mut valid = Vec::new();
            for (i, row) in cells.into_iter().enumerate() {
                let mut all_valid = true;
                rows.push(
                    row.into_iter()
                        .zip(&cols)
                        .map(|((x, junk), &c)| match junk {
                            Some(j) => {
                                all_valid = false;
                                j
                            }
                            None => valid_cell(c, i, x),
                        })
                        .collect(),
                );
                valid.push(all_valid);
            }
            (cols, rows, valid)
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]
    #[test]
    fn reading_never_panics_and_counts_reconcile(data in layout_sheet(), sites in proptest::collection::vec(cell(), 0..4)) {
        let dir = tempfile::TempDir::new().unwrap();
        let p = dir.path().join("random.xlsx");
        let site_rows = vec![
            vec![W::S("site"), W::S("latitude"), W::S("longitude")],
            sites,
        ];
        write_xlsx(&p, &[("data", data), ("sites", site_rows)]);
        match read_inputs(&spec(&[&p])) {
            Ok(ing) => {
                assert_reconciles(&ing);
                for r in &ing.rejected {
                    prop_assert!(!r.reason.is_empty());
                }
            }
            Err(e) => prop_assert!(!e.to_string().is_empty()),
        }
    }

    /// A valid header with random cells: the sheet is read (no layout error), the counts
    /// reconcile, every all-valid row is accepted with its AOD and SSA, and every rejection
    /// names a cell of a data row that holds junk.
    #[test]
    fn valid_header_random_cells_lose_no_valid_row((cols, rows, valid) in valid_sheet()) {
        let dir = tempfile::TempDir::new().unwrap();
        let p = dir.path().join("cells.xlsx");
        write_xlsx(&p, &[("data", rows.clone())]);
        let ing = read_inputs(&spec(&[&p])).unwrap_or_else(|e| panic!("{e}"));
        assert_reconciles(&ing);
        let aod_col = cols.iter().position(|&c| header_of(c) == "AOD 500 nm").unwrap();
        let ssa_col = cols.iter().position(|&c| header_of(c) == "SSA(550)").unwrap();
        for (i, &ok) in valid.iter().enumerate() {
            let sheet_row = i as u32 + 2; // 1-based, below the header
            let accepted = ing.origins.iter().position(|o| o.row == sheet_row);
            if ok {
                let k = accepted.unwrap_or_else(|| {
                    panic!("valid row {sheet_row} not accepted: {:?}", ing.rejected)
                });
                let (W::N(aod), W::N(ssa)) = (&rows[i + 1][aod_col], &rows[i + 1][ssa_col]) else {
                    panic!("row {sheet_row}: not numbers");
                };
                let o = &ing.observations[k];
                prop_assert!((o.aod - aod).abs() < 1e-12 && o.aod_wavelength_nm == 500.0, "{o:?}");
                prop_assert!(o.ssa.iter().any(|s| (s.value - ssa).abs() < 1e-12), "{o:?}");
            }
        }
        for r in &ing.rejected {
            prop_assert!(!r.reason.is_empty());
            prop_assert!(r.row >= 2 && (r.row as usize) < rows.len() + 1, "{r:?}");
            prop_assert!(!valid[r.row as usize - 2], "an all-valid row rejected: {r:?}");
        }
    }
}
