//! Report writing speed: the complete report (`full` template) for 100,000 results against
//! rust_xlsxwriter writing the same Results cells with no formatting (full precision, a
//! standard worksheet). One run each; prints times, file sizes and the ratio.
//!
//! Run: `cargo bench --bench report` (optionally `-- 20000` for another row count).

#[path = "../tests/report_support/mod.rs"]
mod report_support;

use std::time::Instant;

use hazebook::physics::Settings;
use hazebook::report::frame::{self, Value};
use hazebook::report::{self, template};

fn plain_cells(
    path: &std::path::Path,
    input: &report::ReportInput,
    constant_memory: bool,
    rounded: bool,
) {
    let rows = report::build_rows(input).unwrap();
    let cols = frame::columns();
    let mut wb = rust_xlsxwriter::Workbook::new();
    let ws = if constant_memory {
        wb.add_worksheet_with_constant_memory().unwrap()
    } else {
        wb.add_worksheet()
    };
    for (j, c) in cols.iter().enumerate() {
        ws.write_string(0, j as u16, &c.header).unwrap();
    }
    for (j, c) in cols.iter().enumerate() {
        ws.write_string(1, j as u16, c.unit).unwrap();
    }
    for (i, row) in rows.iter().enumerate() {
        let r = (i + 2) as u32;
        for (j, c) in cols.iter().enumerate() {
            match c.value(row) {
                Value::Num(x) if x.is_finite() => {
                    let x = if rounded {
                        report::xlsx::round_sig(x)
                    } else {
                        x
                    };
                    ws.write_number(r, j as u16, x).unwrap();
                }
                Value::Time(s) => {
                    ws.write_number(r, j as u16, s as f64 / 86_400_000.0 + 25569.0)
                        .unwrap();
                }
                Value::Text(s) if !s.is_empty() => {
                    ws.write_string(r, j as u16, s.as_ref()).unwrap();
                }
                _ => {}
            }
        }
    }
    wb.save(path).unwrap();
}

fn size_mb(p: &std::path::Path) -> f64 {
    std::fs::metadata(p).unwrap().len() as f64 / 1e6
}

fn main() {
    let n: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(100_000);
    let (ing, res) = report_support::sample(n);
    let settings = Settings::default();
    let input = report_support::input(&ing, &res, &settings);
    let dir = tempfile::tempdir().unwrap();
    let cells = n * frame::columns().len();
    println!(
        "report bench: {n} results, {} columns, {cells} Results cells",
        frame::columns().len()
    );

    let p0 = dir.path().join("plain.xlsx");
    let t = Instant::now();
    plain_cells(&p0, &input, false, false);
    let plain = t.elapsed().as_secs_f64();
    println!(
        "  rust_xlsxwriter, same cells, no formatting: {plain:7.2} s  {:6.1} MB",
        size_mb(&p0)
    );

    let p1 = dir.path().join("plain-cm.xlsx");
    let t = Instant::now();
    plain_cells(&p1, &input, true, false);
    let plain_cm = t.elapsed().as_secs_f64();
    println!(
        "  same, constant-memory worksheet:            {plain_cm:7.2} s  {:6.1} MB",
        size_mb(&p1)
    );

    let p2 = dir.path().join("plain-cm-6.xlsx");
    let t = Instant::now();
    plain_cells(&p2, &input, true, true);
    let plain_cm6 = t.elapsed().as_secs_f64();
    println!(
        "  same, constant memory, 6 significant digits: {plain_cm6:6.2} s  {:6.1} MB",
        size_mb(&p2)
    );

    let results_only = template::parse(
        "name = \"results-only\"\n[[sheet]]\nname = \"Results\"\nkind = \"results\"\n",
        "results-only",
    )
    .unwrap();
    for name in ["results-only", "full", "brief"] {
        let tpl = if name == "results-only" {
            results_only.clone()
        } else {
            template::load(name).unwrap()
        };
        let p = dir.path().join(format!("{name}.xlsx"));
        let t = Instant::now();
        report::write_report(&p, &tpl, &input).unwrap();
        let s = t.elapsed().as_secs_f64();
        println!(
            "  hazebook report, template {name:<12}:      {s:7.2} s  {:6.1} MB  ratio to plain {:.2}",
            size_mb(&p),
            s / plain
        );
    }
    for level in [1u8, 3] {
        let tpl = template::load("full").unwrap();
        let p = dir.path().join(format!("full-{level}.xlsx"));
        let opts = report::WriteOptions {
            compression_level: level,
            ..report::WriteOptions::default()
        };
        let t = Instant::now();
        report::write_report_with(&p, &tpl, &input, &opts).unwrap();
        let s = t.elapsed().as_secs_f64();
        println!(
            "  hazebook report, full, zip level {level}:        {s:7.2} s  {:6.1} MB  ratio to plain {:.2}",
            size_mb(&p),
            s / plain
        );
    }
    let p = dir.path().join("results.parquet");
    let t = Instant::now();
    report::write_side_output(&p, report::SideFormat::Parquet, &input).unwrap();
    println!(
        "  Parquet side output (full precision):       {:7.2} s  {:6.1} MB",
        t.elapsed().as_secs_f64(),
        size_mb(&p)
    );
}
