//! Charts: monthly mean DRE by site, and ΔF against AOD(550) with the fitted line per site.
//! The plotted numbers are written to a data sheet right after the charts sheet.

use std::collections::BTreeMap;

use chrono::Datelike;
use rust_xlsxwriter::{
    Chart, ChartFormat, ChartLine, ChartMarker, ChartMarkerType, ChartSolidFill, ChartType, Color,
    Workbook, XlsxError,
};

use super::frame::{self, Class, Row};
use super::template::{ChartKind, SheetSpec, Template};
use super::xlsx::{self, Styles, Widths, put_number, stat_value};

/// One colour per site, in the order of the sorted site names, the same on every chart
/// (hazebook's own palette; repeats after eight sites).
///
/// Chosen to stay apart for colour-blind readers: every pair differs by at least 20 ΔE*ab
/// (CIE 1976) in normal vision and in simulated protanopia, deuteranopia and tritanopia (the
/// test `palette_is_distinguishable_in_colour_blind_vision` checks it), with lightness
/// L* 28–72 so that every colour shows on white.
pub const SITE_PALETTE: [u32; 8] = [
    0x882266, 0xDD9933, 0x33AACC, 0x3A3AA0, 0x99BB77, 0x5A4A2E, 0x7777DD, 0xAA8888,
];

/// Most points plotted per site on a scatter chart (every k-th row beyond that; the fit uses
/// every row).
pub const MAX_POINTS_PER_SITE: usize = 4000;

/// (year, month) → per site: (TOA values, surface values).
type MonthCells = BTreeMap<(i32, u32), Vec<(Vec<f64>, Vec<f64>)>>;

/// Colour of a site by its index among the sorted site names.
pub fn site_color(i: usize) -> Color {
    Color::RGB(SITE_PALETTE[i % SITE_PALETTE.len()])
}

