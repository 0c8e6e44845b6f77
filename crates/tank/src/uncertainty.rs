//! Uncertainty of contents per the GUM (JCGM 100:2008, "Evaluation of measurement data — Guide
//! to the expression of uncertainty in measurement"), law of propagation for uncorrelated inputs
//! (eq. 10), sensitivity coefficients by central differences over ± one standard uncertainty.
//!
//! Each input is either *shared* by all readings of one tank and gauge (the gauge's zero or span
//! error, the geometry) or *independent* between readings (reading noise, tank pressure, liquid
//! state, line temperature). For the difference of two readings a shared input enters once with
//! the difference of its two sensitivity coefficients, so a zero error cancels and a span error
//! scales with the change in DP; independent inputs add in quadrature from both readings.

use serde::{Deserialize, Serialize};

use crate::contents::{Conditions, Contents, ContentsOptions, LiquidState, Tank, densities};
use crate::error::Result;
use crate::fluid::FluidProperties;
use crate::gauge::AccuracyBasis;
use crate::geometry::{Cylinder, Geometry};
use crate::strapping::StrappingTable;

/// Deviations of the inputs from their stated values, for sensitivity coefficients and for
/// Monte Carlo propagation (JCGM 101:2008). All zero by default.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct InputDeviations {
    /// Gauge zero error, Pa (added to the zero-corrected DP).
    pub dp_zero_pa: f64,
    /// Gauge span error, relative (the zero-corrected DP is multiplied by 1 + this).
    pub dp_span_rel: f64,
    /// Reading-to-reading DP error, Pa.
    pub dp_random_pa: f64,
    /// Tank pressure error, Pa.
    pub pressure_pa: f64,
    /// Liquid-state error: K for a measured temperature, Pa for a saturation pressure.
    pub liquid_state: f64,
    /// Line temperature error, K.
    pub line_temperature_k: f64,
    /// Inner diameter error, m (cylinders).
    pub diameter_m: f64,
    /// Shell length error, m (cylinders).
    pub length_m: f64,
    /// Relative error of a strapping table's volumes.
    pub strapping_volume_rel: f64,
}

/// Standard uncertainties of the inputs other than the DP gauge (whose accuracy is part of
/// [`crate::Gauge`]). All zero by default: set what is known.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct UncertaintyInputs {
    /// Reading noise or resolution of the DP, Pa (independent between readings).
    pub dp_noise_u_pa: f64,
    /// Tank pressure, Pa.
    pub pressure_u_pa: f64,
    /// Liquid state: K for a measured temperature, Pa for a saturation pressure; unused for a
    /// liquid saturated at the tank pressure.
    pub liquid_state_u: f64,
    /// Line temperature, K.
    pub line_temperature_u_k: f64,
    /// Inner diameter, m.
    pub diameter_u_m: f64,
    /// Shell length, m.
    pub length_u_m: f64,
    /// Strapping-table volumes, relative.
    pub strapping_volume_u_rel: f64,
}

/// An input quantity of the uncertainty budget.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum InputQuantity {
    /// Systematic gauge error of a percent-of-span class: a zero error, Pa. Shared.
    DpZero,
    /// Systematic gauge error of a percent-of-reading class: a span error, relative. Shared.
    DpSpan,
    /// The part of the gauge class that varies between readings, Pa.
    DpRepeatability,
    /// Extra reading noise or resolution, Pa.
    DpNoise,
    /// Tank pressure, Pa.
    Pressure,
    /// Measured liquid temperature, K.
    LiquidTemperature,
    /// Liquid saturation pressure, Pa.
    LiquidSaturationPressure,
    /// Line temperature, K.
    LineTemperature,
    /// Inner diameter, m. Shared.
    Diameter,
    /// Shell length, m. Shared.
    Length,
    /// Strapping-table volumes, relative. Shared.
    StrappingVolume,
}

impl InputQuantity {
    /// Whether the quantity is the same in every reading of one tank and gauge.
    pub fn is_shared(self) -> bool {
        matches!(
            self,
            InputQuantity::DpZero
                | InputQuantity::DpSpan
                | InputQuantity::Diameter
                | InputQuantity::Length
                | InputQuantity::StrappingVolume
        )
    }

