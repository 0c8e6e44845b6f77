//! Gauss–Legendre quadrature (nodes by Newton iteration on the Legendre polynomial, as in
//! Golub & Welsch's setting; here the classic Newton form from Press et al., "Numerical Recipes").

use std::sync::LazyLock;

/// Nodes per integration piece; the integrands are analytic after the square-root substitution,
/// and 16 nodes keep the geometry within 1e-8 of the numerical-integration cases (tests).
pub(crate) const NODES: usize = 16;

/// Nodes `x_i` on (-1, 1) and weights `w_i`.
pub(crate) static GAUSS_LEGENDRE: LazyLock<[(f64, f64); NODES]> = LazyLock::new(nodes::<NODES>);

/// Gauss–Legendre nodes and weights of order `N`.
pub(crate) fn nodes<const N: usize>() -> [(f64, f64); N] {
    let mut out = [(0.0, 0.0); N];
    let n = N as f64;
    for (i, slot) in out.iter_mut().enumerate() {
        // Tricomi's initial guess for the i-th root.
        let mut x = (std::f64::consts::PI * (i as f64 + 0.75) / (n + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            let (p, d) = legendre(N, x);
            dp = d;
            let dx = p / d;
            x -= dx;
            if dx.abs() < 1e-16 {
                break;
            }
        }
        let (_, d) = legendre(N, x);
        if d.is_finite() {
            dp = d;
        }
        *slot = (x, 2.0 / ((1.0 - x * x) * dp * dp));
    }
    out
}

/// Legendre polynomial P_n(x) and its derivative.
fn legendre(n: usize, x: f64) -> (f64, f64) {
    let (mut p0, mut p1) = (1.0, x);
    for k in 2..=n {
        let k = k as f64;
        let p2 = ((2.0 * k - 1.0) * x * p1 - (k - 1.0) * p0) / k;
        p0 = p1;
        p1 = p2;
    }
    let d = n as f64 * (x * p1 - p0) / (x * x - 1.0);
    (p1, d)
}

/// Integral of `f` over `[a, b]` with the crate's Gauss–Legendre rule.
pub(crate) fn integrate(a: f64, b: f64, f: impl Fn(f64) -> f64) -> f64 {
    let mid = 0.5 * (a + b);
    let half = 0.5 * (b - a);
    let mut sum = 0.0;
    for &(x, w) in GAUSS_LEGENDRE.iter() {
        sum += w * f(mid + half * x);
    }
    sum * half
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Exactness for polynomials up to degree 2N-1 (property of the rule; Abramowitz & Stegun 25.4.29).
    #[test]
    fn integrates_high_degree_polynomials_exactly() {
        // ∫_0^1 x^(2N-1) dx = 1/(2N)
        let got = integrate(0.0, 1.0, |x| x.powi(2 * NODES as i32 - 1));
        assert!((got - 1.0 / (2 * NODES) as f64).abs() < 1e-15, "{got}");
        let wsum: f64 = GAUSS_LEGENDRE.iter().map(|p| p.1).sum();
        assert!((wsum - 2.0).abs() < 1e-14);
    }

    /// ∫_0^π sin = 2 (calculus), tolerance 1e-14.
    #[test]
    fn integrates_sine() {
        let got = integrate(0.0, std::f64::consts::PI, f64::sin);
        assert!((got - 2.0).abs() < 1e-14, "{got}");
    }
}
