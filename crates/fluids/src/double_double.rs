//! Double-double ("dd") floating-point arithmetic: an unevaluated sum of two
//! `f64` values `hi + lo` carrying about 106 significant bits.
//!
//! Used to evaluate the Helmholtz-energy equation of state in extended
//! precision so that the saturation solver can be checked to 1e-12 relative
//! next to the critical point, where the double-precision result is
//! dominated by cancellation.
//!
//! # References
//!
//! * T. J. Dekker, "A floating-point technique for extending the available
//!   precision", Numerische Mathematik 18 (1971) 224-242: exact product of
//!   two doubles via Veltkamp splitting, [`two_prod`], and the fast exact sum
//!   [`quick_two_sum`].
//! * D. E. Knuth, The Art of Computer Programming, vol. 2, section 4.2.2:
//!   the branch-free exact sum [`two_sum`] ("TwoSum").
//! * Y. Hida, X. S. Li and D. H. Bailey, "Algorithms for quad-double
//!   precision floating point arithmetic", Proc. 15th IEEE Symposium on
//!   Computer Arithmetic (ARITH-15), 2001: the double-double addition,
//!   multiplication, division and square root built from these
//!   transformations, and the exp/log strategy (argument reduction, Taylor
//!   series, Newton iteration for the logarithm).
//!
//! # Representation and accuracy
//!
//! Every operation returns a normalized value: `|lo| <= ulp(hi)/2`, so `hi`
//! is the double nearest to the represented value. Targets (relative):
//! `+ - * /` within 4e-32, `sqrt` 1e-31, `exp` and `ln` 1e-30. Measured
//! worst cases (tests and 20k-300k random cases against Python `decimal`)
//! are about 1 unit of 2^-106 ≈ 1.2e-32 for `+ - * /`, 3 units for `sqrt`,
//! 2 units for `exp` and 7 units for `ln`.
//!
//! # Ranges
//!
//! * Full ~106-bit precision needs `lo` to be a normal double, i.e. values of
//!   magnitude above about 2^-968 ≈ 4e-292. Below that `lo` becomes
//!   subnormal and the relative precision degrades gradually towards that of
//!   a plain `f64` (errors of a few 2^-1074 absolute). In particular
//!   `exp(x)` for `x < -670` is only accurate to about 2^-1074 absolute.
//!   `sqrt` and `ln` rescale internally and stay fully accurate for any
//!   positive finite `f64` input.
//! * Magnitudes must stay below about 1e307 for the error-free products to
//!   be exact (the splitting step itself is protected by scaling above
//!   2^996).
//! * Non-finite results: when an operation overflows or receives an
//!   infinity/NaN, `hi` holds the plain `f64` result and `lo` is `0.0`. No
//!   operation panics.
//!
//! The error-free transformations rely on every `f64` operation being
//! rounded individually; Rust never contracts `a * b + c` into a fused
//! multiply-add, so they hold on every target. `f64::mul_add` is not used
//! on purpose: without hardware FMA it is a slow library call.

use std::cmp::Ordering;
use std::iter::Sum;
use std::ops::{Add, AddAssign, Div, DivAssign, Mul, MulAssign, Neg, Sub, SubAssign};

mod functions;
use functions::pow2i;
#[cfg(test)]
use functions::{INV_FACT, LN2_C0, LN2_C1, LN2_C2};

/// A double-double number `hi + lo` with `|lo| <= ulp(hi)/2`.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub(crate) struct Dd {
    hi: f64,
    lo: f64,
}

// ---------------------------------------------------------------------------
// Error-free transformations
// ---------------------------------------------------------------------------

/// Knuth's TwoSum: returns `(s, e)` with `s = fl(a + b)` and `s + e = a + b`
/// exactly, for any finite `a`, `b` (no ordering requirement).
#[inline]
fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bv = s - a;
    let av = s - bv;
    (s, (a - av) + (b - bv))
}

/// Dekker's Fast2Sum ("QuickTwoSum"): `(s, e)` with `s = fl(a + b)` and
/// `s + e = a + b` exactly, provided `a == 0` or `exponent(a) >= exponent(b)`
/// (in particular when `|a| >= |b|`).
#[inline]
fn quick_two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    (s, b - (s - a))
}

/// 2^27 + 1, the Veltkamp splitting constant for 53-bit significands.
const SPLITTER: f64 = 134_217_729.0;
/// Above this magnitude `SPLITTER * a` could overflow (2^996).
const SPLIT_THRESHOLD: f64 = pow2_const(996);
/// 2^-28 and 2^28, used to scale large operands before splitting.
const TWO_POW_M28: f64 = pow2_const(-28);
const TWO_POW_28: f64 = pow2_const(28);

/// Veltkamp/Dekker splitting: `a = h + l` exactly, where `h` holds the upper
/// 26 bits and `l` the lower 27 (sign included), so that products of halves
/// are exact.
#[inline]
fn split(a: f64) -> (f64, f64) {
    if a.abs() > SPLIT_THRESHOLD {
        // SPLITTER * a would overflow: split a scaled copy (exact powers of two).
        let s = a * TWO_POW_M28;
        let c = SPLITTER * s;
        let h = c - (c - s);
        let l = s - h;
        (h * TWO_POW_28, l * TWO_POW_28)
    } else {
        let c = SPLITTER * a;
        let h = c - (c - a);
        (h, a - h)
    }
}

/// Dekker's exact product: `(p, e)` with `p = fl(a * b)` and `p + e = a * b`
/// exactly, provided no overflow and `e` does not underflow.
#[inline]
fn two_prod(a: f64, b: f64) -> (f64, f64) {
    two_prod_presplit(a, split(a), b, split(b))
}

/// [`two_prod`] with the Veltkamp splits of `a` and `b` already computed.
#[inline]
fn two_prod_presplit(a: f64, (ah, al): (f64, f64), b: f64, (bh, bl): (f64, f64)) -> (f64, f64) {
    let p = a * b;
    let e = ((ah * bh - p) + ah * bl + al * bh) + al * bl;
    (p, e)
}

/// Exact square of a double: `(p, e)` with `p + e = a * a`.
#[inline]
fn two_sqr(a: f64) -> (f64, f64) {
    let p = a * a;
    let (h, l) = split(a);
    let e = ((h * h - p) + 2.0 * h * l) + l * l;
    (p, e)
}

/// 2^k as an `f64` for `-1022 <= k <= 1023`, built from the bit pattern
/// (usable in constants).
const fn pow2_const(k: i32) -> f64 {
    f64::from_bits(((k + 1023) as u64) << 52)
}

impl Dd {
    pub(crate) const ZERO: Dd = Dd { hi: 0.0, lo: 0.0 };
    pub(crate) const ONE: Dd = Dd { hi: 1.0, lo: 0.0 };
    pub(crate) const NAN: Dd = Dd {
        hi: f64::NAN,
        lo: 0.0,
    };
    pub(crate) const INFINITY: Dd = Dd {
        hi: f64::INFINITY,
        lo: 0.0,
    };

    /// ln 2 = 0.693147180559945309417232121458176568...; the pair was
    /// produced and checked by tools/dd_reference.py (Python decimal, 60 digits).
    pub(crate) const LN_2: Dd = Dd {
        hi: std::f64::consts::LN_2,
        lo: 2.319_046_813_846_299_6e-17,
    };

    /// e = 2.718281828459045235360287471352662497...; the pair was produced
    /// and checked by tools/dd_reference.py (Python decimal, 60 digits).
    pub(crate) const E: Dd = Dd {
        hi: std::f64::consts::E,
        lo: 1.445_646_891_729_250_2e-16,
    };

    // -----------------------------------------------------------------------
    // Construction and access
    // -----------------------------------------------------------------------

    /// The exact double-double value of `x`.
    #[inline]
    pub(crate) const fn from_f64(x: f64) -> Dd {
        Dd { hi: x, lo: 0.0 }
    }

    /// The double-double `hi + lo` (rounded to nearest), normalized; the two
    /// arguments may be in any order of magnitude.
    #[inline]
    pub(crate) fn new_normalized(hi: f64, lo: f64) -> Dd {
        let (s, e) = two_sum(hi, lo);
        Dd::finish(s, e, || hi + lo)
    }

    /// Leading component (the double nearest to the value).
    #[inline]
    pub(crate) fn hi(self) -> f64 {
        self.hi
    }

    /// Trailing component.
    #[inline]
    pub(crate) fn lo(self) -> f64 {
        self.lo
    }

    /// Nearest `f64` (the leading component).
    #[inline]
    pub(crate) fn to_f64(self) -> f64 {
        self.hi
    }

    #[inline]
    pub(crate) fn is_finite(self) -> bool {
        self.hi.is_finite() && self.lo.is_finite()
    }

