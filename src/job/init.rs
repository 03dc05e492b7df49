//! `hazebook init`: a commented job file (mapping pre-filled from a workbook) and a copy of
//! the default template.

use std::path::{Path, PathBuf};

use anyhow::{Context, bail};

use super::output::write_atomic;
use crate::cli::{InitArgs, Status};
use crate::ingest::{self, InputSpec};
use crate::report::template;

/// Write `job.toml` and `report-template.toml` into the folder.
pub fn init(a: &InitArgs) -> anyhow::Result<Status> {
    std::fs::create_dir_all(&a.dir)
        .with_context(|| format!("{}: cannot create the folder", a.dir.display()))?;
    let job_path = a.dir.join("job.toml");
    let tpl_path = a.dir.join("report-template.toml");
    for p in [&job_path, &tpl_path] {
        if p.exists() && !a.force {
            bail!("{}: already exists; use --force to replace it", p.display());
        }
    }
    let columns = match &a.from {
        Some(wb) => detected_columns(wb)?,
        None => String::new(),
    };
    let input_path = a
        .from
        .as_ref()
        .map(|p| relative_to(p, &a.dir))
        .unwrap_or_else(|| "campaign.xlsx".into());
    let text = job_text(&toml_string(&input_path), &columns);
    // The text must parse as a job file: a guard against drift of the template below.
    super::config::parse(&text)
        .map_err(|e| anyhow::anyhow!("internal: generated job file does not parse: {e}"))?;
    write_atomic(&job_path, text.as_bytes())?;
    let full = template::builtin()
        .into_iter()
        .find(|(n, _, _)| *n == "full")
        .map(|(_, _, t)| t)
        .unwrap_or_default();
    write_atomic(&tpl_path, full.as_bytes())?;
    println!("{}", job_path.display());
    println!("{}", tpl_path.display());
    eprintln!(
        "Edit {} (paths, sites, atmosphere), then: hazebook run {}",
        job_path.display(),
        job_path.display()
    );
    Ok(Status::Success)
}

fn relative_to(p: &Path, dir: &Path) -> String {
    let abs = |q: &Path| q.canonicalize().unwrap_or_else(|_| q.to_path_buf());
    let (p, dir) = (abs(p), abs(dir));
    match p.strip_prefix(&dir) {
        Ok(r) => r.display().to_string(),
        Err(_) => p.display().to_string(),
    }
}

fn detected_columns(wb: &Path) -> anyhow::Result<String> {
    let spec = InputSpec {
        paths: vec![PathBuf::from(wb)],
        ..InputSpec::default()
    };
    let ing = ingest::read_inputs(&spec)?;
    let mut s = String::new();
    let mut seen = std::collections::BTreeSet::new();
    for m in &ing.mapping {
        let key = match m.wavelength_nm {
            Some(w) => format!("{}_{}", m.quantity, w),
            None => m.quantity.clone(),
        };
        if seen.insert(key.clone()) {
            s.push_str(&format!(
                "{key} = {}   # column {}{}\n",
                toml_string(&m.header),
                m.letter,
                if m.sheet.is_empty() {
                    String::new()
                } else {
                    format!(", sheet {:?}", m.sheet)
                }
            ));
        }
    }
    Ok(s)
}

/// A TOML basic string of `s`: quotes, backslashes, control and invisible format characters
/// (such as U+202E, U+200D) escaped as `\uXXXX`, so that the job file parses and reads as
/// what it holds (TOML v1.0.0, "String").
fn toml_string(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if invisible(c) => {
                let n = c as u32;
                if n > 0xFFFF {
                    out.push_str(&format!("\\U{n:08X}"));
                } else {
                    out.push_str(&format!("\\u{n:04X}"));
                }
            }
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// Control characters, line and paragraph separators and the format characters of Unicode
/// (general category Cf) that show nothing or reorder text.
fn invisible(c: char) -> bool {
    matches!(c as u32,
        0x00..=0x1F | 0x7F..=0x9F | 0xAD | 0x600..=0x605 | 0x61C | 0x6DD | 0x70F | 0x180E
        | 0x200B..=0x200F | 0x2028..=0x202E | 0x2060..=0x2064 | 0x2066..=0x206F | 0xFEFF
        | 0xFFF9..=0xFFFB | 0x110BD | 0x1D173..=0x1D17A | 0xE0001 | 0xE0020..=0xE007F)
}

fn job_text(input: &str, columns: &str) -> String {
    let columns = if columns.is_empty() {
        "# time = \"time_utc\"        # canonical quantity = header text or column letter\n# aod_500 = \"AOD 500 nm\"\n# ssa_550 = \"F\"\n".to_string()
    } else {
        columns.to_string()
    };
    format!(
        r#"# hazebook job file: everything a scheduled rerun needs.
# Run it with:  hazebook run job.toml --period previous-month
# Paths are relative to this file's folder. Unknown keys are refused.

name = "campaign"            # {{job}} in output names

[input]
paths = [{input}]          # one or more files or glob patterns, read in order
# sheet = "observations"     # data sheet; default: the first with a recognisable header
# site_sheet = "sites"       # site metadata sheet; default: detected
# header_row = 1             # as the spreadsheet shows it; default: detected
# units_row = 2              # default: detected right under the header
fill_values = []             # extra fill values, besides empty, -999, -9999, -99.99, NaN, N/A, -

[input.columns]              # mapping found in the workbook (edit to override)
{columns}
# Sites (override the site sheet's values of the same name):
# [[sites]]
# name = "Example Point"
# latitude_deg = 54.0
# longitude_deg = -3.0
# altitude_m = 10
# albedo = 0.06
# surface = "ocean"          # land or ocean (Taylor et al. 1996 albedo)
# utc_offset_hours = 0       # for times written without an offset

[atmosphere]                 # job defaults, used where row and site are silent
albedo = 0.15                # broadband Lambertian surface albedo
surface = "land"
ozone_du = 300.0
water_cm = 1.5
# pressure_hpa = 1013.25     # default: from altitude (standard atmosphere)
altitude_m = 0.0
layer_top_km = 2.0           # aerosol layer top above the surface
layer_base_km = 0.0          # > 0 for an elevated aerosol layer
angstrom = 1.3               # when the workbook gives AOD at one wavelength only
utc_offset_hours = 0.0

[solver]
closure = "delta-eddington"  # eddington, quadrature, hemispheric-mean, pifm
band_set = "astm-g173"       # or "single": one band at the AOD wavelength (idealised)
diurnal_nodes = 12           # Gauss-Legendre nodes in hour angle, sunrise to sunset
solar_constant_wm2 = 1361.0  # Kopp & Lean (2011)
rayleigh = true
gases = true
# fixed_cos_zenith = 0.5     # idealised: instantaneous values at this cos(zenith)
earth_sun_distance = true
daily_mean = true

[report]
template = "full"            # built-in (hazebook templates) or a file, e.g. "report-template.toml"
output = "{{job}}-{{period}}-report.xlsx"   # tokens: {{job}} {{site}} {{period}} {{date}}
# folder = "reports"
# side_output = "csv"        # or "parquet": results at full precision
"#
    )
}
