//! `audit`: fill balances, gauge drift, vehicle bias and forecasts over a stored fleet.
//!
//! Tanks stream through the engine in batches (read from the store in this thread, audited on worker
//! threads), so memory holds one batch of readings and every tank's balances, not the whole history.

use std::collections::HashMap;
use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Context, Result};
use audit::{AuditOptions, DeliveryInput, FleetAudit, ReadingInput, TankAudit, TankInput};
use clap::{Args, ValueEnum};
use units::{AbsolutePressure, DpUnit, GasBasis, Unit};

/// Output format of `audit`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum, Default)]
pub enum AuditFormat {
    /// Readable tables: fills, gauges, vehicles, findings, forecasts.
    #[default]
    Table,
    /// JSON (compact): {"fills", "gauges", "vehicles", "findings", "tanks"}, SI with units in the names.
    Json,
    /// CSV of the fills (one balance a row).
    Csv,
}

/// Arguments of `audit`.
#[derive(Args)]
pub struct AuditArgs {
    /// Database file
    #[arg(long, value_name = "PATH")]
    pub db: PathBuf,
    /// Only this tank (its name); fleet statistics then cover it alone
    #[arg(long, value_name = "NAME")]
    pub tank: Option<String>,
    /// Only fills starting on or after this date (YYYY-MM-DD or RFC 3339); earlier readings still
    /// feed the thermal history and the usage model
    #[arg(long, value_name = "DATE")]
    pub since: Option<String>,
    /// Output format
    #[arg(long, value_enum, default_value_t = AuditFormat::Table)]
    pub format: AuditFormat,
    /// Coverage factor k of the verdicts
    #[arg(long, default_value_t = 2.0, value_name = "K")]
    pub coverage_factor: f64,
    /// Smallest residual that can make a fill short or excess, % of billed
    #[arg(long, default_value_t = 1.0, value_name = "PERCENT")]
    pub materiality_percent: f64,
    /// Default meter repeatability of the vehicles (standard uncertainty, % of delivered)
    #[arg(long, default_value_t = 0.5, value_name = "PERCENT")]
    pub meter_repeatability_percent: f64,
    /// Legal tolerance of the vehicle meters, %
    #[arg(long, default_value_t = 1.5, value_name = "PERCENT")]
    pub legal_tolerance_percent: f64,
    /// How far from a fill a bracketing reading may be, hours
    #[arg(long, default_value_t = 6.0, value_name = "HOURS")]
    pub window_hours: f64,
    /// Assume the liquid saturated at the tank pressure (no thermal history; for comparison)
    #[arg(long)]
    pub no_thermal_history: bool,
    /// Keep each tank's NER setting (no fit)
    #[arg(long)]
    pub no_ner_fit: bool,
    /// Worker threads (default: the machine's cores)
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
}

/// Resolution of a DP entered in `unit` as a standard uncertainty (step / √12; the steps are what
/// gauges commonly display: common practice, no source).
fn dp_resolution_u_pa(unit: DpUnit) -> f64 {
    let step = match unit {
        DpUnit::InH2O | DpUnit::InH2O60F | DpUnit::InH2O4C => 0.1,
        DpUnit::MmH2O | DpUnit::Pa | DpUnit::Mbar => 1.0,
        DpUnit::KPa | DpUnit::Psi => 0.01,
        DpUnit::Bar => 0.001,
    };
    unit.si_from_value(step) / 12f64.sqrt()
}

/// Milliseconds since the epoch of `YYYY-MM-DD` (midnight UTC) or an RFC 3339 time.
fn parse_since(text: &str) -> Result<i64> {
    let t = text.trim();
    let full = if t.len() == 10 {
        format!("{t}T00:00:00Z")
    } else {
        t.to_string()
    };
    store::Stamp::parse(&full)
        .map(|s| s.ms)
        .map_err(|e| anyhow::anyhow!("--since: {e}"))
}

