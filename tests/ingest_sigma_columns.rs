//! Per-row uncertainty columns in a workbook: recognised by their headers and accounted for
//! (invented workbook).

mod ingest_support;

use ingest_support::{W::*, assert_reconciles, read, tmp, write_xlsx};

#[test]
fn sigma_columns_are_recognised_and_accounted_for() {
    let dir = tempfile::tempdir().unwrap();
    let path = tmp(&dir, "sigma.xlsx");
    let header = vec![
        S("Site"),
        S("Time (UTC)"),
        S("Lat"),
        S("Lon"),
        S("AOD 500 nm"),
        S("AOD uncertainty (%)"),
        S("Angstrom"),
        S("SSA(550)"),
        S("±"),
        S("g 550nm"),
        S("sigma ozone"),
    ];
    let row = |t: &'static str, ssa_unc: f64| {
        vec![
            S("BRM"),
            D(t),
            N(40.0),
            N(10.0),
            N(0.3),
            N(5.0),
            N(1.3),
            N(0.9),
            N(ssa_unc),
            N(0.7),
            N(6.0),
        ]
    };
    write_xlsx(
        &path,
        &[(
            "data",
            vec![
                header,
                row("2024-06-01 10:00:00", 0.01),
                row("2024-06-01 11:00:00", 0.05),
            ],
        )],
    );
    let ing = read(&path);
    assert_reconciles(&ing);
    assert_eq!(ing.observations.len(), 2);
    let reason = |h: &str| {
        ing.ignored
            .iter()
            .find(|c| c.header == h)
            .unwrap_or_else(|| panic!("{h} not accounted for: {:?}", ing.ignored))
            .reason
            .clone()
    };
    let aod = reason("AOD uncertainty (%)");
    assert!(
        aod.contains("1σ of AOD") && aod.contains("percent"),
        "{aod}"
    );
    let ssa = reason("±");
    assert!(ssa.contains("1σ of SSA at 550 nm"), "{ssa}");
    // A σ of a quantity the sheet does not have: said so.
    let ozone = reason("sigma ozone");
    assert!(ozone.contains("no ozone column"), "{ozone}");
    // The σ columns are not taken for the quantity itself.
    assert!(ing.mapping.iter().all(|m| !m.header.contains('±')));
}
