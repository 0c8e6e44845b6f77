//! The reduced Helmholtz energy a/(RT) = a0(delta, tau) + ar(delta, tau) and its analytic derivatives.
//!
//! delta = rho / rho_r, tau = T_r / T. Term forms follow CoolProp's implementation of the papers so that
//! both give the same numbers to round-off; the non-analytic terms are those of Span and Wagner (1996),
//! eq. (6.5) and Table 32 (derivatives).

use crate::data::{FluidData, GaussianTerm, IdealTerm, NonAnalyticTerm, PowerTerm};
use crate::real::Real;

/// Largest number of power + Gaussian terms of any fluid here (checked by a test).
pub(crate) const MAX_TERMS: usize = 48;

/// Residual part and its derivatives: `d` means d/d(delta), `t` means d/d(tau).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ResidualDerivatives {
    /// ar
    pub a: f64,
    /// d ar / d delta
    pub a_d: f64,
    /// d2 ar / d delta2
    pub a_dd: f64,
    /// d ar / d tau
    pub a_t: f64,
    /// d2 ar / d tau2
    pub a_tt: f64,
    /// d2 ar / d delta d tau
    pub a_dt: f64,
}

/// Ideal-gas part: a0 and its tau derivatives (its delta part is ln(delta), derivatives 1/delta, -1/delta^2).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct IdealDerivatives {
    /// a0
    pub a: f64,
    /// d a0 / d tau
    pub a_t: f64,
    /// d2 a0 / d tau2
    pub a_tt: f64,
}

/// a0(delta, tau) and its tau derivatives.
pub(crate) fn ideal(data: &FluidData, tau: f64, delta: f64) -> IdealDerivatives {
    let mut r = IdealDerivatives::default();
    for term in data.ideal {
        match *term {
            IdealTerm::Lead { a1, a2 } => {
                r.a += delta.ln() + a1 + a2 * tau;
                r.a_t += a2;
            }
            IdealTerm::Offset { a1, a2 } => {
                r.a += a1 + a2 * tau;
                r.a_t += a2;
            }
            IdealTerm::LogTau { a } => {
                r.a += a * tau.ln();
                r.a_t += a / tau;
                r.a_tt -= a / (tau * tau);
            }
            IdealTerm::Power { n, t } => {
                for (n, t) in n.iter().zip(t) {
                    let v = n * tau.powf(*t);
                    r.a += v;
                    r.a_t += v * t / tau;
                    r.a_tt += v * t * (t - 1.0) / (tau * tau);
                }
            }
            IdealTerm::PlanckEinstein { n, theta } => {
                for (n, th) in n.iter().zip(theta) {
                    let e = (-th * tau).exp();
                    let one_minus = -(-th * tau).exp_m1();
                    r.a += n * one_minus.ln();
                    r.a_t += n * th * e / one_minus;
                    r.a_tt -= n * th * th * e / (one_minus * one_minus);
                }
            }
        }
    }
    r
}

/// Sums of `base * factor` for the six derivatives, in the scaled form delta^i tau^j d^(i+j) / ...
#[derive(Default)]
struct Scaled {
    a: f64,
    d: f64,
    dd: f64,
    t: f64,
    tt: f64,
    dt: f64,
}

fn power_term(s: &mut Scaled, p: &PowerTerm, ln_delta: f64, ln_tau: f64, delta_l: &[f64; 8]) {
    let d = f64::from(p.d);
    let (exponent, x, xx) = if p.l > 0 {
        let dl = delta_l.get(p.l as usize).copied().unwrap_or(0.0);
        let l = f64::from(p.l);
        let x = d - l * dl;
        (
            d * ln_delta + p.t * ln_tau - dl,
            x,
            x * (x - 1.0) - l * l * dl,
        )
    } else {
        (d * ln_delta + p.t * ln_tau, d, d * (d - 1.0))
    };
    let base = p.n * exponent.exp();
    s.a += base;
    s.d += base * x;
    s.dd += base * xx;
    s.t += base * p.t;
    s.tt += base * p.t * (p.t - 1.0);
    s.dt += base * x * p.t;
}

fn gaussian_term(
    s: &mut Scaled,
    g: &GaussianTerm,
    delta: f64,
    tau: f64,
    ln_delta: f64,
    ln_tau: f64,
) {
    let d = f64::from(g.d);
    let dd = delta - g.epsilon;
    let tt = tau - g.gamma;
    let base = g.n * (d * ln_delta + g.t * ln_tau - g.eta * dd * dd - g.beta * tt * tt).exp();
    let x = d - 2.0 * g.eta * delta * dd;
    let y = g.t - 2.0 * g.beta * tau * tt;
    s.a += base;
    s.d += base * x;
    s.dd += base * (x * x - d - 2.0 * g.eta * delta * delta);
    s.t += base * y;
    s.tt += base * (y * y - g.t - 2.0 * g.beta * tau * tau);
    s.dt += base * x * y;
}

