//! Days as the unit of the statistics.
//!
//! Observations within one day are not independent samples: the aerosol of a morning and of
//! the afternoon are strongly correlated, and a day with many observations would otherwise
//! weigh more. So the summaries work over site-days:
//!
//! - **24-hour quantities** (ΔF and efficiencies as 24-h means): a site-day value is the mean
//!   of that day's per-observation 24-h values; n, mean, SD, SE, the Student-t interval and the
//!   percentiles are over the site-days (n = days), with the observation count beside.
//! - **Instantaneous quantities** and the inputs (AOD, SSA, g) keep their per-observation
//!   mean, SD and percentiles, but the standard error and interval take days as blocks: the
//!   variance of a mean of cluster samples of unequal size, V(ȳ) = D/(D − 1) · Σ_d n_d²
//!   (ȳ_d − ȳ)² / N² with D days, N observations, n_d and ȳ_d the count and mean of day d
//!   (Cochran 1977, *Sampling Techniques*, 3rd ed., ch. 9, ratio-to-size estimate of a mean
//!   over clusters of unequal size; chapter from memory), with D − 1 degrees of freedom for the
//!   t quantile. With one observation per day it is the ordinary SE.
//!
//! A day counts when it has at least the template's `min_observations_per_day` observations
//! with a finite value of the quantity (default 1).
//!
//! The day of a row is its **local mean-solar date** (UTC shifted by longitude/15 h), the day
//! whose geometry the 24-hour mean uses.

use std::collections::BTreeMap;

use chrono::NaiveDate;

use super::frame::Row;
use super::stats::{self, Summary};
use crate::physics::uncertainty::Quantity;

/// Local mean-solar date of a row: UTC shifted by longitude/15 h (the UTC date when the
/// longitude is not finite) — the same rule as the 24-hour mean of the physics core.
pub fn solar_date(row: &Row) -> NaiveDate {
    let utc = row.obs.time_utc;
    let lon = row.obs.longitude_deg;
    if !lon.is_finite() {
        return utc.date_naive();
    }
    let shift = chrono::TimeDelta::seconds((lon.clamp(-180.0, 180.0) * 240.0).round() as i64);
    utc.checked_add_signed(shift).unwrap_or(utc).date_naive()
}

/// Number the site-days of `rows`: each row's [`Row::day`] becomes the rank of its (site,
/// local mean-solar date) in (site, date) order, so that the statistics gather days without
/// comparing names and dates again.
pub fn number_days(rows: &mut [Row]) {
    let dates: Vec<NaiveDate> = rows.iter().map(solar_date).collect();
    let mut ranks: BTreeMap<(&str, NaiveDate), u32> = BTreeMap::new();
    for (r, d) in rows.iter().zip(&dates) {
        ranks.entry((r.site, *d)).or_insert(0);
    }
    for (k, v) in ranks.values_mut().enumerate() {
        *v = k as u32;
    }
    let days: Vec<u32> = rows
        .iter()
        .zip(&dates)
        .map(|(r, d)| ranks[&(r.site, *d)])
        .collect();
    for (r, d) in rows.iter_mut().zip(days) {
        r.day = d;
    }
}

/// Values of one quantity gathered by site-day, in (site, date) order, each with the index
/// of its row (rows of a day in the order given).
#[derive(Debug, Clone, Default)]
pub struct DayValues<'a> {
    /// Values of all days, day after day.
    values: Vec<(f64, usize)>,
    /// Per day: site, date and the end of its values in `values` (the start is the previous
    /// day's end).
    days: Vec<(&'a str, NaiveDate, usize)>,
}

