//! The partial-results bundle: everything a report needs from one partition of a run (by site
//! or period), written by `hazebook run --partial` and read by `hazebook merge`.
//!
//! One JSON document, `<report stem>.partial.json`, written atomically. Every floating-point
//! number is a string holding the shortest decimal that reads back to the same double
//! (`"0.1"`, `"-12.345678901234567"`, `"1e-7"`), or `"NaN"`, `"inf"`, `"-inf"`: JSON has no
//! NaN, and a JSON number is not read back bit for bit by every parser, while the merge must
//! reproduce the single run's report exactly ([`crate::physics::serde_float`]). See
//! DEVELOPERS.md for the fields.

use std::collections::BTreeMap;
use std::path::Path;

use chrono::{DateTime, Utc};

use crate::ingest::{
    Assumption, Counts, IgnoredColumn, InputFile, MappedColumn, Period, Rejection, RowOrigin,
    RowWarning,
};
use crate::physics::{Observation, ObservationResult, Settings};

/// Value of [`Bundle::format`].
pub const FORMAT: &str = "hazebook-partial";
/// Value of [`Bundle::format_version`] written by this version.
pub const FORMAT_VERSION: u32 = 1;

/// The period window a partition was selected by.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PeriodWindow {
    pub label: String,
    pub start_utc: DateTime<Utc>,
    pub end_utc: DateTime<Utc>,
}

impl From<&Period> for PeriodWindow {
    fn from(p: &Period) -> Self {
        Self {
            label: p.label.clone(),
            start_utc: p.start,
            end_utc: p.end,
        }
    }
}

/// One accepted and computed input row.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BundleRow {
    pub site: String,
    pub origin: RowOrigin,
    pub observation: Observation,
    pub warnings: Vec<RowWarning>,
    pub result: ObservationResult,
}

/// The partial results of one run.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Bundle {
    /// Always [`FORMAT`].
    pub format: String,
    /// [`FORMAT_VERSION`] of the writer.
    pub format_version: u32,
    /// Version of hazebook that computed the results.
    pub hazebook_version: String,
    pub job_name: String,
    /// Path of the job file as given, if one was used.
    pub job_file: Option<String>,
    /// Text of the job file, if one was used.
    pub job_text: Option<String>,
    pub period: Option<PeriodWindow>,
    /// Site filter (`--site`); empty: every site.
    pub sites: Vec<String>,
    pub settings: Settings,
    /// Template name or path of the run.
    pub template: String,
    /// Accepted rows of the partition, in input order.
    pub rows: Vec<BundleRow>,
    /// Rejected rows of the whole reading (a site filter does not apply to them).
    pub rejected: Vec<Rejection>,
    /// File- and sheet-level warnings while reading.
    pub warnings: Vec<String>,
    pub files: Vec<InputFile>,
    pub mapping: Vec<MappedColumn>,
    /// Assumptions tallied over the rows read in the period (before a site filter).
    pub assumptions: Vec<Assumption>,
    /// Counts of the partition: `read` every row read from the files, `computed` the rows
    /// here, `rejected` every rejected row, `outside_period` the rest (other periods and,
    /// with a site filter, other sites).
    pub counts: Counts,
    /// Rows left out by the site filter (included in `counts.outside_period`).
    pub outside_site: usize,
    /// Header columns not read, with the reason (absent in older bundles).
    #[serde(default)]
    pub ignored: Vec<IgnoredColumn>,
    /// Site-sheet columns and how they were read.
    #[serde(default)]
    pub site_columns: Vec<MappedColumn>,
    /// How the sites of each sheet were found.
    #[serde(default)]
    pub site_rules: Vec<String>,
    /// Site key → report label (`Harlsby Flats (HRF)`).
    #[serde(default)]
    pub site_labels: BTreeMap<String, String>,
    /// About-sheet notes on the input uncertainties that were propagated (absent in older
    /// bundles).
    #[serde(default)]
    pub uncertainty_notes: Vec<String>,
    /// Lower-case hex SHA-256 of the bundle's bytes before this field, which the writer
    /// appends last ([`to_bytes`]); checked by [`read_checked`] so that edited results are
    /// noticed. Never serialised by serde.
    #[serde(default, skip_serializing)]
    pub content_sha256: Option<String>,
}

