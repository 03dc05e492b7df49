//! Reports read back with calamine: sheets, headers, numbers, statistics, regressions,
//! Rejected rows, sheet splitting, determinism and atomic writing. Tests that call
//! `outside_readers::keep` also copy their report for an independent reader (`.ci/run` opens
//! them with `tests/reference/open_report.py`).

mod outside_readers;
mod report_support;

use calamine::Reader;
use hazebook::physics::Settings;
use hazebook::report::{self, WriteOptions, frame, template};
use report_support::*;
use statrs::distribution::{ContinuousCDF, StudentsT};

fn write_full(dir: &std::path::Path, n: usize, opts: WriteOptions) -> std::path::PathBuf {
    write_template(dir, n, opts, "full")
}

fn write_template(
    dir: &std::path::Path,
    n: usize,
    opts: WriteOptions,
    name: &str,
) -> std::path::PathBuf {
    let (ing, res) = sample(n);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let path = dir.join("report.xlsx");
    let tpl = template::load(name).unwrap();
    report::write_report_with(&path, &tpl, &input, &opts).unwrap();
    path
}

#[test]
fn sheets_come_in_template_order() {
    let dir = tempfile::tempdir().unwrap();
    let path = write_full(dir.path(), 60, WriteOptions::default());
    outside_readers::keep(&path, "workbook-full-60");
    let names = open(&path).sheet_names();
    assert_eq!(
        names,
        [
            "About",
            "Summary for papers",
            "Results",
            "Site x month",
            "Two-stream error",
            "Site",
            "Site x season",
            "Site x day",
            "Efficiency",
            "Charts",
            "Charts data",
            "Rejected"
        ]
    );
    // Nothing but the report is left in the folder.
    let files: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert_eq!(files.len(), 1);
}

#[test]
#[allow(clippy::needless_range_loop)] // row i of the sheet against element i of several vectors
fn results_headers_units_and_numbers_match_the_given_results() {
    let dir = tempfile::tempdir().unwrap();
    let n = 60;
    let path = write_full(dir.path(), n, WriteOptions::default());
    let (ing, res) = sample(n);
    let r = sheet(&path, "Results");
    // The two-stream error and uncertainty columns appear only when the run estimates them
    // (off here); the default template leaves out the broadband fluxes and the spectral SSA
    // and g text (side output and the `fluxes` template carry them).
    let cols: Vec<_> = frame::columns()
        .iter()
        .filter(|c| c.group != "solver_error" && c.group != "uncertainty")
        .filter(|c| c.group != "fluxes" && c.key != "ssa_input" && c.key != "asymmetry_input")
        .collect();
    assert_eq!(r.width(), cols.len(), "no other Results column");
    for (j, c) in cols.iter().enumerate() {
        assert_eq!(text(&r, 0, j), c.header, "header of column {j}");
        assert_eq!(text(&r, 1, j), c.unit, "unit of column {}", c.key);
    }
    assert_eq!(r.height(), n + 2);
    let c_toa = col_of(&r, "ΔF_TOA (24-h mean)");
    let c_sfc = col_of(&r, "ΔF_SFC (instantaneous)");
    let c_aod = col_of(&r, "AOD(550 nm)");
    let c_site = col_of(&r, "Site");
    let c_row = col_of(&r, "Row");
    let c_eff = col_of(&r, "Efficiency TOA (24-h mean)");
    let c_flags = col_of(&r, "Flags");
    let c_warn = col_of(&r, "Warnings");
    let c_time = col_of(&r, "Time");
    for i in 0..n {
        let row = i + 2;
        assert_eq!(text(&r, row, c_site), ing.sites[i]);
        assert_eq!(num(&r, row, c_row), Some(f64::from(ing.origins[i].row)));
        assert!(close6(num(&r, row, c_toa).unwrap(), res[i].daily.dre_toa));
        let sfc = res[i].instantaneous.dre_sfc;
        match num(&r, row, c_sfc) {
            Some(x) => assert!(close6(x, sfc), "row {i}: {x} vs {sfc}"),
            None => panic!("row {i}: instantaneous ΔF_SFC missing"),
        }
        assert!(
            close6(num(&r, row, c_aod).unwrap_or(0.0), res[i].aod_550) || res[i].aod_550 == 0.0
        );
        // Excel date serial of the time.
        let serial = ing.observations[i].time_utc.timestamp() as f64 / 86400.0 + 25569.0;
        assert!((num(&r, row, c_time).unwrap() - serial).abs() < 1e-9);
        assert!(text(&r, row, c_flags).contains("ssa-extrapolated"));
        if i == 7 {
            assert_eq!(text(&r, row, c_warn), "F10: AOD above 3 is unusual");
        }
    }
    // Zero AOD: efficiency is NaN in the result and an empty cell in the workbook.
    assert!(res[5].daily.efficiency_toa.is_nan());
    assert_eq!(num(&r, 5 + 2, c_eff), None);
    assert_eq!(text(&r, 5 + 2, c_eff), "");
}

