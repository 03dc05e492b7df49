//! A network job split into eight site partitions (`run --site S --partial`, one per site) and
//! joined by `hazebook merge` gives the same sheets as one unpartitioned run: every sheet but
//! About cell for cell, and About apart from the merge's note naming the bundles.
//!
//! The invented workbook is the 8-site network generator of `examples/network_workbook.rs`
//! at 4,000 rows (500 a site) rather than 200,000, so that the test stays a few seconds long in
//! a debug build; the join does not depend on the row count. Measured figures for 8 partitions
//! of 200,000 rows run in parallel are in the README ("Speed").

use std::path::{Path, PathBuf};

mod binary_support;

use binary_support::{run, text};
use calamine::{Data, Reader, open_workbook_auto};

#[allow(dead_code)]
#[path = "../examples/network_workbook.rs"]
mod network;

type Sheets = Vec<(String, Vec<Vec<Data>>)>;

fn sheets(p: &Path) -> Sheets {
    let mut wb = open_workbook_auto(p).expect("workbook reopens");
    wb.sheet_names()
        .into_iter()
        .map(|n| {
            let range = wb.worksheet_range(&n).unwrap();
            (n, range.rows().map(<[Data]>::to_vec).collect())
        })
        .collect()
}

fn is_merge_note(r: &[Data]) -> bool {
    r.iter()
        .any(|c| matches!(c, Data::String(s) if s.starts_with("Merged by `hazebook merge`")))
}

fn paths(o: &std::process::Output) -> Vec<PathBuf> {
    text(&o.stdout).lines().map(PathBuf::from).collect()
}

fn ok(o: &std::process::Output) {
    assert_eq!(
        o.status.code(),
        Some(0),
        "stdout: {}\nstderr: {}",
        text(&o.stdout),
        text(&o.stderr)
    );
}

#[test]
fn eight_site_partitions_merge_to_the_single_run() {
    let dir = tempfile::tempdir().unwrap();
    let cwd = dir.path();
    let input = cwd.join("network.xlsx");
    let n = network::write_network(&input, 4_000).unwrap();
    assert_eq!(n, 4_000);
    let input = input.to_string_lossy().into_owned();

    let o = run(&["run", &input, "--out", "single", "-q"], cwd);
    ok(&o);
    let single = paths(&o)[0].clone();

    let mut bundles = Vec::new();
    for (site, _, _) in network::SITES {
        let o = run(
            &[
                "run",
                &input,
                "--site",
                site,
                "--partial",
                "--out",
                "parts",
                "-q",
            ],
            cwd,
        );
        ok(&o);
        let p = paths(&o);
        assert_eq!(p.len(), 2, "a report and a bundle: {p:?}");
        bundles.push(p[1].to_string_lossy().into_owned());
    }
    assert_eq!(bundles.len(), 8);
    let mut args = vec!["merge"];
    args.extend(bundles.iter().map(String::as_str));
    args.extend(["--out", "merged", "-q"]);
    let o = run(&args, cwd);
    ok(&o);
    let merged = paths(&o)[0].clone();

    let a = sheets(&cwd.join(single));
    let b = sheets(&cwd.join(merged));
    let names = |v: &Sheets| v.iter().map(|(n, _)| n.clone()).collect::<Vec<_>>();
    assert_eq!(names(&a), names(&b), "sheet names");
    for ((name, x), (_, y)) in a.iter().zip(&b) {
        let keep = |rows: &[Vec<Data>]| -> Vec<Vec<Data>> {
            rows.iter().filter(|r| !is_merge_note(r)).cloned().collect()
        };
        let (x, y) = (keep(x), keep(y));
        assert_eq!(x.len(), y.len(), "rows of sheet {name}");
        for (i, (rx, ry)) in x.iter().zip(&y).enumerate() {
            assert_eq!(rx, ry, "sheet {name}, row {}", i + 1);
        }
    }
    // The Results sheet holds every input row once.
    let results = &a.iter().find(|(n, _)| n == "Results").unwrap().1;
    assert_eq!(results.len(), 4_000 + 2);
}
