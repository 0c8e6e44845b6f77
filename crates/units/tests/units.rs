//! Parsing, conversion factors and error paths of the `units` crate.
#![allow(clippy::unwrap_used, clippy::expect_used)]

use proptest::prelude::*;
use units::*;

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-300)
}

/// Conversion factors against NIST Special Publication 811 (2008 edition), appendix B.8/B.9.
#[test]
fn factors_match_nist_sp811() {
    // NIST SP 811: pound-force per square inch (psi) = 6.894 757 E+03 Pa (7 significant figures).
    assert!(close(PSI_PA, 6894.757, 1e-7));
    // NIST SP 811: inch of water (conventional) = 2.490 889 E+02 Pa.
    assert!(close(INCH_WATER_CONVENTIONAL_PA, 249.0889, 1e-6));
    // the conventional inch of water: 1000 kg/m³ × 0.0254 m × g_n = 249.088 91 Pa (NIST SP 811, B.8).
    assert!(close(INCH_WATER_CONVENTIONAL_PA, 249.088_91, 1e-9));
    // NIST SP 811: inch of water (39.2 °F) = 2.490 82 E+02 Pa; (60 °F) = 2.4884 E+02 Pa.
    assert!(close(INCH_WATER_4C_PA, 249.082, 1e-9));
    assert!(close(INCH_WATER_60F_PA, 248.84, 1e-9));
    // NIST SP 811: millimeter of water (conventional) = 9.806 65 Pa.
    assert!(close(MM_WATER_CONVENTIONAL_PA, 9.80665, 1e-12));
    // NIST SP 811: pound (avoirdupois) = 4.535 924 E-01 kg (exact 0.453 592 37).
    assert!(close(POUND_KG, 0.453_592_4, 1e-7));
    // NIST SP 811: cubic foot = 2.831 685 E-02 m³.
    assert!(close(CUBIC_FOOT_M3, 0.028_316_85, 2e-7)); // 7 significant figures
    // NIST SP 811: standard atmosphere = 1.013 25 E+05 Pa.
    assert!(close(STANDARD_ATMOSPHERE_PA, 101_325.0, 1e-12));
    // 70 °F = 21.111 °C = 294.261 K (definition of the Fahrenheit scale).
    assert!(close(SCF_TEMPERATURE_K, 294.261_111, 1e-8));
}

#[test]
fn tank_pressures_from_the_issue() {
    let atm = AbsolutePressure::STANDARD_ATMOSPHERE;
    let cases: &[(&str, f64, bool)] = &[
        // (text, absolute Pa at 1 atm barometer, gauge?) — factors from NIST SP 811.
        ("12 barg", 1_200_000.0 + 101_325.0, true),
        ("175 psig", 175.0 * 6_894.757_293_168 + 101_325.0, true),
        ("80 kPag", 80_000.0 + 101_325.0, true),
        ("1.3 MPa", 1_300_000.0, false),
        ("10 bara", 1_000_000.0, false),
        ("14.7 psia", 14.7 * 6_894.757_293_168, false),
        ("0.9 MPag", 900_000.0 + 101_325.0, true),
        ("250000 Pa", 250_000.0, false),
        ("12barg", 1_301_325.0, true),
    ];
    for &(text, abs_pa, gauge) in cases {
        let e = parse_tank_pressure(text).unwrap();
        assert_eq!(e.unit.is_gauge(), gauge, "{text}");
        let p = e.si().to_absolute(atm);
        assert!(
            close(p.pa(), abs_pa, 1e-9),
            "{text}: {} vs {abs_pa}",
            p.pa()
        );
        if gauge {
            assert!(matches!(e.si(), TankPressure::Gauge(_)));
        } else {
            assert!(matches!(e.si(), TankPressure::Absolute(_)));
        }
    }
}