/// Span and Wagner's non-analytic term: ar and its unscaled derivatives, in the [`Real`] type asked.
#[derive(Clone, Copy)]
struct NonAnalytic<R> {
    a: R,
    a_d: R,
    a_dd: R,
    a_t: R,
    a_tt: R,
    a_dt: R,
}

fn non_analytic_term<R: Real>(na: &NonAnalyticTerm, delta: R, tau: R) -> NonAnalytic<R> {
    // the derivatives contain (delta - 1)^-k factors that cancel analytically; step off delta = 1 exactly
    let mut d1 = delta - 1.0;
    if d1 < R::from(1e-12) && d1 > R::from(-1e-12) {
        d1 = R::from(1e-12);
    }
    let delta = d1 + 1.0;
    let d1sq = d1 * d1;
    let inv_2beta = 1.0 / (2.0 * na.beta);
    // powers of (delta-1)^2 and of Delta from one logarithm each
    let ln_d1sq = d1sq.ln();
    let d1sq_inv_2beta = (ln_d1sq * inv_2beta).exp();
    let d1sq_a = (ln_d1sq * na.a).exp();
    let theta = -(tau - 1.0) + d1sq_inv_2beta * na.big_a;
    let mut big_delta = theta * theta + d1sq_a * na.big_b;
    if big_delta < R::from(1e-300) {
        big_delta = R::from(1e-300);
    }
    let t1 = tau - 1.0;
    let psi = (-(d1sq * na.big_c) - t1 * t1 * na.big_d).exp();
    let psi_d = -(d1 * psi * (2.0 * na.big_c));
    let psi_dd = (d1sq * (2.0 * na.big_c) - 1.0) * psi * (2.0 * na.big_c);
    let psi_t = -(t1 * psi * (2.0 * na.big_d));
    let psi_tt = (t1 * t1 * (2.0 * na.big_d) - 1.0) * psi * (2.0 * na.big_d);
    let psi_dt = d1 * t1 * psi * (4.0 * na.big_c * na.big_d);

    let w = d1sq_inv_2beta / d1sq;
    let big_delta_d =
        d1 * (theta * w * (na.big_a * 2.0 / na.beta) + d1sq_a / d1sq * (2.0 * na.big_b * na.a));
    let big_delta_dd = big_delta_d / d1
        + d1sq
            * (d1sq_a / (d1sq * d1sq) * (4.0 * na.big_b * na.a * (na.a - 1.0))
                + w * w * (2.0 * na.big_a * na.big_a * (1.0 / na.beta).powi(2))
                + theta * w / d1sq * (na.big_a * (4.0 / na.beta) * (inv_2beta - 1.0)));
    let db = (big_delta.ln() * na.b).exp();
    let db_m1 = db / big_delta;
    let db_m2 = db_m1 / big_delta;
    let db_d = db_m1 * big_delta_d * na.b;
    let db_dd = (db_m1 * big_delta_dd + db_m2 * big_delta_d * big_delta_d * (na.b - 1.0)) * na.b;
    let db_t = -(theta * db_m1 * (2.0 * na.b));
    let db_tt = db_m1 * (2.0 * na.b) + theta * theta * db_m2 * (4.0 * na.b * (na.b - 1.0));
    let db_dt = -(db_m1 * d1 * w * (na.big_a * na.b * 2.0 / na.beta))
        - theta * db_m2 * big_delta_d * (2.0 * na.b * (na.b - 1.0));

    let n = na.n;
    NonAnalytic {
        a: db * delta * psi * n,
        a_d: (db * (psi + delta * psi_d) + db_d * delta * psi) * n,
        a_dd: (db * (psi_d * 2.0 + delta * psi_dd)
            + db_d * (psi + delta * psi_d) * 2.0
            + db_dd * delta * psi)
            * n,
        a_t: delta * (db_t * psi + db * psi_t) * n,
        a_tt: delta * (db_tt * psi + db_t * psi_t * 2.0 + db * psi_tt) * n,
        a_dt: (db * (psi_t + delta * psi_dt)
            + delta * db_d * psi_t
            + db_t * (psi + delta * psi_d)
            + db_dt * delta * psi)
            * n,
    }
}

fn delta_powers_l(delta: f64) -> [f64; 8] {
    let mut out = [0.0; 8];
    let mut v = 1.0;
    for slot in &mut out {
        *slot = v;
        v *= delta;
    }
    out
}

/// ar(delta, tau) and all its first and second derivatives.
pub(crate) fn residual(data: &FluidData, tau: f64, delta: f64) -> ResidualDerivatives {
    let ln_delta = delta.ln();
    let ln_tau = tau.ln();
    let delta_l = delta_powers_l(delta);
    let mut s = Scaled::default();
    for p in data.power {
        power_term(&mut s, p, ln_delta, ln_tau, &delta_l);
    }
    for g in data.gaussian {
        gaussian_term(&mut s, g, delta, tau, ln_delta, ln_tau);
    }
    let mut r = ResidualDerivatives {
        a: s.a,
        a_d: s.d / delta,
        a_dd: s.dd / (delta * delta),
        a_t: s.t / tau,
        a_tt: s.tt / (tau * tau),
        a_dt: s.dt / (delta * tau),
    };
    for na in data.non_analytic {
        let t = non_analytic_term(na, delta, tau);
        r.a += t.a;
        r.a_d += t.a_d;
        r.a_dd += t.a_dd;
        r.a_t += t.a_t;
        r.a_tt += t.a_tt;
        r.a_dt += t.a_dt;
    }
    r
}