    #[inline]
    pub(crate) fn is_nan(self) -> bool {
        self.hi.is_nan() || self.lo.is_nan()
    }

    /// Builds the result `(s, e)` of a final QuickTwoSum; on a non-finite
    /// leading part falls back to the plain `f64` result with `lo = 0`.
    #[inline]
    fn finish(s: f64, e: f64, plain: impl FnOnce() -> f64) -> Dd {
        if s.is_finite() {
            Dd { hi: s, lo: e }
        } else {
            Dd {
                hi: plain(),
                lo: 0.0,
            }
        }
    }

    // -----------------------------------------------------------------------
    // Arithmetic (Hida, Li & Bailey 2001)
    // -----------------------------------------------------------------------

    /// Accurate sum of two double-doubles (both components summed with
    /// TwoSum, then renormalized twice).
    #[inline]
    fn add_dd(self, b: Dd) -> Dd {
        let (s1, s2) = two_sum(self.hi, b.hi);
        let (t1, t2) = two_sum(self.lo, b.lo);
        let (s1, s2) = quick_two_sum(s1, s2 + t1);
        let (s1, s2) = quick_two_sum(s1, s2 + t2);
        Dd::finish(s1, s2, || self.hi + b.hi)
    }

    #[inline]
    fn add_f64(self, b: f64) -> Dd {
        let (s1, s2) = two_sum(self.hi, b);
        let (s1, s2) = quick_two_sum(s1, s2 + self.lo);
        Dd::finish(s1, s2, || self.hi + b)
    }

    /// Product of two double-doubles. The textbook form (Hida, Li & Bailey)
    /// rounds the two cross products `hi*lo` in double; here they are formed
    /// exactly with Dekker's product (reusing the splits of the leading
    /// parts) and collected with TwoSum, so that only the final trailing
    /// word is rounded. That keeps the error near 1 unit of 2^-106 instead
    /// of up to ~4 units, at a modest extra cost.
    #[inline]
    fn mul_dd(self, b: Dd) -> Dd {
        let sa = split(self.hi);
        let sb = split(b.hi);
        let (p, e) = two_prod_presplit(self.hi, sa, b.hi, sb);
        let (t1, f1) = two_prod_presplit(self.hi, sa, b.lo, split(b.lo));
        let (t2, f2) = two_prod_presplit(self.lo, split(self.lo), b.hi, sb);
        let (s, g) = two_sum(t1, t2);
        let (s, g2) = two_sum(e, s);
        let low = (g + g2) + (f1 + f2) + self.lo * b.lo;
        let (h, l) = quick_two_sum(p, s);
        let (h, l) = quick_two_sum(h, l + low);
        Dd::finish(h, l, || self.hi * b.hi)
    }

    /// Product with a double; the cross product `lo*b` is formed exactly as
    /// in [`Dd::mul_dd`].
    #[inline]
    fn mul_f64(self, b: f64) -> Dd {
        let sb = split(b);
        let (p, e) = two_prod_presplit(self.hi, split(self.hi), b, sb);
        let (t, f) = two_prod_presplit(self.lo, split(self.lo), b, sb);
        let (s, g) = two_sum(e, t);
        let (h, l) = quick_two_sum(p, s);
        let (h, l) = quick_two_sum(h, l + (g + f));
        Dd::finish(h, l, || self.hi * b)
    }

    #[inline]
    fn sub_dd(self, b: Dd) -> Dd {
        self.add_dd(b.neg())
    }

    #[inline]
    fn sub_f64(self, b: f64) -> Dd {
        self.add_f64(b.neg())
    }

    #[inline]
    fn f64_add_dd(a: f64, b: Dd) -> Dd {
        b.add_f64(a)
    }

    #[inline]
    fn f64_sub_dd(a: f64, b: Dd) -> Dd {
        b.neg().add_f64(a)
    }

    #[inline]
    fn f64_mul_dd(a: f64, b: Dd) -> Dd {
        b.mul_f64(a)
    }

    #[inline]
    fn f64_div_dd(a: f64, b: Dd) -> Dd {
        Dd::from_f64(a).div_dd(b)
    }

    /// `self * self`, as accurate as [`Dd::mul_dd`] and slightly cheaper.
    #[inline]
    pub(crate) fn square(self) -> Dd {
        let sh = split(self.hi);
        let (p, e) = two_prod_presplit(self.hi, sh, self.hi, sh);
        let (t, f) = two_prod_presplit(self.hi, sh, self.lo, split(self.lo));
        // 2*(t + f) is exact.
        let (s, g) = two_sum(e, 2.0 * t);
        let low = (g + 2.0 * f) + self.lo * self.lo;
        let (h, l) = quick_two_sum(p, s);
        let (h, l) = quick_two_sum(h, l + low);
        Dd::finish(h, l, || self.hi * self.hi)
    }

    /// Textbook double-double product (Hida, Li & Bailey 2001): the cross
    /// products are rounded, which costs up to a few units of 2^-106. Used
    /// only inside `expm1_reduced`, where the final accuracy is verified
    /// against the exp/ln targets and speed matters.
    #[inline]
    fn mul_fast(self, b: Dd) -> Dd {
        let (p, e) = two_prod(self.hi, b.hi);
        let (p, e) = quick_two_sum(p, e + (self.hi * b.lo + self.lo * b.hi));
        Dd::finish(p, e, || self.hi * b.hi)
    }

    /// Long division with three quotient digits: q1 = a/b in double, then
    /// two corrections from the exactly formed remainders.
    fn div_dd(self, b: Dd) -> Dd {
        let q1 = self.hi / b.hi;
        if !q1.is_finite() || q1 == 0.0 {
            // Division by zero, overflow, 0/x, or non-finite operands.
            return Dd { hi: q1, lo: 0.0 };
        }
        let r = self - b.mul_f64(q1);
        let q2 = r.hi / b.hi;
        let r = r - b.mul_f64(q2);
        let q3 = r.hi / b.hi;
        let (q1, q2) = quick_two_sum(q1, q2);
        let q = Dd { hi: q1, lo: q2 }.add_f64(q3);
        Dd::finish(q.hi, q.lo, || self.hi / b.hi)
    }

    fn div_f64(self, b: f64) -> Dd {
        let q1 = self.hi / b;
        if !q1.is_finite() || q1 == 0.0 {
            return Dd { hi: q1, lo: 0.0 };
        }
        // The product q1*b is exact as a double-double.
        let (p, e) = two_prod(q1, b);
        let r = self.add_dd(Dd { hi: -p, lo: -e });
        let q2 = r.hi / b;
        let (p, e) = two_prod(q2, b);
        let r = r.add_dd(Dd { hi: -p, lo: -e });
        let q3 = r.hi / b;
        let (q1, q2) = quick_two_sum(q1, q2);
        let q = Dd { hi: q1, lo: q2 }.add_f64(q3);
        Dd::finish(q.hi, q.lo, || self.hi / b)
    }

    /// Multiplies by `p`, which must be an integral power of two (exact
    /// unless the result overflows or becomes subnormal).
    #[inline]
    pub(crate) fn mul_pow2(self, p: f64) -> Dd {
        debug_assert!(
            p == 0.0 || !p.is_finite() || p.abs().to_bits() & ((1u64 << 52) - 1) == 0,
            "mul_pow2 needs a power of two"
        );
        Dd::finish(self.hi * p, self.lo * p, || self.hi * p)
    }

    /// Multiplies by 2^k for `|k| <= 2044`, in two exact steps so that the
    /// intermediate factor stays a normal double.
    fn scale_pow2(self, k: i32) -> Dd {
        let k1 = k / 2;
        let k2 = k - k1;
        let (a, b) = (pow2i(k1), pow2i(k2));
        let hi = self.hi * a * b;
        let lo = self.lo * a * b;
        if !hi.is_finite() {
            return Dd { hi, lo: 0.0 };
        }
        // Renormalize: in the subnormal range the two parts are rounded
        // separately.
        let (s, e) = quick_two_sum(hi, lo);
        Dd { hi: s, lo: e }
    }
}

impl From<f64> for Dd {
    #[inline]
    fn from(x: f64) -> Dd {
        Dd::from_f64(x)
    }
}

impl PartialOrd for Dd {
    /// Lexicographic on `(hi, lo)`, which is the numeric order for
    /// normalized values.
    #[inline]
    fn partial_cmp(&self, other: &Dd) -> Option<Ordering> {
        match self.hi.partial_cmp(&other.hi) {
            Some(Ordering::Equal) => self.lo.partial_cmp(&other.lo),
            ord => ord,
        }
    }
}

// ---------------------------------------------------------------------------
// Operator traits (thin wrappers over the named methods)
// ---------------------------------------------------------------------------

