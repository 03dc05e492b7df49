//! Where each value of a row comes from: the row, then the site (site sheet or job file),
//! then the job defaults, then the built-in defaults. Values that do not come from the row
//! are recorded as assumptions with their [`ValueSource`].

use std::collections::HashMap;

use super::types::{AtmosphereDefaults, SiteInfo, SurfaceType, ValueSource};

/// A site value and where it came from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Sourced<T> {
    pub value: T,
    pub source: ValueSource,
}

/// One site, merged from the site sheet and the job file (the job file wins field by field).
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct SiteEntry {
    pub name: String,
    /// `name`, shared by the assumptions of its rows.
    pub rc: std::sync::Arc<str>,
    /// Full name shown beside the key in the report.
    pub full_name: Option<String>,
    pub latitude_deg: Option<Sourced<f64>>,
    pub longitude_deg: Option<Sourced<f64>>,
    pub altitude_m: Option<Sourced<f64>>,
    pub pressure_hpa: Option<Sourced<f64>>,
    pub albedo: Option<Sourced<f64>>,
    pub surface: Option<Sourced<SurfaceType>>,
    pub utc_offset_hours: Option<Sourced<f64>>,
}

impl Default for SiteEntry {
    fn default() -> Self {
        Self {
            name: String::new(),
            rc: std::sync::Arc::from(""),
            full_name: None,
            latitude_deg: None,
            longitude_deg: None,
            altitude_m: None,
            pressure_hpa: None,
            albedo: None,
            surface: None,
            utc_offset_hours: None,
        }
    }
}

/// Sites by name (case- and space-insensitive).
#[derive(Debug, Clone, Default)]
pub(crate) struct SiteTable {
    pub entries: Vec<SiteEntry>,
    by_name: HashMap<String, usize>,
}

/// Site names compare case- and space-insensitively.
pub(crate) fn site_key(name: &str) -> std::borrow::Cow<'_, str> {
    let plain = name
        .bytes()
        .all(|b| b.is_ascii() && !b.is_ascii_uppercase())
        && !name.starts_with(' ')
        && !name.ends_with(' ')
        && !name.contains("  ")
        && !name.contains(['\t', '\n', '\r']);
    if plain {
        std::borrow::Cow::Borrowed(name)
    } else {
        std::borrow::Cow::Owned(
            name.split_whitespace()
                .collect::<Vec<_>>()
                .join(" ")
                .to_lowercase(),
        )
    }
}

/// The Fx hash (the multiply-rotate hash of the Rust compiler's `FxHasher`; common practice
/// for short keys where HashDoS is no concern): much cheaper than SipHash per row.
#[derive(Default, Clone, Copy)]
pub(crate) struct FxHasher(u64);

impl std::hash::Hasher for FxHasher {
    fn write(&mut self, bytes: &[u8]) {
        for chunk in bytes.chunks(8) {
            let mut b = [0u8; 8];
            b[..chunk.len()].copy_from_slice(chunk);
            self.write_u64(u64::from_le_bytes(b));
        }
    }
    fn write_u64(&mut self, v: u64) {
        self.0 = (self.0.rotate_left(5) ^ v).wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
    }
    fn write_u8(&mut self, v: u8) {
        self.write_u64(v as u64);
    }
    fn write_usize(&mut self, v: usize) {
        self.write_u64(v as u64);
    }
    fn finish(&self) -> u64 {
        self.0
    }
}

pub(crate) type FxBuild = std::hash::BuildHasherDefault<FxHasher>;

