//! The job file's `[uncertainty]` section: declared 1σ uncertainties of the inputs, whether
//! each is random from day to day or systematic, and the built-in typical values.
//!
//! ```toml
//! [uncertainty]
//! builtin = true                   # typical values below for every input not given here
//! aod = { absolute = 0.01, relative = 0.02, nature = "systematic" }
//! ssa = { absolute = 0.03, nature = "random" }
//! ```

use serde::Deserialize;

use crate::physics::uncertainty::{Declared, Input, InputSigma, Nature};

/// `[uncertainty]`.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UncertaintySection {
    /// Take the built-in typical value ([`BUILTIN`]) for every input not given here.
    #[serde(default)]
    pub builtin: bool,
    pub aod: Option<Entry>,
    pub angstrom: Option<Entry>,
    pub ssa: Option<Entry>,
    pub asymmetry: Option<Entry>,
    pub albedo: Option<Entry>,
    pub ozone: Option<Entry>,
    pub water: Option<Entry>,
    pub layer_top: Option<Entry>,
}

/// One input's declared 1σ: `absolute` [unit of the input] and `relative` [fraction of the
/// value] combine as √(absolute² + (relative·x)²).
#[derive(Debug, Clone, Copy, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Entry {
    #[serde(default)]
    pub absolute: f64,
    #[serde(default)]
    pub relative: f64,
    /// `random` (day to day) or `systematic` (the same on every day); default: the built-in
    /// value's nature.
    pub nature: Option<NatureName>,
}

/// `nature = "random" | "systematic"`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum NatureName {
    Random,
    Systematic,
}

/// A built-in typical uncertainty and where it comes from.
pub struct Builtin {
    pub input: Input,
    pub absolute: f64,
    pub relative: f64,
    pub nature: Nature,
    pub source: &'static str,
}

/// Typical uncertainties of sun-photometer and retrieval inputs (each marked with its source,
/// from memory or common practice).
pub const BUILTIN: &[Builtin] = &[
    Builtin {
        input: Input::Aod,
        absolute: 0.01,
        relative: 0.0,
        nature: Nature::Systematic,
        source: "calibrated field sun photometers, about 0.01–0.02 in AOD (Holben et al. 1998, Remote Sens. Environ. 66, 1–16; from memory); a calibration error, so systematic",
    },
    Builtin {
        input: Input::Angstrom,
        absolute: 0.1,
        relative: 0.0,
        nature: Nature::Random,
        source: "common practice (from memory): a few tenths at low AOD, about 0.1 for moderate AOD",
    },
    Builtin {
        input: Input::Ssa,
        absolute: 0.03,
        relative: 0.0,
        nature: Nature::Random,
        source: "sky-radiance inversions, about 0.03 for AOD(440) above 0.4, larger below (Dubovik et al. 2000, J. Geophys. Res. 105, 9791–9806; from memory)",
    },
    Builtin {
        input: Input::Asymmetry,
        absolute: 0.03,
        relative: 0.0,
        nature: Nature::Random,
        source: "sky-radiance inversions, a few hundredths (Dubovik et al. 2000; value from memory)",
    },
    Builtin {
        input: Input::Albedo,
        absolute: 0.02,
        relative: 0.0,
        nature: Nature::Systematic,
        source: "common practice: broadband albedo of a site known to about 0.02; the same error every day",
    },
    Builtin {
        input: Input::Ozone,
        absolute: 0.0,
        relative: 0.03,
        nature: Nature::Random,
        source: "total-ozone columns to about 3 % (from memory)",
    },
    Builtin {
        input: Input::Water,
        absolute: 0.0,
        relative: 0.10,
        nature: Nature::Random,
        source: "sun-photometer precipitable water to about 10 % (from memory)",
    },
    Builtin {
        input: Input::LayerTop,
        absolute: 0.5,
        relative: 0.0,
        nature: Nature::Systematic,
        source: "common practice: a layer top from a profile climatology is uncertain by about 0.5 km",
    },
];

fn builtin_of(i: Input) -> &'static Builtin {
    BUILTIN
        .iter()
        .find(|b| b.input == i)
        .expect("every input has a built-in entry")
}

fn nature_text(n: Nature) -> &'static str {
    match n {
        Nature::Random => "random (day to day)",
        Nature::Systematic => "systematic (same every day)",
    }
}

