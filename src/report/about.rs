//! The About sheet: the job in one paragraph, row-count reconciliation, settings, methods with
//! references, assumptions, column mapping, statistics definitions, cautions, warnings and
//! provenance.

use rust_xlsxwriter::{Workbook, XlsxError};

use super::ReportInput;
use super::template::{SheetSpec, Template};
use super::xlsx::{SIGNIFICANT_DIGITS, Styles, clip};
use crate::ingest::{MappedColumn, ValueSource};
use crate::physics::references::METHODS;
use crate::physics::{BandSet, Closure, Method, Settings};

/// The solver of the main Results columns as written in the report.
pub fn solver_name(settings: &Settings) -> String {
    match settings.method {
        Method::TwoStream => format!("the {} two-stream closure", closure_name(settings.closure)),
        Method::DiscreteOrdinates => format!(
            "the {}-stream discrete-ordinate solver with delta-M (Stamnes et al. 1988; Wiscombe 1977)",
            settings.streams
        ),
    }
}

/// Name of a closure as written in the report.
pub fn closure_name(c: Closure) -> &'static str {
    match c {
        Closure::DeltaEddington => "delta-Eddington (Joseph, Wiscombe & Weinman 1976)",
        Closure::Eddington => "Eddington (Meador & Weaver 1980)",
        Closure::Quadrature => "quadrature (Meador & Weaver 1980)",
        Closure::HemisphericMean => "hemispheric mean (Meador & Weaver 1980)",
        Closure::Pifm => "PIFM (Zdunkowski et al. 1980)",
    }
}

/// Name of a band set as written in the report.
pub fn band_set_name(b: BandSet) -> &'static str {
    match b {
        BandSet::AstmG173 => "ASTM G173-03 shortwave bands, 0.28–4.0 µm",
        BandSet::Single => "one band at the AOD reference wavelength (idealised)",
    }
}

fn source_name(s: ValueSource) -> &'static str {
    match s {
        ValueSource::Workbook => "workbook",
        ValueSource::SiteTable => "site table",
        ValueSource::JobFile => "job file",
        ValueSource::BuiltIn => "built-in default",
    }
}

fn on_off(b: bool) -> &'static str {
    if b { "on" } else { "off" }
}

/// The cautions stated on every report (README, "Cautions").
pub const CAUTIONS: &[&str] = &[
    "Clear sky only: clouds are not represented; rows under cloud give the effect the aerosol would have had in a cloud-free sky.",
    "Plane-parallel, horizontally homogeneous atmosphere; two-stream radiative transfer with broadband shortwave bands.",
    "The surface is a broadband Lambertian reflector (or the Taylor et al. 1996 ocean albedo where chosen).",
    "24-hour means hold the row's aerosol, gas and surface properties fixed over the whole day (usual practice).",
    "Errors are larger at low sun: rows with solar zenith angle above 80° are flagged low-sun.",
    "These results support research; they are not a substitute for an assessment done under a recognised protocol.",
];

/// How to read some results (shown with the cautions).
pub const INTERPRETATION: &[&str] = &[
    "ΔF_ATM can be slightly negative for a nearly conservative aerosol (SSA close to 1): the aerosol reflects sunlight that water vapour and other gases below it would have absorbed, so the atmosphere absorbs a little less with the aerosol than without. It means the aerosol itself absorbs almost nothing, not that it cools the air by emission.",
    "Flags: ssa-one-wavelength / g-one-wavelength mark rows whose SSA or g was given at one wavelength and held over the whole spectrum (counted among the assumptions); ssa-extrapolated / g-extrapolated mark rows whose values given at several wavelengths were held beyond them over bands carrying at least 10% of the energy the aerosol intercepts (incident irradiance × AOD).",
];

