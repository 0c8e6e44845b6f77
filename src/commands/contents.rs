//! `contents`: what a DP reading means for a tank given on the command line or taken from the store.

use super::fluids::{absolute_pa, barometer_pa};
use super::{Format, open_existing, print_json};
use anyhow::{Result, anyhow};
use clap::Args;
use fluids::{FluidId, fluid};
use serde::Serialize;
use std::process::ExitCode;
use tank::{
    AccuracyBasis, ChartComparison, Conditions, Contents, ContentsOptions, Cylinder, Gauge,
    GaugeAccuracy, HeadShape, LiquidState, Orientation, SafeFill, UncertaintyInputs,
};
use units::{parse_dp, parse_length, parse_temperature};

/// Arguments of `contents`.
#[derive(Args)]
#[command(group = clap::ArgGroup::new("liquid").args(["liquid_temperature", "liquid_saturation_pressure"]))]
pub struct ContentsArgs {
    /// Take the vessel, gauge and site barometer of this stored tank (with --db)
    #[arg(long, requires = "db", conflicts_with_all = ["fluid", "orientation", "diameter", "length", "heads"])]
    pub tank: Option<String>,
    /// Ledger holding --tank: a SQLite file or postgres://USER@HOST/DATABASE
    #[arg(long, value_name = "PATH|URL", requires = "tank")]
    pub db: Option<store::Location>,
    /// nitrogen, oxygen, argon, carbon-dioxide, methane, hydrogen or parahydrogen (or N2, O2, ...)
    #[arg(long, required_unless_present = "tank")]
    pub fluid: Option<FluidId>,
    /// Axis orientation: vertical or horizontal
    #[arg(long, required_unless_present = "tank")]
    pub orientation: Option<Orientation>,
    /// Inner diameter, e.g. "2.4 m", "94.5 in"
    #[arg(long, required_unless_present = "tank")]
    pub diameter: Option<String>,
    /// Straight shell length, tangent to tangent
    #[arg(long, required_unless_present = "tank")]
    pub length: Option<String>,
    /// Head shape: flat, hemispherical, ellipsoidal (2:1) or torispherical (ASME F&D)
    #[arg(long, required_unless_present = "tank")]
    pub heads: Option<HeadShape>,
    /// The gauge's DP, e.g. "85 inH2O", "2150 mmH2O", "21.2 kPa"
    #[arg(long)]
    pub dp: String,
    /// Tank pressure, gauge ("12 barg", "175 psig") or absolute ("13 bara", "1.3 MPa")
    #[arg(long, allow_hyphen_values = true)]
    pub pressure: String,
    /// Barometer (absolute); default 101.325 kPa, or the site's with --tank
    #[arg(long)]
    pub barometer: Option<String>,
    /// Measured liquid temperature (default: saturated at the tank pressure)
    #[arg(long, allow_hyphen_values = true)]
    pub liquid_temperature: Option<String>,
    /// The liquid's saturation pressure, below the tank pressure (e.g. just after a fill)
    #[arg(long)]
    pub liquid_saturation_pressure: Option<String>,
    /// Temperature of the gas in the sensing lines; default 15 C, or the tank's with --tank
    #[arg(long, allow_hyphen_values = true)]
    pub line_temperature: Option<String>,
    /// Gauge accuracy class, percent (of --gauge-span, else of reading); gives mass uncertainties
    #[arg(long)]
    pub gauge_accuracy: Option<f64>,
    /// Gauge span (full scale), e.g. "400 inH2O"
    #[arg(long)]
    pub gauge_span: Option<String>,
    /// Relief valve set pressure, for the safe-fill limit
    #[arg(long)]
    pub relief_pressure: Option<String>,
    /// Output format
    #[arg(long, value_enum, default_value_t)]
    pub format: Format,
}

#[derive(Serialize)]
struct Report {
    fluid: &'static str,
    #[serde(flatten)]
    contents: Contents,
    #[serde(skip_serializing_if = "Option::is_none")]
    chart: Option<ChartComparison>,
    #[serde(skip_serializing_if = "Option::is_none")]
    safe_fill: Option<SafeFill>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    cautions: Vec<&'static str>,
}