fn sigma_text(absolute: f64, relative: f64) -> String {
    match (absolute > 0.0, relative > 0.0) {
        (true, true) => format!("{absolute} + {}%", relative * 100.0),
        (false, true) => format!("{}%", relative * 100.0),
        _ => format!("{absolute}"),
    }
}

impl UncertaintySection {
    fn entry(&self, i: Input) -> Option<Entry> {
        match i {
            Input::Aod => self.aod,
            Input::Angstrom => self.angstrom,
            Input::Ssa => self.ssa,
            Input::Asymmetry => self.asymmetry,
            Input::Albedo => self.albedo,
            Input::Ozone => self.ozone,
            Input::Water => self.water,
            Input::LayerTop => self.layer_top,
        }
    }

    /// The declared uncertainties and one About-sheet line per input that applied.
    /// `template_asks`: the report template asks for propagation (built-in values then apply
    /// to every input the job does not declare).
    ///
    /// Errors: a negative or non-finite σ, naming the key.
    pub fn resolve(&self, template_asks: bool) -> Result<(Declared, Vec<String>), String> {
        let mut d = Declared::default();
        let mut lines = Vec::new();
        let use_builtin = self.builtin || template_asks;
        for i in Input::ALL {
            let b = builtin_of(i);
            match self.entry(i) {
                Some(e) => {
                    for (name, v) in [("absolute", e.absolute), ("relative", e.relative)] {
                        if !(v.is_finite() && v >= 0.0) {
                            return Err(format!(
                                "[uncertainty] {}: `{name}` must be a number ≥ 0 (a 1σ uncertainty), found {v}",
                                i.key()
                            ));
                        }
                    }
                    let nature = match e.nature {
                        Some(NatureName::Random) => Nature::Random,
                        Some(NatureName::Systematic) => Nature::Systematic,
                        None => b.nature,
                    };
                    d.set(
                        i,
                        InputSigma {
                            absolute: e.absolute,
                            relative: e.relative,
                            nature,
                        },
                    );
                    lines.push(format!(
                        "Uncertainty of {}: 1σ = {}, {}; from the job file.",
                        i.label(),
                        sigma_text(e.absolute, e.relative),
                        nature_text(nature)
                    ));
                }
                None if use_builtin => {
                    d.set(
                        i,
                        InputSigma {
                            absolute: b.absolute,
                            relative: b.relative,
                            nature: b.nature,
                        },
                    );
                    lines.push(format!(
                        "Uncertainty of {}: 1σ = {}, {}; built-in typical value: {}.",
                        i.label(),
                        sigma_text(b.absolute, b.relative),
                        nature_text(b.nature),
                        b.source
                    ));
                }
                None => {}
            }
        }
        if d.is_empty() {
            lines.clear();
        }
        Ok((d, lines))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn job_values_override_builtin_and_keep_its_nature() {
        let s: UncertaintySection =
            toml::from_str("builtin = true\nssa = { absolute = 0.05 }\naod = { absolute = 0.02, relative = 0.05, nature = \"random\" }").unwrap();
        let (d, lines) = s.resolve(false).unwrap();
        let ssa = d.get(Input::Ssa).unwrap();
        assert_eq!((ssa.absolute, ssa.nature), (0.05, Nature::Random));
        let aod = d.get(Input::Aod).unwrap();
        assert_eq!((aod.relative, aod.nature), (0.05, Nature::Random));
        assert_eq!(d.get(Input::Water).unwrap().relative, 0.10);
        assert_eq!(lines.len(), 8);
        assert!(lines.iter().any(|l| l.contains("from the job file")));
    }

    #[test]
    fn nothing_declared_means_no_propagation() {
        let (d, lines) = UncertaintySection::default().resolve(false).unwrap();
        assert!(d.is_empty() && lines.is_empty());
        let (d, _) = UncertaintySection::default().resolve(true).unwrap();
        assert!(!d.is_empty());
    }

    #[test]
    fn negative_sigma_is_refused_with_its_key() {
        let s: UncertaintySection = toml::from_str("ssa = { absolute = -0.01 }").unwrap();
        let e = s.resolve(false).unwrap_err();
        assert!(
            e.contains("[uncertainty] ssa") && e.contains("absolute"),
            "{e}"
        );
        assert!(toml::from_str::<UncertaintySection>("ssa = { sigma = 0.01 }").is_err());
    }
}
