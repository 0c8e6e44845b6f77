//! Verdicts and paths of one tank's audit on constructed fills whose truth is known by construction
//! (mass conservation of an honest fill; common practice, no source): excess and inconclusive fills,
//! two fills between the same readings, a gauge with a zero offset, a strapping-table tank, methane and
//! hydrogen tanks, a measured liquid temperature.
#![allow(clippy::unwrap_used, clippy::expect_used)]

use audit::{
    AuditOptions, DeliveryInput, ReadingInput, TankInput, Verdict, audit_fleet, audit_tank,
};
use fluids::{FluidId, fluid};
use tank::{
    Conditions, ContentsOptions, Cylinder, Geometry, Head, LiquidState, Orientation,
    StrappingTable, Tank,
};

const H: i64 = 3_600_000;

/// Readings every 6 h for two days with one fill of `added_kg` liquid between hours 24 and 25; the
/// tank holds still otherwise (no use). Liquid saturated at the tank pressure throughout (fills at the
/// tank pressure, no heat-leak fit), so the total mass is known at every reading. Returns the input
/// and the mass that arrived (total after − total before).
fn one_fill(geometry: Geometry, id: FluidId, p_pa: f64, added_kg: f64) -> (TankInput, f64) {
    let engine = Tank::new(geometry, fluid(id));
    let c = Conditions::saturated(p_pa).with_liquid(LiquidState::SaturatedAtTankPressure);
    let opts = ContentsOptions::default();
    let full = engine.geometry.gross_volume_m3()
        * fluid(id)
            .saturation_from_pressure(p_pa)
            .unwrap()
            .liquid_density_kg_m3;
    let before_kg = 0.25 * full;
    let dp_before = engine.dp_from_liquid_mass(before_kg, &c, &opts).unwrap();
    let dp_after = engine
        .dp_from_liquid_mass(before_kg + added_kg, &c, &opts)
        .unwrap();
    let arrived = engine
        .contents_from_reading(dp_after, &c, &opts)
        .unwrap()
        .total_mass_kg
        - engine
            .contents_from_reading(dp_before, &c, &opts)
            .unwrap()
            .total_mass_kg;
    let readings = (0..=8)
        .map(|i| ReadingInput {
            time_ms: i * 6 * H,
            dp_pa: if i * 6 < 25 { dp_before } else { dp_after },
            pressure_pa: p_pa,
            liquid_temperature_k: None,
        })
        .collect();
    (input_of(engine, readings, arrived, p_pa), arrived)
}

/// The input of a tank with its readings and one ticket between hours 24 and 25.
fn input_of(
    engine: Tank<&'static fluids::Fluid>,
    readings: Vec<ReadingInput>,
    billed_kg: f64,
    p_pa: f64,
) -> TankInput {
    TankInput {
        name: "T".into(),
        tank: engine,
        ner_percent_per_day: Some(0.3),
        reorder_percent: Some(20.0),
        line_temperature_k: 288.15,
        dp_noise_u_pa: 5.0,
        readings,
        deliveries: vec![DeliveryInput {
            ticket: "K1".into(),
            vehicle: "V1".into(),
            carrier: "C".into(),
            start_ms: 24 * H + H / 4,
            end_ms: 24 * H + 3 * H / 4,
            billed_kg,
            supply_pressure_pa: Some(p_pa),
            meter_repeatability_percent: None,
        }],
        zone: Some(units::Zone::UTC),
    }
}

fn options() -> AuditOptions {
    AuditOptions {
        fit_ner: false,
        type_a: false,
        ..AuditOptions::default()
    }
}

fn vertical(head: Head) -> Geometry {
    Cylinder::new(Orientation::Vertical, 2.0, 5.0, head)
        .unwrap()
        .into()
}

fn verdict(input: &TankInput) -> audit::Balance {
    let opts = options();
    let fleet = audit_fleet(vec![audit_tank(input, &opts).unwrap()], &opts);
    fleet.fills[0].clone()
}

/// An honest fill closes; billed 5 % below what arrived is `excess`, 5 % above is `short`.
#[test]
fn honest_excess_and_short() {
    let (mut input, arrived) = one_fill(
        vertical(Head::ELLIPSOIDAL_2_1),
        FluidId::Nitrogen,
        9e5,
        6000.0,
    );
    let b = verdict(&input);
    assert_eq!(b.verdict, Verdict::Consistent, "{}", b.explanation);
    assert!(b.residual_kg.abs() < 1e-6 * arrived, "{}", b.residual_kg);
    input.deliveries[0].billed_kg = 0.95 * arrived;
    let b = verdict(&input);
    assert_eq!(b.verdict, Verdict::Excess, "{}", b.explanation);
    assert!(b.explanation.starts_with("Excess:"));
    input.deliveries[0].billed_kg = 1.05 * arrived;
    assert_eq!(verdict(&input).verdict, Verdict::Short);
}

/// No reading after the fill: `inconclusive`, and the sentence says why.
#[test]
fn no_reading_after_the_fill_is_inconclusive() {
    let (mut input, _) = one_fill(vertical(Head::Flat), FluidId::Argon, 8e5, 5000.0);
    input.readings.retain(|r| r.time_ms < 24 * H);
    let b = verdict(&input);
    assert_eq!(b.verdict, Verdict::Inconclusive);
    assert!(
        b.explanation.contains("no usable reading"),
        "{}",
        b.explanation
    );
}

