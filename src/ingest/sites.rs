//! Which site each row belongs to: the site column (station codes or names) joined with the
//! site table; for rows without one, one fixed place, several fixed places grouped by their
//! coordinates, or one moving platform — never an empty site. Row coordinates are compared
//! with the site table's.

use std::collections::{BTreeMap, HashMap};
use std::path::Path;
use std::sync::Arc;

use super::cells::format_number;
use super::detect::Kind;
use super::read::{Accepted, SheetContext, place};
use super::resolve::{SiteEntry, SiteTable};
use super::types::{InputSpec, RowWarning};

/// Default largest distance between a row's coordinates and those of its site in the site
/// table before the row is warned about [km]. Our choice: above the rounding of coordinates
/// to 0.01° (about 1.1 km), below the spacing of the stations of a network.
pub const SITE_TOLERANCE_KM: f64 = 2.0;

/// Rows whose coordinates agree to this many degrees are at one place [deg] (about 110 m of
/// latitude).
const PLACE_GRID_DEG: f64 = 0.001;

/// At most this many distinct places, each holding at least [`MIN_ROWS_PER_PLACE`] rows, are
/// fixed places grouped into sites; more places (or places of fewer rows) are a moving
/// platform.
const MAX_FIXED_PLACES: usize = 20;
const MIN_ROWS_PER_PLACE: usize = 3;

/// Mean Earth radius [km] (IUGG mean radius R₁ = 6371.0 km; from memory).
const EARTH_RADIUS_KM: f64 = 6371.0;

/// Great-circle distance between two points [km].
///
/// The haversine formula (Sinnott 1984, Sky and Telescope 68(2), 159; from memory) on a
/// sphere of the mean Earth radius; accurate to about 0.5 % (the Earth's flattening), ample
/// for a tolerance of kilometres.
///
/// - `lat1_deg`, `lon1_deg`, `lat2_deg`, `lon2_deg`: [deg north, deg east]
pub fn distance_km(lat1_deg: f64, lon1_deg: f64, lat2_deg: f64, lon2_deg: f64) -> f64 {
    let (p1, p2) = (lat1_deg.to_radians(), lat2_deg.to_radians());
    let dp = p2 - p1;
    let dl = (lon2_deg - lon1_deg).to_radians();
    let h = (dp / 2.0).sin().powi(2) + p1.cos() * p2.cos() * (dl / 2.0).sin().powi(2);
    2.0 * EARTH_RADIUS_KM * h.sqrt().min(1.0).asin()
}

/// The row warning when a row's own coordinates lie farther than the tolerance from those
/// the site table gives its site.
pub(crate) fn coordinate_warning(
    spec: &InputSpec,
    entry: &SiteEntry,
    latitude_deg: f64,
    longitude_deg: f64,
    cell: Option<String>,
) -> Option<RowWarning> {
    let (lat, lon) = (entry.latitude_deg?.value, entry.longitude_deg?.value);
    let tolerance = spec.site_tolerance_km.unwrap_or(SITE_TOLERANCE_KM);
    let d = distance_km(latitude_deg, longitude_deg, lat, lon);
    (d > tolerance).then(|| RowWarning {
        cell: cell.unwrap_or_default(),
        message: format!(
            "the row's coordinates ({}, {}) lie {:.1} km from those of site {} in the site table ({}, {}), more than the tolerance of {} km: check the site or the coordinates (the row's are used; a moving platform may say so with [input] moving_platform = true)",
            format_number(latitude_deg),
            format_number(longitude_deg),
            d,
            entry.name,
            format_number(lat),
            format_number(lon),
            format_number(tolerance)
        ),
    })
}

/// A place as a site name: `42.448°N 11.203°E`.
fn place_name(lat: f64, lon: f64) -> String {
    format!(
        "{:.3}°{} {:.3}°{}",
        lat.abs(),
        if lat < 0.0 { 'S' } else { 'N' },
        lon.abs(),
        if lon < 0.0 { 'W' } else { 'E' }
    )
}

