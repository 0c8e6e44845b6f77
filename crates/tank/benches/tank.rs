//! Benchmarks of the tank engine: one reading to contents, and a million readings.

// Test code: a failed set-up should panic loudly.
#![allow(clippy::unwrap_used)]

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use fluids::{FluidId, fluid};
use tank::{Conditions, ContentsOptions, Cylinder, Head, LiquidState, Orientation, Tank};

fn bench(c: &mut Criterion) {
    let n2 = fluid(FluidId::Nitrogen);
    // Build the fast saturation curves before timing.
    let _ = n2.saturation_from_pressure(5e5);
    let opts = ContentsOptions::default();
    let horizontal = Tank::new(
        Cylinder::new(Orientation::Horizontal, 2.4, 9.0, Head::ASME_FD).unwrap(),
        n2,
    );
    let vertical = Tank::new(
        Cylinder::new(Orientation::Vertical, 2.4, 9.0, Head::ELLIPSOIDAL_2_1).unwrap(),
        n2,
    );
    let sat = Conditions::saturated(9e5);
    let cold = sat.with_liquid(LiquidState::SaturatedAtPressure { pressure_pa: 4e5 });
    let dp_h = horizontal.dp_from_level(1.3, &sat).unwrap();
    let dp_v = vertical.dp_from_level(5.0, &sat).unwrap();

    c.bench_function("contents/vertical-2:1/saturated", |b| {
        b.iter(|| vertical.contents_from_reading(black_box(dp_v), &sat, &opts))
    });
    c.bench_function("contents/horizontal-fd/saturated", |b| {
        b.iter(|| horizontal.contents_from_reading(black_box(dp_h), &sat, &opts))
    });
    c.bench_function("contents/horizontal-fd/subcooled", |b| {
        b.iter(|| horizontal.contents_from_reading(black_box(dp_h), &cold, &opts))
    });

    // A million readings of one tank with varying DP and pressure (as an import would bring).
    let readings: Vec<(f64, Conditions)> = (0..1_000_000)
        .map(|i| {
            let x = f64::from(i) / 1e6;
            (
                dp_h * (0.2 + 0.7 * x),
                Conditions::saturated(5e5 + 8e5 * ((x * 7919.0).fract())),
            )
        })
        .collect();
    let mut group = c.benchmark_group("million");
    group.sample_size(10);
    group.bench_function("horizontal-fd/saturated", |b| {
        b.iter(|| {
            let mut sum = 0.0;
            for (dp, cond) in &readings {
                if let Ok(r) = horizontal.contents_from_reading(*dp, cond, &opts) {
                    sum += r.total_mass_kg;
                }
            }
            black_box(sum)
        })
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