/// Write the charts sheet `spec` and its data sheet `data_name`.
pub fn write_charts(
    wb: &mut Workbook,
    t: &Template,
    spec: &SheetSpec,
    styles: &Styles,
    rows: &[Row],
    data_name: &str,
    daily_mean: bool,
) -> Result<(), XlsxError> {
    let kinds = spec
        .charts
        .clone()
        .unwrap_or_else(|| vec![ChartKind::MonthlyDre, ChartKind::DreVsAod]);
    let (toa, sfc, when) = if daily_mean {
        ("dre_toa_24h", "dre_sfc_24h", "24-h")
    } else {
        ("dre_toa", "dre_sfc", "instantaneous")
    };
    let toa = frame::column(toa).expect("column exists");
    let sfc = frame::column(sfc).expect("column exists");
    let aod = frame::column("aod_550").expect("column exists");

    let mut sites: Vec<&str> = rows.iter().map(|r| r.site).collect();
    sites.sort_unstable();
    sites.dedup();
    let ns = sites.len();
    let site_index = |s: &str| sites.binary_search(&s).unwrap_or(0);

    // Charts sheet first (template order), then its data sheet.
    let charts_ws_index = wb.worksheets().len();
    {
        let ws = wb.add_worksheet();
        ws.set_name(&spec.name)?;
    }
    let mut charts: Vec<(u32, u16, Chart)> = Vec::new();
    {
        let ws = wb.add_worksheet();
        ws.set_name(data_name)?;
        let mut widths = Widths::default();
        let mut col = 0u16;
        let mut chart_row = 2u32;
        let mut last_data_row = 1u32;

        if kinds.contains(&ChartKind::MonthlyDre) && !rows.is_empty() {
            // Monthly means by site.
            let mut cells: MonthCells = BTreeMap::new();
            for r in rows {
                let t = &r.obs.time_utc;
                let e = cells
                    .entry((t.year(), t.month()))
                    .or_insert_with(|| vec![(Vec::new(), Vec::new()); ns]);
                let i = site_index(r.site);
                e[i].0.push(stat_value(toa, r));
                e[i].1.push(stat_value(sfc, r));
            }
            let c0 = col;
            put_head(ws, styles, &mut widths, c0, "Month", "UTC")?;
            for (i, s) in sites.iter().enumerate() {
                let c = c0 + 1 + i as u16;
                put_head(
                    ws,
                    styles,
                    &mut widths,
                    c,
                    &format!("{s}: {}", toa.header),
                    toa.unit,
                )?;
                let c = c0 + 1 + (ns + i) as u16;
                put_head(
                    ws,
                    styles,
                    &mut widths,
                    c,
                    &format!("{s}: {}", sfc.header),
                    sfc.unit,
                )?;
            }
            let f = styles.class(Class::Dre);
            for (k, ((y, m), per_site)) in cells.iter().enumerate() {
                let r = 2 + k as u32;
                let label = format!("{y:04}-{m:02}");
                ws.write_string(r, c0, &label)?;
                widths.see_text(c0 as usize, &label);
                for (i, (a, b)) in per_site.iter().enumerate() {
                    let ma = xlsx_mean(a);
                    let mb = xlsx_mean(b);
                    put_number(ws, r, c0 + 1 + i as u16, ma, f)?;
                    put_number(ws, r, c0 + 1 + (ns + i) as u16, mb, f)?;
                }
            }
            let last = 1 + cells.len() as u32;
            last_data_row = last_data_row.max(last);
            for (which, q, off) in [("TOA", toa, 0usize), ("surface", sfc, ns)] {
                let mut chart = Chart::new(ChartType::Line);
                chart
                    .title()
                    .set_name(&format!("Monthly mean {when} DRE at {which} by site"));
                chart.x_axis().set_name("Month (UTC)");
                chart
                    .y_axis()
                    .set_name(&format!("{} [{}]", q.header, q.unit));
                for (i, s) in sites.iter().enumerate() {
                    let c = c0 + 1 + (off + i) as u16;
                    let color = site_color(i);
                    chart
                        .add_series()
                        .set_name(series_label(s).as_str())
                        .set_categories((data_name, 2, c0, last, c0))
                        .set_values((data_name, 2, c, last, c))
                        .set_format(
                            ChartFormat::new()
                                .set_line(ChartLine::new().set_color(color).set_width(2.0)),
                        )
                        .set_marker(
                            ChartMarker::new()
                                .set_type(ChartMarkerType::Circle)
                                .set_size(5)
                                .set_format(
                                    ChartFormat::new()
                                        .set_solid_fill(ChartSolidFill::new().set_color(color))
                                        .set_border(ChartLine::new().set_color(color)),
                                ),
                        );
                }
                chart.set_width(640).set_height(360);
                let c = if which == "TOA" { 0 } else { 10 };
                charts.push((chart_row, c, chart));
            }
            chart_row += 20;
            col = c0 + 1 + 2 * ns as u16;
        }

        if kinds.contains(&ChartKind::DreVsAod) && !rows.is_empty() {
            let mut per_site: Vec<Vec<usize>> = vec![Vec::new(); ns];
            for (k, r) in rows.iter().enumerate() {
                per_site[site_index(r.site)].push(k);
            }
            // site, first col, last point row, fit drawn
            let mut series: Vec<(usize, u16, u32, bool)> = Vec::new();
            for (i, s) in sites.iter().enumerate() {
                let c = col + 6 * i as u16;
                let heads: [(String, &str); 6] = [
                    (format!("{s}: AOD(550)"), "unitless"),
                    (format!("{s}: {}", toa.header), toa.unit),
                    (format!("{s}: {}", sfc.header), sfc.unit),
                    (format!("{s}: fit AOD(550)"), "unitless"),
                    (format!("{s}: fit {}", toa.header), toa.unit),
                    (format!("{s}: fit {}", sfc.header), sfc.unit),
                ];
                for (k, (h, u)) in heads.iter().enumerate() {
                    put_head(ws, styles, &mut widths, c + k as u16, h, u)?;
                }
                let idx = &per_site[i];
                let stride = idx.len().div_ceil(MAX_POINTS_PER_SITE).max(1);
                let mut r = 2u32;
                for &k in idx.iter().step_by(stride) {
                    let row = &rows[k];
                    put_number(ws, r, c, aod.number(row), styles.class(Class::Aod))?;
                    put_number(ws, r, c + 1, stat_value(toa, row), styles.class(Class::Dre))?;
                    put_number(ws, r, c + 2, stat_value(sfc, row), styles.class(Class::Dre))?;
                    r += 1;
                }
                // No line through rows of several seasons: insolation differs, so a pooled
                // fit is not one relation (the Efficiency sheet fits per season).
                let one_season = xlsx::pooled_note(rows, idx).is_none();
                for (k, q) in [toa, sfc].into_iter().enumerate() {
                    if !one_season {
                        break;
                    }
                    let fit = xlsx::fit_rows(q, rows, idx);
                    if let (Some(b), Some(a), Some(x0), Some(x1)) =
                        (fit.slope, fit.intercept, fit.x_min, fit.x_max)
                    {
                        put_number(ws, 2, c + 3, x0, styles.class(Class::Aod))?;
                        put_number(ws, 3, c + 3, x1, styles.class(Class::Aod))?;
                        put_number(
                            ws,
                            2,
                            c + 4 + k as u16,
                            a + b * x0,
                            styles.class(Class::Dre),
                        )?;
                        put_number(
                            ws,
                            3,
                            c + 4 + k as u16,
                            a + b * x1,
                            styles.class(Class::Dre),
                        )?;
                    }
                }
                series.push((i, c, r - 1, one_season));
                last_data_row = last_data_row.max(r - 1).max(3);
            }
            for (which, q, off) in [("TOA", toa, 1u16), ("surface", sfc, 2u16)] {
                let mut chart = Chart::new(ChartType::Scatter);
                chart.title().set_name(&format!(
                    "{} against AOD(550), fitted line where one season",
                    q.header
                ));
                chart.x_axis().set_name("AOD(550 nm) [unitless]");
                chart
                    .y_axis()
                    .set_name(&format!("{} [{}]", q.header, q.unit));
                for &(i, c, last, fitted) in &series {
                    let color = site_color(i);
                    if last >= 2 {
                        chart
                            .add_series()
                            .set_name(series_label(sites[i]).as_str())
                            .set_categories((data_name, 2, c, last, c))
                            .set_values((data_name, 2, c + off, last, c + off))
                            .set_format(ChartFormat::new().set_no_line())
                            .set_marker(
                                ChartMarker::new()
                                    .set_type(ChartMarkerType::Circle)
                                    .set_size(4)
                                    .set_format(
                                        ChartFormat::new()
                                            .set_solid_fill(ChartSolidFill::new().set_color(color))
                                            .set_no_border(),
                                    ),
                            );
                    }
                    if !fitted {
                        continue;
                    }
                    chart
                        .add_series()
                        .set_name(series_label(&format!("{} fit", sites[i])).as_str())
                        .set_categories((data_name, 2, c + 3, 3, c + 3))
                        .set_values((data_name, 2, c + 3 + off, 3, c + 3 + off))
                        .set_format(
                            ChartFormat::new()
                                .set_line(ChartLine::new().set_color(color).set_width(2.0)),
                        )
                        .set_marker(ChartMarker::new().set_none());
                }
                chart.set_width(640).set_height(360);
                let c = if which == "TOA" { 0 } else { 10 };
                charts.push((chart_row, c, chart));
            }
        }
        let want_daily = daily_mean && kinds.contains(&ChartKind::DailyDre);
        let want_toa_sfc = daily_mean && kinds.contains(&ChartKind::ToaVsSurface);
        if (want_daily || want_toa_sfc) && !rows.is_empty() {
            if kinds.contains(&ChartKind::DreVsAod) {
                chart_row += 20;
            }
            let start = widths.len() as u16;
            let (more, last) = super::charts_daily::daily_charts(
                ws,
                styles,
                &mut widths,
                data_name,
                start,
                rows,
                want_daily,
                want_toa_sfc,
            )?;
            last_data_row = last_data_row.max(last);
            for (k, chart) in more.into_iter().enumerate() {
                let r = chart_row + 20 * (k / 2) as u32;
                charts.push((r, if k % 2 == 0 { 0 } else { 10 }, chart));
            }
        }
        if rows.is_empty() {
            ws.write_string(0, 0, "No computed rows: nothing to plot.")?;
        }
        widths.apply(ws, t, None)?;
        if !rows.is_empty() {
            xlsx::finish_table(ws, widths.len(), last_data_row, 0)?;
        }
    }
    let ws = wb.worksheet_from_index(charts_ws_index)?;
    let note = format!(
        "Charts of the {when} direct radiative effect; the plotted numbers are on sheet \"{data_name}\". \
         One colour per site on every chart. Lines on the scatter charts are the OLS fits of the Efficiency sheet, drawn only for a site whose rows lie in one season (a fit pooled over seasons mixes insolation with AOD)."
    );
    ws.write_string_with_format(0, 0, &note, &styles.label)?;
    for (r, c, chart) in &charts {
        ws.insert_chart(*r, *c, chart)?;
    }
    Ok(())
}