    /// Unit of the quantity's standard uncertainty.
    pub fn unit(self) -> &'static str {
        match self {
            InputQuantity::DpZero
            | InputQuantity::DpRepeatability
            | InputQuantity::DpNoise
            | InputQuantity::Pressure
            | InputQuantity::LiquidSaturationPressure => "Pa",
            InputQuantity::DpSpan | InputQuantity::StrappingVolume => "1",
            InputQuantity::LiquidTemperature | InputQuantity::LineTemperature => "K",
            InputQuantity::Diameter | InputQuantity::Length => "m",
        }
    }

    fn deviations(self, x: f64) -> InputDeviations {
        let mut d = InputDeviations::default();
        match self {
            InputQuantity::DpZero => d.dp_zero_pa = x,
            InputQuantity::DpSpan => d.dp_span_rel = x,
            InputQuantity::DpRepeatability | InputQuantity::DpNoise => d.dp_random_pa = x,
            InputQuantity::Pressure => d.pressure_pa = x,
            InputQuantity::LiquidTemperature | InputQuantity::LiquidSaturationPressure => {
                d.liquid_state = x
            }
            InputQuantity::LineTemperature => d.line_temperature_k = x,
            InputQuantity::Diameter => d.diameter_m = x,
            InputQuantity::Length => d.length_m = x,
            InputQuantity::StrappingVolume => d.strapping_volume_rel = x,
        }
        d
    }
}

/// The outputs whose uncertainty is tracked (as values, sensitivities or standard uncertainties).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct OutputSet {
    /// Liquid mass, kg.
    pub liquid_mass_kg: f64,
    /// Vapour mass, kg.
    pub vapour_mass_kg: f64,
    /// Total mass, kg.
    pub total_mass_kg: f64,
    /// Liquid volume, m³.
    pub liquid_volume_m3: f64,
    /// Vapour volume, m³.
    pub vapour_volume_m3: f64,
    /// Gross volume, m³.
    pub gross_volume_m3: f64,
    /// Fill fraction.
    pub fill_fraction: f64,
    /// Gas equivalent, Nm³.
    pub gas_nm3: f64,
}

impl OutputSet {
    fn from_contents(c: &Contents) -> Self {
        OutputSet {
            liquid_mass_kg: c.liquid_mass_kg,
            vapour_mass_kg: c.vapour_mass_kg,
            total_mass_kg: c.total_mass_kg,
            liquid_volume_m3: c.liquid_volume_m3,
            vapour_volume_m3: c.vapour_volume_m3,
            gross_volume_m3: c.gross_volume_m3,
            fill_fraction: c.fill_fraction,
            gas_nm3: c.gas_nm3,
        }
    }

    fn zip(self, o: OutputSet, f: impl Fn(f64, f64) -> f64) -> OutputSet {
        OutputSet {
            liquid_mass_kg: f(self.liquid_mass_kg, o.liquid_mass_kg),
            vapour_mass_kg: f(self.vapour_mass_kg, o.vapour_mass_kg),
            total_mass_kg: f(self.total_mass_kg, o.total_mass_kg),
            liquid_volume_m3: f(self.liquid_volume_m3, o.liquid_volume_m3),
            vapour_volume_m3: f(self.vapour_volume_m3, o.vapour_volume_m3),
            gross_volume_m3: f(self.gross_volume_m3, o.gross_volume_m3),
            fill_fraction: f(self.fill_fraction, o.fill_fraction),
            gas_nm3: f(self.gas_nm3, o.gas_nm3),
        }
    }

    fn map(self, f: impl Fn(f64) -> f64) -> OutputSet {
        self.zip(self, |a, _| f(a))
    }
}

/// One line of an uncertainty budget.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BudgetEntry {
    /// The input quantity.
    pub quantity: InputQuantity,
    /// Its standard uncertainty, in [`InputQuantity::unit`].
    pub standard_uncertainty: f64,
    /// Whether it is shared by all readings of the tank and gauge.
    pub shared: bool,
    /// Sensitivity coefficients ∂output/∂input.
    pub sensitivity: OutputSet,
}

impl BudgetEntry {
    /// Contribution |c| u to each output's standard uncertainty.
    pub fn contribution(&self) -> OutputSet {
        self.sensitivity
            .map(|c| (c * self.standard_uncertainty).abs())
    }
}

/// A GUM uncertainty budget of one reading.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UncertaintyBudget {
    /// One entry per input with a non-zero standard uncertainty.
    pub entries: Vec<BudgetEntry>,
    /// Combined standard uncertainty of each output.
    pub combined: OutputSet,
    /// The part from shared inputs (in quadrature).
    pub shared: OutputSet,
    /// The part from independent inputs (in quadrature).
    pub independent: OutputSet,
}

/// The standard uncertainty of the difference of two readings of one tank and gauge.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DifferenceUncertainty {
    /// Combined standard uncertainty of each output's difference.
    pub combined: OutputSet,
    /// The part from shared inputs (what is left of them after cancellation).
    pub shared: OutputSet,
    /// The part from independent inputs of both readings.
    pub independent: OutputSet,
}

fn quadrature<'a>(entries: impl Iterator<Item = &'a BudgetEntry>) -> OutputSet {
    entries
        .fold(OutputSet::default(), |acc, e| {
            acc.zip(e.contribution(), |a, c| a + c * c)
        })
        .map(f64::sqrt)
}

