//! Small statistics: medians, Student's t distribution (through statrs), least squares, Holm's
//! procedure.

use statrs::distribution::{ChiSquared, ContinuousCDF, Normal, StudentsT};

/// The median of `values` (NaN-free); None when empty. Selects in a copy (Hoare's selection through
/// `select_nth_unstable_by`, linear on average; the same value a full sort gives).
pub fn median(values: &[f64]) -> Option<f64> {
    if values.is_empty() {
        return None;
    }
    let mut v = values.to_vec();
    let n = v.len();
    let mid = n / 2;
    let (below, upper, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
    let upper = *upper;
    Some(if n % 2 == 1 {
        upper
    } else {
        // the largest of the lower half is the other middle value
        let lower = below
            .iter()
            .copied()
            .max_by(f64::total_cmp)
            .unwrap_or(upper);
        0.5 * (lower + upper)
    })
}

/// Median absolute deviation scaled to a normal standard deviation (× 1.4826; Rousseeuw and Croux,
/// JASA 88, 1993).
pub fn mad_sigma(values: &[f64]) -> Option<f64> {
    let m = median(values)?;
    let dev: Vec<f64> = values.iter().map(|x| (x - m).abs()).collect();
    median(&dev).map(|d| 1.4826 * d)
}

fn students_t(dof: f64) -> Option<StudentsT> {
    StudentsT::new(0.0, 1.0, dof).ok()
}

/// Two-sided p-value of Student's t statistic `t` with `dof` degrees of freedom, P(|T| ≥ |t|)
/// (statrs' Student's t distribution; NaN for fewer than one degree of freedom).
pub fn t_two_sided_p(t: f64, dof: f64) -> f64 {
    if !t.is_finite() {
        return 0.0;
    }
    students_t(dof).map_or(f64::NAN, |d| (2.0 * d.sf(t.abs())).clamp(0.0, 1.0))
}

/// P(Z ≥ z) of a standard normal variable (statrs' normal distribution).
pub fn normal_upper_p(z: f64) -> f64 {
    Normal::new(0.0, 1.0).map_or(f64::NAN, |d| d.sf(z))
}

/// The standard normal quantile: z with P(Z ≤ z) = `p` (statrs' normal distribution).
pub fn normal_quantile(p: f64) -> f64 {
    Normal::new(0.0, 1.0).map_or(f64::NAN, |d| d.inverse_cdf(p))
}

/// Fisher's combination of independent p-values: P(χ²₂ₖ ≥ −2 Σ ln pᵢ) (Fisher, "Statistical
/// Methods for Research Workers", 1932, §21.1).
pub fn fisher_combined_p(p: &[f64]) -> f64 {
    let stat: f64 = p.iter().map(|x| -2.0 * x.max(1e-300).ln()).sum();
    ChiSquared::new(2.0 * p.len() as f64).map_or(f64::NAN, |d| d.sf(stat).clamp(0.0, 1.0))
}

/// P(X > t, Y > t) of a standard bivariate normal pair with correlation `rho`: Φ̄(t)² plus the
/// integral of the pair's density at (t, t) over the correlation from 0 to ρ, ∂P/∂ρ = φ₂(t, t; ρ)
/// (Plackett, "A reduction formula for normal multivariate integrals", Biometrika 41, 1954), taken
/// over θ = asin r, where it is exp(−t²/(1 + sin θ)) / 2π and smooth, by Simpson's rule on 64
/// panels.
pub fn bivariate_upper(t: f64, rho: f64) -> f64 {
    let q = normal_upper_p(t);
    let end = rho.clamp(-1.0, 1.0).asin();
    let f = |th: f64| {
        let d = 1.0 + th.sin();
        if d > 0.0 {
            (-t * t / d).exp()
        } else if t == 0.0 {
            1.0
        } else {
            0.0
        }
    };
    const PANELS: usize = 64;
    let h = end / PANELS as f64;
    let inner: f64 = (1..PANELS)
        .map(|i| f(i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 })
        .sum();
    let integral = h / 3.0 * (f(0.0) + inner + f(end)) / std::f64::consts::TAU;
    (q * q + integral).clamp(0.0, q)
}

/// A bound on the chance that the largest of |Z₁| … |Zₘ|, standard normals whose neighbours
/// correlate by `rho` (m − 1 values), reaches `z`: Σ P(|Zₖ| ≥ z) less Σ P(|Zₖ| ≥ z, |Zₖ₊₁| ≥ z)
/// (Hunter, "An upper bound for the probability of a union", J. Appl. Probab. 13, 1976; Worsley,
/// "An improved Bonferroni inequality and applications", Biometrika 69, 1982), never under one
/// term's chance. Bonferroni's m P(|Z| ≥ z) with neighbours alike counts their overlap m times.
pub fn max_abs_normal_p(z: f64, rho: &[f64]) -> f64 {
    let z = z.abs();
    let single = (2.0 * normal_upper_p(z)).min(1.0);
    let pairs: f64 = rho
        .iter()
        .map(|&r| 2.0 * (bivariate_upper(z, r) + bivariate_upper(z, -r)))
        .sum();
    ((rho.len() + 1) as f64 * single - pairs).clamp(single, 1.0)
}

/// The two-sided critical value t with P(|T| ≥ t) = `p` (statrs' inverse distribution function).
pub fn t_critical(p: f64, dof: f64) -> f64 {
    students_t(dof).map_or(f64::NAN, |d| d.inverse_cdf(1.0 - 0.5 * p))
}

/// Weighted least-squares line y = a + b x with its slope's standard error from the scatter about
/// the line (s² = Σ w e² / (n − 2)), so the stated weights set only the relative precision.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineFit {
    /// Intercept.
    pub intercept: f64,
    /// Slope.
    pub slope: f64,
    /// Standard error of the slope.
    pub slope_se: f64,
    /// Points used.
    pub n: usize,
}

