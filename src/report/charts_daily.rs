//! Charts of site-day values: the daily 24-hour TOA and surface DRE per site with the
//! propagated input uncertainty as error bars, and TOA against surface DRE (their ratio tells
//! how absorbing the aerosol is). Their numbers go on the charts' data sheet.

use std::collections::{BTreeMap, BTreeSet};

use chrono::NaiveDate;
use rust_xlsxwriter::{
    Chart, ChartErrorBars, ChartErrorBarsType, ChartFormat, ChartLine, ChartMarker,
    ChartMarkerType, ChartRange, ChartSolidFill, ChartType, Worksheet, XlsxError,
};

use super::charts::site_color;
use super::days::{DayValues, solar_date};
use super::frame::{self, Class, Row};
use super::xlsx::{Styles, Widths, put_number, stat_value};
use crate::physics::uncertainty::Quantity;

/// A site-day value with its propagated 1σ (NaN when none was propagated).
#[derive(Debug, Clone, Copy)]
pub struct DayPoint {
    pub mean: f64,
    pub sigma: f64,
}

/// Site-day means of a 24-hour quantity and their propagated total 1σ (within a day the rows'
/// errors are taken as fully correlated: the day's random and systematic σ are the means of
/// its rows'), per site in sorted order.
pub fn day_points(rows: &[Row], key: &str) -> BTreeMap<String, BTreeMap<NaiveDate, DayPoint>> {
    let mut out: BTreeMap<String, BTreeMap<NaiveDate, DayPoint>> = BTreeMap::new();
    let Some(q) = frame::column(key) else {
        return out;
    };
    let quantity = Quantity::of_key(key);
    let idx: Vec<usize> = (0..rows.len()).collect();
    let values = DayValues::gather(rows, &idx, |r| stat_value(q, r));
    for (site, date, v) in values.counted(1) {
        let n = v.len() as f64;
        let mean = v.iter().map(|p| p.0).sum::<f64>() / n;
        let sigma = quantity
            .and_then(|qq| {
                let k = qq as usize;
                let (mut r, mut s) = (0.0, 0.0);
                for &(_, i) in v {
                    let u = rows[i].res.uncertainty?;
                    r += u.random[k];
                    s += u.systematic[k];
                }
                Some((r / n).hypot(s / n))
            })
            .unwrap_or(f64::NAN);
        out.entry(site.to_string())
            .or_default()
            .insert(date, DayPoint { mean, sigma });
    }
    out
}

fn marker(color: rust_xlsxwriter::Color, size: u8) -> ChartMarker {
    let mut m = ChartMarker::new();
    m.set_type(ChartMarkerType::Circle)
        .set_size(size)
        .set_format(
            ChartFormat::new()
                .set_solid_fill(ChartSolidFill::new().set_color(color))
                .set_border(ChartLine::new().set_color(color)),
        );
    m
}

