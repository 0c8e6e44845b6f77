//! A stored tank as an engine tank, a stored reading as engine conditions, and its contents.

use crate::EvalError;
use fluids::{Fluid, fluid};
use store::{ReadingEntry, TankRecord, TankSpec};
use tank::{
    AccuracyBasis, Conditions, Contents, ContentsOptions, Cylinder, Gauge, GaugeAccuracy, Geometry,
    LiquidState, StrappingTable,
};
use units::AbsolutePressure;

/// The vessel's shape: its strapping table when it has one, else the cylinder with its heads.
pub fn geometry(spec: &TankSpec) -> Result<Geometry, EvalError> {
    if spec.strapping.len() >= 2 {
        let (levels, volumes) = spec.strapping.iter().copied().unzip();
        return Ok(StrappingTable::new(levels, volumes)?.into());
    }
    let head = spec.heads.head(spec.crown_ratio, spec.knuckle_ratio);
    Ok(Cylinder::new(spec.orientation, spec.diameter_m, spec.length_m, head)?.into())
}

/// The gauge: its accuracy class as a percentage of span when both are set.
pub fn gauge(spec: &TankSpec) -> Result<Gauge, EvalError> {
    let accuracy = match (spec.gauge_accuracy_percent, spec.gauge_span_pa()) {
        (Some(class), Some(span)) => Some(GaugeAccuracy::new(class, AccuracyBasis::Span(span))?),
        (Some(class), None) => Some(GaugeAccuracy::new(class, AccuracyBasis::Reading)?),
        _ => None,
    };
    Ok(Gauge {
        zero_offset_pa: 0.0,
        accuracy,
    })
}

/// The engine's tank for stored settings.
pub fn engine_tank(spec: &TankSpec) -> Result<tank::Tank<&'static Fluid>, EvalError> {
    Ok(tank::Tank::new(geometry(spec)?, fluid(spec.fluid)).with_gauge(gauge(spec)?))
}

/// The absolute tank pressure of a reading, Pa, with the site's barometer.
pub fn pressure_abs_pa(t: &TankRecord, r: &ReadingEntry) -> f64 {
    r.pressure
        .si()
        .to_absolute(AbsolutePressure::from_pa(t.barometer_pa))
        .pa()
}

/// The conditions of a reading: its pressure, a measured liquid temperature when given (else `liquid`),
/// and the tank's line temperature.
pub fn conditions(t: &TankRecord, r: &ReadingEntry, liquid: LiquidState) -> Conditions {
    let liquid = match r.liquid_temperature_k {
        Some(k) => LiquidState::Temperature { temperature_k: k },
        None => liquid,
    };
    Conditions::saturated(pressure_abs_pa(t, r))
        .with_liquid(liquid)
        .with_line_temperature_k(t.spec.line_temperature_k())
}

/// Contents of a stored reading with the liquid saturated at the tank pressure (or at its measured
/// temperature).
pub fn contents_of(t: &TankRecord, r: &ReadingEntry) -> Result<Contents, EvalError> {
    let engine = engine_tank(&t.spec)?;
    let c = conditions(t, r, LiquidState::SaturatedAtTankPressure);
    Ok(engine.contents_from_reading(r.dp.si_value(), &c, &ContentsOptions::default())?)
}