#[test]
fn gauge_needs_the_barometer() {
    // A site at altitude: the same gauge reading is a lower absolute pressure (definition).
    let g = parse_tank_pressure("10 barg").unwrap().si();
    let high = g.to_absolute(AbsolutePressure::from_pa(89_875.0));
    assert!(close(high.pa(), 1_089_875.0, 1e-12));
    assert!(close(
        high.to_gauge(AbsolutePressure::from_pa(89_875.0)).pa(),
        1e6,
        1e-12
    ));
}

#[test]
fn dp_units_from_the_issue() {
    let cases: &[(&str, f64)] = &[
        // Factors: NIST SP 811 (conventional inch of water 249.088 91 Pa).
        ("85 inH2O", 85.0 * 249.088_91),
        ("2150 mmH2O", 2150.0 * 9.806_65),
        ("21.2 kPa", 21_200.0),
        ("212 mbar", 21_200.0),
        ("3.1 psi", 3.1 * 6_894.757_293_168),
        ("21000 Pa", 21_000.0),
        ("85 inH2O@60F", 85.0 * 248.84),
        ("85 inH2O@4C", 85.0 * 249.082),
        ("85 in wc", 85.0 * 249.088_91),
        ("0.2 bar", 20_000.0),
    ];
    for &(text, pa) in cases {
        let dp = parse_dp(text).unwrap();
        assert!(close(dp.si().pa(), pa, 1e-9), "{text}");
    }
}

#[test]
fn lengths_temperatures_masses_quantities() {
    // Exact definitions of the inch and foot (NIST SP 811).
    for (text, m) in [
        ("2.4 m", 2.4),
        ("2400 mm", 2.4),
        ("94.5 in", 2.4003),
        ("7.9 ft", 2.407_92),
        ("240 cm", 2.4),
    ] {
        assert!(
            close(parse_length(text).unwrap().si().m(), m, 1e-12),
            "{text}"
        );
    }
    // Kelvin = Celsius + 273.15; Fahrenheit = 9/5 Celsius + 32 (definitions).
    for (text, k) in [
        ("85 K", 85.0),
        ("-188.2 C", 84.95),
        ("-306.7 F", 84.983_333_333),
        ("-196 °C", 77.15),
    ] {
        assert!(
            close(parse_temperature(text).unwrap().si().k(), k, 1e-9),
            "{text}"
        );
    }
    // Exact pound and tonne (NIST SP 811).
    for (text, kg) in [
        ("1200 kg", 1200.0),
        ("2645 lb", 1_199.751_818_7),
        ("1.2 t", 1200.0),
    ] {
        assert!(
            close(parse_mass(text).unwrap().si().kg(), kg, 1e-9),
            "{text}"
        );
    }
    let nm3 = parse_delivered_quantity("950 Nm3").unwrap().si();
    assert_eq!(
        nm3,
        DeliveredQuantity::Gas(GasVolume {
            m3: 950.0,
            basis: GasBasis::Normal
        })
    );
    let scf = parse_delivered_quantity("33500 scf").unwrap().si();
    let DeliveredQuantity::Gas(g) = scf else {
        panic!("scf is a gas volume")
    };
    assert_eq!(g.basis, GasBasis::Standard);
    assert!(close(g.m3, 33_500.0 * 0.028_316_846_592, 1e-12));
    // A gas volume becomes a mass through the density at its basis (nitrogen at 0 °C, 1 atm
    // ≈ 1.2504 kg/m³, CoolProp 8.0.0; any density would do for this identity).
    assert!(close(nm3.mass_kg(|_| 1.2504), 950.0 * 1.2504, 1e-12));
    assert!(matches!(
        parse_delivered_quantity("1.2 t").unwrap().si(),
        DeliveredQuantity::Mass(_)
    ));
}

