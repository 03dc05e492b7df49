//! Random workbooks (random headers, cell types, blanks and junk): reading never panics and
//! the row counts always reconcile.

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

fn sheet() -> impl Strategy<Value = Vec<Vec<W>>> {
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

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]
    #[test]
    fn reading_never_panics_and_counts_reconcile(data in sheet(), sites in proptest::collection::vec(cell(), 0..4)) {
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
}