impl UncertaintyBudget {
    fn from_entries(entries: Vec<BudgetEntry>) -> Self {
        let combined = quadrature(entries.iter());
        let shared = quadrature(entries.iter().filter(|e| e.shared));
        let independent = quadrature(entries.iter().filter(|e| !e.shared));
        UncertaintyBudget {
            entries,
            combined,
            shared,
            independent,
        }
    }
}

/// Standard uncertainty of `later − earlier` for two budgets of the same tank and gauge.
/// Shared inputs enter with the difference of their sensitivities (the later budget's standard
/// uncertainty is used); independent inputs add from both readings.
pub fn difference_uncertainty(
    earlier: &UncertaintyBudget,
    later: &UncertaintyBudget,
) -> DifferenceUncertainty {
    let mut shared = OutputSet::default();
    let mut independent = OutputSet::default();
    let add = |acc: OutputSet, s: OutputSet, u: f64| acc.zip(s, |a, c| a + (c * u) * (c * u));
    for e in &later.entries {
        if e.shared {
            let other = earlier
                .entries
                .iter()
                .find(|x| x.quantity == e.quantity)
                .map(|x| x.sensitivity)
                .unwrap_or_default();
            shared = add(
                shared,
                e.sensitivity.zip(other, |a, b| a - b),
                e.standard_uncertainty,
            );
        } else {
            independent = add(independent, e.sensitivity, e.standard_uncertainty);
        }
    }
    for e in &earlier.entries {
        if !e.shared {
            independent = add(independent, e.sensitivity, e.standard_uncertainty);
        } else if !later.entries.iter().any(|x| x.quantity == e.quantity) {
            shared = add(shared, e.sensitivity, e.standard_uncertainty);
        }
    }
    DifferenceUncertainty {
        combined: shared.zip(independent, |a, b| (a + b).sqrt()),
        shared: shared.map(f64::sqrt),
        independent: independent.map(f64::sqrt),
    }
}

impl Geometry {
    /// The geometry with perturbed dimensions (for sensitivities and Monte Carlo).
    fn perturbed(&self, dev: &InputDeviations) -> Result<Geometry> {
        Ok(match self {
            Geometry::Cylinder(c) => {
                if dev.diameter_m == 0.0 && dev.length_m == 0.0 {
                    return Ok(self.clone());
                }
                let s = c.spec();
                Geometry::Cylinder(Cylinder::new(
                    s.orientation,
                    s.diameter_m + dev.diameter_m,
                    s.length_m + dev.length_m,
                    s.head,
                )?)
            }
            Geometry::Strapping(t) => {
                if dev.strapping_volume_rel == 0.0 {
                    return Ok(self.clone());
                }
                let (levels, volumes): (Vec<f64>, Vec<f64>) = t
                    .rows()
                    .map(|(h, v)| (h, v * (1.0 + dev.strapping_volume_rel)))
                    .unzip();
                Geometry::Strapping(StrappingTable::new(levels, volumes)?)
            }
        })
    }
}

impl<F: FluidProperties> Tank<F> {
    /// Contents with every input moved by `dev` from its stated value.
    pub fn contents_with_deviations(
        &self,
        dp_reading_pa: f64,
        conditions: &Conditions,
        dev: &InputDeviations,
        options: &ContentsOptions,
    ) -> Result<Contents> {
        let mut c = *conditions;
        c.pressure_pa += dev.pressure_pa;
        c.line_temperature_k += dev.line_temperature_k;
        c.liquid = match c.liquid {
            LiquidState::SaturatedAtTankPressure => LiquidState::SaturatedAtTankPressure,
            LiquidState::SaturatedAtPressure { pressure_pa } => LiquidState::SaturatedAtPressure {
                pressure_pa: pressure_pa + dev.liquid_state,
            },
            LiquidState::Temperature { temperature_k } => LiquidState::Temperature {
                temperature_k: temperature_k + dev.liquid_state,
            },
        };
        let dp = (dp_reading_pa - self.gauge.zero_offset_pa) * (1.0 + dev.dp_span_rel)
            + dev.dp_zero_pa
            + dev.dp_random_pa;
        let d = densities(&self.fluid, &c)?;
        if dev.diameter_m == 0.0 && dev.length_m == 0.0 && dev.strapping_volume_rel == 0.0 {
            return self.contents_from_densities(dp, c.pressure_pa, &d, options);
        }
        let t = Tank {
            geometry: self.geometry.perturbed(dev)?,
            fluid: &self.fluid,
            gauge: self.gauge,
        };
        t.contents_from_densities(dp, c.pressure_pa, &d, options)
    }

