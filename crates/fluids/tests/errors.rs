//! Typed errors and what their messages say (messages are read by users; keep them plain).

use fluids::{FluidError, FluidId, Phase, Quantity, SolverOptions, fluid};

/// Source: Span and Wagner (1996): CO2's triple point is at 0.51795 MPa; no liquid below it.
#[test]
fn carbon_dioxide_below_its_triple_point_pressure() {
    let co2 = fluid(FluidId::CarbonDioxide);
    let err = co2.saturation_from_pressure(300e3).unwrap_err();
    assert!(matches!(
        err,
        FluidError::BelowTriplePoint {
            fluid: FluidId::CarbonDioxide,
            quantity: Quantity::Pressure,
            ..
        }
    ));
    assert_eq!(
        err.to_string(),
        "carbon-dioxide has no liquid below its triple-point pressure 518 kPa; asked 300 kPa"
    );
    let full = co2
        .solve_saturation_from_pressure(300e3, &SolverOptions::default())
        .unwrap_err();
    assert_eq!(full, err);
    // liquid asked at 250 K and 3 bar: gas there
    let e = co2
        .density_from_temperature_pressure(250.0, 3e5, Phase::Liquid)
        .unwrap_err();
    assert!(matches!(
        e,
        FluidError::PhaseAbsent {
            asked: Phase::Liquid,
            saturation_temperature_k: None,
            ..
        }
    ));
}

/// Source: definition (no saturation above the critical temperature or pressure).
#[test]
fn every_fluid_above_its_critical_point() {
    for id in FluidId::ALL {
        let f = fluid(id);
        let c = f.critical();
        let e = f
            .saturation_from_temperature(c.temperature_k + 1.0)
            .unwrap_err();
        assert!(
            matches!(
                e,
                FluidError::AboveCriticalPoint {
                    quantity: Quantity::Temperature,
                    ..
                }
            ),
            "{e}"
        );
        assert!(e.to_string().contains("critical temperature"), "{e}");
        let e = f
            .saturation_from_pressure(c.pressure_pa * 1.01)
            .unwrap_err();
        assert!(
            matches!(
                e,
                FluidError::AboveCriticalPoint {
                    quantity: Quantity::Pressure,
                    ..
                }
            ),
            "{e}"
        );
        let e =
            f.solve_saturation_from_temperature(c.temperature_k + 1.0, &SolverOptions::default());
        assert!(matches!(e, Err(FluidError::AboveCriticalPoint { .. })));
        // at exactly T_c both curves give the critical point
        let s = f.saturation_from_temperature(c.temperature_k).unwrap();
        assert!((s.liquid_density_kg_m3 / c.density_kg_m3 - 1.0).abs() < 1e-9);
    }
}

/// Source: definition (absolute temperature and pressure are positive; NaN and infinities are not inputs).
#[test]
fn negative_nan_and_infinite_inputs() {
    let n2 = fluid(FluidId::Nitrogen);
    for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
        assert!(matches!(
            n2.saturation_from_temperature(bad),
            Err(FluidError::NotFinite { .. })
        ));
        assert!(matches!(
            n2.saturation_from_pressure(bad),
            Err(FluidError::NotFinite { .. })
        ));
        assert!(matches!(
            n2.density_from_temperature_pressure(80.0, bad, Phase::Liquid),
            Err(FluidError::NotFinite {
                quantity: Quantity::Pressure,
                ..
            })
        ));
        assert!(matches!(
            n2.saturation_from_liquid_enthalpy(bad),
            Err(FluidError::NotFinite { .. })
        ));
        assert!(n2.pressure_pa(bad, 800.0).is_nan());
        assert!(n2.enthalpy_j_kg(80.0, bad).is_nan());
    }
    for bad in [-1.0, 0.0, -0.0] {
        assert!(matches!(
            n2.saturation_from_temperature(bad),
            Err(FluidError::NotPositive { .. })
        ));
        assert!(matches!(
            n2.saturation_from_pressure(bad),
            Err(FluidError::NotPositive { .. })
        ));
        assert!(matches!(
            n2.phase_at(bad, 1e5),
            Err(FluidError::NotPositive { .. })
        ));
        assert!(matches!(
            n2.state(80.0, bad),
            Err(FluidError::NotPositive {
                quantity: Quantity::Density,
                ..
            })
        ));
    }
    let e = n2.saturation_from_pressure(-2e5).unwrap_err();
    assert_eq!(
        e.to_string(),
        "the pressure must be above zero (absolute); got -200000"
    );
}

/// Source: nitrogen boils at 83.626 K at 2 bar (CoolProp 8.0.0, PropsSI); liquid at 100 K and 2 bar
/// does not exist.
#[test]
fn liquid_asked_above_its_boiling_point() {
    let n2 = fluid(FluidId::Nitrogen);
    let e = n2
        .density_from_temperature_pressure(100.0, 2e5, Phase::Liquid)
        .unwrap_err();
    let FluidError::PhaseAbsent {
        saturation_temperature_k: Some(ts),
        asked: Phase::Liquid,
        ..
    } = e
    else {
        panic!("{e:?}")
    };
    assert!((ts - 83.626).abs() < 0.001, "{ts}");
    assert_eq!(
        e.to_string(),
        "nitrogen is not liquid at 100.00 K and 200 kPa: it boils at 83.63 K at that pressure, so it is gas there"
    );
    let e = n2
        .density_from_temperature_pressure(80.0, 2e5, Phase::Gas)
        .unwrap_err();
    assert!(e.to_string().contains("so it is liquid there"), "{e}");
}

/// Source: definition (the equations' ranges: triple point to T_max, CoolProp 8.0.0 fluid data).
#[test]
fn outside_the_equation_range() {
    let n2 = fluid(FluidId::Nitrogen);
    let e = n2
        .density_from_temperature_pressure(50.0, 1e5, Phase::Gas)
        .unwrap_err();
    assert!(
        matches!(
            e,
            FluidError::OutOfRange {
                quantity: Quantity::Temperature,
                ..
            }
        ),
        "{e}"
    );
    let e = n2
        .density_from_temperature_pressure(300.0, 1e12, Phase::Gas)
        .unwrap_err();
    assert!(
        matches!(
            e,
            FluidError::OutOfRange {
                quantity: Quantity::Pressure,
                ..
            }
        ),
        "{e}"
    );
    let e = n2.saturation_from_temperature(50.0).unwrap_err();
    assert_eq!(
        e.to_string(),
        "nitrogen has no liquid below its triple-point temperature 63.15 K; asked 50.00 K"
    );
}

/// Source: definition (names and formulas parse; unknown names give a typed error).
#[test]
fn fluid_names() {
    for id in FluidId::ALL {
        assert_eq!(id.name().parse::<FluidId>().unwrap(), id);
        assert_eq!(id.formula().parse::<FluidId>().unwrap(), id);
        assert_eq!(fluid(id).id(), id);
    }
    assert_eq!(
        "Carbon-Dioxide".parse::<FluidId>().unwrap(),
        FluidId::CarbonDioxide
    );
    assert!(matches!(
        "helium".parse::<FluidId>(),
        Err(FluidError::UnknownFluid { .. })
    ));
}
