//! A CSV import, whatever database receives it: every row read and checked, written through an
//! [`ImportWriter`] inside the backend's one transaction; the backend commits only when no row failed.

use crate::StoreError;
use crate::check::{DeliveryFields, FieldError, ReadingFields, TankFields};
use crate::csv_format::*;
use crate::records::{
    DeliveryEntry, ReadingEntry, SiteId, SiteSettings, TankId, TankRecord, TankSpec,
};
use std::collections::HashMap;

/// Why a site could not be found or made.
pub(crate) enum SiteError {
    Field(FieldError),
    Store(StoreError),
}

/// What writing one row came to.
pub(crate) enum RowWrite<T> {
    /// Written (and chained).
    Done(T),
    /// It breaks the record's uniqueness rule.
    Duplicate,
    /// The database refused it for another reason (its words).
    Refused(String),
    /// The storage failed (a full disk, a lost connection): the import stops.
    Fatal(StoreError),
}

/// One backend's writes inside its import transaction; each write also appends its chain link.
pub(crate) trait ImportWriter {
    /// The live site of this name, created (and chained) when new.
    fn site(&mut self, name: &str, settings: &SiteSettings) -> Result<SiteId, SiteError>;
    /// Insert a tank.
    fn tank(&mut self, site: SiteId, spec: &TankSpec) -> RowWrite<TankId>;
    /// Insert a reading.
    fn reading(&mut self, tank: TankId, r: &ReadingEntry) -> RowWrite<()>;
    /// Insert a delivery; [`StoreError::Invalid`] is the row's fault, anything else the storage's.
    fn delivery(&mut self, tank: TankId, d: &DeliveryEntry) -> Result<(), StoreError>;
}

/// How an import's transaction ends.
pub(crate) enum End {
    Commit,
    Rollback,
    /// The storage failed: roll back as far as the database still can.
    Abandon,
}

/// The end of an import: committed only when no row failed and it is not a dry run.
pub(crate) fn ending(
    summary: ImportSummary,
    mut sink: Sink,
    dry_run: bool,
) -> (End, Result<ImportSummary, StoreError>) {
    if let Some(fatal) = sink.fatal.take() {
        return (End::Abandon, Err(fatal));
    }
    match sink.into_errors() {
        None if dry_run => (End::Rollback, Ok(summary)),
        None => (End::Commit, Ok(summary)),
        Some(errors) => (End::Rollback, Err(StoreError::Import(errors))),
    }
}

/// Read and write every row of `sources`; the row errors are in the returned sink (and any storage
/// failure in its `fatal`). `tanks` are the ledger's tanks by name.
pub(crate) fn rows<W: ImportWriter>(
    w: &mut W,
    mut tanks: HashMap<String, TankRecord>,
    sources: ImportSources<'_>,
    opts: &ImportOptions<'_>,
) -> Result<(ImportSummary, Sink), StoreError> {
    let mut sink = Sink::new(opts.max_errors);
    let mut summary = ImportSummary::default();
    let ImportSources {
        tanks: tank_source,
        readings,
        deliveries,
    } = sources;
    if let Some(src) = tank_source
        && let Some(mut t) = Table::open(src, &TANK_HEADER[..TANK_REQUIRED], &mut sink)
    {
        import_tanks(w, &mut t, &mut sink, &mut tanks, &mut summary)?;
    }
    if let Some(src) = readings
        && let Some(mut t) = Table::open(src, &READING_HEADER[..READING_REQUIRED], &mut sink)
    {
        import_readings(w, &mut t, &mut sink, &tanks, opts, &mut summary)?;
    }
    if let Some(src) = deliveries
        && let Some(mut t) = Table::open(src, &DELIVERY_HEADER[..DELIVERY_REQUIRED], &mut sink)
    {
        import_deliveries(w, &mut t, &mut sink, &tanks, &mut summary)?;
    }
    Ok((summary, sink))
}