/// Name of the digest field, the last of every bundle.
const DIGEST_FIELD: &str = "content_sha256";

/// Whether a bundle's content still matches the digest it carries.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Integrity {
    Intact,
    /// No digest: written by hand or by an earlier hazebook.
    Missing,
    /// The bytes do not match the digest: the file was changed after it was written.
    Edited,
}

/// A bundle that cannot be read or written.
#[derive(Debug, thiserror::Error)]
pub enum PartialError {
    #[error("{path}: cannot read the partial results: {reason}")]
    Unreadable { path: String, reason: String },
    #[error(
        "{path}: not a hazebook partial-results file (expected the JSON that `hazebook run --partial` writes, with \"format\": \"{FORMAT}\")"
    )]
    NotABundle { path: String },
    #[error(
        "{path}: partial-results format version {found}; this hazebook reads version {FORMAT_VERSION}. Rerun the partition with this version."
    )]
    Version { path: String, found: u32 },
    #[error("{path}: damaged partial results: {reason}. Rerun the partition that wrote it.")]
    Damaged { path: String, reason: String },
    #[error("{path}: cannot write the partial results: {reason}")]
    Write { path: String, reason: String },
    #[error(
        "{path}: the partial results were changed after they were written (the content no longer matches the SHA-256 recorded in the file); rerun the partition that wrote it"
    )]
    Edited { path: String },
    #[error(
        "{path}: the partial results carry no content digest (written by hand or by an earlier hazebook); rerun the partition with this version"
    )]
    NoDigest { path: String },
    #[error(
        "{path}: {place}: {reason}; a run would have rejected this row, so the bundle cannot be merged. Rerun the partition that wrote it"
    )]
    Invalid {
        path: String,
        place: String,
        reason: String,
    },
}

/// The bytes of a bundle: compact JSON, with the SHA-256 of everything before it appended as
/// the last field ([`Bundle::content_sha256`]), and a final newline.
///
/// Errors: [`PartialError::Write`] when the bundle cannot be serialised.
pub fn to_bytes(path: &Path, bundle: &Bundle) -> Result<Vec<u8>, PartialError> {
    let err = |reason: String| PartialError::Write {
        path: path.display().to_string(),
        reason,
    };
    let mut bytes = serde_json::to_vec(bundle).map_err(|e| err(e.to_string()))?;
    let hex = sha256_hex(&bytes);
    if bytes.pop() != Some(b'}') {
        return Err(err("the bundle is not a JSON object".into()));
    }
    bytes.extend_from_slice(format!(",\"{DIGEST_FIELD}\":\"{hex}\"}}\n").as_bytes());
    Ok(bytes)
}

/// Write a bundle atomically (temporary file in the same folder, then rename).
///
/// Errors: [`PartialError::Write`] when the folder is not writable.
pub fn write(path: &Path, bundle: &Bundle) -> Result<(), PartialError> {
    let bytes = to_bytes(path, bundle)?;
    super::output::write_atomic(path, &bytes).map_err(|e| PartialError::Write {
        path: path.display().to_string(),
        reason: e.to_string(),
    })
}

fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest;
    sha2::Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Whether `bytes` still hash to the digest `stated` that ends them.
fn integrity(bytes: &[u8], stated: Option<&str>) -> Integrity {
    let Some(stated) = stated else {
        return Integrity::Missing;
    };
    let text = bytes.trim_ascii_end();
    let marker = format!(",\"{DIGEST_FIELD}\":\"");
    let tail = format!("{marker}{stated}\"}}");
    let Some(body) = text.strip_suffix(tail.as_bytes()) else {
        return Integrity::Edited;
    };
    let mut body = body.to_vec();
    body.push(b'}');
    if sha256_hex(&body) == stated {
        Integrity::Intact
    } else {
        Integrity::Edited
    }
}