/// The audit inputs of a stored tank.
fn tank_input(
    st: &store::Store,
    t: &store::Tank,
    stored_deliveries: Vec<store::Delivery>,
    meters: &HashMap<String, Option<f64>>,
    since_ms: Option<i64>,
    opts: &AuditOptions,
) -> Result<TankInput> {
    let engine =
        ledger::engine_tank(&t.spec).with_context(|| format!("tank {}: settings", t.spec.name))?;
    let f = engine.fluid;
    // readings from a usage window before `since` feed the history and the usage model
    let from = since_ms.map(|s| s - ((opts.usage_window_days + 30.0) * 86_400_000.0) as i64);
    let readings = st
        .readings(t.id, from.map(|f| (f, i64::MAX)))?
        .into_iter()
        .map(|r| ReadingInput {
            time_ms: r.input.time.ms,
            dp_pa: r.input.dp.si_value(),
            pressure_pa: ledger::pressure_abs_pa(t, &r.input),
            liquid_temperature_k: r.input.liquid_temperature_k,
        })
        .collect();
    let barometer = AbsolutePressure::from_pa(t.barometer_pa);
    let deliveries = stored_deliveries
        .into_iter()
        .filter(|d| since_ms.is_none_or(|s| d.input.start.ms >= s))
        .map(|d| {
            let i = d.input;
            let billed_kg = i.quantity.si().mass_kg(|basis| match basis {
                GasBasis::Normal => f.gas_density_normal_kg_m3(),
                GasBasis::Standard => f.gas_density_standard_kg_m3(),
            });
            DeliveryInput {
                ticket: i.ticket,
                meter_repeatability_percent: meters.get(&i.vehicle).copied().flatten(),
                vehicle: i.vehicle,
                carrier: i.carrier,
                start_ms: i.start.ms,
                end_ms: i.end.ms,
                billed_kg,
                supply_pressure_pa: i
                    .supply_pressure
                    .map(|p| p.si().to_absolute(barometer).pa()),
            }
        })
        .collect();
    Ok(TankInput {
        name: t.spec.name.clone(),
        ner_percent_per_day: t.spec.ner_percent_per_day,
        reorder_percent: t.spec.reorder_percent,
        line_temperature_k: t.spec.line_temperature_k(),
        dp_noise_u_pa: dp_resolution_u_pa(t.spec.dp_unit),
        tank: engine,
        readings,
        deliveries,
    })
}

fn options(a: &AuditArgs) -> AuditOptions {
    AuditOptions {
        thermal_history: !a.no_thermal_history,
        fit_ner: !a.no_ner_fit,
        coverage_factor: a.coverage_factor,
        materiality_fraction: a.materiality_percent / 100.0,
        meter_repeatability_percent: a.meter_repeatability_percent,
        legal_tolerance: a.legal_tolerance_percent / 100.0,
        bracket_window_s: a.window_hours * 3600.0,
        ..AuditOptions::default()
    }
}

/// Audit the stored fleet (or one tank): the engine's result.
pub fn audit_store(
    st: &store::Store,
    tank: Option<&str>,
    since_ms: Option<i64>,
    opts: &AuditOptions,
    threads: usize,
) -> Result<FleetAudit> {
    let tanks = match tank {
        Some(name) => vec![st.tank_by_name(name)?],
        None => st.tanks()?,
    };
    // every delivery in one query, grouped by tank (one query a tank would scan them all each time)
    let mut by_tank: HashMap<i64, Vec<store::Delivery>> = HashMap::new();
    for d in st.deliveries(None)? {
        by_tank.entry(d.tank_id).or_default().push(d);
    }
    // the density tables cost about half a second to build and pay off only on large fleets
    let large = AuditOptions {
        exact_properties: opts.exact_properties || tanks.len() < 500,
        ..opts.clone()
    };
    let opts = &large;
    let meters: HashMap<String, Option<f64>> = st
        .vehicles()?
        .into_iter()
        .map(|v| (v.name, v.meter_repeatability_percent))
        .collect();
    // a pipeline: this thread reads tanks from the store, workers audit them as they come
    let threads = threads.max(1);
    let (send, recv) = std::sync::mpsc::sync_channel::<(usize, TankInput)>(4 * threads);
    let recv = std::sync::Mutex::new(recv);
    let (audits, loaded) = std::thread::scope(|s| {
        let workers: Vec<_> = (0..threads)
            .map(|_| {
                let recv = &recv;
                s.spawn(move || {
                    let mut done: Vec<(usize, Result<TankAudit, audit::AuditError>)> = Vec::new();
                    loop {
                        let next = match recv.lock() {
                            Ok(r) => r.recv(),
                            Err(_) => break,
                        };
                        let Ok((i, input)) = next else { break };
                        done.push((i, audit::audit_tank(&input, opts)));
                    }
                    done
                })
            })
            .collect();
        let mut loaded: Result<()> = Ok(());
        let mut load_s = 0.0;
        for (i, t) in tanks.iter().enumerate() {
            let t0 = std::time::Instant::now();
            let stored = by_tank.remove(&t.id).unwrap_or_default();
            let input = tank_input(st, t, stored, &meters, since_ms, opts);
            load_s += t0.elapsed().as_secs_f64();
            match input {
                Ok(input) => {
                    if send.send((i, input)).is_err() {
                        break;
                    }
                }
                Err(e) => {
                    loaded = Err(e);
                    break;
                }
            }
        }
        drop(send);
        if std::env::var_os("CRYOLEDGER_TIMING").is_some() {
            eprintln!("timing: reading the store {load_s:.2} s");
        }
        let mut all: Vec<(usize, Result<TankAudit, audit::AuditError>)> = Vec::new();
        for w in workers {
            all.extend(w.join().unwrap_or_default());
        }
        (all, loaded)
    });
    loaded?;
    let mut audits = audits;
    audits.sort_by_key(|a| a.0);
    let audits = audits
        .into_iter()
        .map(|(_, r)| r)
        .collect::<Result<Vec<_>, _>>()?;
    let t0 = std::time::Instant::now();
    let fleet = audit::audit_fleet(audits, opts);
    if std::env::var_os("CRYOLEDGER_TIMING").is_some() {
        eprintln!(
            "timing: fleet statistics {:.2} s",
            t0.elapsed().as_secs_f64()
        );
    }
    Ok(fleet)
}