/// Definitions behind the summary and efficiency sheets.
pub fn statistics_notes() -> Vec<String> {
    vec![
        "n counts the statistical units of the quantity in the group (site-days for 24-hour quantities, observations otherwise); empty cells mean the statistic cannot be computed (for example SD of one value).".into(),
        "SD is the sample standard deviation (n − 1); SE = SD/√n for 24-hour quantities (over days).".into(),
        "95% CI of the mean: mean ± t(0.975, n − 1)·SE with the Student t distribution (statrs).".into(),
        "Percentiles (P5, P25, median, P75, P95) by linear interpolation between order statistics, Hyndman & Fan (1996) definition 7 (h = (n − 1)p).".into(),
        "Instantaneous quantities are summarised and regressed over rows with the sun above the horizon only.".into(),
        "Efficiency: ordinary least-squares slope of ΔF against AOD(550 nm) with its standard error √(s²/Sxx), s² = RSS/(n − 2); R² = 1 − RSS/Syy; and the least-squares slope through the origin Σxy/Σx².".into(),
        "Efficiency fits of 24-hour quantities are over site-days (day means of AOD(550) and ΔF), per site and season or month, where insolation is comparable; a fit over rows of several seasons is marked as pooled and no pooled line is drawn on the charts. The intercept is ΔF at AOD 0: physically zero, so a non-zero intercept says ΔF is not proportional to AOD within the group (SSA, g or insolation changing with AOD); the slope through the origin is the efficiency of a strictly proportional response.".into(),
        "Normalised efficiency = ΔF / (AOD(550) × incident TOA flux), 24-hour means: the fraction of the incident flux per unit AOD, comparable between seasons and latitudes; the normalised slope is the fitted slope divided by the group's mean incident TOA flux.".into(),
        "Groups by year, month, season and date use UTC; seasons are DJF, MAM, JJA, SON.".into(),
    ]
}

/// Quantity of a read column as the About sheet shows it: `aod (500 nm)`,
/// `angstrom (440–870 nm pair)`.
fn quantity_label(m: &MappedColumn) -> String {
    match (m.wavelength_nm, m.wavelength_pair_nm) {
        (_, Some([a, b])) => format!("{} ({a}–{b} nm pair)", m.quantity),
        (Some(w), None) => format!("{} ({w} nm)", m.quantity),
        (None, None) => m.quantity.clone(),
    }
}

fn write_mapped(
    ws: &mut rust_xlsxwriter::Worksheet,
    r: u32,
    m: &MappedColumn,
) -> Result<(), XlsxError> {
    let q = quantity_label(m);
    for (c, s) in [&q, &m.header, &m.file, &m.sheet, &m.letter, &m.unit, &m.how]
        .into_iter()
        .enumerate()
    {
        if !s.is_empty() {
            ws.write_string(r, c as u16, clip(s).as_ref())?;
        }
    }
    Ok(())
}

/// What the Ångström exponent's wavelength pair means for the AOD of the bands.
fn angstrom_pair_note(m: &MappedColumn, settings: &Settings) -> String {
    let [a, b] = m.wavelength_pair_nm.unwrap_or([f64::NAN, f64::NAN]);
    let head = format!(
        "column {} \"{}\" ({}): Ångström exponent measured over {a}–{b} nm.",
        m.letter, m.header, m.file
    );
    match settings.band_set {
        BandSet::AstmG173 => format!(
            "{head} The bands span 280–4000 nm, so for every row the band AOD below {a} nm and above {b} nm is extrapolated in the Ångström law; rows whose AOD wavelength lies outside the pair carry a warning on the Results sheet."
        ),
        BandSet::Single => format!(
            "{head} One band at the AOD wavelength: rows whose AOD wavelength lies outside the pair carry a warning on the Results sheet (extrapolated to 550 nm in the Ångström law)."
        ),
    }
}

struct Cursor {
    r: u32,
}

