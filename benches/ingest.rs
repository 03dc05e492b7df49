//! Reading a 100,000-row workbook into the canonical frame, against calamine alone loading the
//! same sheet. Target: hazebook within 1.5× of calamine. Run: `cargo bench --bench ingest`.

use std::time::{Duration, Instant};

use calamine::{Reader, open_workbook_auto};
use hazebook::ingest::{InputSpec, SiteInfo, read_inputs};

const ROWS: u32 = 100_000;

fn write_workbook(path: &std::path::Path) {
    let mut wb = rust_xlsxwriter::Workbook::new();
    let date = rust_xlsxwriter::Format::new().set_num_format("yyyy-mm-dd hh:mm:ss");
    let ws = wb.add_worksheet_with_constant_memory().unwrap();
    ws.set_name("observations").unwrap();
    let headers = [
        "site",
        "time_utc",
        "AOD 500 nm",
        "Angstrom 440-870",
        "SSA 550 nm",
        "g 550 nm",
        "ozone [DU]",
        "pw [cm]",
    ];
    for (c, h) in headers.iter().enumerate() {
        ws.write_string(0, c as u16, *h).unwrap();
    }
    let sites = ["North", "South", "East"];
    // Invented values: a deterministic sequence, 2020-01-01 onwards, 10 minutes apart.
    let start = 43_831.0;
    for r in 1..=ROWS {
        let i = r as f64;
        ws.write_string(r, 0, sites[(r % 3) as usize]).unwrap();
        ws.write_number_with_format(r, 1, start + i * 600.0 / 86_400.0, &date)
            .unwrap();
        ws.write_number(r, 2, 0.05 + 0.3 * ((i * 0.37).sin() + 1.0) / 2.0)
            .unwrap();
        ws.write_number(r, 3, 1.0 + 0.5 * (i * 0.11).cos()).unwrap();
        ws.write_number(r, 4, 0.85 + 0.1 * ((i * 0.07).sin() + 1.0) / 2.0)
            .unwrap();
        ws.write_number(r, 5, 0.6 + 0.1 * (i * 0.05).cos()).unwrap();
        ws.write_number(r, 6, 280.0 + 40.0 * (i * 0.001).sin())
            .unwrap();
        ws.write_number(r, 7, 1.0 + (i * 0.002).cos().abs())
            .unwrap();
    }
    wb.save(path).unwrap();
}

fn best_of(n: usize, mut f: impl FnMut()) -> Duration {
    (0..n)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed()
        })
        .min()
        .unwrap_or_default()
}

fn main() {
    let dir = tempfile::TempDir::new().unwrap();
    let path = dir.path().join("bench.xlsx");
    write_workbook(&path);
    let spec = InputSpec {
        paths: vec![path.clone()],
        sites: ["North", "South", "East"]
            .iter()
            .enumerate()
            .map(|(i, n)| SiteInfo {
                name: n.to_string(),
                latitude_deg: Some(10.0 * i as f64),
                longitude_deg: Some(20.0),
                ..Default::default()
            })
            .collect(),
        ..Default::default()
    };
    let calamine_once = || {
        let mut book = open_workbook_auto(&path).unwrap();
        let range = book.worksheet_range("observations").unwrap();
        assert_eq!(range.height(), ROWS as usize + 1);
    };
    let hazebook_once = || {
        let ing = read_inputs(&spec).unwrap();
        assert_eq!(ing.counts.computed, ROWS as usize);
        assert_eq!(ing.frame.height(), ROWS as usize);
    };
    // Interleaved, best of 7 each: both see the same machine load.
    let (mut calamine, mut hazebook) = (Duration::MAX, Duration::MAX);
    for _ in 0..7 {
        calamine = calamine.min(best_of(1, calamine_once));
        hazebook = hazebook.min(best_of(1, hazebook_once));
    }
    let ratio = hazebook.as_secs_f64() / calamine.as_secs_f64();
    println!("ingest bench: {ROWS} rows × 8 columns (best of 7, interleaved)");
    println!(
        "  calamine alone (open + worksheet_range): {:>8.1} ms",
        calamine.as_secs_f64() * 1e3
    );
    println!(
        "  hazebook read_inputs (canonical frame):  {:>8.1} ms",
        hazebook.as_secs_f64() * 1e3
    );
    println!("  ratio hazebook / calamine: {ratio:.2} (target ≤ 1.5)");
}
