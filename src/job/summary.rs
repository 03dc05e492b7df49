//! What was understood from the inputs, as lines for people: stderr, the log and `check`
//! print these (the one text summary of a reading).

use crate::ingest::{Ingested, ValueSource};

/// Files, every header column (read with how, or ignored with why), how sites were found,
/// the assumptions and the counts, one item a line.
pub fn understanding(ing: &Ingested) -> Vec<String> {
    let mut lines = Vec::new();
    for f in &ing.files {
        let sheets = if f.sheets.is_empty() {
            String::new()
        } else {
            format!(", sheets: {}", f.sheets.join(", "))
        };
        lines.push(format!(
            "input {} (sha256 {}){sheets}",
            f.path,
            &f.sha256[..f.sha256.len().min(12)]
        ));
    }
    let mut last = (String::new(), String::new());
    for a in ing.column_accounts() {
        if (a.file.clone(), a.sheet.clone()) != last {
            let where_ = if a.sheet.is_empty() {
                a.file.clone()
            } else {
                format!("{}, sheet \"{}\"", a.file, a.sheet)
            };
            let role = if a.role == "site table" {
                " (site table)"
            } else {
                ""
            };
            lines.push(format!("columns of {where_}{role}:"));
            last = (a.file.clone(), a.sheet.clone());
        }
        let header = format!("{:?}", a.header);
        if a.status == "read" {
            lines.push(format!(
                "  {:>3}  {header:<28} → {} ({})",
                a.letter, a.quantity, a.detail
            ));
        } else {
            lines.push(format!(
                "  {:>3}  {header:<28} ignored: {}",
                a.letter, a.detail
            ));
        }
    }
    let ignored = ing.ignored.len();
    if ignored > 0 {
        let undeclared = ing.ignored.iter().filter(|c| !c.declared).count();
        lines.push(format!(
            "{ignored} column(s) not read ({undeclared} not declared in [input] ignore_columns)"
        ));
    }
    if !ing.site_rules.is_empty() {
        lines.push("sites:".into());
        for r in &ing.site_rules {
            lines.push(format!("  {r}"));
        }
        for (key, label) in &ing.site_labels {
            lines.push(format!("  {key} is shown as \"{label}\""));
        }
    }
    if !ing.metadata.is_empty() {
        lines.push("site values read from metadata:".into());
        for v in &ing.metadata {
            lines.push(format!(
                "  {} {} = {}  ← {}",
                v.site, v.quantity, v.value, v.origin
            ));
        }
    }
    // Values the user gave outside the rows (site table, job file, fitted to the workbook)
    // are not assumptions; built-in defaults are.
    for (heading, given) in [
        (
            "taken from the site table, job file or workbook (not in the rows):",
            true,
        ),
        ("assumed (built-in defaults):", false),
    ] {
        let list: Vec<_> = ing
            .assumptions
            .iter()
            .filter(|a| (a.source != ValueSource::BuiltIn) == given)
            .collect();
        if list.is_empty() {
            continue;
        }
        lines.push(heading.into());
        for a in list {
            let src = match a.source {
                ValueSource::Workbook => "workbook",
                ValueSource::SiteTable => "site table",
                ValueSource::JobFile => "job file",
                ValueSource::BuiltIn => "built-in default",
            };
            lines.push(format!(
                "  {} = {} ({src}, {})",
                a.quantity,
                a.value,
                crate::ingest::rows_text(a.rows)
            ));
        }
    }
    let c = ing.counts;
    let mut count = format!(
        "rows: {} read = {} to compute + {} rejected",
        c.read, c.computed, c.rejected
    );
    if c.outside_period > 0 {
        count.push_str(&format!(" + {} outside the period", c.outside_period));
    }
    lines.push(count);
    lines
}

/// Rejected rows, one a line, with their cells.
pub fn rejected_lines(ing: &Ingested, limit: usize) -> Vec<String> {
    let mut lines: Vec<String> = ing
        .rejected
        .iter()
        .take(limit)
        .map(|r| {
            let sheet = if r.sheet.is_empty() {
                String::new()
            } else {
                format!(", sheet \"{}\"", r.sheet)
            };
            let cell = if r.cell.is_empty() {
                format!("row {}", r.row)
            } else {
                format!("cell {}", r.cell)
            };
            let value = if r.value.is_empty() || r.reason.contains(r.value.as_str()) {
                String::new()
            } else {
                format!(" (found {:?})", r.value)
            };
            format!("  {}{sheet}, {cell}: {}{value}", r.file, r.reason)
        })
        .collect();
    if ing.rejected.len() > limit {
        lines.push(format!(
            "  … and {} more (all are on the report's Rejected sheet)",
            ing.rejected.len() - limit
        ));
    }
    lines
}

/// The site key that `asked` names: the key itself, or a site's full name or label
/// (`Harlsby Flats`, `Harlsby Flats (HRF)`), case-insensitively.
pub fn site_key_for<'a>(ing: &'a Ingested, asked: &str) -> Option<&'a str> {
    let a = asked.trim();
    if let Some(k) = ing.sites.iter().find(|s| s.as_str() == a) {
        return Some(k.as_str());
    }
    ing.site_labels.iter().find_map(|(key, label)| {
        let full = label
            .strip_suffix(&format!(" ({key})"))
            .unwrap_or(label.as_str());
        (label.eq_ignore_ascii_case(a)
            || full.eq_ignore_ascii_case(a)
            || key.eq_ignore_ascii_case(a))
        .then_some(key.as_str())
    })
}

/// The error of a strict run that meets ignored columns or built-in defaults.
pub fn strict_refusal(problems: &[String]) -> String {
    let mut s = format!(
        "strict mode: {} problem(s); nothing written:",
        problems.len()
    );
    for p in problems {
        s.push_str("\n  ");
        s.push_str(p);
    }
    s
}