    /// The standard uncertainties of the inputs of one reading, as budget lines without
    /// sensitivities yet.
    fn input_uncertainties(
        &self,
        dp_reading_pa: f64,
        conditions: &Conditions,
        inputs: &UncertaintyInputs,
    ) -> Vec<(InputQuantity, f64)> {
        let mut out = Vec::new();
        if let Some(a) = &self.gauge.accuracy {
            let dp = dp_reading_pa - self.gauge.zero_offset_pa;
            let u = a.standard_uncertainty_pa(dp);
            let (sys, rnd) = (a.systematic_share.sqrt(), (1.0 - a.systematic_share).sqrt());
            match a.basis {
                AccuracyBasis::Span(_) => out.push((InputQuantity::DpZero, u * sys)),
                AccuracyBasis::Reading => out.push((
                    InputQuantity::DpSpan,
                    a.class_percent / 100.0 / 3f64.sqrt() * sys,
                )),
            }
            out.push((InputQuantity::DpRepeatability, u * rnd));
        }
        out.push((InputQuantity::DpNoise, inputs.dp_noise_u_pa));
        out.push((InputQuantity::Pressure, inputs.pressure_u_pa));
        match conditions.liquid {
            LiquidState::SaturatedAtTankPressure => {}
            LiquidState::SaturatedAtPressure { .. } => out.push((
                InputQuantity::LiquidSaturationPressure,
                inputs.liquid_state_u,
            )),
            LiquidState::Temperature { .. } => {
                out.push((InputQuantity::LiquidTemperature, inputs.liquid_state_u))
            }
        }
        out.push((InputQuantity::LineTemperature, inputs.line_temperature_u_k));
        match &self.geometry {
            Geometry::Cylinder(_) => {
                out.push((InputQuantity::Diameter, inputs.diameter_u_m));
                out.push((InputQuantity::Length, inputs.length_u_m));
            }
            Geometry::Strapping(_) => out.push((
                InputQuantity::StrappingVolume,
                inputs.strapping_volume_u_rel,
            )),
        }
        out.retain(|(_, u)| *u > 0.0 && u.is_finite());
        out
    }

    /// Contents of a reading with the standard uncertainties of its outputs filled in, and the
    /// GUM budget behind them.
    pub fn contents_with_uncertainty(
        &self,
        dp_reading_pa: f64,
        conditions: &Conditions,
        inputs: &UncertaintyInputs,
        options: &ContentsOptions,
    ) -> Result<(Contents, UncertaintyBudget)> {
        let mut contents = self.contents_from_reading(dp_reading_pa, conditions, options)?;
        let base = OutputSet::from_contents(&contents);
        let mut entries = Vec::new();
        for (quantity, u) in self.input_uncertainties(dp_reading_pa, conditions, inputs) {
            let at = |x: f64| {
                self.contents_with_deviations(
                    dp_reading_pa,
                    conditions,
                    &quantity.deviations(x),
                    options,
                )
                .map(|c| OutputSet::from_contents(&c))
            };
            // Central difference; one-sided where a side leaves the domain (e.g. a liquid
            // temperature pushed above saturation).
            let sensitivity = match (at(u), at(-u)) {
                (Ok(p), Ok(m)) => p.zip(m, |a, b| (a - b) / (2.0 * u)),
                (Ok(p), Err(_)) => p.zip(base, |a, b| (a - b) / u),
                (Err(_), Ok(m)) => base.zip(m, |a, b| (a - b) / u),
                (Err(e), Err(_)) => return Err(e),
            };
            entries.push(BudgetEntry {
                quantity,
                standard_uncertainty: u,
                shared: quantity.is_shared(),
                sensitivity,
            });
        }
        let budget = UncertaintyBudget::from_entries(entries);
        contents.liquid_mass_u_kg = Some(budget.combined.liquid_mass_kg);
        contents.vapour_mass_u_kg = Some(budget.combined.vapour_mass_kg);
        contents.total_mass_u_kg = Some(budget.combined.total_mass_kg);
        contents.liquid_volume_u_m3 = Some(budget.combined.liquid_volume_m3);
        contents.gas_nm3_u = Some(budget.combined.gas_nm3);
        Ok((contents, budget))
    }

    /// Standard uncertainty of the change in contents between two readings of this tank
    /// (`later − earlier`), with shared inputs treated as fully correlated.
    pub fn difference_uncertainty(
        &self,
        earlier: (f64, &Conditions),
        later: (f64, &Conditions),
        inputs: &UncertaintyInputs,
        options: &ContentsOptions,
    ) -> Result<DifferenceUncertainty> {
        let (_, a) = self.contents_with_uncertainty(earlier.0, earlier.1, inputs, options)?;
        let (_, b) = self.contents_with_uncertainty(later.0, later.1, inputs, options)?;
        Ok(difference_uncertainty(&a, &b))
    }
}