/// A series name as literal text (a leading `=` would make it a cell reference).
pub(super) fn series_label(s: &str) -> String {
    // `Gull!A1` would be read as a cell of a sheet "Gull" (an unknown sheet fails the whole
    // write): a word joiner (U+2060, invisible) after the `!` keeps it a plain name.
    let s = match s.find('!') {
        Some(i) => format!("{}\u{2060}{}", &s[..=i], &s[i + 1..]),
        None => s.to_string(),
    };
    if s.starts_with('=') {
        format!(" {s}")
    } else {
        s
    }
}

pub(super) fn put_head(
    ws: &mut rust_xlsxwriter::Worksheet,
    styles: &Styles,
    widths: &mut Widths,
    c: u16,
    h: &str,
    u: &str,
) -> Result<(), XlsxError> {
    ws.write_string_with_format(0, c, h, &styles.header)?;
    ws.write_string_with_format(1, c, u, &styles.unit)?;
    widths.see_text(c as usize, h);
    widths.see_text(c as usize, u);
    Ok(())
}

fn xlsx_mean(v: &[f64]) -> f64 {
    stats_mean(v.iter().copied())
}

fn stats_mean(v: impl Iterator<Item = f64>) -> f64 {
    super::stats::summarise(v).mean.unwrap_or(f64::NAN)
}