impl<'a> DayValues<'a> {
    /// Gather the finite values of `value` over the rows `idx` of `rows` (rows numbered by
    /// [`number_days`]): a counting sort on the day rank, which keeps the order of `idx`
    /// within a day.
    pub fn gather(rows: &[Row<'a>], idx: &[usize], value: impl Fn(&Row) -> f64) -> Self {
        let mut picked: Vec<(u32, f64, usize)> = Vec::with_capacity(idx.len());
        let (mut lo, mut hi) = (u32::MAX, 0u32);
        for &i in idx {
            let r = &rows[i];
            let x = value(r);
            if x.is_finite() {
                picked.push((r.day, x, i));
                lo = lo.min(r.day);
                hi = hi.max(r.day);
            }
        }
        if picked.is_empty() {
            return Self::default();
        }
        let span = (hi - lo) as usize + 1;
        let mut next = vec![0usize; span + 1];
        for p in &picked {
            next[(p.0 - lo) as usize + 1] += 1;
        }
        for k in 1..=span {
            next[k] += next[k - 1];
        }
        let mut days = Vec::new();
        for k in 0..span {
            if next[k + 1] > next[k] {
                days.push(("", NaiveDate::MIN, next[k + 1]));
            }
        }
        let mut values = vec![(0.0, 0usize); picked.len()];
        for &(d, x, i) in &picked {
            let slot = &mut next[(d - lo) as usize];
            values[*slot] = (x, i);
            *slot += 1;
        }
        let mut start = 0;
        for day in &mut days {
            let first = &rows[values[start].1];
            day.0 = first.site;
            day.1 = solar_date(first);
            start = day.2;
        }
        Self { values, days }
    }

    /// The days with at least `min_obs` values: (site, date, values with row indices).
    pub fn counted(
        &self,
        min_obs: usize,
    ) -> impl Iterator<Item = (&str, NaiveDate, &[(f64, usize)])> {
        let starts = std::iter::once(0).chain(self.days.iter().map(|d| d.2));
        self.days
            .iter()
            .zip(starts)
            .map(|(&(s, d, end), start)| (s, d, &self.values[start..end]))
            .filter(move |(_, _, v)| v.len() >= min_obs.max(1))
    }
}

fn mean_of(v: &[(f64, usize)]) -> f64 {
    v.iter().map(|p| p.0).sum::<f64>() / v.len() as f64
}

/// Statistics of a 24-hour quantity over site-days: each counted day contributes the mean of
/// its observations; `n` and `days` are the number of days, `observations` the observations
/// of those days.
pub fn summarise_days(values: &DayValues, min_obs: usize) -> Summary {
    let mut obs = 0usize;
    let means: Vec<f64> = values
        .counted(min_obs)
        .map(|(_, _, v)| {
            obs += v.len();
            mean_of(v)
        })
        .collect();
    let mut s = stats::summarise(means);
    s.days = s.n;
    s.observations = obs;
    s
}

/// Statistics of an instantaneous quantity over the observations of the counted days, with
/// the standard error and 95 % interval of the mean taken with days as blocks (module
/// documentation); `n` and `observations` count observations, `days` the days.
pub fn summarise_blocked(values: &DayValues, min_obs: usize) -> Summary {
    let counted: Vec<&[(f64, usize)]> = values.counted(min_obs).map(|(_, _, v)| v).collect();
    let mut s = stats::summarise(counted.iter().flat_map(|v| v.iter().map(|p| p.0)));
    let d = counted.len();
    s.days = d;
    s.observations = s.n;
    let (se, ci) = match s.mean {
        Some(mean) if d >= 2 => {
            let n = s.n as f64;
            let df = (d - 1) as f64;
            let sum: f64 = counted
                .iter()
                .map(|v| (v.len() as f64 * (mean_of(v) - mean)).powi(2))
                .sum();
            let se = (d as f64 / df * sum).sqrt() / n;
            let ci = stats::t975(df).map(|t| (mean - t * se, mean + t * se));
            (Some(se), ci)
        }
        _ => (None, None),
    };
    s.se = se;
    s.ci95 = ci;
    s
}

/// Propagated input uncertainty of the mean in `s` (filled in place), from the rows' random
/// and systematic 1σ of quantity `q`:
///
/// - within a day the errors of a row are taken as fully correlated (the day's σ is the mean
///   of its rows' σ);
/// - random parts are independent between days: for a mean over days u_r = √(Σ_d u_d²)/D,
///   for a mean over observations u_r = √(Σ_d (n_d u_d)²)/N — it falls as 1/√D;
/// - systematic parts are the same on every day: u_s is the mean of the rows' systematic σ
///   (exact when the rows' sensitivities are proportional, an upper bound otherwise) — it
///   does not fall with more days;
/// - total u = √(SE² + u_r² + u_s²), the combined standard uncertainty of uncorrelated
///   components (JCGM 100:2008, GUM eq. 10); empty when SE is (one day). The sampling SE
///   already holds part of the random error, so the total errs on the large side.
///
/// Rows without a propagated uncertainty leave the statistic empty.
pub fn add_uncertainty(
    s: &mut Summary,
    values: &DayValues,
    rows: &[Row],
    q: Quantity,
    daily: bool,
    min_obs: usize,
) {
    let k = q as usize;
    let mut sum_r2 = 0.0;
    let mut sum_s = 0.0;
    let mut weight = 0.0;
    for (_, _, v) in values.counted(min_obs) {
        let mut r_d = 0.0;
        let mut s_d = 0.0;
        for &(_, i) in v {
            let Some(u) = &rows[i].res.uncertainty else {
                return;
            };
            r_d += u.random[k];
            s_d += u.systematic[k];
        }
        let n_d = v.len() as f64;
        let (r_d, s_d) = (r_d / n_d, s_d / n_d);
        let w = if daily { 1.0 } else { n_d };
        sum_r2 += (w * r_d).powi(2);
        sum_s += w * s_d;
        weight += w;
    }
    if weight <= 0.0 {
        return;
    }
    let u_r = sum_r2.sqrt() / weight;
    let u_s = sum_s / weight;
    if !(u_r.is_finite() && u_s.is_finite()) {
        return;
    }
    s.u_random = Some(u_r);
    s.u_systematic = Some(u_s);
    s.u_total = s.se.map(|se| (se * se + u_r * u_r + u_s * u_s).sqrt());
}

/// Statistics of quantity `q` over the rows `idx`: over site-days for a 24-hour quantity,
/// over observations with days as blocks otherwise (instantaneous values count only rows
/// with the sun up), with the propagated input uncertainty where the rows carry one.
pub fn summarise_group(
    q: &super::frame::ColumnDef,
    rows: &[Row],
    idx: &[usize],
    min_obs: usize,
) -> Summary {
    let values = DayValues::gather(rows, idx, |r| super::xlsx::stat_value(q, r));
    let mut s = if q.daily {
        summarise_days(&values, min_obs)
    } else {
        summarise_blocked(&values, min_obs)
    };
    if let Some(quantity) = Quantity::of_key(&q.key) {
        add_uncertainty(&mut s, &values, rows, quantity, q.daily, min_obs);
    }
    s
}

/// The About sheet's lines on days as the unit of the statistics.
pub fn about_notes(min_obs: usize) -> Vec<String> {
    vec![
        "Days are the unit of the statistics: observations within a day are not independent samples. A site-day value of a 24-hour quantity is the mean of that day's per-observation 24-hour values (the day's optics held over the day); n, mean, SD, SE, the 95% interval and the percentiles of 24-hour quantities are over site-days, with the observations beside.".into(),
        "Instantaneous quantities and the inputs (AOD, SSA, g) keep per-observation means, SD and percentiles; their SE and 95% interval take days as blocks: V(mean) = D/(D − 1)·Σ n_d²(ȳ_d − ȳ)²/N² over D days and N observations, t with D − 1 degrees of freedom (Cochran 1977, Sampling Techniques, ch. 9, cluster sampling with clusters of unequal size; chapter from memory).".into(),
        format!("A day counts when it has at least {min_obs} observation{} with a value (template or job setting min_observations_per_day).", if min_obs == 1 { "" } else { "s" }),
        "The day of an observation is its local mean-solar date (UTC shifted by longitude/15 h), the day of its 24-hour mean.".into(),
    ]
}

/// Statistics of any quantity over site-days (day means, n = days), with its propagated
/// uncertainty: the form quoted in papers ("mean ± u (n days)").
pub fn summarise_days_of(
    q: &super::frame::ColumnDef,
    rows: &[Row],
    idx: &[usize],
    min_obs: usize,
) -> Summary {
    let values = DayValues::gather(rows, idx, |r| super::xlsx::stat_value(q, r));
    let mut s = summarise_days(&values, min_obs);
    if let Some(quantity) = Quantity::of_key(&q.key) {
        add_uncertainty(&mut s, &values, rows, quantity, true, min_obs);
    }
    s
}