impl SiteTable {
    /// Merge sites of a site sheet with those of the job file.
    pub(crate) fn merge(sheet: &[SiteInfo], job: &[SiteInfo]) -> Self {
        let mut t = SiteTable::default();
        for (list, source) in [(sheet, ValueSource::SiteTable), (job, ValueSource::JobFile)] {
            for s in list {
                let key = site_key(&s.name).into_owned();
                let idx = *t.by_name.entry(key).or_insert_with(|| {
                    t.entries.push(SiteEntry {
                        name: s.name.trim().to_string(),
                        rc: std::sync::Arc::from(s.name.trim()),
                        ..Default::default()
                    });
                    t.entries.len() - 1
                });
                let e = &mut t.entries[idx];
                let put = |slot: &mut Option<Sourced<f64>>, v: Option<f64>| {
                    if let Some(value) = v {
                        *slot = Some(Sourced { value, source });
                    }
                };
                put(&mut e.latitude_deg, s.latitude_deg);
                put(&mut e.longitude_deg, s.longitude_deg);
                put(&mut e.altitude_m, s.altitude_m);
                put(&mut e.pressure_hpa, s.pressure_hpa);
                put(&mut e.albedo, s.albedo);
                put(&mut e.utc_offset_hours, s.utc_offset_hours);
                if let Some(f) = s.full_name.as_ref().filter(|f| !f.trim().is_empty()) {
                    e.full_name = Some(f.trim().to_string());
                }
                if let Some(value) = s.surface {
                    e.surface = Some(Sourced { value, source });
                }
            }
        }
        t
    }

    pub(crate) fn get(&self, name: &str) -> Option<&SiteEntry> {
        // A short name of printable ASCII with single inner spaces (the usual case, looked up
        // once per row) is folded on the stack: the same key as [`site_key`] gives.
        let bytes = name.as_bytes();
        let simple = bytes.len() <= 64
            && bytes.iter().all(|&b| b.is_ascii_graphic() || b == b' ')
            && !name.starts_with(' ')
            && !name.ends_with(' ')
            && !name.contains("  ");
        if simple {
            let mut buf = [0u8; 64];
            let key = &mut buf[..bytes.len()];
            key.copy_from_slice(bytes);
            key.make_ascii_lowercase();
            if let Ok(key) = std::str::from_utf8(key) {
                return self.by_name.get(key).map(|&i| &self.entries[i]);
            }
        }
        self.by_name
            .get(site_key(name).as_ref())
            .map(|&i| &self.entries[i])
    }

    pub(crate) fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }
}

/// Source of a job default: [`ValueSource::JobFile`] when the job file writes `key` out or
/// the value differs from the built-in one, else [`ValueSource::BuiltIn`].
pub(crate) fn job_default_source<T: PartialEq>(
    explicit: &[String],
    key: &str,
    defaults: &AtmosphereDefaults,
    field: impl Fn(&AtmosphereDefaults) -> T,
) -> ValueSource {
    if explicit.iter().any(|k| k == key) || field(defaults) != field(&AtmosphereDefaults::default())
    {
        ValueSource::JobFile
    } else {
        ValueSource::BuiltIn
    }
}

/// Ångström exponent fitted to AOD at two or more wavelengths.
///
/// Ångström (1929) law τ(λ) = β·λ^−α, fitted by ordinary least squares of ln τ against ln λ
/// (the usual practice for sun-photometer AOD, e.g. Eck et al. 1999, J. Geophys. Res. 104,
/// 31333–31349; from memory). With two wavelengths this is the two-point exponent
/// −ln(τ₁/τ₂)/ln(λ₁/λ₂).
///
/// - `points`: (wavelength [nm], AOD [unitless]) pairs; only AOD > 0 can enter the fit.
///
/// Returns α [unitless], or `None` with fewer than two usable points or one wavelength.
pub fn fit_angstrom(points: &[(f64, f64)]) -> Option<f64> {
    let xy: Vec<(f64, f64)> = points
        .iter()
        .filter(|(w, t)| *w > 0.0 && *t > 0.0 && w.is_finite() && t.is_finite())
        .map(|(w, t)| (w.ln(), t.ln()))
        .collect();
    if xy.len() < 2 {
        return None;
    }
    let n = xy.len() as f64;
    let mx = xy.iter().map(|p| p.0).sum::<f64>() / n;
    let my = xy.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = xy.iter().map(|p| (p.0 - mx).powi(2)).sum();
    if sxx <= 1e-12 {
        return None;
    }
    let sxy: f64 = xy.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    Some(-sxy / sxx)
}

