//! Saturation from pressure: fast curves (target < 100 ns) vs the full solver; saturation from temperature
//! by the fast curves; and the one-off cost of fitting the curves.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use fluids::{Fluid, FluidId, SolverOptions, fluid};

/// Pressures spread over the curve, so that several pieces are visited.
fn pressures(f: &Fluid) -> Vec<f64> {
    let (pt, pc) = (f.triple().pressure_pa, f.critical().pressure_pa);
    (0..64)
        .map(|i| pt * (0.99 * pc / pt).powf(f64::from(i) / 63.0))
        .collect()
}

fn saturation(c: &mut Criterion) {
    for id in [FluidId::Nitrogen, FluidId::CarbonDioxide] {
        let f = fluid(id);
        let _ = f.prepare();
        let ps = pressures(f);
        let mut i = 0usize;
        c.bench_function(&format!("saturation_from_pressure/fast/{id}"), |b| {
            b.iter(|| {
                i = (i + 1) % ps.len();
                black_box(f.saturation_from_pressure(black_box(ps[i])))
            })
        });
        let opts = SolverOptions::default();
        c.bench_function(&format!("saturation_from_pressure/full/{id}"), |b| {
            b.iter(|| {
                i = (i + 1) % ps.len();
                black_box(f.solve_saturation_from_pressure(black_box(ps[i]), &opts))
            })
        });
        let (tt, tc) = (f.triple().temperature_k, f.critical().temperature_k);
        let ts: Vec<f64> = (0..64)
            .map(|k| tt + (0.99 * tc - tt) * f64::from(k) / 63.0)
            .collect();
        c.bench_function(&format!("saturation_from_temperature/fast/{id}"), |b| {
            b.iter(|| {
                i = (i + 1) % ts.len();
                black_box(f.saturation_from_temperature(black_box(ts[i])))
            })
        });
        c.bench_function(&format!("saturation_from_temperature/full/{id}"), |b| {
            b.iter(|| {
                i = (i + 1) % ts.len();
                black_box(f.solve_saturation_from_temperature(black_box(ts[i]), &opts))
            })
        });
    }
}

criterion_group!(benches, saturation);
criterion_main!(benches);