#[test]
fn errors_say_what_was_expected() {
    let e = parse_tank_pressure("12 bar").unwrap_err();
    assert!(matches!(e, UnitError::AmbiguousPressure { .. }));
    assert!(e.to_string().contains("barg"), "{e}");
    assert!(matches!(
        parse_tank_pressure("175 psi").unwrap_err(),
        UnitError::AmbiguousPressure { .. }
    ));
    let e = parse_dp("85 furlongs").unwrap_err();
    assert!(matches!(e, UnitError::UnknownUnit { .. }));
    assert!(e.to_string().contains("inH2O"), "{e}");
    assert!(matches!(
        parse_dp("12 barg").unwrap_err(),
        UnitError::GaugeNotAllowed { .. }
    ));
    assert!(matches!(
        parse_dp("85").unwrap_err(),
        UnitError::MissingUnit { .. }
    ));
    assert!(matches!(parse_dp("").unwrap_err(), UnitError::Empty { .. }));
    assert!(matches!(
        parse_dp("abc inH2O").unwrap_err(),
        UnitError::BadNumber { .. }
    ));
    assert!(matches!(
        parse_dp("NaN inH2O").unwrap_err(),
        UnitError::BadNumber { .. }
    ));
    assert!(matches!(
        parse_dp("1e999 Pa").unwrap_err(),
        UnitError::NotFinite { .. }
    ));
    assert!(matches!(
        parse_temperature("-300 C").unwrap_err(),
        UnitError::BelowAbsoluteZero { .. }
    ));
    assert!(matches!(
        parse_length("2 parsecs").unwrap_err(),
        UnitError::UnknownUnit { .. }
    ));
    assert!(matches!(
        parse_mass("3 stone").unwrap_err(),
        UnitError::UnknownUnit { .. }
    ));
    assert!(matches!(
        parse_delivered_quantity("3 gal").unwrap_err(),
        UnitError::UnknownUnit { .. }
    ));
    assert!(matches!(
        parse_absolute_pressure("3 barg").unwrap_err(),
        UnitError::GaugeNotAllowed { .. }
    ));
    assert!(close(
        parse_absolute_pressure("1013.25 mbar").unwrap().pa(),
        101_325.0,
        1e-12
    ));
}

#[test]
fn every_unit_symbol_parses_back_to_itself() {
    for &u in TankPressureUnit::ALL {
        assert_eq!(u.symbol().parse::<TankPressureUnit>().unwrap(), u);
    }
    for &u in DpUnit::ALL {
        assert_eq!(u.symbol().parse::<DpUnit>().unwrap(), u);
    }
    for &u in LengthUnit::ALL {
        assert_eq!(u.symbol().parse::<LengthUnit>().unwrap(), u);
    }
    for &u in TemperatureUnit::ALL {
        assert_eq!(u.symbol().parse::<TemperatureUnit>().unwrap(), u);
    }
    for &u in MassUnit::ALL {
        assert_eq!(u.symbol().parse::<MassUnit>().unwrap(), u);
    }
    for &u in QuantityUnit::ALL {
        assert_eq!(u.symbol().parse::<QuantityUnit>().unwrap(), u);
    }
}

proptest! {
    /// The parsers never panic, whatever the text (common practice, no source).
    #[test]
    fn parsers_never_panic(s in ".{0,24}") {
        let _ = parse_tank_pressure(&s);
        let _ = parse_absolute_pressure(&s);
        let _ = parse_dp(&s);
        let _ = parse_length(&s);
        let _ = parse_temperature(&s);
        let _ = parse_mass(&s);
        let _ = parse_delivered_quantity(&s);
    }

    /// Formatting then parsing returns the SI value (round trip; common practice, no source).
    #[test]
    fn format_parse_round_trip(v in -1e6f64..1e6, i in 0usize..9) {
        let u = DpUnit::ALL[i];
        let text = format!("{v:e} {}", u.symbol());
        let back = parse_dp(&text).unwrap();
        prop_assert!((back.si().pa() - u.si_from_value(v)).abs() <= 1e-9 * u.si_from_value(v).abs().max(1.0));
    }
}