/// Write the data of the daily charts into `ws` (the data sheet `data_name`) from column
/// `col`, and return the charts: daily TOA and surface DRE with error bars when `daily`,
/// TOA against surface when `toa_vs_sfc`. Returns the charts and the last data row used.
#[allow(clippy::too_many_arguments)]
pub fn daily_charts(
    ws: &mut Worksheet,
    styles: &Styles,
    widths: &mut Widths,
    data_name: &str,
    col: u16,
    rows: &[Row],
    daily: bool,
    toa_vs_sfc: bool,
) -> Result<(Vec<Chart>, u32), XlsxError> {
    let toa = day_points(rows, "dre_toa_24h");
    let sfc = day_points(rows, "dre_sfc_24h");
    let sites: Vec<&String> = toa.keys().collect();
    let all_sites: Vec<&str> = {
        let mut s: Vec<&str> = rows.iter().map(|r| r.site).collect();
        s.sort_unstable();
        s.dedup();
        s
    };
    let color_of = |s: &str| site_color(all_sites.binary_search(&s).unwrap_or(0));
    let dates: BTreeSet<NaiveDate> = rows.iter().map(solar_date).collect();
    let dates: Vec<NaiveDate> = dates.into_iter().collect();
    let with_sigma = toa
        .values()
        .flat_map(|m| m.values())
        .any(|p| p.sigma.is_finite());
    super::charts::put_head(ws, styles, widths, col, "Day", "local mean solar date")?;
    for (k, d) in dates.iter().enumerate() {
        let t = d.format("%Y-%m-%d").to_string();
        ws.write_string(2 + k as u32, col, &t)?;
        widths.see_text(col as usize, &t);
    }
    let last = 1 + dates.len() as u32;
    let f = styles.class(Class::Dre);
    // Per site: TOA, σ TOA, SFC, σ SFC.
    for (i, s) in sites.iter().enumerate() {
        let c = col + 1 + 4 * i as u16;
        let heads = [
            format!("{s}: ΔF_TOA (24-h), day mean"),
            format!("{s}: σ ΔF_TOA (24-h)"),
            format!("{s}: ΔF_SFC (24-h), day mean"),
            format!("{s}: σ ΔF_SFC (24-h)"),
        ];
        for (k, h) in heads.iter().enumerate() {
            super::charts::put_head(ws, styles, widths, c + k as u16, h, "W m⁻²")?;
        }
        for (k, d) in dates.iter().enumerate() {
            let r = 2 + k as u32;
            for (off, m) in [(0u16, &toa), (2, &sfc)] {
                if let Some(p) = m.get(*s).and_then(|x| x.get(d)) {
                    put_number(ws, r, c + off, p.mean, f)?;
                    put_number(ws, r, c + off + 1, p.sigma, f)?;
                }
            }
        }
    }
    let mut charts = Vec::new();
    if daily && !dates.is_empty() {
        for (which, off) in [("TOA", 0u16), ("surface", 2u16)] {
            let mut chart = Chart::new(ChartType::Line);
            chart.title().set_name(&format!(
                "Daily 24-hour DRE at {which} by site{}",
                if with_sigma {
                    ", error bars ±1σ propagated input uncertainty"
                } else {
                    ""
                }
            ));
            chart.x_axis().set_name("Day (local mean solar date)");
            chart.y_axis().set_name(&format!(
                "ΔF_{} (24-h) [W m⁻²]",
                if off == 0 { "TOA" } else { "SFC" }
            ));
            for (i, s) in sites.iter().enumerate() {
                let c = col + 1 + 4 * i as u16 + off;
                let color = color_of(s);
                let series = chart
                    .add_series()
                    .set_name(super::charts::series_label(s).as_str())
                    .set_categories((data_name, 2, col, last, col))
                    .set_values((data_name, 2, c, last, c))
                    .set_format(ChartFormat::new().set_no_line())
                    .set_marker(&marker(color, 5));
                if with_sigma {
                    let range = ChartRange::new_from_range(data_name, 2, c + 1, last, c + 1);
                    series.set_y_error_bars(
                        ChartErrorBars::new()
                            .set_type(ChartErrorBarsType::Custom(range.clone(), range))
                            .set_format(
                                ChartFormat::new().set_line(ChartLine::new().set_color(color)),
                            ),
                    );
                }
            }
            chart.set_width(640).set_height(360);
            charts.push(chart);
        }
    }
    if toa_vs_sfc && !dates.is_empty() {
        let mut chart = Chart::new(ChartType::Scatter);
        chart.title().set_name(
            "Daily 24-hour DRE: TOA against surface (SFC/TOA ≈ 1 scattering, ≫ 1 absorbing)",
        );
        chart.x_axis().set_name("ΔF_SFC (24-h) [W m⁻²]");
        chart.y_axis().set_name("ΔF_TOA (24-h) [W m⁻²]");
        for (i, s) in sites.iter().enumerate() {
            let c = col + 1 + 4 * i as u16;
            let ratio = {
                let (mut a, mut b) = (0.0, 0.0);
                for (d, p) in &toa[*s] {
                    if let Some(q) = sfc.get(*s).and_then(|m| m.get(d)) {
                        a += p.mean;
                        b += q.mean;
                    }
                }
                b / a
            };
            let name = if ratio.is_finite() {
                format!("{s} (SFC/TOA = {ratio:.1})")
            } else {
                s.to_string()
            };
            chart
                .add_series()
                .set_name(super::charts::series_label(&name).as_str())
                .set_categories((data_name, 2, c + 2, last, c + 2))
                .set_values((data_name, 2, c, last, c))
                .set_format(ChartFormat::new().set_no_line())
                .set_marker(&marker(color_of(s), 5));
        }
        chart.set_width(640).set_height(360);
        charts.push(chart);
    }
    Ok((charts, last))
}
