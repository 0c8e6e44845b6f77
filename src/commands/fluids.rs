//! `saturation` and `state`: the fluid property engine on the command line.

use super::{Format, print_json};
use anyhow::{Result, anyhow};
use clap::Args;
use fluids::{FluidId, Saturation, StateReport, fluid};
use std::process::ExitCode;
use units::{AbsolutePressure, parse_tank_pressure, parse_temperature};

/// Arguments of `saturation`.
#[derive(Args)]
#[command(group = clap::ArgGroup::new("given").required(true).args(["temperature", "pressure"]))]
pub struct SaturationArgs {
    /// nitrogen, oxygen, argon, carbon-dioxide, methane, hydrogen or parahydrogen
    #[arg(long)]
    pub fluid: String,
    /// Saturation temperature, e.g. "77.4 K", "-195.8 C"
    #[arg(long, allow_hyphen_values = true)]
    pub temperature: Option<String>,
    /// Saturation pressure, absolute ("10 bara", "1000 kPa") or gauge against --barometer ("9 barg")
    #[arg(long, allow_hyphen_values = true)]
    pub pressure: Option<String>,
    /// Barometer for gauge pressures
    #[arg(long, default_value = "101.325 kPa")]
    pub barometer: String,
    /// Output format
    #[arg(long, value_enum, default_value_t)]
    pub format: Format,
}

/// Arguments of `state`.
#[derive(Args)]
pub struct StateArgs {
    /// nitrogen, oxygen, argon, carbon-dioxide, methane, hydrogen or parahydrogen
    #[arg(long)]
    pub fluid: String,
    /// Temperature, e.g. "90 K", "15 C"
    #[arg(long, allow_hyphen_values = true)]
    pub temperature: String,
    /// Pressure, absolute ("10 bara") or gauge against --barometer ("9 barg")
    #[arg(long, allow_hyphen_values = true)]
    pub pressure: String,
    /// Barometer for gauge pressures
    #[arg(long, default_value = "101.325 kPa")]
    pub barometer: String,
    /// Output format
    #[arg(long, value_enum, default_value_t)]
    pub format: Format,
}

/// A fluid by its CSV name.
pub fn parse_fluid(name: &str) -> Result<FluidId> {
    name.parse::<FluidId>().map_err(|e| anyhow!("--fluid: {e}"))
}

/// A saturation state as printed with `--format json` (field names are the command line's contract;
/// `tools/fluids_crosscheck.py` reads them).
#[derive(serde::Serialize)]
struct SaturationOut<'a> {
    fluid: &'static str,
    #[serde(flatten)]
    sat: &'a Saturation,
    latent_heat_j_kg: f64,
}

/// The barometer given as text (absolute), or `default_pa`.
pub fn barometer_pa(text: Option<&str>, default_pa: f64) -> Result<f64> {
    match text {
        Some(t) => Ok(units::parse_absolute_pressure(t)
            .map_err(|e| anyhow!("--barometer: {e}"))?
            .pa()),
        None => Ok(default_pa),
    }
}

/// An absolute pressure from gauge or absolute text, with the barometer for gauge pressures.
pub fn absolute_pa(text: &str, barometer_pa: f64, flag: &str) -> Result<f64> {
    let p = parse_tank_pressure(text).map_err(|e| anyhow!("{flag}: {e}"))?;
    Ok(p.si()
        .to_absolute(AbsolutePressure::from_pa(barometer_pa))
        .pa())
}

/// Run `saturation`.
pub fn saturation(a: SaturationArgs) -> Result<ExitCode> {
    let id = parse_fluid(&a.fluid)?;
    let f = fluid(id);
    let sat = match (&a.temperature, &a.pressure) {
        (Some(t), _) => {
            let t = parse_temperature(t).map_err(|e| anyhow!("--temperature: {e}"))?;
            f.saturation_from_temperature(t.si().k())?
        }
        (None, Some(p)) => f.saturation_from_pressure(absolute_pa(
            p,
            barometer_pa(Some(&a.barometer), 0.0)?,
            "--pressure",
        )?)?,
        (None, None) => anyhow::bail!("give --temperature or --pressure"),
    };
    let r = SaturationOut {
        fluid: id.name(),
        sat: &sat,
        latent_heat_j_kg: sat.latent_heat_j_kg(),
    };
    match a.format {
        Format::Json => print_json(&r)?,
        Format::Table => {
            println!("{} at saturation", id.name());
            println!(
                "  temperature        {:>14.4} K  ({:.2} C)",
                sat.temperature_k,
                sat.temperature_k - 273.15
            );
            println!(
                "  pressure           {:>14.2} Pa ({:.4} bara)",
                sat.pressure_pa,
                sat.pressure_pa / 1e5
            );
            println!(
                "  liquid density     {:>14.3} kg/m3",
                sat.liquid_density_kg_m3
            );
            println!(
                "  vapour density     {:>14.4} kg/m3",
                sat.vapour_density_kg_m3
            );
            println!("  latent heat        {:>14.1} J/kg", r.latent_heat_j_kg);
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// Run `state`.
pub fn state(a: StateArgs) -> Result<ExitCode> {
    let id = parse_fluid(&a.fluid)?;
    let t = parse_temperature(&a.temperature).map_err(|e| anyhow!("--temperature: {e}"))?;
    let p = absolute_pa(
        &a.pressure,
        barometer_pa(Some(&a.barometer), 0.0)?,
        "--pressure",
    )?;
    let r = StateReport::at(fluid(id), t.si().k(), p)?;
    match a.format {
        Format::Json => print_json(&r)?,
        Format::Table => {
            println!("{} at {} and {}", id.name(), a.temperature, a.pressure);
            println!("  phase              {:>14}", r.phase);
            println!(
                "  temperature        {:>14.4} K  ({:.2} C)",
                r.temperature_k,
                r.temperature_k - 273.15
            );
            println!(
                "  pressure           {:>14.2} Pa ({:.4} bara)",
                r.pressure_pa,
                r.pressure_pa / 1e5
            );
            println!("  density            {:>14.4} kg/m3", r.density_kg_m3);
            println!("  enthalpy           {:>14.1} J/kg", r.enthalpy_j_kg);
        }
    }
    Ok(ExitCode::SUCCESS)
}
