//! Descriptive statistics and least-squares fits for the summary and efficiency sheets.
//!
//! Non-finite values are skipped: `n` counts the finite values. A statistic that cannot be
//! computed for a group (SD of one value, a slope from one point) is `None` and is written as
//! an empty cell.

use statrs::distribution::{ContinuousCDF, StudentsT};

/// Statistics of one group and quantity.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Summary {
    pub n: usize,
    pub mean: Option<f64>,
    /// Sample standard deviation (n − 1 in the denominator).
    pub sd: Option<f64>,
    /// Standard error of the mean, SD/√n.
    pub se: Option<f64>,
    /// 95 % confidence interval of the mean, Student t with n − 1 degrees of freedom.
    pub ci95: Option<(f64, f64)>,
    pub median: Option<f64>,
    pub p5: Option<f64>,
    pub p25: Option<f64>,
    pub p75: Option<f64>,
    pub p95: Option<f64>,
    pub min: Option<f64>,
    pub max: Option<f64>,
    /// Site-days behind the statistic (see [`super::days`]); 0 when not counted by day.
    pub days: usize,
    /// Observations behind the statistic.
    pub observations: usize,
    /// Propagated random input uncertainty of the mean, 1σ (averages down over days).
    pub u_random: Option<f64>,
    /// Propagated systematic input uncertainty of the mean, 1σ (does not average down).
    pub u_systematic: Option<f64>,
    /// Combined standard uncertainty of the mean, √(SE² + u_random² + u_systematic²).
    pub u_total: Option<f64>,
}

impl Summary {
    /// The value of a statistic by its template name.
    pub fn get(&self, name: &str) -> Option<f64> {
        match name {
            "count" => Some(self.n as f64),
            "mean" => self.mean,
            "sd" => self.sd,
            "se" => self.se,
            "ci95_low" => self.ci95.map(|c| c.0),
            "ci95_high" => self.ci95.map(|c| c.1),
            "median" => self.median,
            "p5" => self.p5,
            "p25" => self.p25,
            "p75" => self.p75,
            "p95" => self.p95,
            "min" => self.min,
            "max" => self.max,
            "days" => Some(self.days as f64),
            "observations" => Some(self.observations as f64),
            "u_random" => self.u_random,
            "u_systematic" => self.u_systematic,
            "u_total" => self.u_total,
            _ => None,
        }
    }
}

/// Header of a statistic.
pub fn statistic_header(name: &str) -> &'static str {
    match name {
        "count" => "n",
        "mean" => "Mean",
        "sd" => "SD",
        "se" => "SE of mean",
        "ci95_low" => "95% CI low",
        "ci95_high" => "95% CI high",
        "median" => "Median",
        "p5" => "P5",
        "p25" => "P25",
        "p75" => "P75",
        "p95" => "P95",
        "min" => "Min",
        "max" => "Max",
        "days" => "Days",
        "observations" => "Observations",
        "u_random" => "Input unc. random (1σ)",
        "u_systematic" => "Input unc. systematic (1σ)",
        "u_total" => "Total unc. (1σ)",
        _ => "",
    }
}

/// Standard normal 0.975 quantile (common practice; 1.959963984540054).
const Z975: f64 = 1.959_963_984_540_054;

/// Two-sided 95 % Student t quantile t(0.975, df).
///
/// statrs `StudentsT::inverse_cdf` below 1000 degrees of freedom; above, where its inversion
/// loses about 1e-4 by 10⁶ degrees of freedom, the asymptotic expansion of Abramowitz &
/// Stegun (1964) eq. 26.7.5 in powers of 1/df (error below 1e-9 there).
pub fn t975(df: f64) -> Option<f64> {
    if df.is_nan() || df <= 0.0 {
        return None;
    }
    if df >= 1000.0 {
        let z = Z975;
        let (z2, z3) = (z * z, z * z * z);
        let (z5, z7) = (z3 * z2, z3 * z2 * z2);
        let g1 = (z3 + z) / 4.0;
        let g2 = (5.0 * z5 + 16.0 * z3 + 3.0 * z) / 96.0;
        let g3 = (3.0 * z7 + 19.0 * z5 + 17.0 * z3 - 15.0 * z) / 384.0;
        return Some(z + g1 / df + g2 / (df * df) + g3 / (df * df * df));
    }
    let t = StudentsT::new(0.0, 1.0, df).ok()?;
    let q = t.inverse_cdf(0.975);
    q.is_finite().then_some(q)
}