impl Neg for Dd {
    type Output = Dd;
    #[inline]
    fn neg(self) -> Dd {
        Dd {
            hi: -self.hi,
            lo: -self.lo,
        }
    }
}

/// Implements `Dd op Dd`, `Dd op f64`, `f64 op Dd` and the two assigning
/// forms from the named methods `Dd::$dd_dd`, `Dd::$dd_f64`, `Dd::$f64_dd`.
macro_rules! binary_ops {
    ($Trait:ident, $method:ident, $AssignTrait:ident, $assign:ident,
     $dd_dd:ident, $dd_f64:ident, $f64_dd:ident) => {
        impl $Trait<Dd> for Dd {
            type Output = Dd;
            #[inline]
            fn $method(self, rhs: Dd) -> Dd {
                Dd::$dd_dd(self, rhs)
            }
        }
        impl $Trait<f64> for Dd {
            type Output = Dd;
            #[inline]
            fn $method(self, rhs: f64) -> Dd {
                Dd::$dd_f64(self, rhs)
            }
        }
        impl $Trait<Dd> for f64 {
            type Output = Dd;
            #[inline]
            fn $method(self, rhs: Dd) -> Dd {
                Dd::$f64_dd(self, rhs)
            }
        }
        impl $AssignTrait<Dd> for Dd {
            #[inline]
            fn $assign(&mut self, rhs: Dd) {
                *self = Dd::$dd_dd(*self, rhs);
            }
        }
        impl $AssignTrait<f64> for Dd {
            #[inline]
            fn $assign(&mut self, rhs: f64) {
                *self = Dd::$dd_f64(*self, rhs);
            }
        }
    };
}

binary_ops!(Add, add, AddAssign, add_assign, add_dd, add_f64, f64_add_dd);
binary_ops!(Sub, sub, SubAssign, sub_assign, sub_dd, sub_f64, f64_sub_dd);
binary_ops!(Mul, mul, MulAssign, mul_assign, mul_dd, mul_f64, f64_mul_dd);
binary_ops!(Div, div, DivAssign, div_assign, div_dd, div_f64, f64_div_dd);

impl Sum for Dd {
    fn sum<I: Iterator<Item = Dd>>(iter: I) -> Dd {
        iter.fold(Dd::ZERO, Dd::add_dd)
    }
}

impl<'a> Sum<&'a Dd> for Dd {
    fn sum<I: Iterator<Item = &'a Dd>>(iter: I) -> Dd {
        iter.fold(Dd::ZERO, |acc, x| acc.add_dd(*x))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Smallest positive subnormal, 2^-1074.
    const TINY: f64 = f64::from_bits(1);
    /// Tolerances (relative) from the module specification.
    const TOL_ARITH: f64 = 4e-32;
    const TOL_SQRT: f64 = 1e-31;
    const TOL_EXP: f64 = 1e-30;
    const TOL_LN: f64 = 1e-30;
    /// Absolute tolerance for ln next to x = 1, where ln x -> 0.
    const TOL_LN_ABS_NEAR_1: f64 = 1e-31;
    const TOL_POWF: f64 = 1e-30;

    /// A table input; checks that (hi, lo) is already normalized.
    fn dd(hi: f64, lo: f64) -> Dd {
        let d = Dd::new_normalized(hi, lo);
        assert_eq!((d.hi(), d.lo()), (hi, lo), "table input not normalized");
        d
    }

    fn abs_err(got: Dd, want: Dd) -> f64 {
        (got - want).hi().abs()
    }

    fn rel_err(got: Dd, want: Dd) -> f64 {
        let e = abs_err(got, want);
        if want.hi() == 0.0 {
            e
        } else {
            e / want.hi().abs()
        }
    }

    fn is_normalized(d: Dd) -> bool {
        !d.is_finite() || d.hi() + d.lo() == d.hi()
    }

    /// Running maximum of an error measure, printed with --nocapture.
    struct Worst {
        name: &'static str,
        max: f64,
        at: (f64, f64),
    }

    impl Worst {
        fn new(name: &'static str) -> Worst {
            Worst {
                name,
                max: 0.0,
                at: (0.0, 0.0),
            }
        }
        fn update(&mut self, err: f64, a: Dd, b: Dd) {
            if err > self.max || err.is_nan() {
                self.max = err;
                self.at = (a.hi(), b.hi());
            }
        }
        fn report(&self) {
            println!(
                "worst {:<40} {:.3e}  (2^-106 units: {:.2}) at ({:e}, {:e})",
                self.name,
                self.max,
                self.max / 2f64.powi(-106),
                self.at.0,
                self.at.1
            );
        }
    }

    /// xorshift64* pseudo-random generator (Marsaglia 2003 / Vigna 2016),
    /// deterministic so that failures are reproducible.
    struct Rng(u64);

    impl Rng {
        fn next_u64(&mut self) -> u64 {
            let mut x = self.0;
            x ^= x >> 12;
            x ^= x << 25;
            x ^= x >> 27;
            self.0 = x;
            x.wrapping_mul(0x2545_f491_4f6c_dd1d)
        }
        /// Uniform in [0, 1).
        fn unit(&mut self) -> f64 {
            (self.next_u64() >> 11) as f64 * 2f64.powi(-53)
        }
        /// A normalized dd with log-uniform magnitude in [10^e0, 10^e1] and
        /// a random trailing part.
        fn dd(&mut self, e0: f64, e1: f64, signed: bool) -> Dd {
            let mut hi = 10f64.powf(e0 + (e1 - e0) * self.unit());
            if signed && self.next_u64() & 1 == 1 {
                hi = -hi;
            }
            let lo = hi * f64::EPSILON * (self.unit() - 0.5);
            Dd::new_normalized(hi, lo)
        }
    }

    // -----------------------------------------------------------------------
    // Reference tables.
    // Generated by tools/dd_reference.py with Python's standard-library `decimal`
    // module at 60 significant digits; inputs are the exact sums
    // input_hi + input_lo, expected_hi = float(d),
    // expected_lo = float(d - Decimal(expected_hi)).
    // -----------------------------------------------------------------------