/// ar and its delta derivatives along one isotherm, with everything that depends on tau alone computed
/// once: the density solvers call [`ResidualAtTau::eval`] several times per temperature. `R` is `f64`, or
/// double-double for the extended-precision saturation refinement.
pub(crate) struct ResidualAtTau<'a, R = f64> {
    data: &'a FluidData,
    tau: R,
    /// n tau^t for power terms, then n tau^t exp(-beta (tau - gamma)^2) for Gaussian terms
    coef: [R; MAX_TERMS],
    /// largest l of the power terms: exp(-delta^l) is needed for l = 1..=max_l
    max_l: usize,
}

/// ar, delta * d ar/d delta and delta^2 * d2 ar / d delta2 at one density.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct DeltaDerivatives<R = f64> {
    pub a: R,
    pub delta_a_d: R,
    pub delta2_a_dd: R,
}

/// x^n for n >= 0 by repeated squaring.
fn powi_real<R: Real>(x: R, n: i32) -> R {
    let mut out = R::from(1.0);
    let mut base = x;
    let mut n = n.max(0);
    while n > 0 {
        if n & 1 == 1 {
            out = out * base;
        }
        base = base * base;
        n >>= 1;
    }
    out
}

impl<'a, R: Real> ResidualAtTau<'a, R> {
    pub(crate) fn new(data: &'a FluidData, tau: R) -> Self {
        let ln_tau = tau.ln();
        let mut coef = [R::from(0.0); MAX_TERMS];
        let powers = data.power.iter().map(|p| (ln_tau * p.t).exp() * p.n);
        let gaussians = data.gaussian.iter().map(|g| {
            let tt = tau - g.gamma;
            (ln_tau * g.t - tt * tt * g.beta).exp() * g.n
        });
        for (slot, c) in coef.iter_mut().zip(powers.chain(gaussians)) {
            *slot = c;
        }
        let max_l = data
            .power
            .iter()
            .map(|p| p.l.max(0) as usize)
            .max()
            .unwrap_or(0);
        Self {
            data,
            tau,
            coef,
            max_l,
        }
    }

    pub(crate) fn eval(&self, delta: R) -> DeltaDerivatives<R> {
        let one = R::from(1.0);
        let mut pow_d = [one; 12];
        for i in 1..pow_d.len() {
            pow_d[i] = pow_d[i - 1] * delta;
        }
        let mut exp_l = [one; 8];
        for (l, slot) in exp_l.iter_mut().enumerate().take(self.max_l + 1).skip(1) {
            *slot = (-pow_d.get(l).copied().unwrap_or(one)).exp();
        }
        let zero = R::from(0.0);
        let (mut a, mut d, mut dd) = (zero, zero, zero);
        let n_power = self.data.power.len();
        for (p, &c) in self.data.power.iter().zip(&self.coef) {
            let dpow = pow_d
                .get(p.d as usize)
                .copied()
                .unwrap_or_else(|| powi_real(delta, p.d));
            let df = f64::from(p.d);
            let (base, x, xx) = if p.l > 0 {
                let dl = pow_d.get(p.l as usize).copied().unwrap_or(zero);
                let l = f64::from(p.l);
                let x = -(dl * l) + df;
                (
                    c * dpow * exp_l.get(p.l as usize).copied().unwrap_or(zero),
                    x,
                    x * (x - 1.0) - dl * (l * l),
                )
            } else {
                (c * dpow, R::from(df), R::from(df * (df - 1.0)))
            };
            a += base;
            d += base * x;
            dd += base * xx;
        }
        for (g, &c) in self
            .data
            .gaussian
            .iter()
            .zip(self.coef.iter().skip(n_power))
        {
            let df = f64::from(g.d);
            let ddl = delta - g.epsilon;
            let dpow = pow_d
                .get(g.d as usize)
                .copied()
                .unwrap_or_else(|| powi_real(delta, g.d));
            let base = c * dpow * (-(ddl * ddl * g.eta)).exp();
            let x = -(delta * ddl * (2.0 * g.eta)) + df;
            a += base;
            d += base * x;
            dd += base * (x * x - df - delta * delta * (2.0 * g.eta));
        }
        for na in self.data.non_analytic {
            let t = non_analytic_term(na, delta, self.tau);
            a += t.a;
            d += delta * t.a_d;
            dd += delta * delta * t.a_dd;
        }
        DeltaDerivatives {
            a,
            delta_a_d: d,
            delta2_a_dd: dd,
        }
    }
}