/// The file's name without folder and extension.
fn stem(file: &str) -> String {
    Path::new(file)
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .filter(|s| !s.is_empty())
        .unwrap_or_else(|| file.to_string())
}

/// How the sites of one sheet's rows were found.
pub(crate) struct SiteRule {
    /// One line for the mapping summary and the About sheet.
    pub line: String,
    pub warning: Option<String>,
}

/// Name the rows of a sheet that have no site (no site column, or an empty site cell), by
/// the first rule that fits: the job file declares a moving platform → one platform; one
/// place → one site; a few fixed places each holding several rows → one site per place,
/// named by its coordinates (with a warning suggesting a site column); otherwise → one
/// moving platform. Platforms and single sites are named by `[input] site_name`, else the
/// file name.
pub(crate) fn name_unsited(
    ctx: &SheetContext<'_>,
    accepted: &mut [Box<Accepted>],
) -> Option<SiteRule> {
    let unsited: Vec<usize> = (0..accepted.len())
        .filter(|&i| accepted[i].site.is_empty())
        .collect();
    if unsited.is_empty() {
        return None;
    }
    let here = place(ctx.file, ctx.sheet);
    let what = if ctx.layout.has(Kind::Site) {
        format!("{} row(s) with an empty site cell", unsited.len())
    } else {
        "no site column".to_string()
    };
    let (name, from) = match &ctx.spec.site_name {
        Some(n) => (n.clone(), "the job file"),
        None => (stem(ctx.file), "the file name"),
    };
    let key = |a: &Accepted| {
        (
            (a.observation.latitude_deg / PLACE_GRID_DEG).round() as i64,
            (a.observation.longitude_deg / PLACE_GRID_DEG).round() as i64,
        )
    };
    let mut counts: HashMap<(i64, i64), usize> = HashMap::new();
    for &i in &unsited {
        *counts.entry(key(&accepted[i])).or_insert(0) += 1;
    }
    let n_places = counts.len();
    let fewest = counts.values().copied().min().unwrap_or(0);
    let mut set_all = |label: &str| {
        let rc: Arc<str> = Arc::from(label);
        for &i in &unsited {
            accepted[i].site = label.to_string();
            accepted[i].site_key = rc.clone();
        }
    };
    let rule = if ctx.spec.moving_platform {
        set_all(&name);
        SiteRule {
            line: format!(
                "{here}: {what}; the job file declares a moving platform: its {} row(s) are one platform \"{name}\" (named from {from}), summarised over time",
                unsited.len()
            ),
            warning: None,
        }
    } else if n_places == 1 {
        set_all(&name);
        let a = &accepted[unsited[0]].observation;
        SiteRule {
            line: format!(
                "{here}: {what}; every row is at one place ({}, within {PLACE_GRID_DEG}°): one site \"{name}\" (named from {from})",
                place_name(a.latitude_deg, a.longitude_deg)
            ),
            warning: None,
        }
    } else if n_places <= MAX_FIXED_PLACES && fewest >= MIN_ROWS_PER_PLACE {
        let mut names: BTreeMap<(i64, i64), Arc<str>> = BTreeMap::new();
        for &i in &unsited {
            let k = key(&accepted[i]);
            let label = names
                .entry(k)
                .or_insert_with(|| {
                    Arc::from(place_name(
                        k.0 as f64 * PLACE_GRID_DEG,
                        k.1 as f64 * PLACE_GRID_DEG,
                    ))
                })
                .clone();
            accepted[i].site = label.to_string();
            accepted[i].site_key = label;
        }
        let listed: Vec<&str> = names.values().map(|s| s.as_ref()).collect();
        SiteRule {
            line: format!(
                "{here}: {what}; the rows lie at {n_places} fixed places (each holding {fewest} or more rows): grouped by place, one site per place named by its coordinates ({})",
                listed.join("; ")
            ),
            warning: Some(format!(
                "{here}: {what}: the rows lie at {n_places} fixed places and are summarised as {n_places} sites named by their coordinates. Add a site column (site, station, stn) naming each station, or map one in the job file, to name them."
            )),
        }
    } else {
        set_all(&name);
        SiteRule {
            line: format!(
                "{here}: {what}; the coordinates change from row to row ({n_places} places among {} rows): one moving platform \"{name}\" (named from {from}), summarised over time; a job file may declare it with [input] moving_platform = true",
                unsited.len()
            ),
            warning: None,
        }
    };
    Some(rule)
}