    // exp: (x_hi, x_lo, exp_hi, exp_lo)
    #[rustfmt::skip]
    #[allow(clippy::approx_constant)] // reference values such as ln 2, sqrt 2
    const EXP_CASES: &[(f64, f64, f64, f64)] = &[
        (1e-20, 0.0, 1.0, 1e-20),
        (-1e-20, 0.0, 1.0, -1e-20),
        (1e-10, 1.3658601201950788e-27, 1.0000000001, -8.269037094899791e-18),
        (1e-05, 4.49758459366237e-22, 1.00001000005, 9.701929234880738e-17),
        (-1e-05, -4.003551939209194e-22, 0.9999900000499998, 5.7298557752597756e-18),
        (0.001, 0.0, 1.0010005001667084, -4.290842058948394e-17),
        (0.01, -5.952817895550642e-19, 1.010050167084168, 1.0802365544320385e-16),
        (0.1, 2.9681604235238743e-18, 1.1051709180756477, -7.821491455301451e-17),
        (-0.1, 4.9641361387183465e-18, 0.9048374180359595, 5.505158281386898e-17),
        (0.25, 0.0, 1.2840254166877414, 8.968972781793724e-17),
        (0.5, 0.0, 1.6487212707001282, -4.731568479435833e-17),
        (-0.5, 0.0, 0.6065306597126334, -6.593178415491414e-19),
        (0.6931471805599453, 2.3190468138462996e-17, 2.0, -1.1415416876832424e-33),
        (-0.6931471805599453, -2.3190468138462996e-17, 0.5, 2.853854219208106e-34),
        (0.34657359027997264, -8.994832201588287e-18, 1.414213562373095, 9.625292082014802e-17),
        (-0.34657359027997264, -1.4601119192022747e-17, 0.7071067811865476, -5.0461948321058015e-17),
        (1.0397207708399179, 3.8733275604359644e-17, 2.82842712474619, 1.0489952138468102e-16),
        (1.0, 0.0, 2.718281828459045, 1.4456468917292502e-16),
        (-1.0, 0.0, 0.36787944117144233, -1.2428753672788363e-17),
        (1.75, 8.731983095411885e-17, 5.754602676005731, 2.1791499988601614e-16),
        (2.0, 0.0, 7.38905609893065, -1.7971139497839148e-16),
        (-3.3, -1.6352336605255815e-16, 0.03688316740124001, -1.954893206093689e-18),
        (7.25, -3.9174135240135036e-16, 1408.104848204695, 1.0589436400952084e-13),
        (10.0, 0.0, 22026.465794806718, -1.3780134700517372e-12),
        (-10.0, 0.0, 4.5399929762484854e-05, -2.637554055327531e-21),
        (23.45, -4.939552942840297e-16, 15282893989.958727, -8.02110872285735e-08),
        (-37.5, -1.3965207712318812e-15, 5.1755550058018614e-17, -6.829526411686393e-34),
        (50.0, 0.0, 5.184705528587072e+21, 419031.45332293346),
        (100.0, 0.0, 2.6881171418161356e+43, -1.6101271449201627e+27),
        (-100.0, 0.0, 3.720075976020836e-44, -1.5705024907732008e-60),
        (123.456, 1.4167910465059573e-15, 4.132944352778112e+53, -3.239360889539796e+36),
        (-234.5, -8.866347067641802e-15, 1.4386130437612215e-102, 5.175573260159802e-119),
        (333.3, -2.6125369161777785e-14, 5.6279576190979994e+144, -2.8754548279702575e+128),
        (-500.0, 0.0, 7.124576406741286e-218, 1.4960610296160685e-235),
        (600.125, -1.930731824344941e-14, 4.27539211738841e+260, 1.3702083396253007e+244),
        (-650.0, -2.9534177842931243e-14, 5.111951948651005e-283, 3.022014962532834e-299),
        (690.0, 0.0, 4.60460640478299e+299, -6.285894804412413e+282),
        (700.0, 0.0, 1.0142320547350045e+304, 1.6666571920734673e+287),
        (-700.0, 0.0, 9.85967654375977e-305, 8.5e-322),
        (699.9, -2.2160202810553758e-14, 9.177151136956863e+303, -1.4660403660346198e+287),
    ];
    // ln: (x_hi, x_lo, ln_hi, ln_lo)
    #[rustfmt::skip]
    #[allow(clippy::approx_constant)] // reference values such as ln 2, sqrt 2
    const LN_CASES: &[(f64, f64, f64, f64)] = &[
        (1e-300, 0.0, -690.7755278982137, -2.3670096176709832e-14),
        (3.7e-250, -5.162316141595753e-267, -574.3379404288612, -4.00858804745479e-14),
        (1e-200, 0.0, -460.51701859880916, 2.2080942657241066e-14),
        (1e-100, -3.605068155944447e-117, -230.25850929940458, 1.1033362415664151e-14),
        (2.5e-50, 2.2043238735570516e-66, -114.21296391782813, 4.619692645875117e-15),
        (1e-10, 0.0, -23.025850929940457, 4.3083158129749673e-16),
        (1e-05, 2.0221897192726378e-22, -11.512925464970229, 2.992246430977572e-16),
        (0.001, 4.891341016448267e-20, -6.907755278982137, -1.6722146080924605e-16),
        (0.1, 0.0, -2.3025850929940455, -1.7150243628057985e-16),
        (0.25, 0.0, -1.3862943611198906, -4.638093627692599e-17),
        (0.5, 0.0, -0.6931471805599453, -2.3190468138462996e-17),
        (0.7071, -1.366514509627645e-17, -0.346583180371942, 3.830673169347093e-18),
        (0.9, 4.738432343873133e-17, -0.10536051565782623, 1.9482462103836425e-18),
        (0.99, 3.6967076231789894e-17, -0.010050335853501412, -3.8925215048757358e-19),
        (0.999999, 0.0, -1.000000500029089e-06, 6.48066860222922e-23),
        (0.999999999999, 0.0, -9.999778782803785e-13, 4.6339414872601194e-29),
        (0.999999999999, -2.7572219916600187e-17, -1.0000054505002951e-12, 2.5891824837527256e-29),
        (0.9999999999999999, 0.0, -1.1102230246251565e-16, -6.162975822039155e-33),
        (1.0, 0.0, 0.0, 0.0),
        (1.0, 8.673617379884035e-19, 8.673617379884035e-19, -3.76158192263132e-37),
        (1.0, -8.673617379884035e-19, -8.673617379884035e-19, -3.76158192263132e-37),
        (1.0000000000000002, 0.0, 2.2204460492503128e-16, 3.649214750845877e-48),
        (1.000000000001, 0.0, 1.000088900581841e-12, -6.468659389470072e-29),
        (1.000000000001, 4.5882041337313216e-17, 1.0001347826231782e-12, -2.4168845728031622e-29),
        (1.000001, 0.0, 9.999994999180668e-07, 1.5807876089699732e-23),
        (1.01, 9.685003483640006e-17, 0.009950330853168187, 1.0768986919908599e-19),
        (1.4142, 1.554173240553468e-17, 0.3465640001880033, 1.8253787048138836e-18),
        (1.5, 0.0, 0.4054651081081644, -2.8811380259626426e-18),
        (2.0, 0.0, 0.6931471805599453, 2.3190468138462996e-17),
        (2.718281828459045, 0.0, 1.0, -5.318237706605891e-17),
        (3.0, -5.641604442579629e-17, 1.0986122886681098, -1.095183204919474e-16),
        (7.5, -1.069944716459371e-16, 2.0149030205422647, 7.565374933210476e-17),
        (10.0, 0.0, 2.302585092994046, -2.1707562233822494e-16),
        (12345.678, 5.953037156319122e-13, 9.421061321291832, -1.4263690251461804e-16),
        (10000000000.0, 0.0, 23.025850929940457, -3.94399383981999e-16),
        (1e+20, 549.4065366283648, 46.051701859880914, -7.833047025977143e-16),
        (1e+50, 0.0, 115.12925464970229, -5.448412900299577e-15),
        (1e+100, 8.284434925472026e+83, 230.25850929940458, -1.0950673957056511e-14),
        (1e+200, 0.0, 460.51701859880916, -2.2129109272629473e-14),
        (1e+300, 0.0, 690.7755278982137, 2.3747660028800243e-14),
        (1.7e+308, 3.647893919530979e+291, 709.7268368932282, 3.0957879457521306e-14),
    ];
    // sqrt: (x_hi, x_lo, sqrt_hi, sqrt_lo)
    #[rustfmt::skip]
    #[allow(clippy::approx_constant)] // reference values such as ln 2, sqrt 2
    const SQRT_CASES: &[(f64, f64, f64, f64)] = &[
        (2.0, 0.0, 1.4142135623730951, -9.667293313452913e-17),
        (3.0, 0.0, 1.7320508075688772, 1.0035084221806903e-16),
        (0.5, 0.0, 0.7071067811865476, -4.833646656726457e-17),
        (0.1, 4.3277416600352915e-18, 0.31622776601683794, 7.643257332231525e-18),
        (1.0, 0.0, 1.0, 0.0),
        (1.0, 8.673617379884035e-19, 1.0, 4.336808689942018e-19),
        (0.9999999999999999, 0.0, 1.0, -5.551115123125783e-17),
        (10.0, 2.8864706860702784e-16, 3.1622776601683795, -1.4514906087071134e-16),
        (1e-300, 0.0, 1e-150, 6.234187685431415e-168),
        (1e-250, -1.8821663332893247e-267, 1e-125, 5.602576698897948e-143),
        (1e+300, -2.492097839310291e+283, 1e+150, 3.295629475861338e+133),
        (4.0, 0.0, 2.0, 0.0),
        (1.21, 9.98946466603818e-17, 1.1, -5.955988293711399e-17),
        (3.438090821475121e+79, -6.049889624067928e+62, 5.863523532378054e+39, 8.74975766782454e+22),
        (1.3541264650257955e-162, -2.0536178433181482e-179, 1.1636693967900829e-81, 7.734706751450728e-98),
        (6.447688081104077e+86, -1.827198070929971e+70, 2.539229820458179e+43, -9.361507688760989e+26),
        (3.812318832248586e+151, -2.185394635248506e+135, 6.1743978105144685e+75, -3.7897151010122487e+59),
        (2.0959143030311995e+41, 6.975880545431808e+24, 4.578115663710562e+20, -31045.218912391654),
        (8.164462032970157e-176, 2.207400513034973e-192, 2.857352276666312e-88, -1.0372195840455852e-104),
        (9.907143773261406e+67, 2.5079291524785537e+51, 9.953463604826918e+33, -2.1399772884770006e+17),
        (3.7669862210728018e+90, 8.965787018654773e+73, 1.940872541171316e+45, 1.5066224306849827e+29),
        (1.127030520354519e+190, 7.994743521690581e+173, 1.0616169367311917e+95, -4.693602847460064e+78),
        (5.939740372859532e-67, 5.423369524364149e-84, 7.706971112479618e-34, -2.1754157808030427e-50),
        (1.0948907017497284e+180, -5.6813515042908375e+163, 1.0463702507954477e+90, 7.26884627205813e+73),
        (5.689179322563022e-57, 3.016029898004102e-73, 7.542664862343429e-29, -1.9202265255718222e-45),
    ];
    // division: (a_hi, a_lo, b_hi, b_lo, q_hi, q_lo)
    #[rustfmt::skip]
    #[allow(clippy::approx_constant)] // reference values such as ln 2, sqrt 2
    const DIV_CASES: &[(f64, f64, f64, f64, f64, f64)] = &[
        (1.0, 0.0, 3.0, 0.0, 0.3333333333333333, 1.850371707708594e-17),
        (2.0, 0.0, 3.0, 0.0, 0.6666666666666666, 3.700743415417188e-17),
        (1.0, 0.0, 7.0, 0.0, 0.14285714285714285, 7.93016446160826e-18),
        (1.0, 0.0, 10.0, 3.9382938505520887e-16, 0.09999999999999999, 4.388378834136586e-18),
        (0.6931471805599453, 2.3190468138462996e-17, 1.0, 8.673617379884035e-19, 0.6931471805599453, 2.258925879525076e-17),
        (1e+300, -1.0793908784976779e+283, 1e-05, -7.544222935753986e-22, 1e+305, 9.609647440819973e+288),
        (1e-280, 3.196822853734512e-297, 3.0, 0.0, 3.3333333333333336e-281, -3.0118833489036263e-297),
        (-5.5, 3.619052566529937e-16, 0.3, 2.1264723856249672e-17, -18.333333333333332, 6.431542387430296e-16),
        (4.087053652754412e+48, 1.723982800775654e+32, 3.5379099882919965e-48, -2.749991666444235e-65, 1.1552169688544073e+96, 4.1390739000682727e+79),
        (2.4406923909434e+24, -217486687.22515565, -5.744380948216408e+71, -5.872651260231046e+54, -4.2488344922549374e-48, 1.4682137783227808e-65),
        (-1.525344011638037e-25, -6.257705012210182e-42, 0.041628796309374536, 1.303330435708161e-18, -3.664155937399851e-24, 1.9577859247944977e-40),
        (-1.3434477276840036e-63, -1.1695706469056619e-79, 4.582984673376634e+76, 2.918618836734139e+60, -2.9313816724902623e-140, -1.3127521540703384e-156),
        (-1.8774801067264326e-90, 5.499868341013543e-107, 3.6891424897661345e+58, 1.6956825931839284e+42, -5.089204637485964e-149, 1.4627918905362617e-165),
        (1.1167640651431572e-25, -9.04884116166059e-42, -1.3521593912080169e+39, 3.1018828535165434e+22, -8.25911554809705e-65, 6.152064421511083e-81),
        (-2.6724767904476897e-67, 1.347350874695943e-83, 2.730432163010083e-19, 4.5823261183432444e-36, -9.787742858630473e-49, -4.289557401982718e-65),
        (8.592717415577955e-86, -1.0428700096107455e-102, -2.438046138158359e+81, 2.0448410994096463e+65, -3.524427729685496e-167, 1.3821257019401025e-183),
        (-5.186927392948649e-18, 1.0459799964239073e-34, 5.380366529453681e-41, -8.484078075117149e-58, -9.640472195628142e+22, 5625551.168441171),
        (322399901.64631635, -2.4009932405066663e-08, -6.04871972400941e-40, -2.223646348924385e-56, -5.330051917707516e+47, 2.533855188931712e+31),
        (-3.679552953206647e+45, 1.1509445278642359e+29, -1.1433868811317043e+55, 2.2096396203119098e+38, 3.2181171691988366e-10, 1.5757055175769567e-26),
        (-2.9213500441393305e-08, -1.5963709189776486e-24, -8.08326210381957e+67, 8.387699614614528e+50, 3.6140731385648256e-76, -1.931805998591185e-92),
        (-1.5572862443651355e-37, 4.475482538881322e-54, 246168.14657758694, 7.587478132002097e-13, -6.326107849515421e-43, -2.9523333652323915e-59),
        (5.481306202391903e+24, 331796135.23343754, 4.372368063914659e+56, -5.189603483486682e+39, 1.2536241510931703e-32, -1.7775428431030877e-49),
        (-2.004411355906845e+22, 82032.13355147606, -6.523784351402652e-90, -1.8432413283134252e-106, 3.072467218319203e+111, -8.988195197597138e+94),
        (2.1177624853708158e+57, 6.065011271129933e+40, -8.852170546402804e-44, -2.3864318106961496e-60, -2.3923652106221524e+100, -1.2367129583019843e+84),
        (-1.1975376645331733e+60, 2.2542805009697387e+43, -5.799589574404423e+23, 17225586.830968075, 2.0648662274625736e+36, -3.490098796413928e+18),
        (-6.257308615405976e+87, -3.4159513391838648e+71, -6.948045007875223e+63, -4.4270515634209574e+45, 9.005855040250408e+23, -14239503.17496146),
        (1.1422758732089707e+42, -1.9203484748012565e+25, -5.501560137545484e-73, 4.5260800932386074e-90, -2.0762762646426258e+114, 5.376579123742429e+97),
        (3.120063618288559e+37, 1.805292931312041e+21, 0.00032680399750693363, -5.293685665336913e-21, 9.547201509437969e+40, 5.139428580625529e+24),
        (1.052820438438964e-86, -4.484404316312461e-103, 1.1960778492218739e+53, 7.888320768817812e+36, 8.802273523616308e-140, 7.65043647126252e-156),
        (-9.330697610575412e+82, -4.402585798813725e+66, -7577841.077469898, 7.47084194807432e-11, 1.2313134460310906e+76, -3.0231530888754297e+59),
    ];
    // multiplication: (a_hi, a_lo, b_hi, b_lo, p_hi, p_lo)
    #[rustfmt::skip]
    #[allow(clippy::approx_constant)] // reference values such as ln 2, sqrt 2
    const MUL_CASES: &[(f64, f64, f64, f64, f64, f64)] = &[
        (1.0, 8.673617379884035e-19, 1.0, -8.673617379884035e-19, 1.0, -7.52316384526264e-37),
        (0.6931471805599453, 2.3190468138462996e-17, 0.6931471805599453, 2.3190468138462996e-17, 0.48045301391820144, -1.898786250636575e-17),
        (1e+150, 5.119071112782225e+133, 3e+149, -6.283651811837566e+132, 3e+299, -9.091024792894706e+282),
        (1e-140, 3.90949243343591e-157, -7e-130, 1.0808964675418968e-146, -7e-270, 2.2678486235556842e-287),
        (-1.2242777037867862e+22, 300658.87898970046, 9.562302863010237e-77, -7.459359415760345e-93, -1.1706914192039983e-54, -2.237924587312279e-71),
        (2.4438307842143958e+67, 1.4307241628448655e+50, 4.3861806894180437e+36, 2.4416503721469274e+20, 1.0719083393926537e+104, 4.3320838286892795e+87),
        (1.3648544193545869e+85, 1.9532362981375419e+68, -5.1050159178774273e+98, -1.2082161330699114e+82, -6.967603536390519e+183, -2.3302668156429768e+167),
        (8.302298065171198e-68, 5.60128380818206e-84, 4.731130838102171e-91, -1.9566246747156787e-107, 3.927925840324745e-158, -1.9457925815184704e-174),
        (-1.2888453950828153e+47, 4.630470179053194e+30, 1.8076466794800984e+19, -9.247572164706526, -2.3297770987846666e+66, 1.0729644929230706e+50),
        (-4.279835823251103e-42, -5.89827610172408e-59, 1.1762448521288694e+57, 5.880218659706237e+40, -5034134855055832.0, -0.4138971074231222),
        (2.7448760826155794e-33, 1.5811573841626735e-49, -8.66833029090582e-86, -3.440206692923798e-103, -2.3793492491719535e-118, 2.138425542945642e-134),
        (-0.06749293678499996, 1.183787748774943e-18, 8961358296909498.0, -0.14680403755250793, -604828389041047.6, 0.018783296056000678),
        (-1.518489026996594e+44, 3.099308395163469e+27, 2.1804057366822456e-31, 1.7176487016687082e-48, -33109221855524.15, 0.0004964154797011391),
        (1.2617931466020948e-69, -9.22596701078796e-87, 71142079832.79094, 7.438716528012864e-06, 8.976658876803473e-59, -5.669722088381971e-75),
        (-9.39642010345148e-12, 3.391180528872752e-28, -7.41948232884066e+76, -2.5689561649609624e+60, 6.971657291192138e+65, 5.3682148182314925e+48),
        (3.765196765607278e+71, -1.6539315434690297e+55, 38030.951816281064, 2.198627839496302e-12, 1.431940167716277e+76, 5.770259284239117e+59),
        (6.749222226474745e+91, -6.025061251711606e+74, 7.839477733578636e-05, -6.362295912400339e-21, 5.291037736342279e+87, -4.248580432824144e+70),
        (6.1721716900235106e+94, 1.947853721960746e+78, -8.897659376256178e-50, -1.9573074013282892e-66, -5.491788130960063e+45, 1.9031728399034672e+29),
        (-7.34363494319236e+75, -2.4903771119771075e+59, -2.3684448599276082e+32, 4990444114439376.0, 1.7392994434388718e+108, -9.327077767846216e+91),
        (-2.7197905613914882e-65, 1.4339945444554213e-81, 2.6546433056348845e-49, -1.1518754374799983e-65, -7.220073806526858e-114, 4.951316235062109e-130),
    ];
    // addition: (a_hi, a_lo, b_hi, b_lo, sum_hi, sum_lo)
    #[rustfmt::skip]
    #[allow(clippy::approx_constant)] // reference values such as ln 2, sqrt 2
    const ADD_CASES: &[(f64, f64, f64, f64, f64, f64)] = &[
        (1.0, 8.673617379884035e-19, -1.0, 0.0, 8.673617379884035e-19, 0.0),
        (0.6931471805599453, 2.3190468138462996e-17, -0.6931471805599453, 0.0, 2.3190468138462996e-17, -2.5538223586045204e-77),
        (1e+20, -2793.9506193701473, 1e-20, -6.423809275442683e-37, 1e+20, -2793.9506193701473),
        (3.0, 1.8827154961458703e-16, -2.9999999, 2.0016962674875418e-16, 1.0000000022478328e-07, 6.209746596248803e-24),
        (6.150988688830148e-19, 3.9869427964009845e-36, -6.150988690464018e-19, -2.3576633893354466e-35, -1.6338705679376e-28, -7.67164723843647e-45),
        (-1.2322202097454541e+30, -51886385144202.02, 1.2322202097680979e+30, 46291297917372.0, 2.264381185635492e+19, -1998.0234375),
        (852897.8410420036, 4.710295253284255e-11, -852897.8417658943, -1.9408717636918406e-11, -0.0007238906996916436, -3.023248849888136e-20),
        (-2.0367770673670204e-31, -1.3294565275168118e-47, 2.0367770659602e-31, -1.9770216245028265e-47, -1.4068207867336123e-40, 6.913035852370168e-57),
        (4.34463210204342e-38, -2.2005917960222515e-55, -4.344632103828582e-38, -4.069982594661403e-55, -1.7851620596236912e-47, -1.0265300467460069e-63),
        (-4.606274435294121e-43, 6.254101896772564e-60, 4.606274437047234e-43, -8.744627696735761e-60, 1.7531131894247156e-52, 9.637612580880534e-69),
        (3.455166269545622e+32, 1.3616784675697608e+16, -3.455166271128223e+32, 1.822557855422464e+16, -1.5826006194313788e+23, -14621752.0),
        (12855309707097.621, -0.00035153904431721786, -12855309704906.965, -0.00018344638728824778, 2190.6557150145686, -2.191622534494786e-13),
        (-5.036658726997e+25, -49022767.28973198, 9.021263841914034e-07, -1.932360024876798e-23, -5.036658726997e+25, -49022767.28973108),
        (1.765418466116037e+39, 4.446976640187976e+22, -1.3059476794053247e+39, -6.659677586391394e+22, 4.594707867107123e+38, -2.212700946203418e+22),
        (-6.250815706756545e-31, -3.759899408493335e-47, 1.697623602128785e-11, 2.326173690348304e-28, 1.697623602128785e-11, 2.3199228746415474e-28),
        (2.912016743024894e-18, 1.1995159194602427e-34, -2.3680885521146407e-31, -1.6316494405377897e-47, 2.9120167430246576e-18, -1.8470644876549607e-34),
        (-3.831490188391655e+17, -5.359278861580972, -0.0003459922340719516, -1.0691159533588688e-20, -3.831490188391655e+17, -5.359624853815044),
        (-1.745661773384035e-43, 3.41614116364337e-60, 2652165588294.4526, -0.00018687553610711644, 2652165588294.4526, -0.00018687553610711644),
        (1.0064082273633364e+39, 4.132118673540243e+22, 2.6298915150572366e+39, -1.016258755293363e+23, 3.636299742420573e+39, -2.114204162457625e+23),
        (-1.966688929472127e-13, -2.2659905222590933e-30, -7.377604901825161e+47, -2.1061526781613753e+31, -7.377604901825161e+47, -2.1061526781613753e+31),
    ];
    // powf: (x_hi, x_lo, e_hi, e_lo, pow_hi, pow_lo)
    #[rustfmt::skip]
    #[allow(clippy::approx_constant)] // reference values such as ln 2, sqrt 2
    const POWF_CASES: &[(f64, f64, f64, f64, f64, f64)] = &[
        (0.8, 0.0, 0.875, 0.0, 0.8226284754383117, 1.874123207436646e-17),
        (1.2, 0.0, -1.5, 0.0, 0.7607257743127308, -5.1584069671615323e-17),
        (3.7, 0.0, 0.3, 0.0, 1.480677637101274, -6.161023246221534e-17),
        (0.5, 1.718649327985705e-17, 2.5, 0.0, 0.1767766952966369, 3.1067407869387936e-18),
        (1.0001, -1.0065229502036087e-16, 3.5, 0.0, 1.000350043752187, 7.944896767032006e-17),
        (0.9, -1.2758470420321263e-17, -1.25, 0.0, 1.140766773422601, 4.403804917540524e-17),
        (300.0, 0.0, 0.1, 0.0, 1.7689360204744258, 4.3733068183396445e-17),
        (2.0, -9.739358247407402e-18, 10.5, -5.387103469098287e-16, 1448.1546878700487, -3.16675774777377e-14),
        (1e-05, 4.562514307225063e-22, 0.333, 0.0, 0.0216271852372702, -1.096553653975388e-18),
        (7.0, 3.2392490192633685e-17, -0.66, 0.0, 0.27684411349423427, 1.5492055458585028e-17),
    ];