/// Fit a weighted line; None with fewer than 3 points or no spread in x.
pub fn weighted_line(points: &[(f64, f64, f64)]) -> Option<LineFit> {
    let n = points.len();
    if n < 3 {
        return None;
    }
    let sw: f64 = points.iter().map(|p| p.2).sum();
    let xm = points.iter().map(|p| p.2 * p.0).sum::<f64>() / sw;
    let ym = points.iter().map(|p| p.2 * p.1).sum::<f64>() / sw;
    let sxx: f64 = points.iter().map(|p| p.2 * (p.0 - xm).powi(2)).sum();
    if sxx <= 0.0 {
        return None;
    }
    let sxy: f64 = points.iter().map(|p| p.2 * (p.0 - xm) * (p.1 - ym)).sum();
    let slope = sxy / sxx;
    let intercept = ym - slope * xm;
    let s2 = points
        .iter()
        .map(|p| p.2 * (p.1 - intercept - slope * p.0).powi(2))
        .sum::<f64>()
        / (n as f64 - 2.0);
    Some(LineFit {
        intercept,
        slope,
        slope_se: (s2 / sxx).sqrt(),
        n,
    })
}

/// Holm's step-down adjusted p-values (Holm, "A simple sequentially rejective multiple test
/// procedure", Scand. J. Statist. 6, 65–70, 1979), in the input order.
pub fn holm_adjust(p: &[f64]) -> Vec<f64> {
    let m = p.len();
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&a, &b| p[a].total_cmp(&p[b]).then(a.cmp(&b)));
    let mut adjusted = vec![1.0; m];
    let mut running: f64 = 0.0;
    for (rank, &i) in order.iter().enumerate() {
        let v = ((m - rank) as f64 * p[i]).min(1.0);
        running = running.max(v);
        adjusted[i] = running;
    }
    adjusted
}

#[cfg(test)]
mod tests {
    /// Sheppard's closed form at t = 0, P(X > 0, Y > 0) = 1/4 + asin ρ / 2π (Sheppard, "On the
    /// application of the theory of error to cases of normal distribution and normal correlation",
    /// Phil. Trans. R. Soc. A 192, 1899): 1/3 at ρ = 0.5, 0.1475836 at ρ = −0.6 (asin −0.6 =
    /// −0.643501); and the limits: Φ̄(t)² at ρ = 0, Φ̄(t) at ρ = 1 and 0 at ρ = −1 (t > 0),
    /// Φ̄(1.5) = 0.0668072 (Python's statistics.NormalDist).
    #[test]
    fn bivariate_upper_by_sheppard_and_its_limits() {
        assert!((bivariate_upper(0.0, 0.5) - 1.0 / 3.0).abs() < 1e-9);
        assert!((bivariate_upper(0.0, -0.6) - 0.1475836).abs() < 1e-6);
        let q = 0.0668072;
        assert!((bivariate_upper(1.5, 0.0) - q * q).abs() < 1e-7);
        assert!((bivariate_upper(1.5, 1.0) - q).abs() < 1e-5);
        assert!(bivariate_upper(1.5, -1.0).abs() < 1e-9);
    }

