//! Published figures. Values marked "recalled from memory" were not re-read from the paper while writing
//! this test; their tolerances allow for the paper's rounding.

use fluids::{FluidId, fluid};

use crate::common::assert_rel;

/// (fluid, T_c K, p_c Pa, rho_c kg/m³, T_t K, p_t Pa), each from the fluid's equation-of-state paper,
/// recalled from memory: Span et al. JPCRD 29 (2000); Schmidt and Wagner FPE 19 (1985); Tegeler et al.
/// JPCRD 28 (1999); Span and Wagner JPCRD 25 (1996); Setzmann and Wagner JPCRD 20 (1991); Leachman et al.
/// JPCRD 38 (2009) for normal and para hydrogen.
const POINTS: [(FluidId, f64, f64, f64, f64, f64); 7] = [
    (
        FluidId::Nitrogen,
        126.192,
        3.3958e6,
        313.3,
        63.151,
        12.5198e3,
    ),
    (FluidId::Oxygen, 154.581, 5.043e6, 436.14, 54.361, 146.28),
    (FluidId::Argon, 150.687, 4.863e6, 535.6, 83.8058, 68.891e3),
    (
        FluidId::CarbonDioxide,
        304.1282,
        7.3773e6,
        467.6,
        216.592,
        0.51795e6,
    ),
    (
        FluidId::Methane,
        190.564,
        4.5992e6,
        162.66,
        90.6941,
        11.696e3,
    ),
    (FluidId::Hydrogen, 33.145, 1.2964e6, 31.262, 13.957, 7.36e3),
    (
        FluidId::Parahydrogen,
        32.938,
        1.2858e6,
        31.323,
        13.8033,
        7.041e3,
    ),
];

#[test]
fn critical_points_match_the_papers() {
    for (id, tc, pc, rhoc, _, _) in POINTS {
        let c = fluid(id).critical();
        // The 1985 oxygen equation's own critical point is not the paper's stated one: it lies at
        // 154.599390 K, 5.0464105 MPa, 426.93405 kg/m³ (CoolProp 8.0.0: PropsSI('Tcrit' / 'pcrit' /
        // 'rhomass_critical', 'Oxygen')), checked to 1e-6 below. Hydrogen's lies 0.7 mK below its T_c.
        if id == FluidId::Oxygen {
            assert_rel(
                "O2 T_c of the equation",
                c.temperature_k,
                154.599_389_835,
                1e-6,
            );
            assert_rel("O2 p_c of the equation", c.pressure_pa, 5_046_410.521, 1e-6);
            assert_rel(
                "O2 rho_c of the equation",
                c.density_kg_m3,
                426.934_048_748,
                1e-6,
            );
            continue;
        }
        let (tol_t, tol_p, tol_rho) = match id {
            FluidId::Hydrogen | FluidId::Parahydrogen => (5e-5, 1e-4, 1e-3),
            _ => (1e-6, 1e-5, 1e-4),
        };
        assert_rel(&format!("{id} T_c"), c.temperature_k, tc, tol_t);
        assert_rel(&format!("{id} p_c"), c.pressure_pa, pc, tol_p);
        assert_rel(&format!("{id} rho_c"), c.density_kg_m3, rhoc, tol_rho);
    }
}

#[test]
fn triple_points_match_the_papers() {
    for (id, _, _, _, tt, pt) in POINTS {
        let t = fluid(id).triple();
        // CoolProp's data (and so this crate) round argon's 83.8058 K to 83.806 K
        assert_rel(&format!("{id} T_t"), t.temperature_k, tt, 5e-6);
        // papers round p_t to 4-5 figures (hydrogen's 7.36 kPa to 3); allow half a unit of the last one
        let tol = if pt == 7.36e3 { 1e-3 } else { 2e-4 };
        assert_rel(&format!("{id} p_t"), t.pressure_pa, pt, tol);
    }
}

/// Normal boiling points (101.325 kPa) and saturated liquid densities there, from the same papers, recalled
/// from memory (methane's density from Setzmann and Wagner's table, hydrogen's from Leachman et al.).
#[test]
fn normal_boiling_points_and_liquid_densities() {
    let cases = [
        (FluidId::Nitrogen, 77.355, 806.08),
        (FluidId::Oxygen, 90.188, 1141.2),
        (FluidId::Argon, 87.302, 1395.4),
        (FluidId::Methane, 111.667, 422.36),
        (FluidId::Hydrogen, 20.369, 70.85),
        (FluidId::Parahydrogen, 20.271, 70.78),
    ];
    for (id, t_nbp, rho_l) in cases {
        let s = fluid(id).saturation_from_pressure(101_325.0).unwrap();
        assert!(
            (s.temperature_k - t_nbp).abs() <= 0.002,
            "{id}: NBP {} K vs {t_nbp} K",
            s.temperature_k
        );
        assert_rel(
            &format!("{id} rho_L at NBP"),
            s.liquid_density_kg_m3,
            rho_l,
            1e-3,
        );
    }
}