    // -----------------------------------------------------------------------
    // Table-driven checks (source: the tables above, tools/dd_reference.py).
    // -----------------------------------------------------------------------

    #[test]
    fn add_sub_against_decimal() {
        // Source: ADD_CASES (tools/dd_reference.py, decimal at 60 digits).
        let mut w = Worst::new("add/sub (table)");
        for &(ah, al, bh, bl, sh, sl) in ADD_CASES {
            let (a, b, want) = (dd(ah, al), dd(bh, bl), dd(sh, sl));
            for got in [a + b, b + a, a - (-b), -((-a) - b)] {
                let e = rel_err(got, want);
                w.update(e, a, b);
                assert!(e <= TOL_ARITH, "add {a:?} + {b:?}: rel err {e:e}");
                assert!(is_normalized(got));
            }
            if bl == 0.0 {
                let e = rel_err(a + bh, want).max(rel_err(bh + a, want));
                w.update(e, a, b);
                assert!(e <= TOL_ARITH, "add f64 {a:?} + {bh}: rel err {e:e}");
            }
        }
        w.report();
    }

    #[test]
    fn mul_against_decimal() {
        // Source: MUL_CASES (tools/dd_reference.py, decimal at 60 digits).
        let mut w = Worst::new("mul (table)");
        for &(ah, al, bh, bl, ph, pl) in MUL_CASES {
            let (a, b, want) = (dd(ah, al), dd(bh, bl), dd(ph, pl));
            for got in [a * b, b * a] {
                let e = rel_err(got, want);
                w.update(e, a, b);
                assert!(e <= TOL_ARITH, "mul {a:?} * {b:?}: rel err {e:e}");
                assert!(is_normalized(got));
            }
        }
        w.report();
    }