#[cfg(test)]
mod palette_tests {
    use super::SITE_PALETTE;

    /// sRGB component [0–255] to linear light (IEC 61966-2-1).
    fn linear(c: u32) -> f64 {
        let c = f64::from(c) / 255.0;
        if c <= 0.04045 {
            c / 12.92
        } else {
            ((c + 0.055) / 1.055).powf(2.4)
        }
    }

    /// CIELAB (D65) of linear sRGB (IEC 61966-2-1 primaries; CIE 1976 L*a*b*).
    fn lab(rgb: [f64; 3]) -> [f64; 3] {
        let [r, g, b] = rgb;
        let x = (0.4124564 * r + 0.3575761 * g + 0.1804375 * b) / 0.95047;
        let y = 0.2126729 * r + 0.7151522 * g + 0.0721750 * b;
        let z = (0.0193339 * r + 0.1191920 * g + 0.9503041 * b) / 1.08883;
        let f = |t: f64| {
            if t > 216.0 / 24389.0 {
                t.cbrt()
            } else {
                (24389.0 / 27.0 * t + 16.0) / 116.0
            }
        };
        let (fx, fy, fz) = (f(x), f(y), f(z));
        [116.0 * fy - 16.0, 500.0 * (fx - fy), 200.0 * (fy - fz)]
    }

    /// Dichromat simulation matrices in linear RGB, severity 1.0: Machado, Oliveira &
    /// Fernandes (2009), IEEE Trans. Vis. Comput. Graph. 15(6), 1291–1298, table values
    /// from memory.
    const SIMULATIONS: [(&str, [[f64; 3]; 3]); 4] = [
        (
            "normal",
            [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]],
        ),
        (
            "protanopia",
            [
                [0.152286, 1.052583, -0.204868],
                [0.114503, 0.786281, 0.099216],
                [-0.003882, -0.048116, 1.051998],
            ],
        ),
        (
            "deuteranopia",
            [
                [0.367322, 0.860646, -0.227968],
                [0.280085, 0.672501, 0.047413],
                [-0.011820, 0.042940, 0.968881],
            ],
        ),
        (
            "tritanopia",
            [
                [1.255528, -0.076749, -0.178779],
                [-0.078411, 0.930809, 0.147602],
                [0.004733, 0.691367, 0.303900],
            ],
        ),
    ];

    fn seen(hex: u32, m: &[[f64; 3]; 3]) -> [f64; 3] {
        let c = [
            linear(hex >> 16 & 255),
            linear(hex >> 8 & 255),
            linear(hex & 255),
        ];
        let mut o = [0.0; 3];
        for (i, row) in m.iter().enumerate() {
            o[i] = (row[0] * c[0] + row[1] * c[1] + row[2] * c[2]).clamp(0.0, 1.0);
        }
        lab(o)
    }

    #[test]
    fn palette_is_distinguishable_in_colour_blind_vision() {
        for (name, m) in &SIMULATIONS {
            for (i, &a) in SITE_PALETTE.iter().enumerate() {
                for &b in &SITE_PALETTE[i + 1..] {
                    let (la, lb) = (seen(a, m), seen(b, m));
                    let de = la
                        .iter()
                        .zip(&lb)
                        .map(|(x, y)| (x - y).powi(2))
                        .sum::<f64>()
                        .sqrt();
                    assert!(
                        de >= 20.0,
                        "{name}: #{a:06X} and #{b:06X} differ by ΔE {de:.1}"
                    );
                }
            }
        }
        for &c in &SITE_PALETTE {
            let l = seen(c, &SIMULATIONS[0].1)[0];
            assert!((28.0..=72.0).contains(&l), "#{c:06X}: L* {l:.1}");
        }
    }

    #[test]
    fn simulation_keeps_grey_grey() {
        // A neutral grey stays (nearly) neutral under each simulation: the rows of each
        // matrix sum to 1 (a property of the published matrices).
        for (name, m) in &SIMULATIONS {
            let [_, a, b] = seen(0x808080, m);
            assert!(a.abs() < 0.5 && b.abs() < 0.5, "{name}: a* {a}, b* {b}");
        }
    }
}