fn import_tanks(
    w: &mut impl ImportWriter,
    t: &mut Table<'_>,
    sink: &mut Sink,
    tanks: &mut HashMap<String, TankRecord>,
    summary: &mut ImportSummary,
) -> Result<(), StoreError> {
    let c = |n: &str| t.col(n);
    let cols = [
        c("site"),
        c("tank"),
        c("fluid"),
        c("orientation"),
        c("diameter_m"),
        c("length_m"),
        c("heads"),
        c("line_temperature_c"),
        c("crown_ratio"),
        c("knuckle_ratio"),
        c("dp_unit"),
        c("gauge_span"),
        c("gauge_accuracy_percent"),
        c("relief_pressure"),
        c("relief_pressure_unit"),
        c("reorder_percent"),
        c("ner_percent_per_day"),
        c("strapping"),
        c("elevation_m"),
        c("barometer_kpa"),
        c("time_zone"),
    ];
    let file = t.name.clone();
    each_row(t, sink, |rec, line, sink| {
        let f = |i: usize| field(rec, cols.get(i).copied().flatten());
        let fields = TankFields {
            site: f(0),
            tank: f(1),
            fluid: f(2),
            orientation: f(3),
            diameter_m: f(4),
            length_m: f(5),
            heads: f(6),
            line_temperature_c: f(7),
            crown_ratio: f(8),
            knuckle_ratio: f(9),
            dp_unit: f(10),
            gauge_span: f(11),
            gauge_accuracy_percent: f(12),
            relief_pressure: f(13),
            relief_pressure_unit: f(14),
            reorder_percent: f(15),
            ner_percent_per_day: f(16),
            strapping: f(17),
        };
        let site_opt = |name: &str, i: usize, positive: bool| -> Result<Option<f64>, FieldError> {
            let s = f(i).trim();
            if s.is_empty() {
                return Ok(None);
            }
            match s.parse::<f64>() {
                Ok(v) if v.is_finite() && (!positive || v > 0.0) => Ok(Some(v)),
                _ => Err(FieldError::new(
                    name,
                    format!("'{s}' is not a valid number"),
                )),
            }
        };
        let elevation = site_opt("elevation_m", 18, false);
        let barometer = site_opt("barometer_kpa", 19, true);
        let zone_text = f(20).trim();
        let zone = if zone_text.is_empty() {
            Ok(None)
        } else {
            zone_text
                .parse::<units::Zone>()
                .map(|z| Some(z.name().to_string()))
                .map_err(|m| FieldError::new("time_zone", m))
        };
        let spec = fields.check();
        let (spec, elevation, barometer, zone) = match (spec, elevation, barometer, zone) {
            (Ok(s), Ok(e), Ok(b), Ok(z)) => (s, e, b, z),
            (s, e, b, z) => {
                for err in s
                    .err()
                    .into_iter()
                    .flatten()
                    .chain(e.err())
                    .chain(b.err())
                    .chain(z.err())
                {
                    sink.push(&file, line, err);
                }
                return;
            }
        };
        if tanks.contains_key(&spec.name) {
            sink.push(
                &file,
                line,
                FieldError::new(
                    "tank",
                    format!("duplicate: tank '{}' already exists", spec.name),
                ),
            );
            return;
        }
        let settings = crate::records::SiteSettings {
            elevation_m: elevation,
            barometer_kpa: barometer,
            time_zone: zone.clone(),
        };
        let site_id = match w.site(&spec.site, &settings) {
            Ok(id) => id,
            Err(SiteError::Field(e)) => return sink.push(&file, line, e),
            Err(SiteError::Store(e)) => {
                sink.fatal = Some(e);
                return;
            }
        };
        match w.tank(site_id, &spec) {
            RowWrite::Done(id) => {
                summary.tanks += 1;
                let barometer_pa =
                    crate::records::barometer_pa(barometer.map(|k| k * 1e3), elevation);
                tanks.insert(
                    spec.name.clone(),
                    TankRecord {
                        id,
                        site_id,
                        barometer_pa,
                        time_zone: zone,
                        spec,
                        revision: 1,
                    },
                );
            }
            RowWrite::Fatal(e) => sink.fatal = Some(e),
            RowWrite::Duplicate => sink.push(
                &file,
                line,
                FieldError::new(
                    "tank",
                    format!("duplicate: a tank named '{}' already exists", spec.name),
                ),
            ),
            RowWrite::Refused(why) => sink.push(&file, line, FieldError::new("row", why)),
        }
    })
}