fn mean_sd(v: &[f64]) -> (f64, f64) {
    let n = v.len() as f64;
    let m = v.iter().sum::<f64>() / n;
    let s = (v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
    (m, s)
}

#[test]
fn site_statistics_equal_an_independent_computation() {
    let dir = tempfile::tempdir().unwrap();
    let n = 60;
    let path = write_full(dir.path(), n, WriteOptions::default());
    let (ing, res) = sample(n);
    let r = sheet(&path, "Site");
    assert_eq!(text(&r, 0, 0), "Site");
    assert_eq!(text(&r, 0, 1), "Quantity");
    assert_eq!(text(&r, 0, 2), "Unit");
    let c = |h: &str| col_of(&r, h);
    let (cn, cmean, csd, cse, clo, chi, cmed) = (
        c("n"),
        c("Mean"),
        c("SD"),
        c("SE of mean"),
        c("95% CI low"),
        c("95% CI high"),
        c("Median"),
    );
    assert_eq!(text(&r, 1, cn), "days (24-h) or obs.");
    let mut checked = 0;
    for row in 2..r.height() {
        let site = text(&r, row, 0);
        let q = text(&r, row, 1);
        // Statistics over site-days (Cochran 1977 cluster sampling for the instantaneous
        // quantity, days as blocks); the day is the local mean-solar date.
        let day_of = |i: usize| {
            let o = &ing.observations[i];
            let shift = chrono::Duration::seconds((o.longitude_deg * 240.0).round() as i64);
            (o.time_utc + shift).date_naive()
        };
        let by_day = |pick: &dyn Fn(usize) -> Option<f64>| {
            let mut d: std::collections::BTreeMap<chrono::NaiveDate, Vec<f64>> = Default::default();
            for i in (0..n).filter(|&i| ing.sites[i] == site) {
                if let Some(x) = pick(i) {
                    d.entry(day_of(i)).or_default().push(x);
                }
            }
            d.into_values().collect::<Vec<_>>()
        };
        let (values, k, se, dof) = match q.as_str() {
            "ΔF_TOA (24-h mean)" => {
                let days = by_day(&|i| Some(res[i].daily.dre_toa));
                let means: Vec<f64> = days
                    .iter()
                    .map(|v| v.iter().sum::<f64>() / v.len() as f64)
                    .collect();
                let k = means.len() as f64;
                let (_, s) = mean_sd(&means);
                (means, k, s / k.sqrt(), k - 1.0)
            }
            // Instantaneous: only rows with the sun up; per-observation mean and SD, the SE
            // with days as blocks.
            "ΔF_SFC (instantaneous)" => {
                let days = by_day(&|i| {
                    (!res[i].flags.sun_below_horizon).then_some(res[i].instantaneous.dre_sfc)
                });
                let all: Vec<f64> = days.iter().flatten().copied().collect();
                let big_n = all.len() as f64;
                let mean = all.iter().sum::<f64>() / big_n;
                let d = days.len() as f64;
                let ss: f64 = days
                    .iter()
                    .map(|v| {
                        let nd = v.len() as f64;
                        let yd = v.iter().sum::<f64>() / nd;
                        nd * nd * (yd - mean).powi(2)
                    })
                    .sum();
                let se = (d / (d - 1.0) * ss / (big_n * big_n)).sqrt();
                (all, big_n, se, d - 1.0)
            }
            _ => continue,
        };
        let (m, s) = mean_sd(&values);
        let t = StudentsT::new(0.0, 1.0, dof).unwrap().inverse_cdf(0.975);
        assert_eq!(num(&r, row, cn), Some(k), "{site} {q}");
        assert!(close6(num(&r, row, cmean).unwrap(), m), "{site} {q} mean");
        assert!(close6(num(&r, row, csd).unwrap(), s), "{site} {q} sd");
        assert!(close6(num(&r, row, cse).unwrap(), se), "{site} {q} se");
        assert!(close6(num(&r, row, clo).unwrap(), m - t * se));
        assert!(close6(num(&r, row, chi).unwrap(), m + t * se));
        let mut sorted = values.clone();
        sorted.sort_by(f64::total_cmp);
        let h = (sorted.len() - 1) as f64 * 0.5;
        let med = sorted[h.floor() as usize]
            + (h - h.floor()) * (sorted[h.ceil() as usize] - sorted[h.floor() as usize]);
        assert!(close6(num(&r, row, cmed).unwrap(), med));
        checked += 1;
    }
    assert_eq!(checked, 6, "two quantities for three sites");
}

#[test]
fn one_row_groups_leave_spread_empty() {
    let dir = tempfile::tempdir().unwrap();
    // 4 rows: the first site has two rows, the others one.
    let path = write_full(dir.path(), 4, WriteOptions::default());
    let r = sheet(&path, "Site");
    let (csd, cmean, clo) = (
        col_of(&r, "SD"),
        col_of(&r, "Mean"),
        col_of(&r, "95% CI low"),
    );
    let mut singles = 0;
    for row in 2..r.height() {
        if text(&r, row, 0) == "Marsh Point" && text(&r, row, 1) == "ΔF_TOA (24-h mean)" {
            assert!(num(&r, row, cmean).is_some());
            assert_eq!(text(&r, row, csd), "");
            assert_eq!(text(&r, row, clo), "");
            singles += 1;
        }
        for c in 0..r.width() {
            let s = text(&r, row, c).to_lowercase();
            assert!(
                !s.contains("nan") && !s.contains("inf"),
                "row {row} col {c}: {s}"
            );
        }
    }
    assert_eq!(singles, 1);
}

#[test]
fn efficiency_slopes_equal_an_independent_ols() {
    let dir = tempfile::tempdir().unwrap();
    let n = 60;
    let path = write_full(dir.path(), n, WriteOptions::default());
    let (ing, res) = sample(n);
    let r = sheet(&path, "Efficiency");
    let (cs, cse, ci, cr2, co, cn) = (
        col_of(&r, "Slope (efficiency)"),
        col_of(&r, "Slope SE"),
        col_of(&r, "Intercept"),
        col_of(&r, "R²"),
        col_of(&r, "Slope through origin"),
        col_of(&r, "n"),
    );
    let mut checked = 0;
    for row in 2..r.height() {
        // Columns: site, season, year, month ("all" where the fit is over the whole period).
        if text(&r, row, 1) != "all"
            || text(&r, row, 3) != "all"
            || text(&r, row, col_of(&r, "Quantity")) != "ΔF_SFC (24-h mean)"
        {
            continue;
        }
        let site = text(&r, row, 0);
        // 24-hour quantities are fitted over site-days: day means of AOD(550) and ΔF, the day
        // being the local mean-solar date (UTC + longitude/15 h).
        let mut days: std::collections::BTreeMap<chrono::NaiveDate, Vec<(f64, f64)>> =
            Default::default();
        for i in (0..n).filter(|&i| ing.sites[i] == site) {
            let o = &ing.observations[i];
            let shift = chrono::Duration::seconds((o.longitude_deg * 240.0).round() as i64);
            days.entry((o.time_utc + shift).date_naive())
                .or_default()
                .push((res[i].aod_550, res[i].daily.dre_sfc));
        }
        let p: Vec<(f64, f64)> = days
            .values()
            .map(|v| {
                let k = v.len() as f64;
                (
                    v.iter().map(|q| q.0).sum::<f64>() / k,
                    v.iter().map(|q| q.1).sum::<f64>() / k,
                )
            })
            .collect();
        let k = p.len() as f64;
        let mx = p.iter().map(|q| q.0).sum::<f64>() / k;
        let my = p.iter().map(|q| q.1).sum::<f64>() / k;
        let sxx: f64 = p.iter().map(|q| (q.0 - mx).powi(2)).sum();
        let sxy: f64 = p.iter().map(|q| (q.0 - mx) * (q.1 - my)).sum();
        let syy: f64 = p.iter().map(|q| (q.1 - my).powi(2)).sum();
        let b = sxy / sxx;
        let a = my - b * mx;
        let rss: f64 = p.iter().map(|q| (q.1 - a - b * q.0).powi(2)).sum();
        let se = (rss / (k - 2.0) / sxx).sqrt();
        let b0 =
            p.iter().map(|q| q.0 * q.1).sum::<f64>() / p.iter().map(|q| q.0 * q.0).sum::<f64>();
        assert_eq!(num(&r, row, cn), Some(k));
        assert!(close6(num(&r, row, cs).unwrap(), b), "{site}: slope");
        assert!(close6(num(&r, row, cse).unwrap(), se), "{site}: slope SE");
        assert!(close6(num(&r, row, ci).unwrap(), a), "{site}: intercept");
        assert!(
            close6(num(&r, row, cr2).unwrap(), 1.0 - rss / syy),
            "{site}: R²"
        );
        assert!(
            close6(num(&r, row, co).unwrap(), b0),
            "{site}: slope through origin"
        );
        // A realistic, negative surface efficiency.
        assert!(b < -20.0 && b > -200.0, "{site}: {b}");
        checked += 1;
    }
    assert_eq!(checked, 3);
}

#[test]
fn rejected_rows_equal_the_given_rejections() {
    let dir = tempfile::tempdir().unwrap();
    let path = write_full(dir.path(), 20, WriteOptions::default());
    let (ing, _) = sample(20);
    let r = sheet(&path, "Rejected");
    let heads = ["File", "Sheet", "Row", "Cell", "Column", "Value", "Reason"];
    for (c, h) in heads.iter().enumerate() {
        assert_eq!(text(&r, 0, c), *h);
    }
    assert_eq!(r.height(), ing.rejected.len() + 2);
    for (i, x) in ing.rejected.iter().enumerate() {
        let row = i + 2;
        assert_eq!(text(&r, row, 0), x.file);
        assert_eq!(text(&r, row, 1), x.sheet);
        assert_eq!(num(&r, row, 2), Some(f64::from(x.row)));
        assert_eq!(text(&r, row, 3), x.cell);
        assert_eq!(text(&r, row, 4), x.column);
        assert_eq!(text(&r, row, 5), x.value);
        assert_eq!(text(&r, row, 6), x.reason);
    }
}

#[test]
fn about_sheet_reconciles_counts_and_lists_methods_and_cautions() {
    let dir = tempfile::tempdir().unwrap();
    let path = write_full(dir.path(), 30, WriteOptions::default());
    let r = sheet(&path, "About");
    let mut all = String::new();
    for row in 0..r.height() {
        for c in 0..r.width() {
            all.push_str(&text(&r, row, c));
            all.push('\n');
        }
    }
    for needle in [
        "read = computed + rejected + outside period\nholds",
        "Bodhaine",
        "Plane-parallel",
        "zenith angle above 80°",
        "not a substitute for an assessment",
        "24-hour means hold the row's",
        &"ab".repeat(32),
        "paths = [\"campaign-2026.xlsx\"]",
        "6 significant digits",
        "Hyndman & Fan (1996) definition 7",
        "ozone\n300 DU\nbuilt-in default\n30",
        "delta-Eddington",
    ] {
        assert!(all.contains(needle), "About sheet lacks {needle:?}");
    }
    for m in hazebook::physics::references::METHODS {
        assert!(all.contains(m.citation), "About sheet lacks {}", m.key);
    }
}

#[test]
fn long_results_continue_on_further_sheets() {
    let dir = tempfile::tempdir().unwrap();
    let n = 50;
    // 10 rows per sheet: header, units and 8 data rows.
    let path = write_full(
        dir.path(),
        n,
        WriteOptions {
            max_rows_per_sheet: 10,
            ..WriteOptions::default()
        },
    );
    let (ing, _) = sample(n);
    outside_readers::keep(&path, "workbook-split-results");
    let names = open(&path).sheet_names();
    let results: Vec<&String> = names.iter().filter(|s| s.starts_with("Results")).collect();
    assert_eq!(results.len(), 7, "{names:?}");
    assert_eq!(results[1], "Results (2)");
    let mut seen = Vec::new();
    for s in &results {
        let r = sheet(&path, s);
        assert_eq!(text(&r, 0, 0), "Site");
        assert!(r.height() <= 10);
        let c_row = col_of(&r, "Row");
        for row in 2..r.height() {
            seen.push(num(&r, row, c_row).unwrap() as u32);
        }
    }
    let expected: Vec<u32> = ing.origins.iter().map(|o| o.row).collect();
    assert_eq!(seen, expected);
    // Order: Results sheets together, right after About and the summary for papers.
    assert_eq!(names[1], "Summary for papers");
    assert_eq!(names[2], "Results");
    assert_eq!(names[8], "Results (7)");
}

#[test]
fn same_inputs_give_identical_bytes() {
    let a = tempfile::tempdir().unwrap();
    let b = tempfile::tempdir().unwrap();
    let pa = write_full(a.path(), 40, WriteOptions::default());
    let pb = write_full(b.path(), 40, WriteOptions::default());
    let (x, y) = (std::fs::read(pa).unwrap(), std::fs::read(pb).unwrap());
    assert!(x.len() > 10_000);
    assert!(x == y, "two runs differ");
}

#[test]
fn failed_write_leaves_nothing_and_keeps_a_good_report() {
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(10);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let tpl = template::load("full").unwrap();
    // Missing folder: an error naming the path, no file.
    let missing = dir.path().join("no-such-folder").join("r.xlsx");
    let e = report::write_report(&missing, &tpl, &input).unwrap_err();
    assert!(e.to_string().contains("no-such-folder"), "{e}");
    assert!(!missing.exists());
    // Results that do not line up: an error, and the earlier report is untouched.
    let good = dir.path().join("r.xlsx");
    report::write_report(&good, &tpl, &input).unwrap();
    let before = std::fs::read(&good).unwrap();
    let bad = hazebook::report::ReportInput {
        results: &res[..5],
        ..report_support::input(&ing, &res, &settings)
    };
    assert!(report::write_report(&good, &tpl, &bad).is_err());
    assert_eq!(std::fs::read(&good).unwrap(), before);
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[test]
fn every_builtin_template_writes_a_report() {
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(45);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    for (name, _, _) in template::builtin() {
        let tpl = template::load(name).unwrap();
        let path = dir.path().join(format!("{name}.xlsx"));
        report::write_report(&path, &tpl, &input).unwrap();
        outside_readers::keep(&path, &format!("workbook-template-{name}"));
        let names = open(&path).sheet_names();
        let expected: Vec<&str> = tpl.sheets.iter().map(|s| s.name.as_str()).collect();
        let got: Vec<&str> = names
            .iter()
            .map(String::as_str)
            .filter(|s| !s.ends_with(" data"))
            .collect();
        assert_eq!(got, expected, "template {name}");
    }
}

#[test]
fn empty_input_still_gives_a_complete_report() {
    let dir = tempfile::tempdir().unwrap();
    let (mut ing, _) = sample(0);
    ing.counts.read = 5;
    let settings = Settings::default();
    let input = input(&ing, &[], &settings);
    let path = dir.path().join("empty.xlsx");
    report::write_report(&path, &template::load("full").unwrap(), &input).unwrap();
    outside_readers::keep(&path, "workbook-empty");
    let r = sheet(&path, "Results");
    assert_eq!(text(&r, 0, 0), "Site");
    assert_eq!(sheet(&path, "Rejected").height(), 5);
}

#[test]
fn without_daily_means_the_24h_columns_are_left_out() {
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(12);
    let settings = Settings {
        daily_mean: false,
        ..Settings::default()
    };
    let input = input(&ing, &res, &settings);
    let path = dir.path().join("inst.xlsx");
    report::write_report(&path, &template::load("full").unwrap(), &input).unwrap();
    outside_readers::keep(&path, "workbook-instantaneous");
    let r = sheet(&path, "Results");
    let heads: Vec<String> = (0..r.width()).map(|c| text(&r, 0, c)).collect();
    assert!(heads.iter().any(|h| h == "ΔF_TOA (instantaneous)"));
    assert!(!heads.iter().any(|h| h.contains("24-h")));
}

/// One report per built-in template from 90 rows, kept for outside readers (`.ci/run`
/// opens them with tests/reference/open_report.py; see `outside_readers`).
#[test]
fn sample_reports_for_outside_readers() {
    let dir = tempfile::tempdir().unwrap();
    let (ing, res) = sample(90);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    for (name, _, _) in template::builtin() {
        let path = dir.path().join(format!("report-{name}.xlsx"));
        report::write_report(&path, &template::load(name).unwrap(), &input).unwrap();
        assert!(open(&path).sheet_names().iter().any(|s| s == "About"));
        outside_readers::keep(&path, &format!("report-{name}"));
    }
}

#[test]
fn groups_sort_by_number_and_season_order() {
    use chrono::{TimeZone, Utc};
    let (mut ing, res) = sample(36);
    // Spread the rows over twelve months, latest first.
    for (i, o) in ing.observations.iter_mut().enumerate() {
        o.time_utc = Utc
            .with_ymd_and_hms(2025, 12 - (i % 12) as u32, 15, 12, 0, 0)
            .unwrap();
    }
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let rows = report::build_rows(&input).unwrap();
    let g = report::group_rows(&rows, &["month".to_string()]).unwrap();
    let months: Vec<String> = g
        .iter()
        .map(|x| match &x.keys[0] {
            frame::Value::Num(m) => m.to_string(),
            _ => "?".into(),
        })
        .collect();
    assert_eq!(months, (1..=12).map(|m| m.to_string()).collect::<Vec<_>>());
    assert!(g.iter().all(|x| x.rows.len() == 3));
    let g = report::group_rows(&rows, &["season".to_string(), "site".to_string()]).unwrap();
    let seasons: Vec<String> = g
        .iter()
        .map(|x| match &x.keys[0] {
            frame::Value::Text(s) => s.to_string(),
            _ => "?".into(),
        })
        .collect();
    assert_eq!(&seasons[..3], ["DJF", "DJF", "DJF"]);
    assert_eq!(&seasons[9..], ["SON", "SON", "SON"]);
    // Every row is in exactly one group.
    let mut all: Vec<usize> = g.iter().flat_map(|x| x.rows.clone()).collect();
    all.sort_unstable();
    assert_eq!(all, (0..36).collect::<Vec<_>>());
}

#[test]
fn chart_data_hold_monthly_means_and_fitted_lines() {
    let dir = tempfile::tempdir().unwrap();
    let n = 150; // 7-hour steps: June and July 2026
    let path = write_full(dir.path(), n, WriteOptions::default());
    outside_readers::keep(&path, "workbook-charts-150");
    let (ing, res) = sample(n);
    let r = sheet(&path, "Charts data");
    assert_eq!(text(&r, 0, 0), "Month");
    assert_eq!(text(&r, 2, 0), "2026-06");
    assert_eq!(text(&r, 3, 0), "2026-07");
    let c = col_of(&r, "Marsh Point: ΔF_SFC (24-h mean)");
    for (row, month) in [(2usize, 6u32), (3, 7)] {
        let v: Vec<f64> = (0..n)
            .filter(|&i| {
                use chrono::Datelike;
                ing.sites[i] == "Marsh Point" && ing.observations[i].time_utc.month() == month
            })
            .map(|i| res[i].daily.dre_sfc)
            .collect();
        let m = v.iter().sum::<f64>() / v.len() as f64;
        assert!(close6(num(&r, row, c).unwrap(), m));
    }
    // Fitted line end points lie on the OLS line of the Efficiency sheet.
    let e = sheet(&path, "Efficiency");
    let row = (2..e.height())
        .find(|&k| {
            text(&e, k, 0) == "Brackwater"
                && text(&e, k, 1) == "all"
                && text(&e, k, 3) == "all"
                && text(&e, k, col_of(&e, "Quantity")) == "ΔF_TOA (24-h mean)"
        })
        .unwrap();
    let b = num(&e, row, col_of(&e, "Slope (efficiency)")).unwrap();
    let a = num(&e, row, col_of(&e, "Intercept")).unwrap();
    let cx = col_of(&r, "Brackwater: fit AOD(550)");
    let cy = col_of(&r, "Brackwater: fit ΔF_TOA (24-h mean)");
    for k in [2, 3] {
        let x = num(&r, k, cx).unwrap();
        assert!((num(&r, k, cy).unwrap() - (a + b * x)).abs() < 1e-3);
    }
}

#[test]
fn overlong_cell_text_is_clipped_not_fatal() {
    let dir = tempfile::tempdir().unwrap();
    let (mut ing, res) = sample(6);
    ing.rejected[0].value = "x".repeat(40_000);
    let settings = Settings::default();
    let input = input(&ing, &res, &settings);
    let path = dir.path().join("long.xlsx");
    report::write_report(&path, &template::load("full").unwrap(), &input).unwrap();
    outside_readers::keep(&path, "workbook-clipped-text");
    let r = sheet(&path, "Rejected");
    let v = text(&r, 2, 5);
    assert_eq!(v.chars().count(), 32_767);
    assert!(v.ends_with('…'));
}

#[cfg(unix)]
#[test]
fn report_gets_the_permissions_of_an_ordinary_new_file() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    let path = write_full(dir.path(), 5, WriteOptions::default());
    let plain = dir.path().join("plain.txt");
    std::fs::write(&plain, "x").unwrap();
    let mode = |p: &std::path::Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode(&path), mode(&plain));
}

