//! Elementary functions in double-double: abs, reciprocal, square root, integer and real powers, exp
//! and ln (Hida, Li and Bailey 2001: argument reduction, Taylor series, Newton iteration for ln).

use super::*;

/// Range limits and scale factors for `sqrt` (exact powers of two).
const SQRT_SCALE_LOW: f64 = pow2_const(-500);
const SQRT_SCALE_HIGH: f64 = pow2_const(500);
const TWO_POW_600: f64 = pow2_const(600);
const TWO_POW_M600: f64 = pow2_const(-600);
const TWO_POW_300: f64 = pow2_const(300);
const TWO_POW_M300: f64 = pow2_const(-300);

/// 2^k as an `f64` for `-1022 <= k <= 1023` (built from the bit pattern).
#[inline]
pub(super) fn pow2i(k: i32) -> f64 {
    debug_assert!((-1022..=1023).contains(&k));
    // The debug_assert documents the range; the clamp keeps release builds
    // well defined.
    pow2_const(k.clamp(-1022, 1023))
}

// ---------------------------------------------------------------------------
// Constants
// ---------------------------------------------------------------------------

// ln 2 split into three parts for argument reduction in `exp` and `ln`:
// c0 and c1 have at most 42 significant bits, so k*c0 and k*c1 are exact for
// |k| < 2^11; |ln 2 - c0 - c1 - c2| ≈ 3.3e-44. Generated and checked by
// tools/dd_reference.py (Python decimal, 60 digits).
pub(super) const LN2_C0: f64 = 0.693_147_180_559_890_3;
pub(super) const LN2_C1: f64 = 5.497_923_018_708_502_4e-14;
pub(super) const LN2_C2: f64 = -1.312_469_841_778_525_5e-27;

/// 1/n! for n = 2..=10 as double-doubles, generated and checked by
/// tools/dd_reference.py (Python decimal, 60 digits).
pub(super) const INV_FACT: [Dd; 9] = [
    Dd { hi: 0.5, lo: 0.0 },
    Dd {
        hi: 0.166_666_666_666_666_66,
        lo: 9.251_858_538_542_97e-18,
    },
    Dd {
        hi: 0.041_666_666_666_666_664,
        lo: 2.312_964_634_635_742_7e-18,
    },
    Dd {
        hi: 0.008_333_333_333_333_333,
        lo: 1.156_482_317_317_871_4e-19,
    },
    Dd {
        hi: 0.001_388_888_888_888_889,
        lo: -5.300_543_954_373_577e-20,
    },
    Dd {
        hi: 0.000_198_412_698_412_698_4,
        lo: 1.720_955_829_342_070_5e-22,
    },
    Dd {
        hi: 2.480_158_730_158_73e-5,
        lo: 2.151_194_786_677_588_2e-23,
    },
    Dd {
        hi: 2.755_731_922_398_589_3e-6,
        lo: -1.858_393_274_046_472e-22,
    },
    Dd {
        hi: 2.755_731_922_398_589e-7,
        lo: 2.376_771_462_225_029_7e-23,
    },
];

/// Number of squarings in `expm1_reduced`: the reduced argument is divided
/// by 2^EXP_SQUARINGS before the Taylor series.
const EXP_SQUARINGS: i32 = 9;

impl Dd {
    // -----------------------------------------------------------------------
    // Elementary functions
    // -----------------------------------------------------------------------

    #[inline]
    pub(crate) fn abs(self) -> Dd {
        if self.hi < 0.0 || (self.hi == 0.0 && self.lo < 0.0) {
            -self
        } else {
            self
        }
    }

    #[inline]
    pub(crate) fn recip(self) -> Dd {
        Dd::ONE.div_dd(self)
    }

    /// Square root: one Newton (Heron) correction of the double square root,
    /// `x + (a - x^2) / (2x)`, with `x^2` formed exactly. Negative input
    /// gives NaN; `sqrt(±0) = ±0`.
    pub(crate) fn sqrt(self) -> Dd {
        if self.hi == 0.0 {
            return self;
        }
        if self.hi.is_nan() || self.hi < 0.0 {
            return Dd::NAN;
        }
        if self.hi.is_infinite() {
            return Dd::INFINITY;
        }
        // Keep x*x and its exact error term clear of underflow/overflow by
        // scaling with an even power of two (exact).
        if self.hi < SQRT_SCALE_LOW {
            return self
                .mul_pow2(TWO_POW_600)
                .sqrt_core()
                .mul_pow2(TWO_POW_M300);
        }
        if self.hi > SQRT_SCALE_HIGH {
            return self
                .mul_pow2(TWO_POW_M600)
                .sqrt_core()
                .mul_pow2(TWO_POW_300);
        }
        self.sqrt_core()
    }

    /// Square root for positive finite `self` in [2^-500, 2^500].
    fn sqrt_core(self) -> Dd {
        let x = self.hi.sqrt();
        let (p, e) = two_sqr(x);
        let r = self.add_dd(Dd { hi: -p, lo: -e });
        let corr = r.hi / (2.0 * x);
        let (s, e) = quick_two_sum(x, corr);
        Dd { hi: s, lo: e }
    }

    /// Integer power by binary exponentiation. The relative error grows
    /// roughly in proportion to `|n|` (about `|n| * 2^-106`).
    pub(crate) fn powi(self, n: i32) -> Dd {
        let mut m = n.unsigned_abs();
        let mut base = self;
        let mut acc = Dd::ONE;
        while m > 0 {
            if m & 1 == 1 {
                acc = acc.mul_dd(base);
            }
            m >>= 1;
            if m > 0 {
                base = base.square();
            }
        }
        if n < 0 { acc.recip() } else { acc }
    }

