//! The quotable summary sheet: per site and season and per site over the period, the
//! 24-hour TOA, SFC and ATM DRE, the TOA efficiency and AOD(550) as "mean ± total
//! uncertainty (n days)", laid out to paste into a paper, and a methods paragraph generated
//! from the settings that ran.

use rust_xlsxwriter::{Workbook, XlsxError};

use super::ReportInput;
use super::about::{band_set_name, closure_name};
use super::frame::{self, Row};
use super::stats::Summary;
use super::template::{SheetSpec, Template};
use super::xlsx::{Group, Styles, Widths};
use crate::physics::forcing::Context;
use crate::physics::uncertainty::Input;
use crate::physics::{BandSet, Surface};

/// Quantities of the table: (Results key, column header).
const QUANTITIES: [(&str, &str); 5] = [
    ("dre_toa_24h", "ΔF_TOA, 24-h mean [W m⁻²]"),
    ("dre_sfc_24h", "ΔF_SFC, 24-h mean [W m⁻²]"),
    ("dre_atm_24h", "ΔF_ATM, 24-h mean [W m⁻²]"),
    (
        "efficiency_toa_24h",
        "TOA efficiency, 24-h [W m⁻² per AOD(550)]",
    ),
    ("aod_550", "AOD(550 nm) [unitless]"),
];

/// Round `mean ± u` as usually quoted: the uncertainty to two significant digits, the mean
/// to the same decimal place (common practice; GUM 7.2.6 asks for at most two significant
/// digits of an uncertainty).
pub fn mean_pm(mean: f64, u: f64) -> String {
    if !u.is_finite() || u <= 0.0 {
        return format!("{}", super::xlsx::round_sig(mean));
    }
    let decimals = (1 - u.log10().floor() as i32).max(0) as usize;
    let m = format!("{mean:.decimals$}");
    let m = if m
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        m.trim_start_matches('-').to_string()
    } else {
        m
    };
    format!("{m} ± {u:.decimals$}").replace('-', "−")
}

/// One cell: "mean ± u (n days)", u the total uncertainty when propagated, else the sampling
/// SE; the mean alone when there is one day.
fn cell(s: &Summary) -> String {
    let Some(mean) = s.mean else {
        return String::new();
    };
    let u = s.u_total.or(s.se);
    let days = if s.days == 1 { "day" } else { "days" };
    match u {
        Some(u) => format!("{} ({} {days})", mean_pm(mean, u), s.days),
        None => format!(
            "{} ({} {days})",
            mean_pm(mean, f64::NAN).replace('-', "−"),
            s.days
        ),
    }
}

