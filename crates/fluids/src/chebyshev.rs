//! Chebyshev expansions on an interval: fit at Chebyshev-Lobatto nodes, evaluate by Clenshaw's recurrence.

/// Degree of every expansion (DEGREE + 1 coefficients).
pub(crate) const DEGREE: usize = 16; // estrin_many is written out for this degree
/// Number of coefficients.
pub(crate) const LEN: usize = DEGREE + 1;

/// The Chebyshev-Lobatto nodes cos(pi k / N), k = 0..=N, on [-1, 1] (from +1 down to -1).
pub(crate) fn lobatto_nodes() -> [f64; LEN] {
    let mut x = [0.0; LEN];
    for (k, slot) in x.iter_mut().enumerate() {
        *slot = (std::f64::consts::PI * k as f64 / DEGREE as f64).cos();
    }
    x
}

/// Coefficients c_j of sum c_j T_j(x) interpolating `values` given at [`lobatto_nodes`].
pub(crate) fn coefficients(values: &[f64; LEN]) -> [f64; LEN] {
    let n = DEGREE as f64;
    let mut c = [0.0; LEN];
    for (j, cj) in c.iter_mut().enumerate() {
        let mut sum = 0.0;
        for (k, v) in values.iter().enumerate() {
            let w = if k == 0 || k == DEGREE { 0.5 } else { 1.0 };
            sum += w * v * (std::f64::consts::PI * (j * k) as f64 / n).cos();
        }
        let scale = if j == 0 || j == DEGREE {
            1.0 / n
        } else {
            2.0 / n
        };
        *cj = scale * sum;
    }
    c
}

/// Clenshaw evaluation of `M` expansions (the reference that the monomial form is tested against) sharing one x in [-1, 1]; `c[k][m]` is coefficient k of expansion m.
#[cfg(test)]
pub(crate) fn eval_many<const M: usize>(c: &[[f64; M]; LEN], x: f64) -> [f64; M] {
    let two_x = 2.0 * x;
    let mut b1 = [0.0; M];
    let mut b2 = [0.0; M];
    for ck in c.iter().skip(1).rev() {
        for m in 0..M {
            // plain multiply-add: mul_add is a slow library call unless the target has FMA
            let b0 = two_x * b1[m] + (ck[m] - b2[m]);
            b2[m] = b1[m];
            b1[m] = b0;
        }
    }
    let mut out = [0.0; M];
    for m in 0..M {
        out[m] = x * b1[m] + (c[0][m] - b2[m]);
    }
    out
}

/// Monomial coefficients a_k (sum a_k x^k) of the Chebyshev series with coefficients `c`, on [-1, 1].
pub(crate) fn to_monomial(c: &[f64; LEN]) -> [f64; LEN] {
    let mut out = [0.0; LEN];
    // t_prev, t_cur: monomial coefficients of T_{k-1} and T_k
    let mut t_prev = [0.0; LEN];
    let mut t_cur = [0.0; LEN];
    t_prev[0] = 1.0;
    t_cur[1] = 1.0;
    for (k, ck) in c.iter().enumerate() {
        let tk = if k == 0 { &t_prev } else { &t_cur };
        for (o, t) in out.iter_mut().zip(tk) {
            *o += ck * t;
        }
        if k >= 1 {
            // T_{k+1} = 2 x T_k - T_{k-1}
            let mut next = [0.0; LEN];
            for j in 0..LEN {
                let shifted = if j > 0 { 2.0 * t_cur[j - 1] } else { 0.0 };
                next[j] = shifted - t_prev[j];
            }
            t_prev = t_cur;
            t_cur = next;
        }
    }
    out
}

/// Estrin's scheme for `M` polynomials of degree 16 sharing one x: a short dependency chain (4 levels),
/// unlike Horner's or Clenshaw's 16, which is what bounds the speed of a fast-curve lookup.
#[inline(always)]
pub(crate) fn estrin_many<const M: usize>(a: &[[f64; M]; LEN], x: f64) -> [f64; M] {
    let x2 = x * x;
    let x4 = x2 * x2;
    let x8 = x4 * x4;
    let x16 = x8 * x8;
    let mut out = [0.0; M];
    for m in 0..M {
        let p = |i: usize| a[i][m] + a[i + 1][m] * x;
        let q0 = p(0) + p(2) * x2;
        let q1 = p(4) + p(6) * x2;
        let q2 = p(8) + p(10) * x2;
        let q3 = p(12) + p(14) * x2;
        let r0 = q0 + q1 * x4;
        let r1 = q2 + q3 * x4;
        out[m] = r0 + r1 * x8 + a[16][m] * x16;
    }
    out
}

/// The map of [lo, hi] onto [-1, 1] as a multiply and a subtract (no division on the lookup path).
#[derive(Debug, Clone, Copy)]
pub(crate) struct UnitMap {
    scale: f64,
    offset: f64,
}

impl UnitMap {
    /// The map of [lo, hi] onto [-1, 1].
    pub(crate) fn new(lo: f64, hi: f64) -> Self {
        Self {
            scale: 2.0 / (hi - lo),
            offset: (lo + hi) / (hi - lo),
        }
    }

    /// `v` mapped onto [-1, 1]: (2 v - lo - hi) / (hi - lo), to within rounding.
    #[inline]
    pub(crate) fn apply(self, v: f64) -> f64 {
        v * self.scale - self.offset
    }
}

/// Maps `u` in [-1, 1] to [lo, hi].
#[inline]
pub(crate) fn from_unit(u: f64, lo: f64, hi: f64) -> f64 {
    0.5 * (lo + hi) + 0.5 * (hi - lo) * u
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Source: identity (an expansion fitted to a polynomial of degree <= N reproduces it exactly).
    #[test]
    fn reproduces_a_polynomial_and_an_analytic_function() {
        let nodes = lobatto_nodes();
        let mut vals = [0.0; LEN];
        for (v, x) in vals.iter_mut().zip(nodes) {
            *v = 3.0 * x.powi(5) - x * x + 0.25;
        }
        let c = coefficients(&vals);
        let cm: [[f64; 1]; LEN] = c.map(|v| [v]);
        for i in 0..=40 {
            let x = -1.0 + 2.0 * f64::from(i) / 40.0;
            let want = 3.0 * x.powi(5) - x * x + 0.25;
            let got = eval_many(&cm, x)[0];
            assert!((got - want).abs() < 1e-14, "x={x}: {got} vs {want}");
        }
        // exp(x) converges to round-off with 17 coefficients
        for (v, x) in vals.iter_mut().zip(nodes) {
            *v = x.exp();
        }
        let cm: [[f64; 1]; LEN] = coefficients(&vals).map(|v| [v]);
        let mono: [[f64; 1]; LEN] = to_monomial(&coefficients(&vals)).map(|v| [v]);
        for i in 0..=40 {
            let x = -1.0 + 2.0 * f64::from(i) / 40.0;
            assert!((eval_many(&cm, x)[0] - x.exp()).abs() < 1e-14);
            assert!((estrin_many(&mono, x)[0] - x.exp()).abs() < 1e-14);
        }
    }
}
