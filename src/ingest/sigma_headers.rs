//! Headers of per-row uncertainty (1σ) columns: `SSA uncertainty`, `ssa_unc`, `σ SSA`,
//! `u(AOD)`, `AOD_500 uncertainty (%)`, and a bare `uncertainty` / `unc` / `±` column
//! immediately right of a quantity column. Common practice of campaign workbooks.
//!
//! A σ header is a quantity header (read by [`parse_header`], so every spelling of the
//! quantity's alias table works) with one σ marker before it ([`PREFIX_MARKERS`]) or after it
//! ([`SUFFIX_MARKERS`]); `%` or `percent` makes it a relative σ (of the value, in percent).

use super::detect::{Kind, parse_header, tokens};
use crate::physics::uncertainty::Input;

/// Words before a quantity that make its header a 1σ column (`sigma ssa`, `u(aod)`).
pub(crate) const PREFIX_MARKERS: &[&str] = &[
    "sigma",
    "delta",
    "u",
    "unc",
    "uncertainty",
    "err",
    "error",
    "pm",
    "std",
    "sd",
];

/// Words after a quantity that make its header a 1σ column (`ssa_unc`, `aod error`).
pub(crate) const SUFFIX_MARKERS: &[&str] = &[
    "uncertainty",
    "unc",
    "uncert",
    "err",
    "error",
    "sigma",
    "pm",
    "std",
    "sd",
    "1sigma",
];

/// A header read as the 1σ of a quantity.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct SigmaHeader {
    pub input: Input,
    /// Wavelength named in the header [nm].
    pub wavelength_nm: Option<f64>,
    /// The values are percent of the quantity's value (`AOD uncertainty (%)`).
    pub percent: bool,
}

/// The input of a quantity that can carry an uncertainty.
pub(crate) fn input_of(kind: Kind) -> Option<Input> {
    Some(match kind {
        Kind::Aod => Input::Aod,
        Kind::Angstrom => Input::Angstrom,
        Kind::Ssa => Input::Ssa,
        Kind::Asymmetry => Input::Asymmetry,
        Kind::Albedo => Input::Albedo,
        Kind::Ozone => Input::Ozone,
        Kind::Water => Input::Water,
        Kind::LayerTop => Input::LayerTop,
        _ => return None,
    })
}

/// Header words with `±` and `σ` spelled out and `%` kept as `percent`.
fn sigma_tokens(text: &str) -> Vec<String> {
    let spelled = text
        .replace('±', " pm ")
        .replace(['σ', 'Σ'], " sigma ")
        .replace("+/-", " pm ")
        .replace("+-", " pm ");
    tokens(&spelled)
}

/// Split `percent` out of the words.
fn take_percent(words: &mut Vec<String>) -> bool {
    let before = words.len();
    words.retain(|w| w != "percent");
    words.len() != before
}

/// Read a header as the 1σ of a quantity (`SSA uncertainty`, `sigma AOD 500`, `u(AOD)`),
/// or `None`. A bare marker (`uncertainty`) is not read here: see [`is_bare_sigma`].
pub(crate) fn parse_sigma_header(text: &str) -> Option<SigmaHeader> {
    let mut words = sigma_tokens(text);
    let percent = take_percent(&mut words);
    if words.len() < 2 {
        return None;
    }
    let rest = if PREFIX_MARKERS.contains(&words[0].as_str()) {
        words[1..].join(" ")
    } else if SUFFIX_MARKERS.contains(&words[words.len() - 1].as_str()) {
        words[..words.len() - 1].join(" ")
    } else {
        return None;
    };
    let m = parse_header(&rest)?;
    Some(SigmaHeader {
        input: input_of(m.kind)?,
        wavelength_nm: m.wavelength_nm,
        percent,
    })
}

/// True for a header that is a σ marker and nothing else (`uncertainty`, `unc`, `±`,
/// `sigma`, `err`, `± (%)`): the 1σ of the quantity column immediately left of it.
/// Returns `Some(percent)`.
pub(crate) fn is_bare_sigma(text: &str) -> Option<bool> {
    let mut words = sigma_tokens(text);
    let percent = take_percent(&mut words);
    match words.as_slice() {
        [w] if SUFFIX_MARKERS.contains(&w.as_str()) || PREFIX_MARKERS.contains(&w.as_str()) => {
            Some(percent)
        }
        _ => None,
    }
}