/// Run `audit`.
pub fn run(a: AuditArgs) -> Result<ExitCode> {
    let st = super::open_existing(&a.db)?;
    let since = a.since.as_deref().map(parse_since).transpose()?;
    let opts = options(&a);
    let threads = a.threads.unwrap_or_else(|| {
        std::thread::available_parallelism().map_or(1, std::num::NonZeroUsize::get)
    });
    let fleet = audit_store(&st, a.tank.as_deref(), since, &opts, threads)?;
    let mut out = std::io::BufWriter::new(std::io::stdout().lock());
    match a.format {
        AuditFormat::Json => {
            write_json(&mut out, &fleet)?;
        }
        AuditFormat::Csv => csv(&mut out, &fleet)?,
        AuditFormat::Table => table(&mut out, &fleet)?,
    }
    out.flush()?;
    Ok(ExitCode::SUCCESS)
}

fn when(ms: i64) -> String {
    store::Stamp::from_ms(ms).text
}

/// A fill as written in JSON: the balance with readable times beside the ms.
#[derive(serde::Serialize)]
struct FillOut<'a> {
    #[serde(flatten)]
    balance: &'a audit::Balance,
    start: String,
    end: String,
}

/// A tank summary as written in JSON, with the forecast's readable times.
#[derive(serde::Serialize)]
struct TankOut<'a> {
    #[serde(flatten)]
    summary: &'a audit::TankSummary,
    next_fill: Option<String>,
    reorder_at: Option<String>,
}

/// The JSON document, written as it is serialized (no copy of the result in memory).
#[derive(serde::Serialize)]
struct JsonOut<'a> {
    fills: Vec<FillOut<'a>>,
    gauges: &'a [audit::GaugeFinding],
    vehicles: &'a [audit::VehicleFinding],
    findings: &'a [audit::Finding],
    tanks: Vec<TankOut<'a>>,
}

fn write_json(out: &mut impl Write, fleet: &FleetAudit) -> Result<()> {
    let doc = JsonOut {
        fills: fleet
            .fills
            .iter()
            .map(|b| FillOut {
                balance: b,
                start: when(b.start_ms),
                end: when(b.end_ms),
            })
            .collect(),
        gauges: &fleet.gauges,
        vehicles: &fleet.vehicles,
        findings: &fleet.findings,
        tanks: fleet
            .tanks
            .iter()
            .map(|t| TankOut {
                summary: t,
                next_fill: t.forecast.map(|f| when(f.next_fill_ms)),
                reorder_at: t.forecast.map(|f| when(f.reorder_at_ms)),
            })
            .collect(),
    };
    serde_json::to_writer(&mut *out, &doc)?;
    writeln!(out)?;
    Ok(())
}

