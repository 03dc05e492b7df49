//! Writes an invented network workbook for the speed benchmarks: eight sites, one clean header,
//! per-row coordinates, AOD at 500 nm with an Ångström exponent, SSA and g at 550 nm and a surface
//! albedo, observations every 15 minutes of daylight-ish hours from 2020-01-01.
//!
//! Run: `cargo run --release --example network_workbook -- <out.xlsx> [rows]` (default 200,000).
//! The values are a deterministic invented sequence, not measurements.

use rust_xlsxwriter::{Format, Workbook};

pub const SITES: [(&str, f64, f64); 8] = [
    ("Aldmoor", 52.1, -1.3),
    ("Brinefell", 60.4, 10.2),
    ("Corran Flats", 38.7, -9.1),
    ("Dunmere", 45.2, 25.6),
    ("Eskvale", 31.9, 35.0),
    ("Farrowby", 15.5, 32.5),
    ("Gallowhill", -23.6, 46.7),
    ("Hollin Reach", -34.9, 138.6),
];

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let out = args
        .next()
        .ok_or("usage: network_workbook <out.xlsx> [rows]")?;
    let rows: u32 = match args.next() {
        Some(s) => s.parse()?,
        None => 200_000,
    };
    let n = write_network(std::path::Path::new(&out), rows)?;
    println!("{out}: {n} rows at {} sites", SITES.len());
    Ok(())
}

/// Writes `rows` invented observations, split evenly over the eight sites, to `path`.
/// Returns the number of rows written.
pub fn write_network(path: &std::path::Path, rows: u32) -> Result<u32, rust_xlsxwriter::XlsxError> {
    let mut wb = Workbook::new();
    let date = Format::new().set_num_format("yyyy-mm-dd hh:mm:ss");
    let ws = wb.add_worksheet_with_constant_memory()?;
    ws.set_name("observations")?;
    let headers = [
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
    for (c, h) in headers.iter().enumerate() {
        ws.write_string(0, c as u16, *h)?;
    }
    // Excel serial of 2020-01-01 00:00.
    let start = 43_831.0;
    let per_site = rows.div_ceil(SITES.len() as u32);
    let mut r = 0u32;
    for (s, (name, lat, lon)) in SITES.iter().enumerate() {
        // Local mid-morning to mid-afternoon, shifted by longitude; 24 observations a day.
        let noon_utc = 0.5 - lon / 360.0;
        for k in 0..per_site {
            if r == rows {
                break;
            }
            r += 1;
            let i = f64::from(k) + 7.0 * s as f64;
            let day = f64::from(k / 24);
            let slot = f64::from(k % 24);
            let t = start + day + noon_utc + (slot - 11.5) * 15.0 / 1440.0;
            ws.write_string(r, 0, *name)?;
            ws.write_number_with_format(r, 1, t, &date)?;
            ws.write_number(r, 2, *lat)?;
            ws.write_number(r, 3, *lon)?;
            ws.write_number(r, 4, 0.05 + 0.3 * ((i * 0.37).sin() + 1.0) / 2.0)?;
            ws.write_number(r, 5, 1.0 + 0.5 * (i * 0.11).cos())?;
            ws.write_number(r, 6, 0.85 + 0.1 * ((i * 0.07).sin() + 1.0) / 2.0)?;
            ws.write_number(r, 7, 0.6 + 0.1 * (i * 0.05).cos())?;
            ws.write_number(r, 8, 0.1 + 0.1 * ((i * 0.013).sin() + 1.0) / 2.0)?;
        }
    }
    wb.save(path)?;
    Ok(r)
}
