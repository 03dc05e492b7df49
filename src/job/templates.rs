//! `hazebook templates`: list the built-in report templates or print one.

use crate::cli::{Status, TemplatesArgs};
use crate::report::template;

/// List templates (name and one line each) or print one template's TOML.
pub fn templates(a: &TemplatesArgs) -> anyhow::Result<Status> {
    let all = template::builtin();
    match &a.name {
        None => {
            for (name, description, _) in &all {
                println!("{name:<10} {description}");
            }
            println!(
                "\nShow one with `hazebook templates NAME`; copy it, edit it and set [report] template = \"my-template.toml\" in a job file."
            );
        }
        Some(n) => match all.iter().find(|(name, _, _)| name == n) {
            Some((_, _, text)) => print!("{text}"),
            None => {
                let names: Vec<_> = all.iter().map(|(n, _, _)| *n).collect();
                anyhow::bail!(
                    "no built-in template {n:?}; built-in templates: {}",
                    names.join(", ")
                );
            }
        },
    }
    Ok(Status::Success)
}