/// The standard atmosphere by geometric elevation (U.S. Standard Atmosphere 1976, identical to ICAO
/// below 32 km; table by geometric altitude, recalled from memory): 8.9876e4 Pa at 1000 m, 7.9501e4 Pa
/// at 2000 m, 5.4048e4 Pa at 5000 m, each within half a unit of the table's last figure (5 Pa); 101 325
/// Pa at sea level (definition). The ICAO tables by geopotential altitude give 89 875 and 79 495 Pa at
/// 1000 and 2000 m: a geometric elevation lies lower in geopotential, so those must come out 1 and 6 Pa
/// apart from these (checked to 0.5 Pa).
#[test]
fn icao_barometer() {
    assert!(close(
        icao_barometer_from_elevation(0.0).pa(),
        101_325.0,
        1e-12
    ));
    for (z, p) in [(1000.0, 89_876.0), (2000.0, 79_501.0), (5000.0, 54_048.0)] {
        let got = icao_barometer_from_elevation(z).pa();
        assert!((got - p).abs() <= 5.0, "{z} m: {got}");
    }
    let geometric_vs_geopotential =
        |z: f64, table: f64| icao_barometer_from_elevation(z).pa() - table;
    assert!((geometric_vs_geopotential(1000.0, 89_875.0) - 1.3).abs() < 0.5);
    assert!((geometric_vs_geopotential(2000.0, 79_495.0) - 6.2).abs() < 0.5);
}

proptest! {
    /// Writing an instant and reading it back returns it (whole seconds; round trip, common practice,
    /// no source); the parser itself is checked against the `time` crate in the store's tests.
    #[test]
    fn instants_round_trip(secs in -5_000_000_000i64..10_000_000_000) {
        let text = rfc3339_from_ms(secs * 1000);
        prop_assert_eq!(ms_from_rfc3339(&text), Some(secs * 1000), "{}", text);
    }
}

/// 2000-02-29T00:00:00Z is 951 782 400 s after the epoch (date -d 2000-02-29T00:00:00Z +%s).
#[test]
fn instant_of_a_leap_day() {
    assert_eq!(
        days_from_civil(2000, 2, 29).map(|d| d * 86_400),
        Some(951_782_400)
    );
    assert_eq!(
        rfc3339_from_ms(951_782_400_000 + 3_723_000),
        "2000-02-29T01:02:03Z"
    );
}

/// How unit text is read, by stated rules (common practice, no source):
/// - unit names in any letter case, with subscript or superscript digits read as digits
///   (`inH₂O` is `inH2O`, `Nm³` is `Nm3`, `BARG` is `barg`);
/// - numbers with a decimal point, leading or trailing (`.5`, `5.`);
/// - a comma in a number (`1,5 barg`, `1,200 kg`) is refused with a message that says so: a decimal
///   comma and a thousands separator cannot be told apart.
#[test]
fn unit_text_rules() {
    assert_eq!(parse_dp("60 inH₂O").unwrap().unit, DpUnit::InH2O);
    assert_eq!(parse_dp("60 INH2O").unwrap().unit, DpUnit::InH2O);
    let q = parse_delivered_quantity("1200 Nm³").unwrap();
    assert_eq!(q.unit, QuantityUnit::Gas(GasVolumeUnit::Nm3));
    assert_eq!(q.value, 1200.0);
    let p = parse_tank_pressure("10 BARG").unwrap();
    assert_eq!(p.unit, TankPressureUnit::Barg);
    assert_eq!(parse_tank_pressure(".5 MPa").unwrap().value, 0.5);
    assert_eq!(parse_tank_pressure("5. bara").unwrap().value, 5.0);
    for bad in ["1,5 barg", "1,200 kg"] {
        let e = parse_tank_pressure(bad)
            .map(|_| ())
            .or_else(|_| parse_delivered_quantity(bad).map(|_| ()))
            .unwrap_err();
        assert!(e.to_string().contains("comma"), "{bad}: {e}");
    }
    let e = parse_delivered_quantity("1,200 kg")
        .unwrap_err()
        .to_string();
    assert!(e.contains("decimal point") && e.contains("1,200 kg"), "{e}");
}
