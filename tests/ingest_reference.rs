//! The values hazebook reads from a sample workbook equal those an independent reader
//! (openpyxl 3.1.5, tests/reference/independent_read.py → tests/fixtures/independent_read.csv)
//! finds in the same cells.

use std::path::PathBuf;

use hazebook::ingest::{InputSpec, read_inputs};

#[test]
fn campaign_cells_match_openpyxl() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let fixture =
        std::fs::read_to_string(root.join("tests/fixtures/independent_read.csv")).unwrap();
    let spec = InputSpec {
        paths: vec![root.join("sample-inputs/brinefell-campaign.xlsx")],
        ..Default::default()
    };
    let ing = read_inputs(&spec).unwrap();
    let lines: Vec<&str> = fixture.lines().skip(1).collect();
    assert_eq!(lines.len(), ing.observations.len());
    let frame = &ing.frame;
    let col = |name: &str| frame.column(name).unwrap().f64().unwrap().clone();
    let (aod, ssa, g) = (col("aod_500nm"), col("ssa_550nm"), col("asymmetry_550nm"));
    for (i, line) in lines.iter().enumerate() {
        let f: Vec<&str> = line.split(',').collect();
        let o = &ing.observations[i];
        assert_eq!(ing.origins[i].row, f[0].parse::<u32>().unwrap(), "line {i}");
        assert_eq!(ing.sites[i], f[1], "row {}", f[0]);
        // The sheet's times are UTC (header time_utc): the same clock reading.
        assert_eq!(
            o.time_utc.format("%Y-%m-%dT%H:%M:%S").to_string(),
            f[2],
            "row {}",
            f[0]
        );
        let num = |k: usize| f[k].parse::<f64>().unwrap();
        // %.10g keeps 10 significant digits: compare to a relative 1e-9.
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs().max(1e-12);
        assert!(close(aod.get(i).unwrap(), num(3)), "row {} aod", f[0]);
        assert!(close(o.angstrom, num(4)), "row {} angstrom", f[0]);
        assert!(close(ssa.get(i).unwrap(), num(5)), "row {} ssa", f[0]);
        assert!(close(g.get(i).unwrap(), num(6)), "row {} g", f[0]);
        assert!(close(o.ozone_du, num(7)), "row {} ozone", f[0]);
        assert!(close(o.water_cm, num(8)), "row {} water", f[0]);
    }
}
