//! End-to-end benchmark of the `hazebook` binary on invented campaign workbooks.
//!
//! For each size N (default 10,000 and 100,000 rows) it writes an invented campaign workbook
//! of N rows into a temporary directory (the generator of `examples/make_samples.rs`), runs
//!
//! ```text
//! hazebook run <workbook> --out <tmpdir> --quiet --timings
//! ```
//!
//! timing the whole command with `std::time::Instant`, and prints rows per second together with
//! the per-stage times the binary reports on stderr in lines `timing: <stage> <seconds> s`.
//!
//! Run with `cargo bench --bench pipeline`. Cargo builds the `hazebook` binary with the bench
//! profile (release settings) before running a benchmark and passes its path in
//! `CARGO_BIN_EXE_hazebook`; set `HAZEBOOK_BIN` to time another build.
//!
//! Environment:
//! - `HAZEBOOK_BENCH_ROWS`: comma-separated sizes, e.g. `1000,10000` (default `10000,100000`).
//! - `HAZEBOOK_BENCH_REPEATS`: runs per size (default 3 for N ≤ 10,000, else 1); the table
//!   shows the fastest and the median run.
//! - `HAZEBOOK_BENCH_KEEP`: if set, keeps the temporary directory and prints its path.
//!
//! The data are invented (see `sample-inputs/README.md`).

use std::path::{Path, PathBuf};
use std::process::{Command, ExitCode};
use std::time::Instant;

#[allow(dead_code)]
#[path = "../examples/make_samples.rs"]
mod samples;

/// One timed run of the binary.
struct Run {
    wall_s: f64,
    /// `(stage, seconds)` in the order the binary printed them.
    stages: Vec<(String, f64)>,
}

/// Parses `timing: <stage> <seconds> s` lines (the stage may contain spaces).
fn parse_timings(stderr: &str) -> Vec<(String, f64)> {
    let mut out = Vec::new();
    for line in stderr.lines() {
        let Some(rest) = line.trim().strip_prefix("timing:") else {
            continue;
        };
        let rest = rest.trim();
        let rest = rest.strip_suffix('s').map(str::trim_end).unwrap_or(rest);
        let Some((stage, secs)) = rest.rsplit_once(char::is_whitespace) else {
            continue;
        };
        if let Ok(v) = secs.trim().parse::<f64>() {
            out.push((stage.trim().to_string(), v));
        }
    }
    out
}

fn binary() -> Result<PathBuf, String> {
    let path = std::env::var_os("HAZEBOOK_BIN")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_BIN_EXE_hazebook")));
    if path.is_file() {
        Ok(path)
    } else {
        Err(format!(
            "the hazebook binary was not found at {}. Build it with `cargo build --release` \
             (or run this benchmark with `cargo bench --bench pipeline`, which builds it), or \
             point HAZEBOOK_BIN at a built binary.",
            path.display()
        ))
    }
}

fn run_once(bin: &Path, input: &Path, out_dir: &Path) -> Result<Run, String> {
    std::fs::create_dir_all(out_dir)
        .map_err(|e| format!("cannot create {}: {e}", out_dir.display()))?;
    let start = Instant::now();
    let output = Command::new(bin)
        .arg("run")
        .arg(input)
        .arg("--out")
        .arg(out_dir)
        .arg("--quiet")
        .arg("--timings")
        .output()
        .map_err(|e| format!("cannot start {}: {e}", bin.display()))?;
    let wall_s = start.elapsed().as_secs_f64();
    let stderr = String::from_utf8_lossy(&output.stderr);
    if !output.status.success() {
        return Err(format!(
            "`{} run {} --out {} --quiet --timings` failed ({}).\n--- stderr ---\n{}\n--- stdout ---\n{}",
            bin.display(),
            input.display(),
            out_dir.display(),
            output.status,
            stderr.trim_end(),
            String::from_utf8_lossy(&output.stdout).trim_end()
        ));
    }
    let written = std::fs::read_dir(out_dir)
        .map(|d| d.filter_map(Result::ok).count())
        .unwrap_or(0);
    if written == 0 {
        return Err(format!(
            "`{} run {} --out {} --quiet --timings` exited successfully but wrote nothing into \
             {}; a run is expected to leave its report there.",
            bin.display(),
            input.display(),
            out_dir.display(),
            out_dir.display()
        ));
    }
    Ok(Run {
        wall_s,
        stages: parse_timings(&stderr),
    })
}