/// Industrial conversion tables (gas suppliers' data sheets): standard cubic feet of gas at 70 °F and 1 atm
/// per US gallon of liquid at its normal boiling point: N2 93.11, O2 115.1, Ar 112.5 — recalled from memory.
/// Tolerance 0.3 %: the tables are older and round their liquid densities.
#[test]
fn scf_per_gallon_conversion_factors() {
    const US_GALLON_M3: f64 = 3.785_411_784e-3; // exact by definition
    const CUBIC_FOOT_M3: f64 = 0.3048 * 0.3048 * 0.3048; // exact by definition
    for (id, table) in [
        (FluidId::Nitrogen, 93.11),
        (FluidId::Oxygen, 115.1),
        (FluidId::Argon, 112.5),
    ] {
        let f = fluid(id);
        let liquid = f
            .saturation_from_pressure(101_325.0)
            .unwrap()
            .liquid_density_kg_m3;
        let scf_per_gal = liquid * US_GALLON_M3 / (f.gas_density_standard_kg_m3() * CUBIC_FOOT_M3);
        println!("{id}: {scf_per_gal:.3} scf/gal (table {table})");
        assert_rel(&format!("{id} scf/gal"), scf_per_gal, table, 3e-3);
    }
}

/// Liquid-to-gas expansion ratio at ambient (saturated liquid at 1 atm over the gas at 20 °C, 1 atm):
/// CoolProp 8.0.0 gives N2 1:692.019, O2 1:857.261, Ar 1:839.679 (`PropsSI('D','P',101325,'Q',0,f) /
/// PropsSI('D','T',293.15,'P',101325,f)`), inside the 1:650 to 1:870 that safety data sheets quote
/// (from memory). Tolerance 1e-6 (the two implementations agree to 1e-9 in density).
#[test]
fn expansion_ratios_at_ambient() {
    for (id, want) in [
        (FluidId::Nitrogen, 692.018931),
        (FluidId::Oxygen, 857.261118),
        (FluidId::Argon, 839.678607),
    ] {
        let f = fluid(id);
        let liquid = f
            .saturation_from_pressure(101_325.0)
            .unwrap()
            .liquid_density_kg_m3;
        let gas = f
            .density_from_temperature_pressure(293.15, 101_325.0, fluids::Phase::Gas)
            .unwrap();
        assert_rel(&format!("{id} expansion ratio"), liquid / gas, want, 1e-6);
    }
}

/// Gas densities at the normal (0 °C, 101.325 kPa) and standard (70 °F, 14.696 psia) conditions against
/// CoolProp 8.0.0 (`PropsSI('D','T',T,'P',p,f)`), tolerance 1e-7; and the compressibility factor
/// Z = ρ_ideal / ρ at normal conditions: below 1 for all but hydrogen (Z = 1.00062; CoolProp 8.0.0).
#[test]
fn gas_densities_at_standard_conditions() {
    let table = [
        (FluidId::Nitrogen, 1.25038613, 1.1604241),
        (FluidId::Oxygen, 1.42903284, 1.32614504),
        (FluidId::Argon, 1.78395608, 1.65553114),
        (FluidId::CarbonDioxide, 1.97681274, 1.83228371),
        (FluidId::Methane, 0.717458777, 0.66562237),
        (FluidId::Hydrogen, 0.0898823764, 0.0834363232),
        (FluidId::Parahydrogen, 0.0898824651, 0.083436356),
    ];
    for (id, normal, standard) in table {
        let f = fluid(id);
        assert_rel(
            &format!("{id} Nm³ density"),
            f.gas_density_normal_kg_m3(),
            normal,
            1e-7,
        );
        assert_rel(
            &format!("{id} scf density"),
            f.gas_density_standard_kg_m3(),
            standard,
            1e-7,
        );
        let ideal = 101_325.0 * f.molar_mass_kg_mol() / (f.gas_constant_j_mol_k() * 273.15);
        let z = ideal / f.gas_density_normal_kg_m3();
        let hydrogen = matches!(id, FluidId::Hydrogen | FluidId::Parahydrogen);
        assert_eq!(z > 1.0, hydrogen, "{id}: Z = {z}");
    }
}