/// The σ columns of a header row: for each column `(column, header)` of `headers`, in
/// order, the σ it holds, its quantity column's position when the sheet has that quantity,
/// or the reason it is ignored (a σ of a quantity the sheet does not have; a bare marker
/// with no quantity on its left).
pub(crate) fn sigma_columns(
    headers: &[(usize, String)],
) -> Vec<(usize, Result<SigmaHeader, String>)> {
    let quantity = |h: &str| parse_header(h).and_then(|m| input_of(m.kind).map(|i| (i, m)));
    let mut out = Vec::new();
    for (k, (col, h)) in headers.iter().enumerate() {
        if let Some(s) = parse_sigma_header(h) {
            let has = headers.iter().any(|(_, o)| {
                quantity(o).is_some_and(|(i, m)| {
                    i == s.input
                        && (s.wavelength_nm.is_none() || m.wavelength_nm == s.wavelength_nm)
                })
            });
            out.push((
                *col,
                if has {
                    Ok(s)
                } else {
                    Err(format!(
                        "an uncertainty of {} but the sheet has no {} column{}; not read",
                        s.input.label(),
                        s.input.label(),
                        s.wavelength_nm
                            .map_or(String::new(), |w| format!(" at {w} nm"))
                    ))
                },
            ));
        } else if let Some(percent) = is_bare_sigma(h) {
            let left = k
                .checked_sub(1)
                .and_then(|j| headers.get(j))
                .filter(|(c, _)| *c + 1 == *col)
                .and_then(|(_, l)| quantity(l));
            out.push((
                *col,
                match left {
                    Some((input, m)) => Ok(SigmaHeader {
                        input,
                        wavelength_nm: m.wavelength_nm,
                        percent,
                    }),
                    None => Err(
                        "an uncertainty column, but the column on its left is not a quantity that can carry one; not read. Name it after its quantity (e.g. \"SSA uncertainty\")"
                            .to_string(),
                    ),
                },
            ));
        }
    }
    out
}

/// Why header column `c` of grid row `header_row` is not read, when it is a σ column: the
/// per-row σ it holds is named, or the reason it is ignored ([`sigma_columns`]). `None` for
/// any other column.
pub(crate) fn unread_reason(
    grid: &super::cells::Grid,
    header_row: usize,
    c: usize,
) -> Option<String> {
    let headers: Vec<(usize, String)> = (0..grid.width())
        .filter_map(|k| grid.cell(header_row, k).text().map(|t| (k, t.to_string())))
        .collect();
    let (_, found) = sigma_columns(&headers).into_iter().find(|(k, _)| *k == c)?;
    Some(match found {
        Ok(s) => format!(
            "a per-row 1σ of {}{}{}; per-row uncertainty columns are not read yet, so the job file's [uncertainty] value (or the built-in one) applies to every row",
            s.input.label(),
            s.wavelength_nm
                .map_or(String::new(), |w| format!(" at {w} nm")),
            if s.percent { " in percent" } else { "" }
        ),
        Err(why) => why,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(h: &str) -> Option<(Input, Option<f64>, bool)> {
        parse_sigma_header(h).map(|s| (s.input, s.wavelength_nm, s.percent))
    }

    #[test]
    fn every_usual_spelling_is_read() {
        let cases: &[(&str, Input, Option<f64>, bool)] = &[
            ("SSA uncertainty", Input::Ssa, None, false),
            ("ssa_unc", Input::Ssa, None, false),
            ("ssa_err", Input::Ssa, None, false),
            ("sigma SSA", Input::Ssa, None, false),
            ("σ SSA", Input::Ssa, None, false),
            ("SSA ± ", Input::Ssa, None, false),
            ("AOD_500 uncertainty", Input::Aod, Some(500.0), false),
            ("aod_unc", Input::Aod, None, false),
            ("delta AOD", Input::Aod, None, false),
            ("u(AOD)", Input::Aod, None, false),
            ("AOD error", Input::Aod, None, false),
            ("AOD uncertainty (%)", Input::Aod, None, true),
            (
                "Angstrom exponent uncertainty",
                Input::Angstrom,
                None,
                false,
            ),
            ("g_unc", Input::Asymmetry, None, false),
            ("albedo uncertainty", Input::Albedo, None, false),
            ("ozone_err", Input::Ozone, None, false),
            ("sigma PW", Input::Water, None, false),
            ("layer top uncertainty", Input::LayerTop, None, false),
            ("SSA 550 sigma", Input::Ssa, Some(550.0), false),
        ];
        for (h, i, w, p) in cases {
            assert_eq!(read(h), Some((*i, *w, *p)), "{h}");
        }
    }

    #[test]
    fn quantities_and_other_words_are_not_sigma() {
        for h in [
            "SSA",
            "AOD 500",
            "ozone",
            "error flag",
            "uncertainty",
            "time",
            "site unc",
        ] {
            assert_eq!(read(h), None, "{h}");
        }
        assert_eq!(is_bare_sigma("uncertainty"), Some(false));
        assert_eq!(is_bare_sigma("±"), Some(false));
        assert_eq!(is_bare_sigma("unc (%)"), Some(true));
        assert_eq!(is_bare_sigma("SSA"), None);
    }

    #[test]
    fn bare_columns_take_their_left_neighbour_and_orphans_are_ignored() {
        let h = |v: &[&str]| -> Vec<(usize, String)> {
            v.iter()
                .enumerate()
                .map(|(k, s)| (k, s.to_string()))
                .collect()
        };
        let got = sigma_columns(&h(&["time", "AOD 500", "±", "SSA", "unc", "g uncertainty"]));
        assert_eq!(got.len(), 3);
        assert_eq!(got[0].1.as_ref().unwrap().input, Input::Aod);
        assert_eq!(got[0].1.as_ref().unwrap().wavelength_nm, Some(500.0));
        assert_eq!(got[1].1.as_ref().unwrap().input, Input::Ssa);
        let e = got[2].1.as_ref().unwrap_err();
        assert!(e.contains("no g column"), "{e}");
        let got = sigma_columns(&h(&["time", "uncertainty"]));
        assert!(got[0].1.is_err());
    }
}
