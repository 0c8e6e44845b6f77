//! Property tests: no input makes anything panic, and whatever is returned is finite.

use fluids::{FluidId, Phase, SolverOptions, fluid};
use proptest::prelude::*;

fn any_fluid() -> impl Strategy<Value = FluidId> {
    prop::sample::select(FluidId::ALL.to_vec())
}

/// Any f64, with the interesting ranges over-represented.
fn any_value() -> impl Strategy<Value = f64> {
    prop_oneof![
        prop::num::f64::ANY,
        0.0f64..400.0,
        1.0f64..1e8,
        Just(f64::NAN),
        Just(-0.0),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]

    #[test]
    fn nothing_panics(id in any_fluid(), a in any_value(), b in any_value()) {
        let f = fluid(id);
        if let Ok(s) = f.saturation_from_temperature(a) {
            prop_assert!(s.pressure_pa.is_finite() && s.liquid_density_kg_m3 >= s.vapour_density_kg_m3);
        }
        if let Ok(s) = f.saturation_from_pressure(b) {
            prop_assert!(s.temperature_k.is_finite());
        }
        if let Ok(rho) = f.density_from_temperature_pressure(a, b, Phase::Liquid) {
            prop_assert!(rho.is_finite() && rho > 0.0);
        }
        if let Ok(rho) = f.density_from_temperature_pressure(a, b, Phase::Gas) {
            prop_assert!(rho.is_finite() && rho > 0.0);
        }
        let _ = f.phase_at(a, b);
        let _ = f.pressure_pa(a, b);
        let _ = f.enthalpy_j_kg(a, b);
        let _ = f.state(a, b);
        if let Ok(s) = f.saturation_from_liquid_enthalpy(a * 1e3) {
            prop_assert!(s.temperature_k.is_finite());
        }
        let _ = f.solve_saturation_from_temperature(a, &SolverOptions::default());
    }

    #[test]
    fn full_solver_from_pressure_never_panics(id in any_fluid(), p in any_value()) {
        let _ = fluid(id).solve_saturation_from_pressure(p, &SolverOptions { max_iter: 30, tol: 1e-10 });
    }
}