/// Percentile of sorted finite values by linear interpolation between order statistics
/// (Hyndman & Fan 1996, definition 7: h = (n − 1)p).
pub fn percentile_sorted(sorted: &[f64], p: f64) -> Option<f64> {
    if sorted.is_empty() {
        return None;
    }
    let h = (sorted.len() - 1) as f64 * p;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(sorted.len() - 1);
    Some(sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo]))
}

/// Summarise values (non-finite ones skipped).
pub fn summarise(values: impl IntoIterator<Item = f64>) -> Summary {
    let mut v: Vec<f64> = values.into_iter().filter(|x| x.is_finite()).collect();
    let n = v.len();
    if n == 0 {
        return Summary::default();
    }
    v.sort_by(f64::total_cmp);
    let nf = n as f64;
    // Two-pass mean and variance for accuracy.
    let mean = v.iter().sum::<f64>() / nf;
    let (sd, se, ci95) = if n >= 2 {
        let ss: f64 = v.iter().map(|x| (x - mean) * (x - mean)).sum();
        let sd = (ss / (nf - 1.0)).sqrt();
        let se = sd / nf.sqrt();
        let ci = t975(nf - 1.0).map(|t| (mean - t * se, mean + t * se));
        (Some(sd), Some(se), ci)
    } else {
        (None, None, None)
    };
    let pct = |p| percentile_sorted(&v, p);
    Summary {
        n,
        mean: Some(mean),
        sd,
        se,
        ci95,
        median: pct(0.5),
        p5: pct(0.05),
        p25: pct(0.25),
        p75: pct(0.75),
        p95: pct(0.95),
        min: v.first().copied(),
        max: v.last().copied(),
        observations: n,
        ..Summary::default()
    }
}

/// Ordinary least-squares fit of y on x, and the fit through the origin.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Fit {
    pub n: usize,
    pub slope: Option<f64>,
    /// Standard error of the slope, √(s² / Sxx) with s² = RSS/(n − 2).
    pub slope_se: Option<f64>,
    pub intercept: Option<f64>,
    /// Coefficient of determination 1 − RSS/Syy.
    pub r2: Option<f64>,
    /// Slope of y = b·x (least squares through the origin), Σxy/Σx².
    pub slope_origin: Option<f64>,
    /// Its standard error, √(Σ(y − b x)²/(n − 1) / Σx²).
    pub slope_origin_se: Option<f64>,
    /// Range of x used (for drawing the fitted line).
    pub x_min: Option<f64>,
    pub x_max: Option<f64>,
}