fn sizes() -> Result<Vec<usize>, String> {
    match std::env::var("HAZEBOOK_BENCH_ROWS") {
        Ok(s) => s
            .split(',')
            .map(|t| {
                t.trim()
                    .replace('_', "")
                    .parse::<usize>()
                    .ok()
                    .filter(|&n| n > 0)
                    .ok_or_else(|| {
                        format!("HAZEBOOK_BENCH_ROWS: `{t}` is not a positive row count")
                    })
            })
            .collect(),
        Err(_) => Ok(vec![10_000, 100_000]),
    }
}

fn repeats(n: usize) -> Result<usize, String> {
    match std::env::var("HAZEBOOK_BENCH_REPEATS") {
        Ok(s) => s
            .trim()
            .parse::<usize>()
            .ok()
            .filter(|&r| r > 0)
            .ok_or_else(|| format!("HAZEBOOK_BENCH_REPEATS: `{s}` is not a positive count")),
        Err(_) => Ok(if n <= 10_000 { 3 } else { 1 }),
    }
}

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    let m = v.len() / 2;
    if v.len() % 2 == 1 {
        v[m]
    } else {
        0.5 * (v[m - 1] + v[m])
    }
}

fn bench() -> Result<(), String> {
    let bin = binary()?;
    let tmp = tempfile::Builder::new()
        .prefix("hazebook-bench-")
        .tempdir()
        .map_err(|e| format!("cannot create a temporary directory: {e}"))?;
    println!("hazebook end-to-end benchmark (invented campaign workbooks)");
    println!("binary: {}", bin.display());
    println!(
        "threads available: {}",
        std::thread::available_parallelism().map_or(1, |n| n.get())
    );
    for n in sizes()? {
        let input = tmp.path().join(format!("campaign-{n}.xlsx"));
        let t0 = Instant::now();
        let written = samples::write_campaign_rows(&input, n, 0x6861_7a65 + n as u64)
            .map_err(|e| format!("cannot write {}: {e}", input.display()))?;
        let size = std::fs::metadata(&input).map(|m| m.len()).unwrap_or(0);
        println!(
            "\nN = {written} rows: workbook {:.1} MB written in {:.2} s",
            size as f64 / 1e6,
            t0.elapsed().as_secs_f64()
        );
        let reps = repeats(n)?;
        let mut runs = Vec::with_capacity(reps);
        for r in 0..reps {
            let run = run_once(&bin, &input, &tmp.path().join(format!("out-{n}-{r}")))?;
            let stages: Vec<String> = run
                .stages
                .iter()
                .map(|(s, v)| format!("{s} {v:.3} s"))
                .collect();
            let stages = if stages.is_empty() {
                "no `timing:` lines on stderr".to_string()
            } else {
                stages.join(", ")
            };
            println!(
                "  run {}: {:.3} s wall, {:.0} rows/s; {stages}",
                r + 1,
                run.wall_s,
                written as f64 / run.wall_s,
            );
            runs.push(run);
        }
        let mut walls: Vec<f64> = runs.iter().map(|r| r.wall_s).collect();
        let best = walls.iter().copied().fold(f64::INFINITY, f64::min);
        let med = median(&mut walls);
        println!(
            "  N = {written}: best {best:.3} s ({:.0} rows/s), median {med:.3} s ({:.0} rows/s) over {reps} run(s)",
            written as f64 / best,
            written as f64 / med
        );
        // Median per stage, in the order of the first run.
        if let Some(first) = runs.first() {
            for (stage, _) in &first.stages {
                let mut v: Vec<f64> = runs
                    .iter()
                    .filter_map(|r| r.stages.iter().find(|(s, _)| s == stage).map(|(_, v)| *v))
                    .collect();
                let m = median(&mut v);
                println!(
                    "    {stage:<12} {m:>9.3} s  ({:>5.1} % of wall)",
                    100.0 * m / med
                );
            }
        }
    }
    if std::env::var_os("HAZEBOOK_BENCH_KEEP").is_some() {
        let kept = tmp.keep();
        println!("\nkept {}", kept.display());
    }
    Ok(())
}

fn main() -> ExitCode {
    // Cargo passes `--bench` (and any filter) to harness = false benchmarks; none are used.
    match bench() {
        Ok(()) => ExitCode::SUCCESS,
        Err(msg) => {
            eprintln!("pipeline benchmark failed: {msg}");
            ExitCode::FAILURE
        }
    }
}