/// Two tickets between the same two readings: each balance takes the other as delivered, and both
/// close (mass conservation).
#[test]
fn two_fills_between_the_same_readings() {
    let (mut input, arrived) = one_fill(
        vertical(Head::ELLIPSOIDAL_2_1),
        FluidId::Oxygen,
        10e5,
        7000.0,
    );
    let first = 0.4 * arrived;
    input.deliveries[0].billed_kg = first;
    input.deliveries.push(DeliveryInput {
        ticket: "K2".into(),
        start_ms: 24 * H + 5 * H / 6,
        end_ms: 24 * H + 11 * H / 12,
        billed_kg: arrived - first,
        ..input.deliveries[0].clone()
    });
    let opts = options();
    let fleet = audit_fleet(vec![audit_tank(&input, &opts).unwrap()], &opts);
    for b in &fleet.fills {
        assert_eq!(b.verdict, Verdict::Consistent, "{}", b.explanation);
        assert!(
            b.residual_kg.abs() < 1e-6 * arrived,
            "{}: {}",
            b.ticket,
            b.residual_kg
        );
        assert!(b.other_fills_kg > 0.0 && b.explanation.contains("other tickets"));
    }
}

/// A gauge reading 300 Pa high at zero: on a vertical flat-bottomed tank mass is linear in DP, so the
/// gain of a fill, and its balance, are unchanged (to 1e-9 of the fill).
#[test]
fn a_zero_offset_leaves_a_vertical_tanks_balance_unchanged() {
    let (input, arrived) = one_fill(vertical(Head::Flat), FluidId::Nitrogen, 9e5, 6000.0);
    let clean = verdict(&input);
    let mut shifted = input.clone();
    for r in &mut shifted.readings {
        r.dp_pa += 300.0;
    }
    let off = verdict(&shifted);
    assert!(
        (off.gained_kg - clean.gained_kg).abs() < 1e-9 * arrived,
        "{} {}",
        off.gained_kg,
        clean.gained_kg
    );
    assert_eq!(off.verdict, Verdict::Consistent);
}

/// A strapping-table tank (a vertical vessel whose maker gives level -> volume): an honest fill closes.
#[test]
fn a_strapping_table_tank() {
    let levels: Vec<f64> = (0..=10).map(|i| 0.5 * f64::from(i)).collect();
    let volumes: Vec<f64> = levels
        .iter()
        .map(|l| std::f64::consts::PI * l * (1.0 + 0.02 * l))
        .collect();
    let g: Geometry = StrappingTable::new(levels, volumes).unwrap().into();
    let (input, arrived) = one_fill(g, FluidId::Argon, 8e5, 5000.0);
    let b = verdict(&input);
    assert_eq!(b.verdict, Verdict::Consistent, "{}", b.explanation);
    assert!(b.residual_kg.abs() < 1e-6 * arrived);
}

/// Methane and normal hydrogen tanks: an honest fill closes (the equations of state of Setzmann and
/// Wagner 1991 and Leachman et al. 2009 through the same contents engine).
#[test]
fn methane_and_hydrogen_tanks() {
    for (id, p, added) in [
        (FluidId::Methane, 6e5, 2500.0),
        (FluidId::Hydrogen, 3e5, 300.0),
    ] {
        let (input, arrived) = one_fill(vertical(Head::ELLIPSOIDAL_2_1), id, p, added);
        let b = verdict(&input);
        assert_eq!(b.verdict, Verdict::Consistent, "{id}: {}", b.explanation);
        assert!(
            b.residual_kg.abs() < 1e-6 * arrived,
            "{id}: {}",
            b.residual_kg
        );
    }
}

/// A measured liquid temperature on a horizontal tank (where the liquid's density matters; a vertical
/// one reads nearly mass per area): the readings carry the (colder) liquid's temperature, the gain
/// counts the denser liquid, so a ticket billed from the same state closes, where the saturated state
/// at the tank pressure would differ by more than 1 %.
#[test]
fn a_measured_liquid_temperature_is_used() {
    let p = 12e5;
    let horizontal: Geometry =
        Cylinder::new(Orientation::Horizontal, 2.0, 6.0, Head::ELLIPSOIDAL_2_1)
            .unwrap()
            .into();
    let engine = Tank::new(horizontal, fluid(FluidId::Nitrogen));
    let cold_k = 90.0;
    let c_sat = Conditions::saturated(p).with_liquid(LiquidState::SaturatedAtTankPressure);
    let c_cold = Conditions::saturated(p).with_liquid(LiquidState::Temperature {
        temperature_k: cold_k,
    });
    let opts = ContentsOptions::default();
    let dp = engine.dp_from_liquid_mass(4000.0, &c_cold, &opts).unwrap();
    let dp0 = engine.dp_from_liquid_mass(1500.0, &c_cold, &opts).unwrap();
    let arrived = engine
        .contents_from_reading(dp, &c_cold, &opts)
        .unwrap()
        .total_mass_kg
        - engine
            .contents_from_reading(dp0, &c_cold, &opts)
            .unwrap()
            .total_mass_kg;
    let as_if_saturated = engine
        .contents_from_reading(dp, &c_sat, &opts)
        .unwrap()
        .total_mass_kg
        - engine
            .contents_from_reading(dp0, &c_sat, &opts)
            .unwrap()
            .total_mass_kg;
    assert!(
        (arrived / as_if_saturated - 1.0).abs() > 0.01,
        "{arrived} {as_if_saturated}"
    );
    let readings = (0..=8)
        .map(|i| ReadingInput {
            time_ms: i * 6 * H,
            dp_pa: if i * 6 < 25 { dp0 } else { dp },
            pressure_pa: p,
            liquid_temperature_k: Some(cold_k),
        })
        .collect();
    let input = input_of(engine, readings, arrived, p);
    let b = verdict(&input);
    assert_eq!(b.verdict, Verdict::Consistent, "{}", b.explanation);
    assert!(b.residual_kg.abs() < 1e-6 * arrived, "{}", b.residual_kg);
}
