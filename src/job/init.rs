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
    let found = match &a.from {
        Some(wb) => Some(survey_workbook(wb)?),
        None => None,
    };
    let input_path = a
        .from
        .as_ref()
        .map(|p| relative_to(p, &a.dir))
        .unwrap_or_else(|| "campaign.xlsx".into());
    let name = a
        .from
        .as_ref()
        .map(|p| super::config::stem(p))
        .unwrap_or_else(|| "campaign".into());
    // Invisible characters left in comments (a workbook or header name quoted there) are
    // shown as their escapes too; inside strings the escape is the same character.
    let text = visible(&job_text(&name, &toml_string(&input_path), found.as_ref()));
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
    if let Some(f) = &found {
        for l in &f.note {
            eprintln!("{l}");
        }
    }
    eprintln!(
        "Edit {} (paths, sites, atmosphere{}), then: hazebook run {}",
        job_path.display(),
        if found.as_ref().is_some_and(|f| f.incomplete) {
            "; fill in the lines marked FILL IN"
        } else {
            ""
        },
        job_path.display()
    );
    Ok(Status::Success)
}

/// `p` relative to the folder `dir` (with `..` steps where needed), as the job file's paths
/// are read; absolute only when the two share no root (another drive).
fn relative_to(p: &Path, dir: &Path) -> String {
    let abs = |q: &Path| {
        q.canonicalize().unwrap_or_else(|_| {
            std::env::current_dir()
                .map(|c| c.join(q))
                .unwrap_or_else(|_| q.to_path_buf())
        })
    };
    let (p, dir) = (abs(p), abs(dir));
    let pc: Vec<_> = p.components().collect();
    let dc: Vec<_> = dir.components().collect();
    let common = pc.iter().zip(&dc).take_while(|(a, b)| a == b).count();
    if common == 0 {
        return p.display().to_string();
    }
    let mut rel = PathBuf::new();
    for _ in common..dc.len() {
        rel.push("..");
    }
    for c in &pc[common..] {
        rel.push(c);
    }
    // Job files are shared between systems: forward slashes read everywhere.
    rel.to_string_lossy().replace('\\', "/")
}

/// What `init --from` found in a workbook, as job-file text.
struct Found {
    /// `[input.columns]` lines.
    columns: String,
    /// `[[sites]]` blocks (found values, and commented placeholders for what is missing).
    sites: String,
    /// Comment lines for the top of the job file and stderr: what was found and what is not.
    note: Vec<String>,
    /// Something required is missing: the job file has lines to fill in.
    incomplete: bool,
}

/// Read the workbook as a run would, without stopping at a missing column.
fn survey_workbook(wb: &Path) -> anyhow::Result<Found> {
    let spec = InputSpec {
        paths: vec![PathBuf::from(wb)],
        ..InputSpec::default()
    };
    let survey = ingest::survey(&spec)?;
    let ing = &survey.ingested;
    let mut columns = detected_columns(ing);
    let mapped = |q: &str| ing.mapping.iter().any(|m| m.quantity == q);
    let mut missing_lines = Vec::new();
    for (q, example, what) in [
        ("time", "time", "the measurement time (or date and time)"),
        ("aod", "aod_500", "AOD at a wavelength"),
        ("ssa", "ssa_550", "the single-scattering albedo"),
        ("asymmetry", "asymmetry_550", "the asymmetry factor"),
    ] {
        if !mapped(q) {
            columns.push_str(&format!(
                "# {example} = \"...\"   # FILL IN: header text or column letter of {what}; none was recognised\n"
            ));
            missing_lines.push(what.to_string());
        }
    }
    let located = !survey
        .missing
        .iter()
        .any(|m| m.contains("latitude") || m.contains("longitude"));
    let sites = sites_text(ing, located, &super::config::stem(wb));
    let mut note = Vec::new();
    let file = wb.display().to_string();
    note.push(format!(
        "Written by `hazebook init --from {file}` from what the workbook gives."
    ));
    if !ing.metadata.is_empty() {
        let fields: Vec<&str> = ing.metadata.iter().map(|v| v.quantity.as_str()).collect();
        note.push(format!(
            "Site values read from its metadata ({}) are in [[sites]] below.",
            fields.join(", ")
        ));
    }
    if !located {
        missing_lines.push("the site's latitude and longitude".into());
    }
    let incomplete = !missing_lines.is_empty();
    if incomplete {
        note.push(format!(
            "Missing: {}. Fill in the lines marked FILL IN, then run `hazebook check` on this file.",
            missing_lines.join("; ")
        ));
        for m in &survey.missing {
            note.push(format!("  ({m})"));
        }
    } else {
        note.push("Everything a run needs was found; check the values, then run it.".into());
    }
    Ok(Found {
        columns,
        sites,
        note,
        incomplete,
    })
}

fn detected_columns(ing: &ingest::Ingested) -> String {
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
    s
}

