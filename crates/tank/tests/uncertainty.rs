//! GUM propagation (JCGM 100:2008) against a Monte Carlo of the same model (JCGM 101:2008),
//! for one reading and for the difference of two readings of one gauge.

use fluids::{FluidId, fluid};
use tank::{
    AccuracyBasis, Conditions, ContentsOptions, Cylinder, Gauge, GaugeAccuracy, Head,
    InputDeviations, InputQuantity, LiquidState, Orientation, Tank, UncertaintyInputs,
};

/// SplitMix64 (Steele, Lea, Flood 2014), seeded: a deterministic stream for the test.
struct Rng(u64);

impl Rng {
    fn uniform(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Standard normal by Box–Muller.
    fn normal(&mut self) -> f64 {
        let (u1, u2) = (self.uniform().max(1e-300), self.uniform());
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    }
    /// Rectangular with standard deviation `u` (half-width u √3).
    fn rect(&mut self, u: f64) -> f64 {
        (2.0 * self.uniform() - 1.0) * u * 3f64.sqrt()
    }
}

fn setup() -> (Tank<&'static fluids::Fluid>, UncertaintyInputs) {
    let accuracy = GaugeAccuracy::new(2.0, AccuracyBasis::Span(40_000.0))
        .unwrap()
        .with_systematic_share(0.6)
        .unwrap();
    let tank = Tank::new(
        Cylinder::new(Orientation::Horizontal, 2.4, 9.0, Head::ASME_FD).unwrap(),
        fluid(FluidId::Nitrogen),
    )
    .with_gauge(Gauge {
        zero_offset_pa: 50.0,
        accuracy: Some(accuracy),
    });
    let inputs = UncertaintyInputs {
        dp_noise_u_pa: 40.0,
        pressure_u_pa: 8_000.0,
        liquid_state_u: 0.6,
        line_temperature_u_k: 8.0,
        diameter_u_m: 0.005,
        length_u_m: 0.01,
        strapping_volume_u_rel: 0.0,
    };
    (tank, inputs)
}

fn conditions(t_k: f64) -> Conditions {
    Conditions::saturated(9e5).with_liquid(LiquidState::Temperature { temperature_k: t_k })
}

/// Draw the independent deviations of one reading.
fn draw_independent(rng: &mut Rng, budget: &tank::UncertaintyBudget) -> InputDeviations {
    let u = |q| {
        budget
            .entries
            .iter()
            .find(|e| e.quantity == q)
            .map_or(0.0, |e| e.standard_uncertainty)
    };
    InputDeviations {
        dp_random_pa: rng.rect(u(InputQuantity::DpRepeatability))
            + rng.normal() * u(InputQuantity::DpNoise),
        pressure_pa: rng.normal() * u(InputQuantity::Pressure),
        liquid_state: rng.normal() * u(InputQuantity::LiquidTemperature),
        line_temperature_k: rng.normal() * u(InputQuantity::LineTemperature),
        ..InputDeviations::default()
    }
}

fn draw_shared(rng: &mut Rng, budget: &tank::UncertaintyBudget) -> InputDeviations {
    let u = |q| {
        budget
            .entries
            .iter()
            .find(|e| e.quantity == q)
            .map_or(0.0, |e| e.standard_uncertainty)
    };
    InputDeviations {
        dp_zero_pa: rng.rect(u(InputQuantity::DpZero)),
        diameter_m: rng.normal() * u(InputQuantity::Diameter),
        length_m: rng.normal() * u(InputQuantity::Length),
        ..InputDeviations::default()
    }
}

fn add(a: InputDeviations, b: InputDeviations) -> InputDeviations {
    InputDeviations {
        dp_zero_pa: a.dp_zero_pa + b.dp_zero_pa,
        dp_span_rel: a.dp_span_rel + b.dp_span_rel,
        dp_random_pa: a.dp_random_pa + b.dp_random_pa,
        pressure_pa: a.pressure_pa + b.pressure_pa,
        liquid_state: a.liquid_state + b.liquid_state,
        line_temperature_k: a.line_temperature_k + b.line_temperature_k,
        diameter_m: a.diameter_m + b.diameter_m,
        length_m: a.length_m + b.length_m,
        strapping_volume_rel: a.strapping_volume_rel + b.strapping_volume_rel,
    }
}

fn std_dev(xs: &[f64]) -> f64 {
    let n = xs.len() as f64;
    let mean = xs.iter().sum::<f64>() / n;
    (xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
}

const SAMPLES: usize = 20_000;

/// One reading: GUM standard uncertainty of total and liquid mass and liquid volume within 5 % of
/// the Monte Carlo standard deviation (20 000 draws, seeded; sampling error of a standard
/// deviation ~0.5 %). The acceptance tolerance is 5 %.
#[test]
fn gum_matches_monte_carlo_one_reading() {
    let (tank, inputs) = setup();
    let opts = ContentsOptions::default();
    let t_liq = fluid(FluidId::Nitrogen)
        .saturation_from_pressure(4e5)
        .unwrap()
        .temperature_k;
    let c = conditions(t_liq);
    let dp = tank.dp_from_level(1.3, &c).unwrap();
    let (contents, budget) = tank
        .contents_with_uncertainty(dp, &c, &inputs, &opts)
        .unwrap();
    let mut rng = Rng(0x5EED_0001);
    let (mut total, mut liquid, mut volume) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..SAMPLES {
        let dev = add(
            draw_shared(&mut rng, &budget),
            draw_independent(&mut rng, &budget),
        );
        let r = tank.contents_with_deviations(dp, &c, &dev, &opts).unwrap();
        total.push(r.total_mass_kg);
        liquid.push(r.liquid_mass_kg);
        volume.push(r.liquid_volume_m3);
    }
    for (name, gum, mc) in [
        ("total", contents.total_mass_u_kg.unwrap(), std_dev(&total)),
        (
            "liquid",
            contents.liquid_mass_u_kg.unwrap(),
            std_dev(&liquid),
        ),
        (
            "volume",
            contents.liquid_volume_u_m3.unwrap(),
            std_dev(&volume),
        ),
    ] {
        assert!(
            (gum / mc - 1.0).abs() < 0.05,
            "{name}: GUM {gum}, Monte Carlo {mc}"
        );
    }
    // Every input of the budget is there and contributes.
    // zero, repeatability, noise, pressure, liquid temperature, line temperature, D, L
    assert_eq!(budget.entries.len(), 8);
    assert!(
        budget
            .entries
            .iter()
            .all(|e| e.contribution().total_mass_kg > 0.0)
    );
    let sum_sq: f64 = [
        budget.shared.total_mass_kg,
        budget.independent.total_mass_kg,
    ]
    .iter()
    .map(|x| x * x)
    .sum();
    assert!((sum_sq.sqrt() / budget.combined.total_mass_kg - 1.0).abs() < 1e-12);
}

/// Two readings of one gauge (before/after a fill): the difference's GUM uncertainty within 5 %
/// of a Monte Carlo that draws the shared inputs once per pair; and it is clearly smaller than
/// treating the readings as independent (the zero error and geometry cancel in part).
#[test]
fn gum_matches_monte_carlo_difference() {
    let (tank, inputs) = setup();
    let opts = ContentsOptions::default();
    let n2 = fluid(FluidId::Nitrogen);
    let c1 = conditions(n2.saturation_from_pressure(6e5).unwrap().temperature_k);
    let c2 = conditions(n2.saturation_from_pressure(3e5).unwrap().temperature_k);
    let dp1 = tank.dp_from_level(0.5, &c1).unwrap();
    let dp2 = tank.dp_from_level(1.9, &c2).unwrap();
    let diff = tank
        .difference_uncertainty((dp1, &c1), (dp2, &c2), &inputs, &opts)
        .unwrap();
    let (_, b1) = tank
        .contents_with_uncertainty(dp1, &c1, &inputs, &opts)
        .unwrap();
    let (_, b2) = tank
        .contents_with_uncertainty(dp2, &c2, &inputs, &opts)
        .unwrap();
    let mut rng = Rng(0x5EED_0002);
    let mut d = Vec::new();
    for _ in 0..SAMPLES {
        let shared = draw_shared(&mut rng, &b1);
        let r1 = tank
            .contents_with_deviations(
                dp1,
                &c1,
                &add(shared, draw_independent(&mut rng, &b1)),
                &opts,
            )
            .unwrap();
        let r2 = tank
            .contents_with_deviations(
                dp2,
                &c2,
                &add(shared, draw_independent(&mut rng, &b2)),
                &opts,
            )
            .unwrap();
        d.push(r2.total_mass_kg - r1.total_mass_kg);
    }
    let mc = std_dev(&d);
    let gum = diff.combined.total_mass_kg;
    assert!((gum / mc - 1.0).abs() < 0.05, "GUM {gum}, Monte Carlo {mc}");
    let naive = (b1.combined.total_mass_kg.powi(2) + b2.combined.total_mass_kg.powi(2)).sqrt();
    assert!(
        gum < 0.95 * naive,
        "difference {gum} vs independent {naive}"
    );
}

/// A pure zero error cancels exactly in the difference of two identical readings (GUM with
/// correlation coefficient 1: c1 − c2 = 0). Tolerance 1e-9 kg.
#[test]
fn shared_zero_error_cancels() {
    let accuracy = GaugeAccuracy::new(1.0, AccuracyBasis::Span(30_000.0))
        .unwrap()
        .with_systematic_share(1.0)
        .unwrap();
    let tank = Tank::new(
        Cylinder::new(Orientation::Vertical, 2.0, 6.0, Head::ELLIPSOIDAL_2_1).unwrap(),
        fluid(FluidId::Argon),
    )
    .with_gauge(Gauge {
        zero_offset_pa: 0.0,
        accuracy: Some(accuracy),
    });
    let c = Conditions::saturated(7e5);
    let opts = ContentsOptions::default();
    let dp = tank.dp_from_level(3.0, &c).unwrap();
    let diff = tank
        .difference_uncertainty((dp, &c), (dp, &c), &UncertaintyInputs::default(), &opts)
        .unwrap();
    assert!(
        diff.combined.total_mass_kg.abs() < 1e-9,
        "{}",
        diff.combined.total_mass_kg
    );
    let (one, _) = tank
        .contents_with_uncertainty(dp, &c, &UncertaintyInputs::default(), &opts)
        .unwrap();
    assert!(one.total_mass_u_kg.unwrap() > 1.0);
}