/// The rule line of a sheet whose rows name their sites in a column: how many sites, how
/// many the site table knows, and where the full names come from.
pub(crate) fn site_column_rule(
    ctx: &SheetContext<'_>,
    accepted: &[Box<Accepted>],
    site_sheet: Option<&str>,
) -> Option<SiteRule> {
    let col = ctx.layout.columns.iter().find(|m| m.kind == Kind::Site)?;
    let here = place(ctx.file, ctx.sheet);
    let mut sites: Vec<&str> = accepted
        .iter()
        .map(|a| a.site.as_str())
        .filter(|s| !s.is_empty())
        .collect();
    sites.sort_unstable();
    sites.dedup();
    let mut line = format!(
        "{here}: sites from column {} \"{}\" ({} site(s): {})",
        col.letter,
        col.header,
        sites.len(),
        sites.join(", ")
    );
    let mut warning = None;
    if !ctx.sites.is_empty() {
        let missing: Vec<&str> = sites
            .iter()
            .copied()
            .filter(|s| ctx.sites.get(s).is_none())
            .collect();
        let table = match site_sheet {
            Some(s) => format!("the site sheet \"{s}\""),
            None => "the job file's [[sites]]".to_string(),
        };
        line.push_str(&format!(
            ", joined with {table} by the same identifier: {} of {} found",
            sites.len() - missing.len(),
            sites.len()
        ));
        if !missing.is_empty() {
            warning = Some(format!(
                "{here}: site(s) {} are not in {table}; their rows use their own coordinates and the defaults",
                missing.join(", ")
            ));
        }
    }
    if let Some(n) = ctx.layout.columns.iter().find(|m| m.kind == Kind::SiteName) {
        line.push_str(&format!(
            "; full names from column {} \"{}\"",
            n.letter, n.header
        ));
    }
    Some(SiteRule { line, warning })
}

/// Report labels `Full Name (KEY)` for sites with a full name (site table first, then the
/// rows' own site-name column).
pub(crate) fn labels(
    table: &SiteTable,
    accepted: &[Box<Accepted>],
    out: &mut BTreeMap<String, String>,
) {
    let mut put = |key: &str, full: &str| {
        let full = full.trim();
        if !full.is_empty() && full != key && !out.contains_key(key) {
            out.insert(key.to_string(), format!("{full} ({key})"));
        }
    };
    for a in accepted {
        if let Some(f) = table.get(&a.site).and_then(|e| e.full_name.as_deref()) {
            put(&a.site, f);
        }
    }
    for a in accepted {
        if let Some(f) = &a.site_full_name {
            put(&a.site, f);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn haversine_distances() {
        // One degree of latitude on a 6371 km sphere: 2π·6371/360 = 111.195 km.
        assert!((distance_km(10.0, 20.0, 11.0, 20.0) - 111.195).abs() < 1e-3);
        assert_eq!(distance_km(42.0, 11.0, 42.0, 11.0), 0.0);
        // Antipodes: half the circumference, π·6371 = 20015.1 km.
        assert!((distance_km(0.0, 0.0, 0.0, 180.0) - 20015.087).abs() < 1e-2);
    }

    #[test]
    fn places_are_named_by_their_coordinates() {
        assert_eq!(place_name(42.4482, -11.2), "42.448°N 11.200°W");
        assert_eq!(place_name(-3.0, 120.5), "3.000°S 120.500°E");
        assert_eq!(stem("data/cruise-2025.xlsx"), "cruise-2025");
    }
}