/// Write the quotable summary sheet.
pub fn write_quotable(
    wb: &mut Workbook,
    t: &Template,
    spec: &SheetSpec,
    styles: &Styles,
    input: &ReportInput,
    rows: &[Row],
    groupings: &super::Groupings,
) -> Result<(), super::ReportError> {
    let xerr = |e: XlsxError| super::ReportError::Write {
        path: spec.name.clone(),
        reason: e.to_string(),
    };
    let by_season = groupings.get(&["site".into(), "season".into()])?;
    let by_site = groupings.get(&["site".into()])?;
    let propagated = rows.iter().any(|r| r.res.uncertainty.is_some());
    let ws = wb.add_worksheet();
    ws.set_name(&spec.name).map_err(xerr)?;
    let mut widths = Widths::default();
    let title =
        "Clear-sky shortwave aerosol direct radiative effect: mean ± uncertainty (n site-days)";
    ws.write_string_with_format(0, 0, title, &styles.title)
        .map_err(xerr)?;
    let sign = "Sign convention: ΔF = net flux (down − up) with aerosol − without; negative values cool. ΔF_ATM = ΔF_TOA − ΔF_SFC. Units in each header.";
    let unc = if propagated {
        "± is the combined standard uncertainty (1σ): √(SE² + u_random² + u_systematic²), sampling SE over site-days and the propagated input uncertainty (About sheet)."
    } else {
        "± is the standard error of the mean over site-days (sampling only: no input uncertainty was declared)."
    };
    ws.write_string(1, 0, sign).map_err(xerr)?;
    ws.write_string(2, 0, unc).map_err(xerr)?;
    let mut heads: Vec<&str> = vec!["Site", "Season / period"];
    heads.extend(QUANTITIES.iter().map(|q| q.1));
    let hr = 4u32;
    for (c, h) in heads.iter().enumerate() {
        ws.write_string_with_format(hr, c as u16, *h, &styles.header)
            .map_err(xerr)?;
        widths.see_text(c, h);
    }
    let mut r = hr + 1;
    let period = |g: &Group| -> String {
        let dates = g.rows.iter().map(|&i| super::days::solar_date(&rows[i]));
        match (dates.clone().min(), dates.max()) {
            (Some(a), Some(b)) => format!("all, {a} to {b}"),
            _ => "all".into(),
        }
    };
    let mut emit = |site: &str, label: String, g: &Group| -> Result<(), XlsxError> {
        ws.write_string(r, 0, site)?;
        widths.see_text(0, site);
        ws.write_string(r, 1, &label)?;
        widths.see_text(1, &label);
        for (k, (key, _)) in QUANTITIES.iter().enumerate() {
            let Some(q) = frame::column(key) else {
                continue;
            };
            let s = super::days::summarise_days_of(q, rows, &g.rows, t.min_observations_per_day);
            let text = cell(&s);
            ws.write_string(r, 2 + k as u16, &text)?;
            widths.see_text(2 + k, &text);
        }
        r += 1;
        Ok(())
    };
    for site_group in by_site.iter() {
        let site = match site_group.keys.first() {
            Some(frame::Value::Text(s)) => s.to_string(),
            _ => String::new(),
        };
        for g in by_season
            .iter()
            .filter(|g| matches!(g.keys.first(), Some(frame::Value::Text(s)) if *s == site))
        {
            let season = match g.keys.get(1) {
                Some(frame::Value::Text(s)) => s.to_string(),
                _ => String::new(),
            };
            emit(&site, season, g).map_err(xerr)?;
        }
        emit(&site, period(site_group), site_group).map_err(xerr)?;
    }
    widths.apply(ws, t, spec.column_width).map_err(xerr)?;
    r += 1;
    ws.write_string_with_format(
        r,
        0,
        "Methods (generated from the settings of this run)",
        &styles.section,
    )
    .map_err(xerr)?;
    r += 1;
    ws.merge_range(
        r,
        0,
        r,
        (heads.len() - 1) as u16,
        &methods_paragraph(input, t),
        &styles.wrap,
    )
    .map_err(xerr)?;
    ws.set_row_height(r, 330).map_err(xerr)?;
    Ok(())
}