/// `[[sites]]` from the workbook's metadata: found values with where they came from, and
/// commented placeholders for a location that was not found.
fn sites_text(ing: &ingest::Ingested, located: bool, stem: &str) -> String {
    let fields: [(&str, &str); 8] = [
        ("name", "site name"),
        ("latitude_deg", "latitude [deg], north positive"),
        ("longitude_deg", "longitude [deg], east positive"),
        ("altitude_m", "altitude above sea level [m]"),
        (
            "pressure_hpa",
            "surface pressure [hPa]; default from altitude",
        ),
        ("albedo", "broadband surface albedo"),
        ("surface", "\"land\" or \"ocean\""),
        (
            "utc_offset_hours",
            "offset of the workbook's clock from UTC [h], for times without one",
        ),
    ];
    let mut s = String::new();
    if ing.metadata.is_empty() && located {
        return s;
    }
    s.push_str("[[sites]]                  # read from the workbook's metadata; job-file values win over the sheet's\n");
    for (key, what) in fields {
        let value = ing.metadata.iter().find(|v| v.quantity == key);
        let required = matches!(key, "name" | "latitude_deg" | "longitude_deg");
        match value {
            Some(v) => {
                let text = if matches!(key, "name" | "surface") {
                    toml::Value::String(v.value.clone()).to_string()
                } else {
                    v.value.clone()
                };
                s.push_str(&format!(
                    "{key} = {text}   # from {}\n",
                    v.origin.replace(['\n', '\r'], " ")
                ));
            }
            None if key == "name" => {
                s.push_str(&format!(
                    "name = {}   # FILL IN if the site has another name\n",
                    toml_string(stem)
                ));
            }
            None if required && !located => {
                s.push_str(&format!(
                    "# {key} =    # FILL IN (then remove the leading #): {what}; not found in the workbook\n"
                ));
            }
            None => s.push_str(&format!("# {key} =   # {what}; not found (optional)\n")),
        }
    }
    s
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

/// `s` with every invisible character other than a line break written as its TOML escape
/// (`\\uXXXX`), which in a basic string stands for the same character.
fn visible(s: &str) -> String {
    s.split('\n')
        .map(|line| {
            line.chars()
                .map(|c| {
                    if invisible(c) {
                        let n = c as u32;
                        if n > 0xFFFF {
                            format!("\\U{n:08X}")
                        } else {
                            format!("\\u{n:04X}")
                        }
                    } else {
                        c.to_string()
                    }
                })
                .collect::<String>()
        })
        .collect::<Vec<_>>()
        .join("\n")
}

/// Control characters, line and paragraph separators and the format characters of Unicode
/// (general category Cf) that show nothing or reorder text.
fn invisible(c: char) -> bool {
    matches!(c as u32,
        0x00..=0x1F | 0x7F..=0x9F | 0xAD | 0x600..=0x605 | 0x61C | 0x6DD | 0x70F | 0x180E
        | 0x200B..=0x200F | 0x2028..=0x202E | 0x2060..=0x2064 | 0x2066..=0x206F | 0xFEFF
        | 0xFFF9..=0xFFFB | 0x110BD | 0x1D173..=0x1D17A | 0xE0001 | 0xE0020..=0xE007F)
}

fn job_text(name: &str, input: &str, found: Option<&Found>) -> String {
    let columns = match found {
        Some(f) if !f.columns.is_empty() => f.columns.clone(),
        _ => "# time = \"time_utc\"        # canonical quantity = header text or column letter\n# aod_500 = \"AOD 500 nm\"\n# ssa_550 = \"F\"\n".to_string(),
    };
    let note: String = found
        .map(|f| f.note.iter().map(|l| format!("# {l}\n")).collect())
        .unwrap_or_default();
    let sites = found.map(|f| f.sites.clone()).unwrap_or_default();
    let name = toml_string(name);
    format!(
        r#"# hazebook job file: everything a scheduled rerun needs.
# Run it with:  hazebook run job.toml --period previous-month
# Paths are relative to this file's folder. Unknown keys are refused.
{note}
name = {name}            # {{job}} in output names

[input]
paths = [{input}]          # one or more files or glob patterns, read in order
# sheet = "observations"     # data sheet; default: the first with a recognisable header
# site_sheet = "sites"       # site metadata sheet; default: detected
# header_row = 1             # as the spreadsheet shows it; default: detected
# units_row = 2              # default: detected right under the header
fill_values = []             # extra fill values, besides empty, -999, -9999, -99.99, NaN, N/A, -
fallback = ["ozone", "water"]  # quantities whose empty or fill-value cells may take the site, job
                             # or built-in value (each such row carries a warning); others reject
                             # the row: add "angstrom", "aod", "ssa", "asymmetry", "pressure",
                             # "altitude", "albedo" or "layer_top" to allow them

[input.columns]              # mapping found in the workbook (edit to override)
{columns}
{sites}
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
method = "two-stream"        # or "discrete-ordinates": accurate, about 40× the cost at 6 streams
# streams = 6                # discrete ordinates: even, 2–64 (4 is cheaper, 8 or 16 for reference)
# error_estimate = true      # also solve every row with the other solver: the two-stream's error

[report]
template = "full"            # built-in (hazebook templates) or a file, e.g. "report-template.toml"
output = "{{job}}-{{period}}-report.xlsx"   # tokens: {{job}} {{site}} {{period}} {{date}}
# folder = "reports"
# side_output = "csv"        # or "parquet", or "netcdf" (CF-1.8): results at full precision
# institution = ""           # recorded in the NetCDF side output
"#
    )
}
