//! The reduced Helmholtz energy a/(RT) = a0(delta, tau) + ar(delta, tau) and its analytic derivatives.
//!
//! delta = rho / rho_r, tau = T_r / T. Term forms follow CoolProp's implementation of the papers so that
//! both give the same numbers to round-off; the non-analytic terms are those of Span and Wagner (1996),
//! eq. (6.5) and Table 32 (derivatives).

use crate::data::{FluidData, GaussianTerm, IdealTerm, NonAnalyticTerm, PowerTerm};

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

/// Span and Wagner's non-analytic term, unscaled derivatives added to `r`.
fn non_analytic_term(r: &mut ResidualDerivatives, na: &NonAnalyticTerm, delta: f64, tau: f64) {
    // the derivatives contain (delta - 1)^-k factors that cancel analytically; step off delta = 1 exactly
    let mut d1 = delta - 1.0;
    if d1.abs() < 1e-12 {
        d1 = 1e-12;
    }
    let delta = 1.0 + d1;
    let d1sq = d1 * d1;
    let inv_2beta = 1.0 / (2.0 * na.beta);
    // powers of (delta-1)^2 and of Delta from one logarithm each
    let ln_d1sq = d1sq.ln();
    let d1sq_inv_2beta = (inv_2beta * ln_d1sq).exp();
    let d1sq_a = (na.a * ln_d1sq).exp();
    let theta = (1.0 - tau) + na.big_a * d1sq_inv_2beta;
    let big_delta = (theta * theta + na.big_b * d1sq_a).max(1e-300);
    let t1 = tau - 1.0;
    let psi = (-na.big_c * d1sq - na.big_d * t1 * t1).exp();
    let psi_d = -2.0 * na.big_c * d1 * psi;
    let psi_dd = (2.0 * na.big_c * d1sq - 1.0) * 2.0 * na.big_c * psi;
    let psi_t = -2.0 * na.big_d * t1 * psi;
    let psi_tt = (2.0 * na.big_d * t1 * t1 - 1.0) * 2.0 * na.big_d * psi;
    let psi_dt = 4.0 * na.big_c * na.big_d * d1 * t1 * psi;

    let w = d1sq_inv_2beta / d1sq;
    let big_delta_d =
        d1 * (na.big_a * theta * (2.0 / na.beta) * w + 2.0 * na.big_b * na.a * d1sq_a / d1sq);
    let big_delta_dd = big_delta_d / d1
        + d1sq
            * (4.0 * na.big_b * na.a * (na.a - 1.0) * d1sq_a / (d1sq * d1sq)
                + 2.0 * na.big_a * na.big_a * (1.0 / na.beta).powi(2) * w * w
                + na.big_a * theta * (4.0 / na.beta) * (inv_2beta - 1.0) * w / d1sq);
    let db = (na.b * big_delta.ln()).exp();
    let db_m1 = db / big_delta;
    let db_m2 = db_m1 / big_delta;
    let db_d = na.b * db_m1 * big_delta_d;
    let db_dd = na.b * (db_m1 * big_delta_dd + (na.b - 1.0) * db_m2 * big_delta_d * big_delta_d);
    let db_t = -2.0 * theta * na.b * db_m1;
    let db_tt = 2.0 * na.b * db_m1 + 4.0 * theta * theta * na.b * (na.b - 1.0) * db_m2;
    let db_dt = -na.big_a * na.b * (2.0 / na.beta) * db_m1 * d1 * w
        - 2.0 * theta * na.b * (na.b - 1.0) * db_m2 * big_delta_d;

    let n = na.n;
    r.a += n * db * delta * psi;
    r.a_d += n * (db * (psi + delta * psi_d) + db_d * delta * psi);
    r.a_dd += n
        * (db * (2.0 * psi_d + delta * psi_dd)
            + 2.0 * db_d * (psi + delta * psi_d)
            + db_dd * delta * psi);
    r.a_t += n * delta * (db_t * psi + db * psi_t);
    r.a_tt += n * delta * (db_tt * psi + 2.0 * db_t * psi_t + db * psi_tt);
    r.a_dt += n
        * (db * (psi_t + delta * psi_dt)
            + delta * db_d * psi_t
            + db_t * (psi + delta * psi_d)
            + db_dt * delta * psi);
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
        non_analytic_term(&mut r, na, delta, tau);
    }
    r
}