/// A methods paragraph generated from the settings, inputs and uncertainty treatment of the
/// run (solver, spectrum, bands, Rayleigh, gases, surface, layer, diurnal integration,
/// statistics, uncertainty, references).
pub fn methods_paragraph(input: &ReportInput, t: &Template) -> String {
    let s = input.settings;
    let obs = &input.ingested.observations;
    let mut p = String::new();
    let bands = Context::new(s).band_count();
    p.push_str(&format!(
        "The clear-sky shortwave aerosol direct radiative effect (DRE) was computed with hazebook {} for {} observations at {} site{}. ",
        input.about.version,
        obs.len(),
        count_sites(input),
        if count_sites(input) == 1 { "" } else { "s" }
    ));
    p.push_str(&format!(
        "Radiative transfer used the {} two-stream approximation in homogeneous layers combined by the adding method, ",
        closure_name(s.closure)
    ));
    match s.band_set {
        BandSet::AstmG173 => p.push_str(&format!(
            "over {bands} {} scaled to a solar constant of {} W m⁻² (Kopp & Lean 2011){}. ",
            band_set_name(s.band_set),
            s.solar_constant_wm2,
            if s.earth_sun_distance {
                " and to the Earth–Sun distance of the day"
            } else {
                ""
            }
        )),
        BandSet::Single => p.push_str(&format!(
            "in {} carrying {} W m⁻². ",
            band_set_name(s.band_set),
            s.solar_constant_wm2
        )),
    }
    p.push_str(if s.rayleigh {
        "Rayleigh scattering followed Bodhaine et al. (1999), scaled by surface pressure; "
    } else {
        "Rayleigh scattering was switched off; "
    });
    p.push_str(if s.gases {
        "ozone, water-vapour and mixed-gas absorption used the Bird & Riordan (1986) coefficients as band-effective optical depths along the sun's path. "
    } else {
        "gas absorption was switched off. "
    });
    p.push_str("Aerosol optical depth followed the Ångström law from the measured AOD; SSA and g were interpolated linearly in ln λ and held constant outside the measured wavelengths. ");
    let tops: Vec<f64> = obs
        .iter()
        .map(|o| o.layer.top_km)
        .filter(|x| x.is_finite())
        .collect();
    let elevated = obs.iter().filter(|o| o.layer.base_km > 0.0).count();
    if let (Some(lo), Some(hi)) = (
        tops.iter().copied().reduce(f64::min),
        tops.iter().copied().reduce(f64::max),
    ) {
        let top = if lo == hi {
            format!("{lo} km")
        } else {
            format!("{lo}–{hi} km")
        };
        p.push_str(&format!(
            "The aerosol, water vapour and the boundary-layer share of Rayleigh scattering were placed below an aerosol top of {top} above the surface{}, ozone and the remaining air above. ",
            if elevated > 0 {
                format!(" ({elevated} observations with an elevated layer)")
            } else {
                String::new()
            }
        ));
    }
    let ocean = obs
        .iter()
        .filter(|o| matches!(o.surface, Surface::OceanTaylor1996))
        .count();
    let albedos: Vec<f64> = obs
        .iter()
        .filter_map(|o| match o.surface {
            Surface::Lambertian { albedo } => Some(albedo),
            _ => None,
        })
        .collect();
    if let (Some(lo), Some(hi)) = (
        albedos.iter().copied().reduce(f64::min),
        albedos.iter().copied().reduce(f64::max),
    ) {
        let a = if lo == hi {
            format!("{lo}")
        } else {
            format!("{lo}–{hi}")
        };
        p.push_str(&format!(
            "The surface was a Lambertian reflector of broadband albedo {a}"
        ));
        p.push_str(if ocean > 0 {
            " or the ocean of Taylor et al. (1996). "
        } else {
            ". "
        });
    } else if ocean > 0 {
        p.push_str("The surface was the ocean albedo of Taylor et al. (1996). ");
    }
    match s.fixed_cos_zenith {
        Some(m) => p.push_str(&format!("Instantaneous values used a fixed cos(solar zenith) of {m}. ")),
        None => p.push_str("Instantaneous values used the solar zenith angle of the NREL SPA (Reda & Andreas 2004) at the measurement time. "),
    }
    if s.daily_mean {
        p.push_str(&format!(
            "24-hour means integrated over hour angle from sunrise to sunset with {} Gauss–Legendre nodes, holding each observation's properties over its day. ",
            s.diurnal_nodes
        ));
    }
    p.push_str(&format!(
        "ΔF is the net flux with aerosol minus without, negative values cooling. Statistics were computed over site-days (the mean of each day's observations; a day counted with at least {} observation{}), with Student-t intervals over days; intervals of instantaneous quantities took days as blocks (Cochran 1977). ",
        t.min_observations_per_day,
        if t.min_observations_per_day == 1 { "" } else { "s" }
    ));
    let declared: Vec<String> = Input::ALL
        .iter()
        .filter(|i| {
            input.results.iter().any(|r| {
                r.uncertainty
                    .is_some_and(|u| u.input_sigma[i.index()].is_finite())
            })
        })
        .map(|i| i.label().to_string())
        .collect();
    if declared.is_empty() {
        p.push_str("No input uncertainty was declared; the quoted uncertainties are sampling errors only. ");
    } else {
        p.push_str(&format!(
            "Input uncertainties ({}) were propagated to every DRE by linearisation with one-sided finite differences of one standard uncertainty (JCGM 100:2008), checked against a Monte Carlo propagation; uncertainties random from day to day were averaged over days, systematic ones were not, and the quoted total combines them with the sampling error in quadrature. ",
            declared.join(", ")
        ));
    }
    p.push_str("The full list of references is on the About sheet.");
    p
}

fn count_sites(input: &ReportInput) -> usize {
    let mut s: Vec<&str> = input.ingested.sites.iter().map(String::as_str).collect();
    s.sort_unstable();
    s.dedup();
    s.len()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quoted_values_round_to_the_uncertainty() {
        assert_eq!(mean_pm(-5.3456, 0.8123), "−5.35 ± 0.81");
        assert_eq!(mean_pm(-12.4, 2.3), "−12.4 ± 2.3");
        assert_eq!(mean_pm(-61.7, 12.0), "−62 ± 12");
        assert_eq!(mean_pm(0.2346, 0.012), "0.235 ± 0.012");
        assert_eq!(mean_pm(-0.001, 0.1), "0.00 ± 0.10");
    }
}