fn unknown_tank(name: &str) -> FieldError {
    if name.trim().is_empty() {
        FieldError::new("tank", "missing: a tank name is required")
    } else {
        FieldError::new(
            "tank",
            format!("unknown tank '{name}': import it in a tanks file first"),
        )
    }
}

fn import_readings(
    w: &mut impl ImportWriter,
    t: &mut Table<'_>,
    sink: &mut Sink,
    tanks: &HashMap<String, TankRecord>,
    opts: &ImportOptions<'_>,
    summary: &mut ImportSummary,
) -> Result<(), StoreError> {
    let cols = [
        t.col("tank"),
        t.col("time"),
        t.col("dp"),
        t.col("dp_unit"),
        t.col("pressure"),
        t.col("pressure_unit"),
        t.col("liquid_temperature_k"),
        t.col("note"),
    ];
    let file = t.name.clone();
    // Rows of one tank come in runs: remember the last lookup.
    let mut last: Option<(String, &TankRecord)> = None;
    each_row(t, sink, |rec, line, sink| {
        let f = |i: usize| field(rec, cols.get(i).copied().flatten());
        let name = f(0).trim();
        let tank = match &last {
            Some((n, tank)) if n == name => *tank,
            _ => match tanks.get(name) {
                Some(tank) => {
                    last = Some((name.to_owned(), tank));
                    tank
                }
                None => return sink.push(&file, line, unknown_tank(name)),
            },
        };
        let fields = ReadingFields {
            time: f(1),
            dp: f(2),
            dp_unit: f(3),
            pressure: f(4),
            pressure_unit: f(5),
            liquid_temperature_k: f(6),
            note: f(7),
        };
        let r = match fields.check(tank.barometer_pa) {
            Ok(r) => r,
            Err(errs) => return sink.push_all(&file, line, errs),
        };
        if let Some(check) = opts.reading_check
            && let Err(e) = check(tank, &r)
        {
            return sink.push(&file, line, e);
        }
        match w.reading(tank.id, &r) {
            RowWrite::Done(()) => summary.readings += 1,
            RowWrite::Fatal(e) => sink.fatal = Some(e),
            RowWrite::Duplicate => sink.push(
                &file,
                line,
                FieldError::new(
                    "time",
                    format!(
                        "duplicate: tank '{name}' already has a reading at {}",
                        r.time.text
                    ),
                ),
            ),
            RowWrite::Refused(why) => sink.push(&file, line, FieldError::new("row", why)),
        }
    })
}

fn import_deliveries(
    w: &mut impl ImportWriter,
    t: &mut Table<'_>,
    sink: &mut Sink,
    tanks: &HashMap<String, TankRecord>,
    summary: &mut ImportSummary,
) -> Result<(), StoreError> {
    let cols = [
        t.col("tank"),
        t.col("ticket"),
        t.col("start"),
        t.col("end"),
        t.col("quantity"),
        t.col("quantity_unit"),
        t.col("carrier"),
        t.col("vehicle"),
        t.col("supply_pressure"),
        t.col("supply_pressure_unit"),
    ];
    let file = t.name.clone();
    each_row(t, sink, |rec, line, sink| {
        let f = |i: usize| field(rec, cols.get(i).copied().flatten());
        let name = f(0).trim();
        let Some(tank) = tanks.get(name) else {
            return sink.push(&file, line, unknown_tank(name));
        };
        let fields = DeliveryFields {
            ticket: f(1),
            start: f(2),
            end: f(3),
            quantity: f(4),
            quantity_unit: f(5),
            carrier: f(6),
            vehicle: f(7),
            supply_pressure: f(8),
            supply_pressure_unit: f(9),
        };
        let d = match fields.check(tank.barometer_pa) {
            Ok(d) => d,
            Err(errs) => return sink.push_all(&file, line, errs),
        };
        match w.delivery(tank.id, &d) {
            Ok(()) => summary.deliveries += 1,
            Err(StoreError::Invalid(errors)) => sink.push_all(
                &file,
                line,
                errors
                    .into_iter()
                    .map(|mut e| {
                        if e.field == "ticket" {
                            e.reason = format!("duplicate: {}", e.reason);
                        }
                        e
                    })
                    .collect(),
            ),
            Err(e) => sink.fatal = Some(e),
        }
    })
}