/// Fit y = a + b x by ordinary least squares over the pairs where both are finite.
pub fn ols(pairs: impl IntoIterator<Item = (f64, f64)>) -> Fit {
    let p: Vec<(f64, f64)> = pairs
        .into_iter()
        .filter(|(x, y)| x.is_finite() && y.is_finite())
        .collect();
    let n = p.len();
    let mut fit = Fit {
        n,
        ..Fit::default()
    };
    if n == 0 {
        return fit;
    }
    let nf = n as f64;
    fit.x_min = p.iter().map(|q| q.0).min_by(f64::total_cmp);
    fit.x_max = p.iter().map(|q| q.0).max_by(f64::total_cmp);
    let sxx0: f64 = p.iter().map(|(x, _)| x * x).sum();
    let sxy0: f64 = p.iter().map(|(x, y)| x * y).sum();
    if sxx0 > 0.0 {
        let b0 = sxy0 / sxx0;
        fit.slope_origin = Some(b0);
        if n >= 2 {
            let rss0: f64 = p.iter().map(|(x, y)| (y - b0 * x).powi(2)).sum();
            fit.slope_origin_se = Some((rss0 / (nf - 1.0) / sxx0).sqrt());
        }
    }
    if n < 2 {
        return fit;
    }
    let mx = p.iter().map(|q| q.0).sum::<f64>() / nf;
    let my = p.iter().map(|q| q.1).sum::<f64>() / nf;
    let sxx: f64 = p.iter().map(|(x, _)| (x - mx).powi(2)).sum();
    let sxy: f64 = p.iter().map(|(x, y)| (x - mx) * (y - my)).sum();
    let syy: f64 = p.iter().map(|(_, y)| (y - my).powi(2)).sum();
    if sxx <= 0.0 {
        return fit;
    }
    let b = sxy / sxx;
    let a = my - b * mx;
    let rss: f64 = p.iter().map(|(x, y)| (y - a - b * x).powi(2)).sum();
    fit.slope = Some(b);
    fit.intercept = Some(a);
    if syy > 0.0 {
        fit.r2 = Some(1.0 - rss / syy);
    }
    if n >= 3 {
        fit.slope_se = Some((rss / (nf - 2.0) / sxx).sqrt());
    }
    fit
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn percentile_type7_matches_hand_values() {
        // 1..=5: h = 4p; P25 = 2, P5 = 1.2 (hand computation of definition 7).
        let v = [1.0, 2.0, 3.0, 4.0, 5.0];
        assert_eq!(percentile_sorted(&v, 0.25), Some(2.0));
        assert!((percentile_sorted(&v, 0.05).unwrap() - 1.2).abs() < 1e-12);
        assert_eq!(percentile_sorted(&v, 1.0), Some(5.0));
    }

    #[test]
    fn one_value_leaves_spread_empty() {
        let s = summarise([3.5, f64::NAN]);
        assert_eq!(s.n, 1);
        assert_eq!(s.mean, Some(3.5));
        assert_eq!(s.sd, None);
        assert_eq!(s.ci95, None);
        assert_eq!(s.median, Some(3.5));
    }

    #[test]
    fn t_quantile_for_large_df_approaches_normal() {
        // 1.959964 is the standard normal 0.975 quantile (common practice).
        assert!((t975(1e6).unwrap() - 1.959964).abs() < 1e-5);
        // The expansion and statrs agree where they meet.
        let statrs_1000 = StudentsT::new(0.0, 1.0, 1000.0).unwrap().inverse_cdf(0.975);
        assert!((t975(1000.0).unwrap() - statrs_1000).abs() < 1e-8);
        assert!(t975(0.0).is_none());
        // t(0.975, 1) = 12.7062 (standard t tables, from memory).
        assert!((t975(1.0).unwrap() - 12.7062).abs() < 1e-3);
    }

    #[test]
    fn exact_line_is_recovered() {
        let f = ols((0..10).map(|i| (i as f64 * 0.1, -30.0 * i as f64 * 0.1 + 1.0)));
        assert!((f.slope.unwrap() + 30.0).abs() < 1e-9);
        assert!((f.intercept.unwrap() - 1.0).abs() < 1e-9);
        assert!((f.r2.unwrap() - 1.0).abs() < 1e-12);
        assert!(f.slope_se.unwrap() < 1e-9);
    }

    proptest::proptest! {
        #[test]
        fn summary_is_ordered_and_finite(v in proptest::collection::vec(-1e4f64..1e4, 1..200)) {
            let s = summarise(v.iter().copied());
            let (lo, hi) = (s.min.unwrap(), s.max.unwrap());
            let m = s.mean.unwrap();
            proptest::prop_assert!(lo <= m + 1e-9 && m <= hi + 1e-9);
            let p = [s.p5, s.p25, s.median, s.p75, s.p95].map(Option::unwrap);
            proptest::prop_assert!(lo <= p[0] && p.windows(2).all(|w| w[0] <= w[1]) && p[4] <= hi);
            if v.len() >= 2 {
                let (a, b) = s.ci95.unwrap();
                proptest::prop_assert!(a <= m && m <= b && a.is_finite() && b.is_finite());
            }
        }

        #[test]
        fn fit_of_a_line_recovers_it(b in -100f64..100.0, a in -10f64..10.0, n in 3usize..50) {
            let f = ols((0..n).map(|i| { let x = i as f64 / n as f64; (x, a + b * x) }));
            proptest::prop_assert!((f.slope.unwrap() - b).abs() < 1e-6 * (1.0 + b.abs()));
            proptest::prop_assert!((f.intercept.unwrap() - a).abs() < 1e-6 * (1.0 + a.abs() + b.abs()));
        }
    }
}