fn quote(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn csv(out: &mut impl Write, fleet: &FleetAudit) -> Result<()> {
    writeln!(
        out,
        "ticket,tank,vehicle,carrier,start,end,verdict,billed_kg,gained_kg,drawn_kg,residual_kg,residual_percent,sigma_kg,limit_kg,ratio,explanation"
    )?;
    for b in &fleet.fills {
        writeln!(
            out,
            "{},{},{},{},{},{},{},{:.1},{:.1},{:.1},{:.1},{:.2},{:.1},{:.1},{:.4},{}",
            quote(&b.ticket),
            quote(&b.tank),
            quote(&b.vehicle),
            quote(&b.carrier),
            when(b.start_ms),
            when(b.end_ms),
            b.verdict.as_str(),
            b.billed_kg,
            b.gained_kg,
            b.drawn_kg,
            b.residual_kg,
            b.residual_percent,
            b.sigma_kg,
            b.limit_kg,
            b.ratio,
            quote(&b.explanation)
        )?;
    }
    Ok(())
}

fn opt(x: Option<f64>, decimals: usize) -> String {
    x.map_or_else(|| "-".to_string(), |v| format!("{v:.decimals$}"))
}

fn table(out: &mut impl Write, fleet: &FleetAudit) -> Result<()> {
    writeln!(out, "Fills ({})", fleet.fills.len())?;
    writeln!(
        out,
        "{:<12} {:<14} {:<10} {:<20} {:<13} {:>9} {:>9} {:>7} {:>9} {:>7}",
        "ticket",
        "tank",
        "vehicle",
        "start",
        "verdict",
        "billed kg",
        "gained kg",
        "drawn",
        "residual",
        "sigma"
    )?;
    for b in &fleet.fills {
        writeln!(
            out,
            "{:<12} {:<14} {:<10} {:<20} {:<13} {:>9.0} {:>9.0} {:>7.0} {:>9.0} {:>7.0}",
            b.ticket,
            b.tank,
            b.vehicle,
            when(b.start_ms),
            b.verdict.as_str(),
            b.billed_kg,
            b.gained_kg,
            b.drawn_kg,
            b.residual_kg,
            b.sigma_kg
        )?;
    }
    writeln!(out, "\nGauges")?;
    writeln!(
        out,
        "{:<14} {:<16} {:>5} {:>14} {:>10} {:>10} {:>12}",
        "tank", "status", "fills", "drift %/year", "p", "p (Holm)", "NER fit %/d"
    )?;
    for g in &fleet.gauges {
        let status = serde_json::to_value(g.status)?;
        writeln!(
            out,
            "{:<14} {:<16} {:>5} {:>14} {:>10} {:>10} {:>12}",
            g.tank,
            status.as_str().unwrap_or("?"),
            g.fills,
            opt(g.drift_percent_per_year, 2),
            opt(g.p_value, 4),
            opt(g.p_adjusted, 4),
            opt(g.ner_fitted_percent_per_day, 3)
        )?;
    }
    writeln!(out, "\nVehicles")?;
    writeln!(
        out,
        "{:<10} {:<28} {:<16} {:>5} {:>8} {:>18} {:>10} {:>10}",
        "vehicle", "carrier", "status", "fills", "bias %", "95 % interval", "p (Holm)", "> legal"
    )?;
    for v in &fleet.vehicles {
        let status = serde_json::to_value(v.status)?;
        writeln!(
            out,
            "{:<10} {:<28} {:<16} {:>5} {:>8} {:>18} {:>10} {:>10}",
            v.vehicle,
            v.carrier,
            status.as_str().unwrap_or("?"),
            v.fills,
            opt(v.bias_percent, 2),
            format!(
                "{} .. {}",
                opt(v.ci95_low_percent, 2),
                opt(v.ci95_high_percent, 2)
            ),
            opt(v.p_adjusted, 4),
            if v.exceeds_legal_tolerance {
                "yes"
            } else {
                "no"
            }
        )?;
    }
    if !fleet.findings.is_empty() {
        writeln!(out, "\nBetween fills")?;
        for f in &fleet.findings {
            writeln!(
                out,
                "{:<14} {} .. {}: {}",
                f.tank,
                when(f.from_ms),
                when(f.to_ms),
                f.explanation
            )?;
        }
    }
    writeln!(out, "\nForecasts")?;
    for t in &fleet.tanks {
        if let Some(fc) = &t.forecast {
            writeln!(
                out,
                "{:<14} use {:>7.0} kg/day, {:>6.1} days to the reorder level, next fill about {}",
                t.tank,
                fc.usage_kg_per_day,
                fc.days_to_reorder,
                when(fc.next_fill_ms)
            )?;
        }
    }
    Ok(())
}