/// A dimension within the range a real tank has.
fn length_m(text: &str, flag: &'static str, range: &std::ops::RangeInclusive<f64>) -> Result<f64> {
    let l = parse_length(text)
        .map_err(|e| anyhow!("{flag}: {e}"))?
        .si()
        .m();
    Ok(tank::check_plausible(flag, l, range)?)
}

/// Run `contents`.
pub fn run(a: ContentsArgs) -> Result<ExitCode> {
    let dp = parse_dp(&a.dp).map_err(|e| anyhow!("--dp: {e}"))?;
    if dp.value < 0.0 {
        anyhow::bail!("--dp: a DP cannot be negative, got {}", a.dp);
    }
    let dp_pa = dp.si().pa();
    let stored = match (&a.tank, &a.db) {
        (Some(name), Some(db)) => Some(open_existing(db)?.tank_by_name(name)?),
        _ => None,
    };
    let (id, geometry, mut gauge, default_baro_pa, default_line_k) = match &stored {
        Some(t) => (
            t.spec.fluid,
            evaluate::geometry(&t.spec)?,
            evaluate::gauge(&t.spec)?,
            t.barometer_pa,
            t.spec.line_temperature_k(),
        ),
        None => {
            let need = |o: &Option<String>, f: &str| {
                o.clone()
                    .ok_or_else(|| anyhow!("{f} is required without --tank"))
            };
            let id = a
                .fluid
                .ok_or_else(|| anyhow!("--fluid is required without --tank"))?;
            let orientation = a.orientation.unwrap_or(Orientation::Vertical);
            let head = a.heads.unwrap_or(HeadShape::Torispherical).head(None, None);
            let d = need(&a.diameter, "--diameter")?;
            let d = length_m(&d, "--diameter", &tank::PLAUSIBLE_DIAMETER_M)?;
            let l = need(&a.length, "--length")?;
            let l = length_m(&l, "--length", &tank::PLAUSIBLE_LENGTH_M)?;
            let cyl = Cylinder::new(orientation, d, l, head)?;
            (
                id,
                cyl.into(),
                Gauge::default(),
                units::STANDARD_ATMOSPHERE_PA,
                units::CELSIUS_ZERO_K + 15.0,
            )
        }
    };
    if let Some(class) = a.gauge_accuracy {
        let basis = match &a.gauge_span {
            Some(s) => AccuracyBasis::Span(
                parse_dp(s)
                    .map_err(|e| anyhow!("--gauge-span: {e}"))?
                    .si()
                    .pa(),
            ),
            None => AccuracyBasis::Reading,
        };
        gauge.accuracy = Some(GaugeAccuracy::new(class, basis)?);
    }
    let barometer = barometer_pa(a.barometer.as_deref(), default_baro_pa)?;
    let p = absolute_pa(&a.pressure, barometer, "--pressure")?;
    let line_k = match &a.line_temperature {
        Some(t) => parse_temperature(t)
            .map_err(|e| anyhow!("--line-temperature: {e}"))?
            .si()
            .k(),
        None => default_line_k,
    };
    let liquid = match (&a.liquid_temperature, &a.liquid_saturation_pressure) {
        (Some(t), _) => LiquidState::Temperature {
            temperature_k: parse_temperature(t)
                .map_err(|e| anyhow!("--liquid-temperature: {e}"))?
                .si()
                .k(),
        },
        (None, Some(ps)) => LiquidState::SaturatedAtPressure {
            pressure_pa: absolute_pa(ps, barometer, "--liquid-saturation-pressure")?,
        },
        (None, None) => LiquidState::SaturatedAtTankPressure,
    };
    let conditions = Conditions::saturated(p)
        .with_liquid(liquid)
        .with_line_temperature_k(line_k);
    let engine = tank::Tank::new(geometry, fluid(id)).with_gauge(gauge);
    let opts = ContentsOptions::default();
    let contents = if gauge.accuracy.is_some() {
        engine
            .contents_with_uncertainty(dp_pa, &conditions, &UncertaintyInputs::default(), &opts)?
            .0
    } else {
        engine.contents_from_reading(dp_pa, &conditions, &opts)?
    };
    // A fixed chart for saturated liquid at 1 atm (for carbon dioxide, just above its triple point).
    let chart_pa = units::STANDARD_ATMOSPHERE_PA.max(fluid(id).triple().pressure_pa * 1.001);
    let chart = engine
        .chart_comparison(dp_pa, &conditions, chart_pa, &opts)
        .ok();
    let relief = match (&a.relief_pressure, &stored) {
        (Some(r), _) => Some(absolute_pa(r, barometer, "--relief-pressure")?),
        (None, Some(t)) => t.spec.relief_pressure.map(|e| {
            e.si()
                .to_absolute(units::AbsolutePressure::from_pa(barometer))
                .pa()
        }),
        (None, None) => None,
    };
    let safe_fill = match relief {
        Some(r) => {
            Some(engine.safe_fill_limit(&conditions, r, tank::DEFAULT_VAPOUR_FRACTION, &opts)?)
        }
        None => None,
    };
    let report = Report {
        fluid: id.name(),
        cautions: if safe_fill.is_some() {
            tank::CAUTIONS.to_vec()
        } else {
            Vec::new()
        },
        contents,
        chart,
        safe_fill,
    };
    match a.format {
        Format::Json => print_json(&report)?,
        Format::Table => print_table(&report, dp),
    }
    Ok(ExitCode::SUCCESS)
}

