//! The arithmetic the density-side Helmholtz sums need, over `f64` (every fast path) and over double-double
//! [`Dd`] (the extended-precision refinement of saturation next to the critical point, where the phases'
//! densities merge and double precision cannot resolve them).

use std::ops::{Add, AddAssign, Div, Mul, Neg, Sub};

use crate::double_double::Dd;

/// A real number type: `f64` or [`Dd`].
pub(crate) trait Real:
    Copy
    + PartialOrd
    + From<f64>
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
    + AddAssign
    + Add<f64, Output = Self>
    + Sub<f64, Output = Self>
    + Mul<f64, Output = Self>
    + Div<f64, Output = Self>
{
    /// e^self
    fn exp(self) -> Self;
    /// natural logarithm
    fn ln(self) -> Self;
}

impl Real for f64 {
    #[inline(always)]
    fn exp(self) -> Self {
        f64::exp(self)
    }
    #[inline(always)]
    fn ln(self) -> Self {
        f64::ln(self)
    }
}

impl Real for Dd {
    fn exp(self) -> Self {
        Dd::exp(self)
    }
    fn ln(self) -> Self {
        Dd::ln(self)
    }
}