/// Write the About sheet.
pub fn write_about(
    wb: &mut Workbook,
    t: &Template,
    spec: &SheetSpec,
    styles: &Styles,
    input: &ReportInput,
    sheet_names: &[String],
) -> Result<(), XlsxError> {
    let ws = wb.add_worksheet();
    ws.set_name(&spec.name)?;
    let widths: [f64; 7] = [30.0, 70.0, 28.0, 28.0, 14.0, 16.0, 14.0];
    for (c, w) in widths.iter().enumerate() {
        let w = spec.column_width.unwrap_or(*w);
        ws.set_column_width(c as u16, w)?;
    }
    let ing = input.ingested;
    let about = &input.about;
    let settings: &Settings = input.settings;
    let mut cur = Cursor { r: 0 };
    let section = |ws: &mut rust_xlsxwriter::Worksheet,
                   cur: &mut Cursor,
                   title: &str|
     -> Result<(), XlsxError> {
        cur.r += 1;
        ws.write_string_with_format(cur.r, 0, title, &styles.section)?;
        cur.r += 1;
        Ok(())
    };
    let pair = |ws: &mut rust_xlsxwriter::Worksheet,
                cur: &mut Cursor,
                k: &str,
                v: &str|
     -> Result<(), XlsxError> {
        ws.write_string_with_format(cur.r, 0, k, &styles.label)?;
        if !v.is_empty() {
            ws.write_string_with_format(cur.r, 1, clip(v).as_ref(), &styles.wrap)?;
        }
        cur.r += 1;
        Ok(())
    };
    let table_head = |ws: &mut rust_xlsxwriter::Worksheet,
                      cur: &mut Cursor,
                      heads: &[&str]|
     -> Result<(), XlsxError> {
        for (c, h) in heads.iter().enumerate() {
            ws.write_string_with_format(cur.r, c as u16, *h, &styles.header)?;
        }
        cur.r += 1;
        Ok(())
    };

    ws.write_string_with_format(
        0,
        0,
        "Aerosol direct radiative effect report",
        &styles.title,
    )?;
    cur.r = 1;

    // The job in one paragraph.
    section(ws, &mut cur, "The job")?;
    let mut sites: Vec<&str> = ing.sites.iter().map(|s| ing.site_label(s)).collect();
    sites.sort_unstable();
    sites.dedup();
    let times = input.ingested.observations.iter().map(|o| o.time_utc);
    let first = times.clone().min();
    let last = times.max();
    let span = match (first, last) {
        (Some(a), Some(b)) => format!(
            " from {} to {} UTC",
            a.format("%Y-%m-%d %H:%M"),
            b.format("%Y-%m-%d %H:%M")
        ),
        _ => String::new(),
    };
    let files: Vec<&str> = ing.files.iter().map(|f| f.path.as_str()).collect();
    let period = about
        .period
        .as_deref()
        .map(|p| format!(", period {p}"))
        .unwrap_or_default();
    let paragraph = format!(
        "Job \"{}\"{period}: the clear-sky shortwave aerosol direct radiative effect (DRE) at the top of the atmosphere (TOA) and at the surface (SFC), \
         the atmospheric absorption ΔF_ATM = ΔF_TOA − ΔF_SFC, forcing efficiencies and the heating rate of the aerosol layer, \
         at the measurement time and as 24-hour means, for {} computed observation(s) at {} site(s) ({}){span}, read from {}. \
         Computed by hazebook {} with {} over the {}; written with the \"{}\" template. \
         Net flux is downward minus upward; negative DRE cools. Sheets: {}.",
        about.job_name,
        input.results.len(),
        sites.len(),
        sites.join(", "),
        if files.is_empty() {
            "no files".to_string()
        } else {
            files.join(", ")
        },
        about.version,
        solver_name(settings),
        band_set_name(settings.band_set),
        about.template_name,
        sheet_names.join(", "),
    );
    ws.merge_range(cur.r, 0, cur.r, 3, &paragraph, &styles.wrap)?;
    ws.set_row_height(cur.r, 105)?;
    cur.r += 1;

    // Row counts.
    section(ws, &mut cur, "Rows")?;
    let c = ing.counts;
    let holds = c.read == c.computed + c.rejected + c.outside_period;
    let mut count_rows = vec![
        ("Rows read", c.read),
        ("Computed (Results)", c.computed),
        ("Rejected (Rejected sheet)", c.rejected),
        ("Outside the period", c.outside_period),
    ];
    if ing.other_sites > 0 {
        // Rows of the other sites of a per-site report or a site filter: part of the
        // "outside" count above, so that each report reconciles its own rows.
        count_rows.push(("of which rows of other sites", ing.other_sites));
    }
    for (k, v) in count_rows {
        ws.write_string_with_format(cur.r, 0, k, &styles.label)?;
        ws.write_number_with_format(cur.r, 1, v as f64, styles.class(super::frame::Class::Count))?;
        cur.r += 1;
    }
    let check = if holds {
        "holds".to_string()
    } else {
        format!(
            "DOES NOT HOLD: {} read, {} accounted for",
            c.read,
            c.computed + c.rejected + c.outside_period
        )
    };
    pair(
        ws,
        &mut cur,
        "read = computed + rejected + outside period",
        &check,
    )?;

    // Settings.
    section(ws, &mut cur, "Settings")?;
    let fixed = settings
        .fixed_cos_zenith
        .map(|m| {
            format!(
                "{m} (solar zenith {:.2}°)",
                m.clamp(-1.0, 1.0).acos().to_degrees()
            )
        })
        .unwrap_or_else(|| "off (from time and place)".into());
    let rows: Vec<(&str, String)> = vec![
        ("Two-stream closure", closure_name(settings.closure).into()),
        ("Flux solver (main columns)", solver_name(settings)),
        (
            "Two-stream error columns",
            if settings.error_estimate {
                format!(
                    "on: each row also computed with {}; the *_error columns are two-stream minus discrete ordinates",
                    match settings.method {
                        Method::TwoStream =>
                            format!("the {}-stream discrete-ordinate solver", settings.streams),
                        Method::DiscreteOrdinates => closure_name(settings.closure).to_string(),
                    }
                )
            } else {
                "off".into()
            },
        ),
        ("Band set", band_set_name(settings.band_set).into()),
        (
            "Solar constant",
            format!("{} W m⁻² at 1 AU", settings.solar_constant_wm2),
        ),
        (
            "Diurnal nodes",
            format!(
                "{} Gauss–Legendre nodes in hour angle, sunrise to sunset",
                settings.diurnal_nodes
            ),
        ),
        ("Rayleigh scattering", on_off(settings.rayleigh).into()),
        ("Gas absorption", on_off(settings.gases).into()),
        ("Fixed cos(solar zenith)", fixed),
        (
            "Earth–Sun distance scaling",
            on_off(settings.earth_sun_distance).into(),
        ),
        ("24-hour means", on_off(settings.daily_mean).into()),
    ];
    for (k, v) in &rows {
        pair(ws, &mut cur, k, v)?;
    }
    for n in &about.notes {
        pair(ws, &mut cur, "Note", n)?;
    }

    // Methods.
    section(ws, &mut cur, "Methods and references")?;
    table_head(ws, &mut cur, &["Method", "Reference", "Used for"])?;
    for m in METHODS {
        ws.write_string(cur.r, 0, m.key)?;
        ws.write_string_with_format(cur.r, 1, m.citation, &styles.wrap)?;
        ws.write_string_with_format(cur.r, 2, m.used_for, &styles.wrap)?;
        cur.r += 1;
    }

    // Assumptions.
    section(
        ws,
        &mut cur,
        "Values not given in the rows, and where they came from",
    )?;
    if ing.assumptions.is_empty() {
        pair(ws, &mut cur, "None", "every value came from the inputs")?;
    } else {
        table_head(ws, &mut cur, &["Quantity", "Value", "Source", "Rows"])?;
        for a in &ing.assumptions {
            ws.write_string(cur.r, 0, clip(&a.quantity).as_ref())?;
            ws.write_string(cur.r, 1, clip(&a.value).as_ref())?;
            ws.write_string(cur.r, 2, source_name(a.source))?;
            ws.write_number_with_format(
                cur.r,
                3,
                a.rows as f64,
                styles.class(super::frame::Class::Count),
            )?;
            cur.r += 1;
        }
    }

    // Site values read from key/value metadata.
    if !ing.metadata.is_empty() {
        section(ws, &mut cur, "Site values read from metadata")?;
        table_head(ws, &mut cur, &["Site", "Field", "Value", "Read from"])?;
        for v in &ing.metadata {
            for (c, text) in [&v.site, &v.quantity, &v.value, &v.origin]
                .into_iter()
                .enumerate()
            {
                ws.write_string(cur.r, c as u16, clip(text).as_ref())?;
            }
            cur.r += 1;
        }
    }

    // Column accounting: every header column, read or not.
    section(ws, &mut cur, "How the input columns were read")?;
    table_head(
        ws,
        &mut cur,
        &[
            "Quantity", "Header", "File", "Sheet", "Column", "Unit", "How",
        ],
    )?;
    let merged_mapping = !input.mapping.is_empty() && input.mapping != ing.mapping.as_slice();
    for m in input.mapping.iter().filter(|_| merged_mapping) {
        write_mapped(ws, cur.r, m)?;
        cur.r += 1;
    }
    for a in ing.column_accounts() {
        if merged_mapping && a.status == "read" && a.role == "data" {
            continue;
        }
        let m = ing
            .mapping
            .iter()
            .chain(&ing.site_columns)
            .find(|m| m.file == a.file && m.sheet == a.sheet && m.letter == a.letter);
        let (q, unit, how) = match (a.status, m) {
            ("read", Some(m)) => (quantity_label(m), m.unit.clone(), m.how.clone()),
            _ => (
                "(not read)".to_string(),
                String::new(),
                format!("ignored: {}", a.detail),
            ),
        };
        let header = if a.header.is_empty() {
            "(no header)".to_string()
        } else {
            a.header.clone()
        };
        for (c, s) in [&q, &header, &a.file, &a.sheet, &a.letter, &unit, &how]
            .into_iter()
            .enumerate()
        {
            if !s.is_empty() {
                ws.write_string(cur.r, c as u16, clip(s).as_ref())?;
            }
        }
        cur.r += 1;
    }
    for m in ing
        .mapping
        .iter()
        .filter(|m| m.wavelength_pair_nm.is_some())
    {
        pair(
            ws,
            &mut cur,
            "Ångström wavelength pair",
            &angstrom_pair_note(m, settings),
        )?;
    }

    // Sites.
    if !ing.site_rules.is_empty() || !ing.site_labels.is_empty() {
        section(ws, &mut cur, "Sites")?;
        for r in &ing.site_rules {
            pair(ws, &mut cur, "How sites were found", r)?;
        }
        for (key, label) in &ing.site_labels {
            pair(
                ws,
                &mut cur,
                key,
                &format!("shown as \"{label}\" (the key stays {key})"),
            )?;
        }
    }

    // Statistics.
    section(ws, &mut cur, "Statistics")?;
    for n in statistics_notes() {
        pair(ws, &mut cur, "", &n)?;
    }
    for n in super::days::about_notes(t.min_observations_per_day) {
        pair(ws, &mut cur, "", &n)?;
    }

    // Cautions.
    section(ws, &mut cur, "Cautions")?;
    for c in CAUTIONS.iter().chain(INTERPRETATION) {
        pair(ws, &mut cur, "", c)?;
    }

    // Warnings.
    if !ing.warnings.is_empty() {
        section(ws, &mut cur, "Warnings while reading")?;
        for w in &ing.warnings {
            pair(ws, &mut cur, "", w)?;
        }
    }

    // Provenance.
    section(ws, &mut cur, "Provenance")?;
    pair(ws, &mut cur, "hazebook version", &about.version)?;
    pair(
        ws,
        &mut cur,
        "Document date (UTC)",
        &format!(
            "{} (the latest observation's time, or SOURCE_DATE_EPOCH when set; not the time of the run, so that reruns give identical files)",
            about.created_utc.format("%Y-%m-%dT%H:%M:%SZ")
        ),
    )?;
    pair(
        ws,
        &mut cur,
        "Template",
        &format!("{} ({})", about.template_name, t.description),
    )?;
    pair(ws, &mut cur, "Band set", band_set_name(settings.band_set))?;
    pair(ws, &mut cur, "Closure", closure_name(settings.closure))?;
    pair(
        ws,
        &mut cur,
        "Number precision",
        &format!(
            "Numbers in this workbook carry {SIGNIFICANT_DIGITS} significant digits and are shown with the decimals of their number format \
             (DRE 0.1 W m⁻², AOD and SSA 0.001); the Parquet/CSV side output carries full double precision."
        ),
    )?;
    let results_fluxes = t.sheets.iter().any(|s| {
        s.kind == super::template::SheetKind::Results
            && super::frame::select_columns(s.columns.as_deref().unwrap_or(&["all".to_string()]))
                .is_some_and(|cols| cols.iter().any(|c| c.group == "fluxes"))
    });
    pair(
        ws,
        &mut cur,
        "Broadband fluxes",
        if results_fluxes {
            "In the Results sheet (TOA and surface, up, down and net, with and without aerosol) and, at full precision, in the side output (CSV, Parquet or NetCDF, `side_output` in the job or `--side-output`)."
        } else {
            "Not in this workbook's Results sheet (they would make a network-scale report several times larger): the side output (CSV, Parquet or NetCDF, `side_output` in the job or `--side-output`) carries all 28 broadband fluxes at full precision, and the `fluxes` template puts them in a Results sheet."
        },
    )?;
    if ing.files.is_empty() {
        pair(ws, &mut cur, "Input files", "none")?;
    } else {
        table_head(ws, &mut cur, &["Input file", "SHA-256", "Sheets read"])?;
        for f in &ing.files {
            ws.write_string(cur.r, 0, &f.path)?;
            ws.write_string_with_format(cur.r, 1, &f.sha256, &styles.mono)?;
            ws.write_string(cur.r, 2, f.sheets.join(", "))?;
            cur.r += 1;
        }
    }
    match &about.job_text {
        Some(text) => {
            ws.write_string_with_format(cur.r, 0, "Job file", &styles.label)?;
            cur.r += 1;
            for line in text.lines() {
                if !line.is_empty() {
                    ws.write_string_with_format(cur.r, 1, clip(line).as_ref(), &styles.mono)?;
                }
                cur.r += 1;
            }
        }
        None => pair(
            ws,
            &mut cur,
            "Job file",
            "none (built-in defaults and header detection)",
        )?,
    }
    Ok(())
}
