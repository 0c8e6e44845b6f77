//! Liquid density from (T, p) (target < 1 µs) and gas density from (T, p).

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use fluids::{FluidId, Phase, fluid};

fn density(c: &mut Criterion) {
    for id in [FluidId::Nitrogen, FluidId::CarbonDioxide] {
        let f = fluid(id);
        let _ = f.prepare();
        let (tt, tc) = (f.triple().temperature_k, f.critical().temperature_k);
        // subcooled liquid: T from the triple point to 0.9 T_c, p 2 bar above p_sat(T) (a bulk tank's liquid)
        let liquid: Vec<(f64, f64)> = (0..64)
            .filter_map(|k| {
                let t = tt + 1.0 + (0.9 * tc - tt - 1.0) * f64::from(k) / 63.0;
                f.saturation_from_temperature(t)
                    .ok()
                    .map(|s| (t, s.pressure_pa + 2e5))
            })
            .collect();
        let mut i = 0usize;
        c.bench_function(
            &format!("density_from_temperature_pressure/liquid/{id}"),
            |b| {
                b.iter(|| {
                    i = (i + 1) % liquid.len();
                    let (t, p) = liquid[i];
                    black_box(f.density_from_temperature_pressure(
                        black_box(t),
                        black_box(p),
                        Phase::Liquid,
                    ))
                })
            },
        );
        // line gas: 288.15 K, 1 to 20 bar
        let gas: Vec<(f64, f64)> = (0..64)
            .map(|k| (288.15, 1e5 + 19e5 * f64::from(k) / 63.0))
            .collect();
        c.bench_function(
            &format!("density_from_temperature_pressure/gas/{id}"),
            |b| {
                b.iter(|| {
                    i = (i + 1) % gas.len();
                    let (t, p) = gas[i];
                    black_box(f.density_from_temperature_pressure(
                        black_box(t),
                        black_box(p),
                        Phase::Gas,
                    ))
                })
            },
        );
    }
}

criterion_group!(benches, density);
criterion_main!(benches);