/// Check every observation of a bundle as the reader checks cells (ranges, finite values),
/// and that its counts fit its rows.
///
/// Errors: [`PartialError::Invalid`] naming the row.
pub fn validate(path: &Path, bundle: &Bundle) -> Result<(), PartialError> {
    let p = path.display().to_string();
    for r in &bundle.rows {
        if let Err(reason) = crate::ingest::check_observation(&r.observation) {
            let place = if r.origin.sheet.is_empty() {
                format!("{}, row {}", r.origin.file, r.origin.row)
            } else {
                format!(
                    "{}, sheet \"{}\", row {}",
                    r.origin.file, r.origin.sheet, r.origin.row
                )
            };
            return Err(PartialError::Invalid {
                path: p,
                place,
                reason,
            });
        }
    }
    let c = bundle.counts;
    if c.computed != bundle.rows.len()
        || c.rejected != bundle.rejected.len()
        || c.read != c.computed + c.rejected + c.outside_period
    {
        return Err(PartialError::Invalid {
            path: p,
            place: "counts".into(),
            reason: format!(
                "{} rows, {} rejected rows, but counts read {} = computed {} + rejected {} + outside {}",
                bundle.rows.len(),
                bundle.rejected.len(),
                c.read,
                c.computed,
                c.rejected,
                c.outside_period
            ),
        });
    }
    Ok(())
}

/// Read a bundle, checking its format tag and version first so that a wrong file gets a
/// clear message.
///
/// Errors: [`PartialError::Unreadable`] (missing file), [`PartialError::NotABundle`],
/// [`PartialError::Version`], [`PartialError::Damaged`] (truncated or edited).
pub fn read(path: &Path) -> Result<Bundle, PartialError> {
    read_checked(path).map(|(b, _)| b)
}

