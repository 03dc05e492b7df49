//! Reading the invented sample inputs in `sample-inputs/` (see its README and
//! `brinefell-messy.faults.csv`): each reads as they say.

mod ingest_support;

use std::path::PathBuf;

use chrono::{TimeZone, Utc};
use hazebook::ingest::{IngestError, Ingested, InputSpec, read_inputs};
use hazebook::physics::Surface;
use ingest_support::assert_reconciles;

fn sample(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("sample-inputs")
        .join(name)
}

fn read(name: &str) -> Ingested {
    let spec = InputSpec {
        paths: vec![sample(name)],
        ..Default::default()
    };
    let ing = read_inputs(&spec).unwrap_or_else(|e| panic!("{name}: {e}"));
    assert_reconciles(&ing);
    ing
}

#[test]
fn campaign_reads_whole_with_its_site_sheet() {
    // README: 1,837 data rows; Brinemouth 579, Kelvergate 649, Tarnfell 609.
    let ing = read("brinefell-campaign.xlsx");
    assert_eq!(
        (ing.counts.read, ing.counts.computed, ing.counts.rejected),
        (1837, 1837, 0)
    );
    for (site, n) in [("Brinemouth", 579), ("Kelvergate", 649), ("Tarnfell", 609)] {
        assert_eq!(ing.sites.iter().filter(|s| *s == site).count(), n, "{site}");
    }
    let i = ing.sites.iter().position(|s| s == "Brinemouth").unwrap();
    let o = &ing.observations[i];
    assert_eq!(
        (o.latitude_deg, o.longitude_deg, o.altitude_m),
        (54.497, -3.612, 6.0)
    );
    assert_eq!(o.surface, Surface::OceanTaylor1996);
    let t = ing.sites.iter().position(|s| s == "Tarnfell").unwrap();
    assert_eq!(
        ing.observations[t].surface,
        Surface::Lambertian { albedo: 0.18 }
    );
    assert_eq!(ing.observations[t].altitude_m, 905.0);
    assert_eq!(
        ing.files[0].sheets,
        vec!["observations".to_string(), "sites".to_string()]
    );
    // README: 139 rows in 2026-11.
    let spec = InputSpec {
        paths: vec![sample("brinefell-campaign.xlsx")],
        period: Some(hazebook::ingest::Period {
            label: "2026-11".into(),
            start: Utc.with_ymd_and_hms(2026, 11, 1, 0, 0, 0).unwrap(),
            end: Utc.with_ymd_and_hms(2026, 12, 1, 0, 0, 0).unwrap(),
        }),
        ..Default::default()
    };
    let nov = read_inputs(&spec).unwrap();
    assert_reconciles(&nov);
    assert_eq!(
        (nov.counts.computed, nov.counts.outside_period),
        (139, 1837 - 139)
    );
}

#[test]
fn spectral_local_times_and_fitted_exponent() {
    // README: units row in row 2, 488 data rows (rows 3–490); 428 rows at +01:00, 60 at +00:00.
    let ing = read("brinefell-spectral.xlsx");
    assert_eq!((ing.counts.computed, ing.counts.rejected), (488, 0));
    assert_eq!(ing.origins[0].row, 3);
    assert!(
        ing.observations
            .iter()
            .all(|o| o.ssa.len() == 4 && o.asymmetry.len() == 4)
    );
    assert!(
        ing.assumptions
            .iter()
            .any(|a| a.quantity == "angstrom" && a.value.starts_with("fitted") && a.rows == 488)
    );
    assert!(
        !ing.assumptions
            .iter()
            .any(|a| a.quantity == "utc_offset_hours"),
        "all times carry offsets"
    );
    let unit = ing
        .mapping
        .iter()
        .find(|m| m.quantity == "latitude")
        .unwrap();
    assert_eq!(unit.unit, "deg n");
}

#[test]
fn messy_rejects_exactly_the_listed_faults() {
    let ing = read("brinefell-messy.xlsx");
    let faults = std::fs::read_to_string(sample("brinefell-messy.faults.csv")).unwrap();
    let mut expected_rejected: Vec<u32> = Vec::new();
    for line in faults.lines().skip(2) {
        let fields: Vec<&str> = line.split(',').collect();
        let row: u32 = fields[0].parse().unwrap();
        let outcome = line.rsplit(',').next().unwrap_or("");
        let rejected_here = ing.rejected.iter().find(|r| r.row == row);
        let computed_here = ing.origins.iter().any(|o| o.row == row);
        if line.contains("reject:") || line.contains("flag: duplicate") || line.contains("percent")
        {
            expected_rejected.push(row);
            let r = rejected_here.unwrap_or_else(|| panic!("row {row} should be rejected: {line}"));
            if !fields[1].is_empty() {
                assert_eq!(r.cell, fields[1], "row {row}");
            }
        } else if line.contains("accept:") {
            assert!(
                computed_here,
                "row {row} should be computed: {line} ({outcome})"
            );
        } else {
            assert!(
                !computed_here && rejected_here.is_none(),
                "row {row} should be neither: {line}"
            );
        }
    }
    let mut got: Vec<u32> = ing.rejected.iter().map(|r| r.row).collect();
    got.sort();
    expected_rejected.sort();
    assert_eq!(got, expected_rejected);
    assert!(
        ing.warnings.iter().any(|w| w.contains("rows 257, 258")),
        "{:?}",
        ing.warnings
    );
    for q in ["ozone_du", "water_cm"] {
        assert!(
            ing.assumptions
                .iter()
                .any(|a| a.quantity == q && a.rows == 1),
            "{q}"
        );
    }
    // The fill-value Ångström exponent rejects its row (no `[input] fallback` allows it),
    // so no row takes the default.
    assert!(
        !ing.assumptions.iter().any(|a| a.quantity == "angstrom"),
        "{:?}",
        ing.assumptions
    );
    // The row with a date but no readable time is placed on its date, and says so.
    let i = ing.origins.iter().position(|o| o.row == 71).unwrap();
    assert!(
        hazebook::ingest::lacks_time_of_day(&ing.row_warnings[i]),
        "{:?}",
        ing.row_warnings[i]
    );
    let dup = ing.rejected.iter().find(|r| r.row == 58).unwrap();
    assert!(dup.reason.contains("duplicate of row 57"));
}

#[test]
fn csv_sample() {
    let ing = read("brinefell-sample.csv");
    // G9 holds "N/A" for the Ångström exponent of a provided column: rejected, not defaulted.
    assert_eq!((ing.counts.computed, ing.counts.rejected), (35, 1));
    assert_eq!(ing.rejected[0].cell, "G9");
    assert_eq!(ing.origins[0].row, 2);
}

#[test]
fn bad_samples_stop_with_clear_errors() {
    for (name, needle) in [
        ("bad/empty-sheet.xlsx", "is empty"),
        (
            "bad/missing-ssa.xlsx",
            "no column for single-scattering albedo",
        ),
        ("bad/not-a-workbook.xlsx", "must be a zip package"),
        ("bad/truncated.xlsx", "truncated"),
    ] {
        let spec = InputSpec {
            paths: vec![sample(name)],
            ..Default::default()
        };
        let err: IngestError = read_inputs(&spec).unwrap_err();
        let msg = err.to_string();
        assert!(
            msg.contains(needle) && msg.contains(name.trim_start_matches("bad/")),
            "{name}: {msg}"
        );
    }
}
