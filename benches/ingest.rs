//! Reading an invented 200,000-row network workbook (8 sites, one clean header, per-row
//! coordinates, AOD 500 nm with an Ångström column, SSA and g at 550 nm, albedo) into
//! hazebook's observations, against calamine alone opening the same sheet and touching every
//! cell. Target (issue 11): hazebook within 1.5× of calamine. Run: `cargo bench --bench ingest`.

use std::time::{Duration, Instant};

use calamine::{Data, Reader, open_workbook_auto};
use hazebook::ingest::{InputSpec, read_inputs};

const ROWS: u32 = 200_000;
const SITES: [(&str, f64, f64); 8] = [
    ("Alder Point", 12.5, -61.2),
    ("Brisk Hollow", 35.1, 139.8),
    ("Cinder Ridge", -23.4, 18.9),
    ("Dunmere", 51.7, -1.3),
    ("Eskerfield", 64.1, -21.9),
    ("Fallow Cay", -8.6, 115.2),
    ("Granite Pass", 39.9, -105.3),
    ("Hollin Bay", -34.9, 138.6),
];
const HEADERS: [&str; 9] = [
    "site",
    "time_utc",
    "latitude",
    "longitude",
    "AOD 500 nm",
    "Angstrom 440-870",
    "SSA 550 nm",
    "g 550 nm",
    "albedo",
];

fn write_workbook(path: &std::path::Path) {
    let mut wb = rust_xlsxwriter::Workbook::new();
    let date = rust_xlsxwriter::Format::new().set_num_format("yyyy-mm-dd hh:mm:ss");
    let ws = wb.add_worksheet_with_constant_memory().unwrap();
    ws.set_name("observations").unwrap();
    for (c, h) in HEADERS.iter().enumerate() {
        ws.write_string(0, c as u16, *h).unwrap();
    }
    // Invented values: a deterministic sequence, 2020-01-01 onwards; each site measures
    // every 15 minutes, the sites interleaved.
    let start = 43_831.0;
    for r in 1..=ROWS {
        let i = f64::from(r);
        let (name, lat, lon) = SITES[(r % 8) as usize];
        let slot = f64::from((r - 1) / 8);
        ws.write_string(r, 0, name).unwrap();
        ws.write_number_with_format(r, 1, start + slot * 900.0 / 86_400.0, &date)
            .unwrap();
        ws.write_number(r, 2, lat + 0.001 * (i * 0.013).sin())
            .unwrap();
        ws.write_number(r, 3, lon + 0.001 * (i * 0.017).cos())
            .unwrap();
        ws.write_number(r, 4, 0.05 + 0.3 * ((i * 0.37).sin() + 1.0) / 2.0)
            .unwrap();
        ws.write_number(r, 5, 1.0 + 0.5 * (i * 0.11).cos()).unwrap();
        ws.write_number(r, 6, 0.85 + 0.1 * ((i * 0.07).sin() + 1.0) / 2.0)
            .unwrap();
        ws.write_number(r, 7, 0.6 + 0.1 * (i * 0.05).cos()).unwrap();
        ws.write_number(r, 8, 0.1 + 0.1 * ((i * 0.003).sin() + 1.0) / 2.0)
            .unwrap();
    }
    wb.save(path).unwrap();
}

fn main() {
    let dir = tempfile::TempDir::new().unwrap();
    let path = dir.path().join("network.xlsx");
    write_workbook(&path);
    let spec = InputSpec {
        paths: vec![path.clone()],
        ..Default::default()
    };
    let calamine_once = || {
        let mut book = open_workbook_auto(&path).unwrap();
        let range = book.worksheet_range("observations").unwrap();
        assert_eq!(range.height(), ROWS as usize + 1);
        // Touch every cell, so calamine's side does the work of looking at each value.
        let (mut n, mut sum, mut chars) = (0usize, 0.0f64, 0usize);
        for row in range.rows() {
            for c in row {
                n += 1;
                match c {
                    Data::Float(x) => sum += x,
                    Data::Int(x) => sum += *x as f64,
                    Data::DateTime(d) => sum += d.as_f64(),
                    Data::String(s) => chars += s.len(),
                    _ => {}
                }
            }
        }
        assert_eq!(n, (ROWS as usize + 1) * HEADERS.len());
        std::hint::black_box((sum, chars));
    };
    let hazebook_once = || {
        let ing = read_inputs(&spec).unwrap();
        assert_eq!(ing.counts.computed, ROWS as usize);
        assert_eq!(ing.observations.len(), ROWS as usize);
        std::hint::black_box(&ing.observations);
    };
    // Interleaved, best of 7 each: both see the same machine load.
    let (mut calamine, mut hazebook) = (Duration::MAX, Duration::MAX);
    for _ in 0..7 {
        let t = Instant::now();
        calamine_once();
        calamine = calamine.min(t.elapsed());
        let t = Instant::now();
        hazebook_once();
        hazebook = hazebook.min(t.elapsed());
    }
    let ratio = hazebook.as_secs_f64() / calamine.as_secs_f64();
    println!(
        "ingest bench: {ROWS} rows × {} columns, 8 sites (best of 7, interleaved)",
        HEADERS.len()
    );
    println!(
        "  calamine alone (open + worksheet_range + every cell): {:>8.1} ms",
        calamine.as_secs_f64() * 1e3
    );
    println!(
        "  hazebook read_inputs (observations):                  {:>8.1} ms",
        hazebook.as_secs_f64() * 1e3
    );
    println!("  ratio hazebook / calamine: {ratio:.2} (target ≤ 1.5)");
}