    /// `exp(r) - 1` for `|r| <= ~0.35`, accurate relative to the result
    /// (also for tiny `r`). With s = r / 2^9, the Taylor series of
    /// `exp(s) - 1` is summed to the s^10/10! term (truncation below 1e-40
    /// relative), then squared nine times through
    /// `(1 + e)^2 - 1 = e (2 + e)`, which avoids cancellation.
    fn expm1_reduced(r: Dd) -> Dd {
        let s = r.mul_pow2(1.0 / f64::from(1u32 << EXP_SQUARINGS));
        // Horner: p = 1/2! + s (1/3! + s (1/4! + ... + s/10!)).
        let mut p = INV_FACT[INV_FACT.len() - 1];
        for c in INV_FACT.iter().rev().skip(1) {
            p = p.mul_fast(s).add_dd(*c);
        }
        // e = s + s^2 p
        let mut e = s.add_dd(s.mul_fast(s).mul_fast(p));
        for _ in 0..EXP_SQUARINGS {
            e = e.mul_fast(e.add_f64(2.0));
        }
        e
    }

    /// `x - k ln 2`, exact up to ~1e-38 absolute for |k| < 2^11.
    #[inline]
    fn reduce_ln2(x: Dd, k: f64) -> Dd {
        x.add_f64(-k * LN2_C0)
            .add_f64(-k * LN2_C1)
            .add_f64(-k * LN2_C2)
    }

    /// Exponential. `exp(x) = 2^k exp(r)` with `r = x - k ln 2`,
    /// `|r| <= ln(2)/2`, and `exp(r)` from [`Dd::expm1_reduced`].
    /// Overflow gives `+inf`, underflow `0`, NaN gives NaN.
    pub(crate) fn exp(self) -> Dd {
        if self.hi.is_nan() {
            return Dd::NAN;
        }
        // exp(709.79) > f64::MAX; exp(-745.2) < 2^-1075.
        if self.hi > 709.79 {
            return Dd::INFINITY;
        }
        if self.hi < -745.2 {
            return Dd::ZERO;
        }
        let k = (self.hi * std::f64::consts::LOG2_E).round();
        let r = Dd::reduce_ln2(self, k);
        let y = Dd::expm1_reduced(r).add_f64(1.0);
        // |k| <= 1076 here, so the conversion is exact.
        y.scale_pow2(k as i32)
    }

    /// Natural logarithm. With `x = m 2^j`, `m` in [sqrt(1/2), sqrt(2)),
    /// `ln x = j ln 2 + ln m`; `ln m` takes one Newton step
    /// `y <- y + m exp(-y) - 1` from `y0 = ln(m.hi) + m.lo/m.hi` (double),
    /// which roughly squares the error of y0 (~1e-16 -> ~1e-32). The
    /// correction is formed as `(m - 1) + m (exp(-y0) - 1)`, so the result
    /// stays accurate relative to `ln x` also next to `x = 1`.
    ///
    /// Zero, negative, infinite or NaN input gives NaN.
    pub(crate) fn ln(self) -> Dd {
        if self.hi.is_nan() || self.hi <= 0.0 || self.hi.is_infinite() {
            return Dd::NAN;
        }
        let (m, j) = self.split_exponent();
        let y0 = m.hi.ln() + m.lo / m.hi;
        let t = Dd::expm1_reduced(Dd::from_f64(-y0));
        let corr = m.add_f64(-1.0).add_dd(m.mul_dd(t));
        let y1 = corr.add_f64(y0);
        if j == 0 {
            return y1;
        }
        let jf = f64::from(j);
        Dd::from_f64(jf * LN2_C0)
            .add_f64(jf * LN2_C1)
            .add_f64(jf * LN2_C2)
            .add_dd(y1)
    }

    /// `(m, j)` with `self = m 2^j` and `m.hi` in [sqrt(1/2), sqrt(2)).
    /// Requires `self.hi` positive and finite.
    fn split_exponent(self) -> (Dd, i32) {
        let mut x = self;
        let mut j = 0i32;
        if x.hi < f64::MIN_POSITIVE {
            // Subnormal: bring into the normal range first (exact).
            x = x.mul_pow2(pow2_const(64));
            j -= 64;
        }
        let biased = ((x.hi.to_bits() >> 52) & 0x7ff) as i32;
        let mut e = biased - 1023;
        if f64::from_bits((x.hi.to_bits() & ((1u64 << 52) - 1)) | (1023u64 << 52))
            >= std::f64::consts::SQRT_2
        {
            e += 1;
        }
        (x.scale_pow2(-e), j + e)
    }

    /// `self^e = exp(e ln self)` for finite `self > 0`. For `self == 0`
    /// gives 0, 1 or +inf by the sign of `e` (as `f64::powf`); negative,
    /// infinite or NaN `self` gives NaN (from `ln`).
    pub(crate) fn powf(self, e: Dd) -> Dd {
        if self.hi == 0.0 {
            return if e.hi > 0.0 {
                Dd::ZERO
            } else if e.hi == 0.0 {
                Dd::ONE
            } else if e.hi < 0.0 {
                Dd::INFINITY
            } else {
                Dd::NAN
            };
        }
        e.mul_dd(self.ln()).exp()
    }
}