    #[test]
    fn div_against_decimal() {
        // Source: DIV_CASES (tools/dd_reference.py, decimal at 60 digits).
        let mut w = Worst::new("div (table)");
        for &(ah, al, bh, bl, qh, ql) in DIV_CASES {
            let (a, b, want) = (dd(ah, al), dd(bh, bl), dd(qh, ql));
            let got = a / b;
            let e = rel_err(got, want);
            w.update(e, a, b);
            assert!(e <= TOL_ARITH, "div {a:?} / {b:?}: rel err {e:e}");
            assert!(is_normalized(got));
            if bl == 0.0 {
                let e = rel_err(a / bh, want);
                w.update(e, a, b);
                assert!(e <= TOL_ARITH, "div f64 {a:?} / {bh}: rel err {e:e}");
            }
            if al == 0.0 {
                let e = rel_err(ah / b, want);
                w.update(e, a, b);
                assert!(e <= TOL_ARITH, "div {ah} / {b:?}: rel err {e:e}");
            }
        }
        w.report();
    }

    #[test]
    fn sqrt_against_decimal() {
        // Source: SQRT_CASES (tools/dd_reference.py, decimal at 60 digits).
        let mut w = Worst::new("sqrt (table)");
        for &(xh, xl, sh, sl) in SQRT_CASES {
            let (x, want) = (dd(xh, xl), dd(sh, sl));
            let got = x.sqrt();
            let e = rel_err(got, want);
            w.update(e, x, want);
            assert!(e <= TOL_SQRT, "sqrt {x:?}: rel err {e:e}");
            assert!(is_normalized(got));
        }
        w.report();
    }

