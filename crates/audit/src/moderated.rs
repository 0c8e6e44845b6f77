//! A scale prior shared by the fleet's gauges: the empirical Bayes "moderated" variance of Smyth,
//! "Linear models and empirical Bayes methods for assessing differential expression in microarray
//! experiments", Stat. Appl. Genet. Mol. Biol. 3(1), art. 3, 2004, §3 and §6.2.
//!
//! Each tank's gauge test estimates the scatter of its fills' ratios about the fitted line (or the
//! two means of a step) from a dozen or two points, so by chance that scatter is sometimes a third of
//! its usual size and a modest trend reads as many standard errors. The ratios are already weighted
//! by their stated uncertainties (fitted to the fleet's scatter by the Type A step), so the tanks'
//! scatters share one scale: their sample variances are taken as draws of s₀²·F(d, d₀), d₀ and s₀²
//! fitted to the fleet by Smyth's moments of log s², and each tank's variance is moderated to
//! (d₀ s₀² + d s²)/(d₀ + d), tested with d₀ + d degrees of freedom.
//!
//! Here the moderated variance is a floor, not a replacement: a tank scattered more than it keeps
//! its own variance and degrees of freedom. The fleet's nitrogen and carbon dioxide tanks' trend
//! statistics spread wider than sampling explains (their standard deviation about 1.3 against 1.0
//! on 32 independent fleets), so shrinking a widely scattered tank toward the fleet would call
//! healthy gauges faulty (two more such on those fleets when tried).

use statrs::function::gamma::digamma;

/// The fleet's prior for the scatter of a tank's weighted residuals: its degrees of freedom `d0`
/// (infinite when the tanks' scatters vary no more than sampling explains) and its variance `s0`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Prior {
    pub(crate) d0: f64,
    pub(crate) s0: f64,
}

impl Prior {
    /// A tank's variance for its tests and their degrees of freedom, from its own variance `s2` on
    /// `d` degrees of freedom: the moderated variance where that is larger (with d₀ + d degrees of
    /// freedom), else the tank's own figures, as also when there is no prior.
    pub(crate) fn moderate(prior: Option<Prior>, s2: f64, d: f64) -> (f64, f64) {
        match prior {
            Some(p) if p.d0.is_infinite() => (p.s0, f64::INFINITY),
            Some(p) => {
                let m = (p.d0 * p.s0 + d * s2) / (p.d0 + d);
                if s2 >= m { (s2, d) } else { (m, p.d0 + d) }
            }
            None => (s2, d),
        }
    }
}

/// Fewest tanks to fit a prior from (the variance of log s² is unstable below it; Smyth's examples
/// have thousands, a fleet has tens; common practice, no source).
const MIN_TANKS: usize = 8;

/// Fit the prior to sample variances `(s², degrees of freedom)` (Smyth 2004, §6.2, eq. 7–8);
/// None with fewer than [`MIN_TANKS`] usable ones.
pub(crate) fn fit(samples: &[(f64, f64)]) -> Option<Prior> {
    let ok: Vec<(f64, f64)> = samples
        .iter()
        .copied()
        .filter(|(s2, d)| *s2 > 0.0 && s2.is_finite() && *d >= 1.0)
        .collect();
    let g = ok.len();
    if g < MIN_TANKS {
        return None;
    }
    let e: Vec<f64> = ok
        .iter()
        .map(|(s2, d)| s2.ln() - digamma(d / 2.0) + (d / 2.0).ln())
        .collect();
    let mean = e.iter().sum::<f64>() / g as f64;
    let var = e.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (g as f64 - 1.0)
        - ok.iter().map(|(_, d)| trigamma(d / 2.0)).sum::<f64>() / g as f64;
    if var <= 0.0 {
        return Some(Prior {
            d0: f64::INFINITY,
            s0: mean.exp(),
        });
    }
    let d0 = 2.0 * trigamma_inverse(var);
    Some(Prior {
        d0,
        s0: (mean + digamma(d0 / 2.0) - (d0 / 2.0).ln()).exp(),
    })
}

/// ψ′(x), the trigamma function, for x > 0: the recurrence ψ′(x) = ψ′(x + 1) + 1/x² up to x ≥ 10,
/// then its asymptotic series (Abramowitz and Stegun 6.4.6 and 6.4.12).
pub(crate) fn trigamma(x: f64) -> f64 {
    let mut x = x;
    let mut acc = 0.0;
    while x < 10.0 {
        acc += 1.0 / (x * x);
        x += 1.0;
    }
    let x2 = 1.0 / (x * x);
    acc + 1.0 / x
        + x2 / 2.0
        + (x2 / x) * (1.0 / 6.0 - x2 * (1.0 / 30.0 - x2 * (1.0 / 42.0 - x2 / 30.0)))
}