/// [`read`], also telling whether the content still matches its digest (the caller decides
/// when to refuse, after its own checks of compatibility).
pub fn read_checked(path: &Path) -> Result<(Bundle, Integrity), PartialError> {
    let p = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| PartialError::Unreadable {
        path: p.clone(),
        reason: e.to_string(),
    })?;
    #[derive(serde::Deserialize)]
    struct Head {
        format: Option<String>,
        format_version: Option<u32>,
    }
    let head: Head = match serde_json::from_slice(&bytes) {
        Ok(h) => h,
        Err(e) if e.is_syntax() || e.is_eof() => {
            // A truncated bundle still starts with its tag.
            let start = String::from_utf8_lossy(&bytes[..bytes.len().min(64)]).into_owned();
            if start.contains(FORMAT) {
                return Err(PartialError::Damaged {
                    path: p,
                    reason: e.to_string(),
                });
            }
            return Err(PartialError::NotABundle { path: p });
        }
        Err(_) => return Err(PartialError::NotABundle { path: p }),
    };
    if head.format.as_deref() != Some(FORMAT) {
        return Err(PartialError::NotABundle { path: p });
    }
    match head.format_version {
        Some(FORMAT_VERSION) => {}
        Some(found) => return Err(PartialError::Version { path: p, found }),
        None => return Err(PartialError::NotABundle { path: p }),
    }
    let bundle: Bundle = serde_json::from_slice(&bytes).map_err(|e| PartialError::Damaged {
        path: p,
        reason: e.to_string(),
    })?;
    let state = integrity(&bytes, bundle.content_sha256.as_deref());
    Ok((bundle, state))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::{Effect, Flags};

    #[derive(Debug, serde::Serialize, serde::Deserialize)]
    struct Holder {
        #[serde(with = "crate::physics::serde_float::float")]
        x: f64,
        #[serde(with = "crate::physics::serde_float::opt_float")]
        y: Option<f64>,
    }

    fn round(x: f64, y: Option<f64>) -> (f64, Option<f64>) {
        let s = serde_json::to_string(&Holder { x, y }).unwrap();
        let h: Holder = serde_json::from_str(&s).unwrap();
        (h.x, h.y)
    }

    #[test]
    fn floats_round_trip_bit_for_bit() {
        // A xorshift sequence over many magnitudes: plain JSON numbers lose the last bit of
        // about one value in ten through serde_json's default parser; strings must not.
        let mut s: u64 = 0x9E37_79B9_7F4A_7C15;
        for i in 0..20_000 {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            let v = ((s >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 10f64.powi(i % 40 - 20);
            let (x, y) = round(v, Some(-v));
            assert_eq!(x.to_bits(), v.to_bits(), "{v:?}");
            assert_eq!(y.unwrap().to_bits(), (-v).to_bits(), "{v:?}");
        }
        for v in [
            0.0,
            -0.0,
            f64::MIN_POSITIVE,
            5e-324,
            f64::MAX,
            1e300,
            1e-300,
        ] {
            assert_eq!(round(v, None).0.to_bits(), v.to_bits(), "{v:?}");
            assert_eq!(round(v, None).1, None);
        }
    }

    #[test]
    fn non_finite_values_round_trip() {
        assert!(round(f64::NAN, Some(f64::NAN)).0.is_nan());
        assert!(round(f64::NAN, Some(f64::NAN)).1.unwrap().is_nan());
        assert_eq!(round(f64::INFINITY, None).0, f64::INFINITY);
        assert_eq!(round(f64::NEG_INFINITY, None).0, f64::NEG_INFINITY);
        let s = serde_json::to_string(&Holder {
            x: f64::NAN,
            y: None,
        })
        .unwrap();
        assert_eq!(s, r#"{"x":"NaN","y":null}"#);
        // Hand-written bundles may give plain numbers or null.
        let h: Holder = serde_json::from_str(r#"{"x":null,"y":2.5}"#).unwrap();
        assert!(h.x.is_nan());
        assert_eq!(h.y, Some(2.5));
        assert!(serde_json::from_str::<Holder>(r#"{"x":"abc","y":null}"#).is_err());
    }

    #[test]
    fn a_result_with_nan_efficiencies_round_trips() {
        let effect = Effect {
            dre_toa: -3.25,
            efficiency_toa: f64::NAN,
            efficiency_sfc: f64::NAN,
            heating_rate_k_day: 0.1 + 0.2,
            ..Effect::default()
        };
        let r = ObservationResult {
            aod_550: 0.0,
            pressure_hpa: 1013.25,
            solar_zenith_deg: 91.5,
            instantaneous: effect,
            daily: effect,
            daylight_hours: f64::NAN,
            flags: Flags {
                sun_below_horizon: true,
                ..Flags::default()
            },
            uncertainty: None,
            solver_error: Default::default(),
        };
        let s = serde_json::to_string(&r).unwrap();
        let back: ObservationResult = serde_json::from_str(&s).unwrap();
        assert!(back.instantaneous.efficiency_toa.is_nan());
        assert!(back.daily.efficiency_sfc.is_nan());
        assert!(back.daylight_hours.is_nan());
        assert_eq!(
            back.daily.heating_rate_k_day.to_bits(),
            (0.1f64 + 0.2).to_bits()
        );
        assert_eq!(back.flags, r.flags);
        assert_eq!(back.instantaneous.dre_toa, -3.25);
    }

    #[test]
    fn wrong_files_get_clear_errors() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("x.json");
        std::fs::write(&p, br#"{"rows": []}"#).unwrap();
        assert!(matches!(read(&p), Err(PartialError::NotABundle { .. })));
        std::fs::write(&p, b"not json").unwrap();
        assert!(matches!(read(&p), Err(PartialError::NotABundle { .. })));
        std::fs::write(&p, br#"{"format":"hazebook-partial","format_version":9}"#).unwrap();
        assert!(matches!(
            read(&p),
            Err(PartialError::Version { found: 9, .. })
        ));
        std::fs::write(
            &p,
            br#"{"format":"hazebook-partial","format_version":1,"rows":["#,
        )
        .unwrap();
        assert!(matches!(read(&p), Err(PartialError::Damaged { .. })));
        assert!(matches!(
            read(&dir.path().join("missing.json")),
            Err(PartialError::Unreadable { .. })
        ));
    }
}