fn print_table(r: &Report, dp: units::Entered<units::DpUnit>) {
    let c = &r.contents;
    let u = |v: Option<f64>| v.map(|u| format!(" ± {u:.1}")).unwrap_or_default();
    println!(
        "{} tank, DP {} at {:.3} bara",
        r.fluid,
        dp,
        c.pressure_pa / 1e5
    );
    println!("  liquid height      {:>12.4} m", c.liquid_height_m);
    println!(
        "  fill               {:>12.2} % of gross volume",
        c.fill_fraction * 100.0
    );
    println!(
        "  liquid volume      {:>12.4} m3   (gross {:.4} m3)",
        c.liquid_volume_m3, c.gross_volume_m3
    );
    println!(
        "  liquid temperature {:>12.3} K    ({:.2} C)",
        c.liquid_temperature_k,
        c.liquid_temperature_k - 273.15
    );
    println!(
        "  liquid density     {:>12.3} kg/m3",
        c.liquid_density_kg_m3
    );
    println!(
        "  vapour density     {:>12.3} kg/m3",
        c.vapour_density_kg_m3
    );
    println!(
        "  liquid mass        {:>12.1} kg{}",
        c.liquid_mass_kg,
        u(c.liquid_mass_u_kg)
    );
    println!(
        "  vapour mass        {:>12.1} kg{}",
        c.vapour_mass_kg,
        u(c.vapour_mass_u_kg)
    );
    println!(
        "  total mass         {:>12.1} kg{}",
        c.total_mass_kg,
        u(c.total_mass_u_kg)
    );
    println!(
        "  gas equivalent     {:>12.1} Nm3  ({:.0} scf)",
        c.gas_nm3, c.gas_scf
    );
    if let Some(chart) = &r.chart {
        println!(
            "  a fixed chart says {:>12.1} kg   ({:+.2} % from the corrected mass; saturated at {:.3} bara)",
            chart.chart_mass_kg,
            chart.mass_error_fraction * 100.0,
            chart.reference_pressure_pa / 1e5
        );
    }
    if let Some(s) = &r.safe_fill {
        println!(
            "  safe-fill limit    {:>12.1} % of gross volume (relief {:.2} bara, {:.0} % vapour kept)",
            s.max_fill_fraction * 100.0,
            s.relief_pressure_pa / 1e5,
            s.vapour_fraction * 100.0
        );
        for caution in &r.cautions {
            println!("  caution: {caution}");
        }
    }
}