#[test]
fn fluxes_template_has_every_column_and_the_broadband_fluxes() {
    let dir = tempfile::tempdir().unwrap();
    let n = 20;
    let path = write_template(dir.path(), n, WriteOptions::default(), "fluxes");
    let (_, res) = sample(n);
    let r = sheet(&path, "Results");
    let cols: Vec<_> = frame::columns()
        .iter()
        .filter(|c| c.group != "solver_error" && c.group != "uncertainty")
        .collect();
    for (j, c) in cols.iter().enumerate() {
        assert_eq!(text(&r, 0, j), c.header, "header of column {j}");
    }
    let c_up = col_of(&r, "TOA up, with aerosol, 24-h mean");
    let c_net = col_of(&r, "SFC net, no aerosol");
    assert_eq!(res.len(), n);
    for (i, res) in res.iter().enumerate() {
        assert!(close6(
            num(&r, i + 2, c_up).unwrap(),
            res.daily.aerosol.toa_up
        ));
        if let Some(x) = num(&r, i + 2, c_net) {
            assert!(close6(x, res.instantaneous.clean.sfc_net), "row {i}");
        }
    }
}

#[test]
fn about_says_where_the_broadband_fluxes_are() {
    let dir = tempfile::tempdir().unwrap();
    let path = write_full(dir.path(), 5, WriteOptions::default());
    let a = sheet(&path, "About");
    let row = (0..a.height())
        .find(|&i| text(&a, i, 0) == "Broadband fluxes")
        .expect("a Broadband fluxes row");
    assert!(text(&a, row, 1).contains("side output"));
    assert!(text(&a, row, 1).contains("`fluxes` template"));
}