/// ar and its delta derivatives along one isotherm, with everything that depends on tau alone computed
/// once: the density solvers call [`ResidualAtTau::eval`] several times per temperature.
pub(crate) struct ResidualAtTau<'a> {
    data: &'a FluidData,
    tau: f64,
    /// n tau^t for power terms, then n tau^t exp(-beta (tau - gamma)^2) for Gaussian terms
    coef: [f64; MAX_TERMS],
    /// largest l of the power terms: exp(-delta^l) is needed for l = 1..=max_l
    max_l: usize,
}

/// ar, delta * d ar/d delta and delta^2 * d2 ar / d delta2 at one density.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct DeltaDerivatives {
    pub a: f64,
    pub delta_a_d: f64,
    pub delta2_a_dd: f64,
}

impl<'a> ResidualAtTau<'a> {
    pub(crate) fn new(data: &'a FluidData, tau: f64) -> Self {
        let ln_tau = tau.ln();
        let mut coef = [0.0; MAX_TERMS];
        let powers = data.power.iter().map(|p| p.n * (p.t * ln_tau).exp());
        let gaussians = data.gaussian.iter().map(|g| {
            let tt = tau - g.gamma;
            g.n * (g.t * ln_tau - g.beta * tt * tt).exp()
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

    pub(crate) fn eval(&self, delta: f64) -> DeltaDerivatives {
        let mut pow_d = [1.0; 12];
        for i in 1..pow_d.len() {
            pow_d[i] = pow_d[i - 1] * delta;
        }
        let mut exp_l = [1.0; 8];
        for (l, slot) in exp_l.iter_mut().enumerate().take(self.max_l + 1).skip(1) {
            *slot = (-pow_d.get(l).copied().unwrap_or(0.0)).exp();
        }
        let (mut a, mut d, mut dd) = (0.0, 0.0, 0.0);
        let n_power = self.data.power.len();
        for (p, c) in self.data.power.iter().zip(&self.coef) {
            let dpow = pow_d
                .get(p.d as usize)
                .copied()
                .unwrap_or_else(|| delta.powi(p.d));
            let df = f64::from(p.d);
            let (base, x, xx) = if p.l > 0 {
                let dl = pow_d.get(p.l as usize).copied().unwrap_or(0.0);
                let l = f64::from(p.l);
                let x = df - l * dl;
                (
                    c * dpow * exp_l.get(p.l as usize).copied().unwrap_or(0.0),
                    x,
                    x * (x - 1.0) - l * l * dl,
                )
            } else {
                (c * dpow, df, df * (df - 1.0))
            };
            a += base;
            d += base * x;
            dd += base * xx;
        }
        for (g, c) in self
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
                .unwrap_or_else(|| delta.powi(g.d));
            let base = c * dpow * (-g.eta * ddl * ddl).exp();
            let x = df - 2.0 * g.eta * delta * ddl;
            a += base;
            d += base * x;
            dd += base * (x * x - df - 2.0 * g.eta * delta * delta);
        }
        let mut out = DeltaDerivatives {
            a,
            delta_a_d: d,
            delta2_a_dd: dd,
        };
        if !self.data.non_analytic.is_empty() {
            let mut r = ResidualDerivatives::default();
            for na in self.data.non_analytic {
                non_analytic_term(&mut r, na, delta, self.tau);
            }
            out.a += r.a;
            out.delta_a_d += delta * r.a_d;
            out.delta2_a_dd += delta * delta * r.a_dd;
        }
        out
    }
}