/// A spectral quantity at `wavelength_nm`: linear in ln λ between the given wavelengths, the
/// end values held outside them (hazebook's aerosol spectral model, README "Methods").
///
/// - `points`: (wavelength [nm], value) sorted by ascending wavelength, non-empty.
pub fn interpolate_ln_wavelength(points: &[(f64, f64)], wavelength_nm: f64) -> f64 {
    match points {
        [] => f64::NAN,
        [(_, v)] => *v,
        _ => {
            let first = points[0];
            let last = points[points.len() - 1];
            if wavelength_nm <= first.0 {
                return first.1;
            }
            if wavelength_nm >= last.0 {
                return last.1;
            }
            for w in points.windows(2) {
                let (a, b) = (w[0], w[1]);
                if wavelength_nm <= b.0 {
                    let f = (wavelength_nm.ln() - a.0.ln()) / (b.0.ln() - a.0.ln());
                    return a.1 + f * (b.1 - a.1);
                }
            }
            last.1
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn angstrom_two_point_and_ols() {
        // Exact power law with α = 1.4: τ = 0.3 (λ/500)^−1.4
        let pts: Vec<(f64, f64)> = [440.0, 500.0, 675.0, 870.0]
            .iter()
            .map(|&w| (w, 0.3 * (w / 500.0f64).powf(-1.4)))
            .collect();
        assert!((fit_angstrom(&pts).unwrap() - 1.4).abs() < 1e-12);
        let two = [(440.0, 0.4), (870.0, 0.2)];
        let expected = -(0.4f64 / 0.2).ln() / (440.0f64 / 870.0).ln();
        assert!((fit_angstrom(&two).unwrap() - expected).abs() < 1e-12);
        assert_eq!(fit_angstrom(&[(500.0, 0.2)]), None);
        assert_eq!(fit_angstrom(&[(500.0, 0.2), (870.0, 0.0)]), None);
    }

    #[test]
    fn interpolation_in_ln_wavelength() {
        let pts = [(440.0, 0.9), (870.0, 0.8)];
        assert_eq!(interpolate_ln_wavelength(&pts, 400.0), 0.9);
        assert_eq!(interpolate_ln_wavelength(&pts, 1000.0), 0.8);
        let mid = (440.0f64 * 870.0).sqrt();
        assert!((interpolate_ln_wavelength(&pts, mid) - 0.85).abs() < 1e-12);
    }

    #[test]
    fn site_lookup_ignores_case_and_spacing() {
        let job: Vec<SiteInfo> = ["Mauna Loa", "north", "Ny-Ålesund"]
            .iter()
            .map(|n| SiteInfo {
                name: n.to_string(),
                ..Default::default()
            })
            .collect();
        let t = SiteTable::merge(&[], &job);
        for (query, want) in [
            ("MAUNA LOA", Some("Mauna Loa")),
            (" mauna  loa ", Some("Mauna Loa")),
            ("mauna\tloa", Some("Mauna Loa")),
            ("North", Some("north")),
            ("NY-ÅLESUND", Some("Ny-Ålesund")),
            ("ny-ålesund", Some("Ny-Ålesund")),
            ("South", None),
            ("", None),
        ] {
            assert_eq!(t.get(query).map(|e| e.name.as_str()), want, "{query:?}");
        }
    }

    #[test]
    fn job_file_wins_over_sheet() {
        let sheet = [SiteInfo {
            name: "Lhasa".into(),
            latitude_deg: Some(29.6),
            altitude_m: Some(3650.0),
            ..Default::default()
        }];
        let job = [SiteInfo {
            name: " lhasa ".into(),
            altitude_m: Some(3649.0),
            ..Default::default()
        }];
        let t = SiteTable::merge(&sheet, &job);
        let e = t.get("LHASA").unwrap();
        assert_eq!(
            e.altitude_m,
            Some(Sourced {
                value: 3649.0,
                source: ValueSource::JobFile
            })
        );
        assert_eq!(
            e.latitude_deg,
            Some(Sourced {
                value: 29.6,
                source: ValueSource::SiteTable
            })
        );
        assert_eq!(&*e.rc, "Lhasa");
        assert_eq!(&*t.get("lhasa").unwrap().rc, "Lhasa");
    }
}
