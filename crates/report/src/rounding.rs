//! How every figure is rounded: stated once here and used by the reports, their CSV and the window.

/// A kind of figure, each with its one rounding.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Figure {
    /// A mass, kg: to the nearest kilogram.
    Mass,
    /// A rate of mass, kg/day: to 0.1 kg/day.
    MassRate,
    /// A share of billed or of span, %: to 0.01 %.
    Percent,
    /// A ratio such as (gained + drawn) / billed: to 0.0001.
    Ratio,
    /// A pressure, bar: to 0.01 bar.
    PressureBar,
    /// A temperature, K: to 0.01 K.
    Kelvin,
    /// A span of time, days: to 0.1 day.
    Days,
    /// A span of time, hours: to 0.1 h.
    Hours,
    /// A fill fraction, % of gross volume: to 0.1 %.
    FillPercent,
    /// A probability: four significant figures.
    Probability,
    /// A coverage factor: to 0.1.
    Factor,
    /// A count or a record id: a whole number.
    Count,
}

impl Figure {
    /// Decimal places kept (probabilities keep significant figures instead).
    pub fn decimals(self) -> usize {
        match self {
            Figure::Mass | Figure::Count => 0,
            Figure::MassRate
            | Figure::Days
            | Figure::Hours
            | Figure::FillPercent
            | Figure::Factor => 1,
            Figure::Percent | Figure::PressureBar | Figure::Kelvin => 2,
            Figure::Ratio => 4,
            Figure::Probability => 4,
        }
    }

    /// The figure as text, rounded half away from zero; "—" for a value that is not finite.
    pub fn text(self, x: f64) -> String {
        if !x.is_finite() {
            return "—".to_string();
        }
        if self == Figure::Probability {
            if x == 0.0 {
                return "0".to_string();
            }
            if x < 1e-4 {
                return format!("{x:.3e}");
            }
            return format!("{x:.4}");
        }
        let d = self.decimals();
        let r = self.round(x);
        // never print "-0"
        let r = if r == 0.0 { 0.0 } else { r };
        format!("{r:.d$}")
    }

    /// The value rounded as it is printed.
    pub fn round(self, x: f64) -> f64 {
        if self == Figure::Probability || !x.is_finite() {
            return x;
        }
        let p = 10f64.powi(self.decimals() as i32);
        (x * p).round() / p
    }

    /// Half the printed step: the most a printed figure differs from the value.
    pub fn half_step(self) -> f64 {
        0.5 * 10f64.powi(-(self.decimals() as i32))
    }
}

/// The rounding in words, printed once on every report and in the statement's CSV header notes.
pub const ROUNDING_NOTE: &str = "Rounding: masses to the nearest kg, mass rates to 0.1 kg/day, percentages to 0.01 %, \
ratios to 0.0001, pressures to 0.01 bar, temperatures to 0.01 K, times to 0.1 h or 0.1 day, fill levels to 0.1 % of \
gross volume, coverage factors to 0.1. Each figure is rounded on its own from the unrounded value, so a printed total may differ from the sum \
of its printed parts by up to half a step per part.";

#[cfg(test)]
mod tests {
    use super::*;

    // Expected texts: plain decimal rounding, common practice, no source.
    #[test]
    fn each_figure_rounds_as_stated() {
        assert_eq!(Figure::Mass.text(1234.5), "1235");
        assert_eq!(Figure::Mass.text(-0.4), "0");
        assert_eq!(Figure::Percent.text(-1.23456), "-1.23");
        assert_eq!(Figure::Ratio.text(0.987_65), "0.9877");
        assert_eq!(Figure::MassRate.text(12.34), "12.3");
        assert_eq!(Figure::Mass.text(f64::NAN), "—");
        assert_eq!(Figure::Probability.text(0.000_012_3), "1.230e-5");
        assert!((Figure::Percent.half_step() - 0.005).abs() < 1e-15);
    }
}