    #[test]
    fn exp_against_decimal() {
        // Source: EXP_CASES (tools/dd_reference.py, decimal at 60 digits).
        // Results below ~2^-968 (x < -670) have a subnormal trailing part,
        // so an absolute allowance of 2^-1074 is added.
        let mut w = Worst::new("exp (table, relative)");
        let mut w_norm = Worst::new("exp (table, x > -670)");
        for &(xh, xl, eh, el) in EXP_CASES {
            let (x, want) = (dd(xh, xl), dd(eh, el));
            let got = x.exp();
            let e = rel_err(got, want);
            w.update(e, x, want);
            if xh > -670.0 {
                w_norm.update(e, x, want);
            }
            let tol = TOL_EXP * want.hi().abs() + TINY;
            assert!(abs_err(got, want) <= tol, "exp {x:?}: rel err {e:e}");
            assert!(is_normalized(got));
        }
        w.report();
        w_norm.report();
    }

    #[test]
    fn ln_against_decimal() {
        // Source: LN_CASES (tools/dd_reference.py, decimal at 60 digits).
        let mut w = Worst::new("ln (table, relative)");
        let mut w_abs = Worst::new("ln (table, absolute, |x-1| < 0.5)");
        for &(xh, xl, lh, ll) in LN_CASES {
            let (x, want) = (dd(xh, xl), dd(lh, ll));
            let got = x.ln();
            let e = rel_err(got, want);
            let ea = abs_err(got, want);
            w.update(e, x, want);
            let near_1 = (xh - 1.0).abs() < 0.5;
            if near_1 {
                w_abs.update(ea, x, want);
            }
            let tol = if near_1 {
                (TOL_LN * want.hi().abs()).max(TOL_LN_ABS_NEAR_1)
            } else {
                TOL_LN * want.hi().abs()
            };
            assert!(ea <= tol, "ln {x:?}: abs err {ea:e}, rel err {e:e}");
            assert!(is_normalized(got));
        }
        w.report();
        w_abs.report();
    }

    #[test]
    fn powf_against_decimal() {
        // Source: POWF_CASES (tools/dd_reference.py, decimal at 60 digits).
        let mut w = Worst::new("powf (table)");
        for &(xh, xl, ph, pl, rh, rl) in POWF_CASES {
            let (x, p, want) = (dd(xh, xl), dd(ph, pl), dd(rh, rl));
            let got = x.powf(p);
            let e = rel_err(got, want);
            w.update(e, x, p);
            assert!(e <= TOL_POWF, "powf {x:?} ^ {p:?}: rel err {e:e}");
        }
        w.report();
    }

    #[test]
    fn constants_match_functions() {
        // Source: LN_2 and E pairs from tools/dd_reference.py (decimal, 60 digits);
        // cross-checked against the functions computed here.
        assert!(rel_err(Dd::from(2.0).ln(), Dd::LN_2) <= TOL_LN);
        assert!(rel_err(Dd::ONE.exp(), Dd::E) <= TOL_EXP);
        assert!(rel_err(Dd::LN_2.exp(), Dd::from(2.0)) <= TOL_EXP);
        assert!(abs_err(Dd::E.ln(), Dd::ONE) <= TOL_LN);
        assert!(is_normalized(Dd::LN_2) && is_normalized(Dd::E));
        // The three-part ln 2 agrees with the dd constant.
        let ln2_3 = Dd::from(LN2_C0) + LN2_C1 + LN2_C2;
        assert!(rel_err(ln2_3, Dd::LN_2) <= TOL_ARITH);
        // INV_FACT[i] * (i + 2)! == 1
        let mut f = 1.0;
        for (i, c) in INV_FACT.iter().enumerate() {
            f *= (i + 2) as f64;
            assert!(rel_err(*c * f, Dd::ONE) <= TOL_ARITH, "1/{}!", i + 2);
            assert!(is_normalized(*c));
        }
    }

    // -----------------------------------------------------------------------
    // Identities over pseudo-random inputs. Tolerances are the sums of the
    // per-operation tolerances involved (source: module specification).
    // -----------------------------------------------------------------------

    const N_RANDOM: usize = 20_000;

    #[test]
    fn identity_add_sub() {
        // (a + b) - b == a; the sum's error is relative to |a + b|, so the
        // allowance is 2 * TOL_ARITH * (|a| + |b|).
        let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
        let mut w = Worst::new("(a+b)-b vs a, / (|a|+|b|)");
        for _ in 0..N_RANDOM {
            let a = rng.dd(-30.0, 30.0, true);
            let b = if rng.unit() < 0.3 {
                // Near-cancellation.
                -a * (1.0 + (rng.unit() - 0.5) * 1e-8)
            } else {
                rng.dd(-30.0, 30.0, true)
            };
            let s = a + b;
            assert!(is_normalized(s));
            let got = s - b;
            let scale = a.hi().abs() + b.hi().abs();
            let e = abs_err(got, a) / scale;
            w.update(e, a, b);
            assert!(e <= 2.0 * TOL_ARITH, "({a:?} + {b:?}) - b: err {e:e}");
        }
        w.report();
    }

    #[test]
    fn identity_mul_div() {
        // (a * b) / b == a within TOL_ARITH (mul) + TOL_ARITH (div); also
        // the dd-f64 forms and magnitudes above 2^996 (scaled splitting).
        let mut rng = Rng(0x2545_f491_4f6c_dd1d);
        let mut w = Worst::new("(a*b)/b vs a");
        let mut w_f = Worst::new("(a*f)/f vs a, f64 f");
        let mut w_big = Worst::new("(a*b)/b vs a, |a| > 1e299");
        for _ in 0..N_RANDOM {
            let a = rng.dd(-140.0, 140.0, true);
            let b = rng.dd(-140.0, 140.0, true);
            let p = a * b;
            assert!(is_normalized(p));
            let q = p / b;
            assert!(is_normalized(q));
            let e = rel_err(q, a);
            w.update(e, a, b);
            assert!(e <= 2.0 * TOL_ARITH, "({a:?} * {b:?}) / b: {e:e}");

            let f = b.hi();
            let e = rel_err((a * f) / f, a).max(rel_err((f * a) / f, a));
            w_f.update(e, a, b);
            assert!(e <= 2.0 * TOL_ARITH, "({a:?} * {f}) / f: {e:e}");

            let big = rng.dd(299.0, 307.0, true);
            let small = rng.dd(-6.0, 0.0, true);
            let e = rel_err((big * small) / small, big);
            w_big.update(e, big, small);
            assert!(e <= 2.0 * TOL_ARITH, "({big:?} * {small:?}) / small: {e:e}");
        }
        w.report();
        w_f.report();
        w_big.report();
    }

    #[test]
    fn identity_sqrt_square() {
        // sqrt(x)^2 == x within 2 * TOL_SQRT + TOL_ARITH.
        let mut rng = Rng(0x0123_4567_89ab_cdef);
        let mut w = Worst::new("sqrt(x)^2 vs x");
        for _ in 0..N_RANDOM {
            let x = rng.dd(-280.0, 300.0, false);
            let r = x.sqrt();
            assert!(is_normalized(r));
            let e = rel_err(r.square(), x).max(rel_err(r * r, x));
            w.update(e, x, r);
            assert!(e <= 2.0 * TOL_SQRT + TOL_ARITH, "sqrt({x:?})^2: {e:e}");
        }
        w.report();
    }

    #[test]
    fn identity_exp_ln() {
        // exp(ln x) == x. The absolute error of ln x (TOL_LN * |ln x|)
        // becomes a relative error of exp, so the allowance is
        // TOL_EXP + TOL_LN * |ln x|.
        let mut rng = Rng(0xdead_beef_cafe_f00d);
        let mut w = Worst::new("exp(ln x) vs x, relative");
        let mut w_scaled = Worst::new("exp(ln x) vs x, rel / (1 + |ln x|)");
        for _ in 0..N_RANDOM {
            let x = rng.dd(-280.0, 300.0, false);
            let l = x.ln();
            let got = l.exp();
            let e = rel_err(got, x);
            let scaled = e / (1.0 + l.hi().abs());
            w.update(e, x, l);
            w_scaled.update(scaled, x, l);
            let tol = TOL_EXP + TOL_LN * l.hi().abs();
            assert!(e <= tol, "exp(ln({x:?})): {e:e}");
        }
        w.report();
        w_scaled.report();
    }