    /// The bound on the largest of two: with the pair alike (ρ = 1) it is one's chance,
    /// 2 Φ̄(2) = 0.0455003; independent (ρ = 0) it is exact, 1 − (1 − 0.0455003)² = 0.0889303
    /// (Python's statistics.NormalDist); Bonferroni's would be 0.0910006 either way.
    #[test]
    fn the_bound_on_the_largest_of_two() {
        assert!((max_abs_normal_p(2.0, &[1.0]) - 0.0455003).abs() < 1e-5);
        assert!((max_abs_normal_p(2.0, &[0.0]) - 0.0889303).abs() < 1e-6);
        assert!((max_abs_normal_p(2.0, &[]) - 0.0455003).abs() < 1e-6);
    }

    use super::*;

    /// Normal tail from a standard table (NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7.1:
    /// P(Z ≥ 1.96) = 0.0250, P(Z ≥ 3) = 0.00135), and Fisher's combination of 0.05 and 0.05 worked
    /// by hand: −2 Σ ln p = −4 ln 0.05 = 11.983, and χ²₄'s tail is e^(−x/2)(1 + x/2) =
    /// 0.0025 × 6.9915 = 0.017479.
    #[test]
    fn normal_tail_and_fisher_combination() {
        assert!((normal_upper_p(1.96) - 0.0250).abs() < 5e-5);
        assert!((normal_upper_p(3.0) - 0.00135).abs() < 5e-6);
        let p = fisher_combined_p(&[0.05, 0.05]);
        let x = -4.0 * 0.05_f64.ln();
        assert!((p - 0.0025 * (1.0 + x / 2.0)).abs() < 1e-9, "{p}");
        assert!((p - 0.017479).abs() < 1e-6, "{p}");
    }

    /// Student t critical values from a standard table (e.g. NIST/SEMATECH e-Handbook of Statistical
    /// Methods, 1.3.6.7.2): t(0.975, 10) = 2.228, t(0.975, 30) = 2.042, t(0.995, 5) = 4.032;
    /// tolerance 1e-3 (the table's rounding).
    #[test]
    fn t_table() {
        assert!((t_critical(0.05, 10.0) - 2.228).abs() < 1e-3);
        assert!((t_critical(0.05, 30.0) - 2.042).abs() < 1e-3);
        assert!((t_critical(0.01, 5.0) - 4.032).abs() < 1e-3);
        // one degree of freedom is the Cauchy distribution: P(|T| > 1) = 0.5 exactly
        assert!((t_two_sided_p(1.0, 1.0) - 0.5).abs() < 1e-12);
    }

    /// Holm's procedure on the worked example p = (0.01, 0.04, 0.03, 0.005): adjusted
    /// (0.03, 0.06, 0.06, 0.02), by hand from the definition.
    #[test]
    fn holm() {
        let a = holm_adjust(&[0.01, 0.04, 0.03, 0.005]);
        for (got, want) in a.iter().zip([0.03, 0.06, 0.06, 0.02]) {
            assert!((got - want).abs() < 1e-12, "{a:?}");
        }
    }

    /// A line through exact points has that slope and zero standard error (identity).
    #[test]
    fn line() {
        let pts: Vec<(f64, f64, f64)> = (0..10)
            .map(|i| (f64::from(i), 2.0 + 0.5 * f64::from(i), 1.0))
            .collect();
        let f = weighted_line(&pts).unwrap();
        assert!((f.slope - 0.5).abs() < 1e-12 && f.slope_se < 1e-9);
        assert_eq!(median(&[3.0, 1.0, 2.0]), Some(2.0));
        assert_eq!(median(&[4.0, 1.0, 2.0, 3.0]), Some(2.5));
    }
}