/// The y > 0 with ψ′(y) = `v` (v > 0): bisection on the logarithm of y (ψ′ falls monotonically from
/// +∞ to 0).
fn trigamma_inverse(v: f64) -> f64 {
    let (mut lo, mut hi) = (-30.0_f64, 30.0_f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if trigamma(mid.exp()) > v {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    (0.5 * (lo + hi)).exp()
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{ChiSquared, ContinuousCDF};

    /// ψ′(1) = π²/6 and ψ′(1/2) = π²/2 (Abramowitz and Stegun 6.4.2 and 6.4.4), ψ′(20) from the
    /// recurrence ψ′(20) = π²/6 − Σₖ₌₁¹⁹ 1/k² (6.4.6); the inverse returns its argument.
    #[test]
    fn trigamma_values() {
        let pi2 = std::f64::consts::PI.powi(2);
        assert!((trigamma(1.0) - pi2 / 6.0).abs() < 1e-12);
        assert!((trigamma(0.5) - pi2 / 2.0).abs() < 1e-12);
        let by_sum = pi2 / 6.0 - (1..20).map(|k| 1.0 / f64::from(k * k)).sum::<f64>();
        assert!((trigamma(20.0) - by_sum).abs() < 1e-12);
        for y in [0.05, 0.7, 3.0, 40.0] {
            assert!(
                (trigamma_inverse(trigamma(y)) / y - 1.0).abs() < 1e-9,
                "{y}"
            );
        }
    }

    /// Sample variances drawn from the model itself (σ² = d₀ s₀² / χ²(d₀), s² = σ² χ²(d) / d, by
    /// inverse distribution functions of pseudo-random uniforms) give back d₀ and s₀²: 600 tanks of
    /// 12 degrees of freedom with d₀ = 10, s₀² = 0.6 (over twelve generator seeds d₀ came out
    /// 8.6–12.0 and s₀² 0.585–0.622, so the tolerances are three to five times that spread); scatters
    /// that vary no more than sampling explains give a very large or infinite d₀ (96 to ∞ over those
    /// seeds) and their common variance.
    #[test]
    fn the_prior_is_recovered() {
        let mut state = 0x2545_f491_4f6c_dd1d_u64;
        let mut uniform = move || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            ((state >> 11) as f64 + 0.5) / (1u64 << 53) as f64
        };
        let (d, d0, s0) = (12.0, 10.0, 0.6);
        let chi_d = ChiSquared::new(d).unwrap();
        let chi_d0 = ChiSquared::new(d0).unwrap();
        let samples: Vec<(f64, f64)> = (0..600)
            .map(|_| {
                let sigma2 = d0 * s0 / chi_d0.inverse_cdf(uniform());
                (sigma2 * chi_d.inverse_cdf(uniform()) / d, d)
            })
            .collect();
        let p = fit(&samples).unwrap();
        assert!((p.d0 - d0).abs() < 5.0, "{p:?}");
        assert!((p.s0 - s0).abs() < 0.05, "{p:?}");
        // a tank scattered little is raised toward the prior, by the weights of the two
        let (m, df) = Prior::moderate(Some(p), 0.1, 12.0);
        let want = (p.d0 * p.s0 + 12.0 * 0.1) / (p.d0 + 12.0);
        assert!((m - want).abs() < 1e-12 && (df - p.d0 - 12.0).abs() < 1e-9);
        // one scattered more keeps its own variance and degrees of freedom
        assert_eq!(Prior::moderate(Some(p), 2.0, 12.0), (2.0, 12.0));
        assert_eq!(Prior::moderate(None, 0.1, 12.0), (0.1, 12.0));

        let flat: Vec<(f64, f64)> = (0..600)
            .map(|_| (s0 * chi_d.inverse_cdf(uniform()) / d, d))
            .collect();
        let p = fit(&flat).unwrap();
        assert!(p.d0 > 50.0, "{p:?}");
        assert!((p.s0 - s0).abs() < 0.03, "{p:?}");
        assert_eq!(fit(&flat[..5]), None);
    }
}
