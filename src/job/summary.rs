//! What was understood from the inputs, as lines for people (stderr, log) and `check`.

use crate::ingest::{Ingested, ValueSource};

/// The mapping, the assumptions and the counts, one item a line.
pub fn understanding(ing: &Ingested) -> Vec<String> {
    let mut lines = Vec::new();
    for f in &ing.files {
        let sheets = if f.sheets.is_empty() {
            String::new()
        } else {
            format!(", sheets: {}", f.sheets.join(", "))
        };
        lines.push(format!("input {}{sheets}", f.path));
    }
    let mut last = (String::new(), String::new());
    for m in &ing.mapping {
        if (m.file.clone(), m.sheet.clone()) != last {
            let where_ = if m.sheet.is_empty() {
                m.file.clone()
            } else {
                format!("{}, sheet \"{}\"", m.file, m.sheet)
            };
            lines.push(format!("columns of {where_}:"));
            last = (m.file.clone(), m.sheet.clone());
        }
        let wl = m
            .wavelength_nm
            .map(|w| format!(" at {w} nm"))
            .unwrap_or_default();
        let unit = if m.unit.is_empty() {
            String::new()
        } else {
            format!(" [{}]", m.unit)
        };
        lines.push(format!(
            "  {:>3}  {:<28} → {}{wl}{unit} ({})",
            m.letter,
            format!("{:?}", m.header),
            m.quantity,
            m.how
        ));
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