    #[test]
    fn identity_ln_exp() {
        // ln(exp y) == y; the relative error of exp becomes an absolute
        // error of ln: allowance TOL_EXP + TOL_LN * |y| (absolute).
        let mut rng = Rng(0x5151_5151_aaaa_0001);
        let mut w = Worst::new("ln(exp y) vs y, absolute");
        for _ in 0..N_RANDOM {
            let y = if rng.unit() < 0.5 {
                rng.dd(-20.0, 2.8, true)
            } else {
                Dd::from(1300.0 * rng.unit() - 650.0) + rng.unit() * 1e-14
            };
            let got = y.exp().ln();
            let e = abs_err(got, y);
            w.update(e, y, got);
            assert!(
                e <= TOL_EXP + TOL_LN * y.hi().abs(),
                "ln(exp({y:?})): {e:e}"
            );
        }
        w.report();
    }

    #[test]
    fn ln_near_one_is_relative() {
        // ln(1 + d) for tiny d: the Newton correction is formed as
        // (m - 1) + m (exp(-y0) - 1), so the result stays relatively
        // accurate. Reference: the series d - d^2/2 + d^3/3 - d^4/4, whose
        // remainder is below 1e-48 relative for |d| <= 1e-12.
        let mut w = Worst::new("ln(1+d), |d| <= 1e-12, relative");
        let mut rng = Rng(77);
        for _ in 0..2_000 {
            let d = rng.dd(-30.0, -12.0, true);
            let x = Dd::ONE + d;
            // d as actually represented in x.
            let d = x - 1.0;
            let want = d - d.square() / 2.0 + d.powi(3) / 3.0 - d.powi(4) / 4.0;
            let e = rel_err(x.ln(), want);
            w.update(e, x, d);
            assert!(e <= TOL_LN, "ln(1 + {d:?}): {e:e}");
        }
        w.report();
    }

    #[test]
    fn powi_powf_recip_consistency() {
        // Source: definitions (x^n by repeated multiplication, x^-n = 1/x^n,
        // powf at integral exponents = powi).
        let mut rng = Rng(4242);
        for _ in 0..2_000 {
            let x = rng.dd(-3.0, 3.0, true);
            let mut prod = Dd::ONE;
            for n in 0..=12 {
                let tol = TOL_ARITH * (n as f64 + 1.0);
                assert!(rel_err(x.powi(n), prod) <= tol, "{x:?}^{n}");
                assert!(rel_err(x.powi(-n), prod.recip()) <= 2.0 * tol);
                if x.hi() > 0.0 {
                    let p = x.powf(Dd::from(f64::from(n)));
                    assert!(rel_err(p, prod) <= TOL_POWF * (1.0 + f64::from(n)));
                }
                prod *= x;
            }
            assert!(rel_err(x.recip() * x, Dd::ONE) <= 2.0 * TOL_ARITH);
            assert!(x.abs().hi() >= 0.0 && x.abs().abs() == x.abs());
        }
        assert_eq!(Dd::from(3.0).powi(0), Dd::ONE);
        assert_eq!(Dd::from(2.0).powi(-3), Dd::from(0.125));
        assert_eq!(Dd::from(2.0).powi(10), Dd::from(1024.0));
        assert_eq!(Dd::ZERO.powf(Dd::from(0.5)), Dd::ZERO);
        assert_eq!(Dd::ZERO.powf(Dd::ZERO), Dd::ONE);
    }

    #[test]
    fn operators_assign_sum_order() {
        // Source: definitions; exact small-integer cases.
        let mut x = Dd::from(1.0);
        x += Dd::from(2.0);
        x += 0.5;
        assert_eq!(x, Dd::from(3.5));
        x -= Dd::from(0.25);
        x -= 0.25;
        assert_eq!(x, Dd::from(3.0));
        x *= Dd::from(4.0);
        x *= 0.5;
        assert_eq!(x, Dd::from(6.0));
        x /= Dd::from(3.0);
        x /= 2.0;
        assert_eq!(x, Dd::ONE);
        assert_eq!(1.0 - Dd::from(0.5), Dd::from(0.5));
        assert_eq!(3.0 * Dd::from(0.5), Dd::from(1.5));
        assert_eq!(1.0 + Dd::from(0.5), Dd::from(1.5));
        assert_eq!(1.0 / Dd::from(4.0), Dd::from(0.25));
        assert_eq!(-Dd::from(2.0), Dd::from(-2.0));
        assert_eq!(Dd::from(-2.5).abs(), Dd::from(2.5));
        assert_eq!(Dd::from(6.0).mul_pow2(0.25), Dd::from(1.5));
        assert_eq!(Dd::from(9.0).sqrt(), Dd::from(3.0));
        assert_eq!(Dd::from(7.0).to_f64(), 7.0);

        // 1 + 2^-80 is representable and ordered after 1.
        let eps = Dd::new_normalized(1.0, 2f64.powi(-80));
        assert!(eps > Dd::ONE && -eps < -Dd::ONE);
        assert!(Dd::ONE.partial_cmp(&eps) == Some(Ordering::Less));
        assert_eq!(eps.lo(), 2f64.powi(-80));
        assert_eq!(Dd::new_normalized(2f64.powi(-80), 1.0), eps);
        assert!(Dd::NAN.partial_cmp(&Dd::ONE).is_none());

        // Sum: 0.1 added ten times (as dd) equals 1 to dd precision.
        let tenth = Dd::ONE / 10.0;
        let s: Dd = std::iter::repeat_n(tenth, 10).sum();
        assert!(rel_err(s, Dd::ONE) <= 10.0 * TOL_ARITH);
        let v = [Dd::from(1e20), Dd::from(1.0), Dd::from(-1e20)];
        let s: Dd = v.iter().sum();
        assert_eq!(s, Dd::ONE);
    }

    #[test]
    fn non_finite_inputs_do_not_panic() {
        // Source: module specification (NaN for invalid ln input, +inf on
        // exp overflow, 0 on underflow).
        for x in [
            0.0,
            -0.0,
            -1.0,
            -1e-300,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
        ] {
            assert!(Dd::from(x).ln().hi().is_nan(), "ln({x})");
        }
        assert!(Dd::new_normalized(-1.0, 1e-20).ln().is_nan());
        assert_eq!(Dd::from(1000.0).exp(), Dd::INFINITY);
        assert_eq!(Dd::from(710.0).exp().hi(), f64::INFINITY);
        assert!(Dd::from(709.7).exp().is_finite());
        assert_eq!(Dd::from(-1000.0).exp(), Dd::ZERO);
        assert_eq!(Dd::from(f64::INFINITY).exp(), Dd::INFINITY);
        assert_eq!(Dd::from(f64::NEG_INFINITY).exp(), Dd::ZERO);
        assert!(Dd::from(f64::NAN).exp().is_nan());
        assert!(Dd::from(-745.0).exp().hi() > 0.0);
        assert!(Dd::from(-4.0).sqrt().is_nan());
        assert_eq!(Dd::from(f64::INFINITY).sqrt(), Dd::INFINITY);
        assert_eq!(Dd::ZERO.sqrt(), Dd::ZERO);
        assert_eq!((Dd::ONE / Dd::ZERO).hi(), f64::INFINITY);
        assert_eq!((Dd::ONE / 0.0).hi(), f64::INFINITY);
        assert!((Dd::ZERO / Dd::ZERO).is_nan());
        assert_eq!(Dd::from(1e300) * Dd::from(1e300), Dd::INFINITY);
        assert_eq!(Dd::from(1.7e308) + Dd::from(1.7e308), Dd::INFINITY);
        assert_eq!(Dd::INFINITY + 1.0, Dd::INFINITY);
        assert_eq!(Dd::INFINITY * 2.0, Dd::INFINITY);
        assert!((Dd::INFINITY - Dd::INFINITY).is_nan());
        assert!(!Dd::INFINITY.is_finite() && Dd::ONE.is_finite());
        assert!(Dd::from(-2.0).powf(Dd::from(0.5)).is_nan());
        assert_eq!(Dd::ZERO.powf(Dd::from(-1.0)), Dd::INFINITY);
        assert_eq!(Dd::from(2.0).powf(Dd::from(2000.0)), Dd::INFINITY);
        // Subnormal input to ln still works: ln(2^-1074) = -1074 ln 2.
        let got = Dd::from(TINY).ln();
        let want = Dd::LN_2 * -1074.0;
        assert!(rel_err(got, want) <= TOL_LN);
    }
}
