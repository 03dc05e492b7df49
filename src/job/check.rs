//! `hazebook check`: read and validate only; say what a run would compute and reject.

use serde_json::json;

use super::plan::{self, Overrides};
use super::summary;
use crate::cli::{CheckArgs, Status};
use crate::ingest;

/// Read and validate; print the mapping, warnings and rejected rows (or one JSON document).
pub fn check(a: &CheckArgs) -> anyhow::Result<Status> {
    let result = plan::build(&a.select, &Overrides::default()).and_then(|p| {
        let ing = ingest::read_inputs(&p.spec)?;
        // As `run` does: a file with a header and no data rows has nothing to compute.
        if ing.counts.read == 0 {
            let inputs: Vec<String> = p
                .spec
                .paths
                .iter()
                .map(|p| p.display().to_string())
                .collect();
            anyhow::bail!(
                "{}: no data rows found under the header; nothing to compute",
                inputs.join(", ")
            );
        }
        Ok((p, ing))
    });
    let (plan, ing) = match result {
        Ok(i) => i,
        Err(e) => {
            if a.json {
                let doc = json!({ "ok": false, "error": format!("{e:#}") });
                println!("{}", serde_json::to_string_pretty(&doc)?);
                return Ok(Status::Failed);
            }
            return Err(e);
        }
    };
    let strict = ingest::strict_problems(&ing, &plan.spec);
    let strict_on = plan.spec.strict;
    let refused = strict_on && !strict.is_empty();
    let status = if refused {
        Status::Failed
    } else if ing.rejected.is_empty() {
        Status::Success
    } else {
        Status::SuccessWithRejected
    };
    if a.json {
        let doc = json!({
            "ok": !refused,
            "files": ing.files,
            "columns": ing.column_accounts(),
            "ignored_columns": ing.ignored,
            "site_columns": ing.site_columns,
            "sites": { "rules": ing.site_rules, "labels": ing.site_labels },
            "strict": { "enabled": strict_on, "problems": strict },
            "mapping": ing.mapping,
            "assumptions": ing.assumptions,
            "counts": ing.counts,
            "warnings": ing.warnings,
            "row_warnings": ing.row_warnings.iter().zip(&ing.origins)
                .flat_map(|(ws, o)| ws.iter().map(move |w| json!({
                    "file": o.file, "sheet": o.sheet, "row": o.row, "cell": w.cell, "message": w.message })))
                .collect::<Vec<_>>(),
            "rejected": ing.rejected,
        });
        println!("{}", serde_json::to_string_pretty(&doc)?);
        return Ok(status);
    }
    for l in summary::understanding(&ing) {
        println!("{l}");
    }
    for w in &ing.warnings {
        println!("warning: {w}");
    }
    let warned: usize = ing.row_warnings.iter().filter(|w| !w.is_empty()).count();
    if warned > 0 {
        println!(
            "{} {} warnings (listed on the report's Results sheet):",
            ingest::rows_text(warned),
            if warned == 1 { "carries" } else { "carry" }
        );
        for (ws, o) in ing
            .row_warnings
            .iter()
            .zip(&ing.origins)
            .filter(|(w, _)| !w.is_empty())
            .take(20)
        {
            for w in ws {
                println!("  {} row {} {}: {}", o.file, o.row, w.cell, w.message);
            }
        }
    }
    if refused {
        println!("{}", summary::strict_refusal(&strict));
        println!("a strict run would fail (exit status 2) and write nothing");
        return Ok(status);
    }
    if ing.rejected.is_empty() {
        println!("ok: a run would compute every row");
    } else {
        println!("rejected rows ({}):", ing.rejected.len());
        for l in summary::rejected_lines(&ing, usize::MAX) {
            println!("{l}");
        }
        println!(
            "a run would compute {} and list {} on the Rejected sheet (exit status 1)",
            ingest::rows_text(ing.counts.computed),
            ing.rejected.len()
        );
    }
    Ok(status)
}
