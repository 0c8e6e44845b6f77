//! Turning raw text fields into checked records (parse, then validate). Shared by the CSV importer and
//! the app's entry forms so both refuse the same things with the same words.

use crate::records::*;
use std::fmt;
use units::{DpUnit, Entered, QuantityUnit, TankPressureUnit};

/// Masses one delivery can bring, kg: from a small top-up to several road trailers' loads on one
/// ticket (a road trailer carries about 20 t; common practice, no source).
pub const PLAUSIBLE_QUANTITY_KG: std::ops::RangeInclusive<f64> = 0.1..=200_000.0;

/// One field's problem.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FieldError {
    /// The field (CSV column name).
    pub field: String,
    /// What is wrong, in words a user understands.
    pub reason: String,
}

impl FieldError {
    /// A problem with `field`.
    pub fn new(field: &str, reason: impl Into<String>) -> Self {
        Self {
            field: field.to_owned(),
            reason: reason.into(),
        }
    }
}

impl fmt::Display for FieldError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}", self.field, self.reason)
    }
}

/// Collects field errors while a record is checked.
#[derive(Default)]
pub(crate) struct Checker {
    pub errors: Vec<FieldError>,
}

impl Checker {
    pub fn fail(&mut self, field: &str, reason: impl Into<String>) {
        self.errors.push(FieldError::new(field, reason));
    }

    /// A required finite number.
    pub fn number(&mut self, field: &str, text: &str) -> Option<f64> {
        let t = text.trim();
        if t.is_empty() {
            self.fail(field, "missing: a number is required");
            return None;
        }
        match t.parse::<f64>() {
            Ok(v) if v.is_finite() => Some(v),
            Ok(_) => {
                self.fail(field, format!("'{t}' is not a finite number"));
                None
            }
            Err(_) => {
                self.fail(field, format!("'{t}' is not a number"));
                None
            }
        }
    }

    /// An optional finite number (empty text: None).
    pub fn opt_number(&mut self, field: &str, text: &str) -> Option<Option<f64>> {
        if text.trim().is_empty() {
            Some(None)
        } else {
            self.number(field, text).map(Some)
        }
    }

    pub fn positive(&mut self, field: &str, v: Option<f64>) -> Option<f64> {
        match v {
            Some(x) if x > 0.0 => Some(x),
            Some(x) => {
                self.fail(field, format!("must be greater than zero, got {x}"));
                None
            }
            None => None,
        }
    }

    pub fn non_negative(&mut self, field: &str, v: Option<f64>) -> Option<f64> {
        match v {
            Some(x) if x >= 0.0 => Some(x),
            Some(x) => {
                self.fail(field, format!("must not be negative, got {x}"));
                None
            }
            None => None,
        }
    }

    pub fn unit<U: std::str::FromStr<Err = units::UnitError>>(
        &mut self,
        field: &str,
        text: &str,
    ) -> Option<U> {
        match text.parse::<U>() {
            Ok(u) => Some(u),
            Err(e) => {
                self.fail(field, e.to_string());
                None
            }
        }
    }

    /// A vocabulary word (fluid, orientation, heads), parsed by its one parser.
    pub fn named<T: std::str::FromStr>(&mut self, field: &str, text: &str) -> Option<T>
    where
        T::Err: fmt::Display,
    {
        match text.parse::<T>() {
            Ok(v) => Some(v),
            Err(e) => {
                self.fail(field, e.to_string());
                None
            }
        }
    }

    /// A dimension within the range a real tank has.
    pub fn plausible(
        &mut self,
        field: &'static str,
        v: Option<f64>,
        range: &std::ops::RangeInclusive<f64>,
    ) -> Option<f64> {
        let v = v?;
        match tank::check_plausible(field, v, range) {
            Ok(v) => Some(v),
            Err(e) => {
                self.fail(field, e.to_string());
                None
            }
        }
    }

    pub fn stamp(&mut self, field: &str, text: &str) -> Option<Stamp> {
        if text.trim().is_empty() {
            self.fail(field, "missing: an RFC 3339 time is required");
            return None;
        }
        match Stamp::parse(text) {
            Ok(s) => Some(s),
            Err(e) => {
                self.fail(field, e);
                None
            }
        }
    }

    pub fn required_text(&mut self, field: &str, text: &str) -> Option<String> {
        let t = text.trim();
        if t.is_empty() {
            self.fail(field, "missing: a value is required");
            None
        } else {
            Some(t.to_owned())
        }
    }

    /// A tank pressure that must be above vacuum once made absolute with `barometer_pa`.
    pub fn tank_pressure(
        &mut self,
        field: &str,
        unit_field: &str,
        value: &str,
        unit: &str,
        barometer_pa: f64,
    ) -> Option<Entered<TankPressureUnit>> {
        let v = self.number(field, value);
        let u = self.unit::<TankPressureUnit>(unit_field, unit);
        let (v, u) = (v?, u?);
        let e = Entered { value: v, unit: u };
        let abs = e
            .si()
            .to_absolute(units::AbsolutePressure::from_pa(barometer_pa))
            .pa();
        if abs <= 0.0 {
            self.fail(
                field,
                format!(
                    "{e} is at or below vacuum ({:.0} Pa absolute with a barometer of {:.0} Pa)",
                    abs, barometer_pa
                ),
            );
            return None;
        }
        Some(e)
    }

    pub fn finish<T>(self, value: Option<T>) -> Result<T, Vec<FieldError>> {
        match value {
            Some(v) if self.errors.is_empty() => Ok(v),
            _ => Err(self.errors),
        }
    }
}

/// Raw text of one reading, as typed or read from CSV.
#[derive(Debug, Clone, Default)]
pub struct ReadingFields<'a> {
    /// RFC 3339 time.
    pub time: &'a str,
    /// DP number.
    pub dp: &'a str,
    /// DP unit.
    pub dp_unit: &'a str,
    /// Tank pressure number.
    pub pressure: &'a str,
    /// Tank pressure unit (gauge or absolute).
    pub pressure_unit: &'a str,
    /// Optional measured liquid temperature, K.
    pub liquid_temperature_k: &'a str,
    /// Optional note.
    pub note: &'a str,
}

impl ReadingFields<'_> {
    /// Check every field; `barometer_pa` is the site's, to refuse pressures below vacuum.
    pub fn check(&self, barometer_pa: f64) -> Result<ReadingEntry, Vec<FieldError>> {
        let mut c = Checker::default();
        let time = c.stamp("time", self.time);
        let dp_value = c.number("dp", self.dp);
        let dp_value = c.non_negative("dp", dp_value);
        let dp_unit = c.unit::<DpUnit>("dp_unit", self.dp_unit);
        let pressure = c.tank_pressure(
            "pressure",
            "pressure_unit",
            self.pressure,
            self.pressure_unit,
            barometer_pa,
        );
        let t = c.opt_number("liquid_temperature_k", self.liquid_temperature_k);
        let t = match t {
            Some(Some(k)) => c.positive("liquid_temperature_k", Some(k)).map(Some),
            other => other,
        };
        let note = Some(self.note.trim())
            .filter(|n| !n.is_empty())
            .map(str::to_owned);
        let value = (|| {
            Some(ReadingEntry {
                time: time?,
                dp: Entered {
                    value: dp_value?,
                    unit: dp_unit?,
                },
                pressure: pressure?,
                liquid_temperature_k: t?,
                note,
            })
        })();
        c.finish(value)
    }
}

/// Raw text of one delivery.
#[derive(Debug, Clone, Default)]
pub struct DeliveryFields<'a> {
    /// Ticket number.
    pub ticket: &'a str,
    /// RFC 3339 start.
    pub start: &'a str,
    /// RFC 3339 end.
    pub end: &'a str,
    /// Billed quantity number.
    pub quantity: &'a str,
    /// Its unit (kg, lb, t, Nm3, scf).
    pub quantity_unit: &'a str,
    /// Carrier name.
    pub carrier: &'a str,
    /// Vehicle name.
    pub vehicle: &'a str,
    /// Optional supply pressure number.
    pub supply_pressure: &'a str,
    /// Its unit.
    pub supply_pressure_unit: &'a str,
}

impl DeliveryFields<'_> {
    /// Check every field; `barometer_pa` is the site's.
    pub fn check(&self, barometer_pa: f64) -> Result<DeliveryEntry, Vec<FieldError>> {
        let mut c = Checker::default();
        let ticket = c.required_text("ticket", self.ticket);
        let start = c.stamp("start", self.start);
        let end = c.stamp("end", self.end);
        if let (Some(s), Some(e)) = (&start, &end)
            && e.ms < s.ms
        {
            c.fail("end", format!("{} is before the start {}", e.text, s.text));
        }
        let q = c.number("quantity", self.quantity);
        let q = c.positive("quantity", q);
        let qu = c.unit::<QuantityUnit>("quantity_unit", self.quantity_unit);
        if let (Some(v), Some(u)) = (q, qu)
            && let units::DeliveredQuantity::Mass(m) = (Entered { value: v, unit: u }).si()
            && !PLAUSIBLE_QUANTITY_KG.contains(&m.kg())
        {
            c.fail(
                "quantity",
                format!(
                    "{v} {u} is outside the plausible range {} to {} kg for one delivery",
                    PLAUSIBLE_QUANTITY_KG.start(),
                    PLAUSIBLE_QUANTITY_KG.end()
                ),
            );
        }
        let carrier = c.required_text("carrier", self.carrier);
        let vehicle = c.required_text("vehicle", self.vehicle);
        let supply = match (
            self.supply_pressure.trim().is_empty(),
            self.supply_pressure_unit.trim().is_empty(),
        ) {
            (true, true) => Some(None),
            (false, true) => {
                c.fail(
                    "supply_pressure_unit",
                    "missing: give the unit of the supply pressure",
                );
                None
            }
            _ => c
                .tank_pressure(
                    "supply_pressure",
                    "supply_pressure_unit",
                    self.supply_pressure,
                    self.supply_pressure_unit,
                    barometer_pa,
                )
                .map(Some),
        };
        let ok_order = c.errors.iter().all(|e| e.field != "end");
        let value = (|| {
            ok_order.then_some(())?;
            Some(DeliveryEntry {
                ticket: ticket?,
                start: start?,
                end: end?,
                quantity: Entered {
                    value: q?,
                    unit: qu?,
                },
                carrier: carrier?,
                vehicle: vehicle?,
                supply_pressure: supply?,
            })
        })();
        c.finish(value)
    }
}

/// Raw text of one tank (and its site's optional barometer settings).
#[derive(Debug, Clone, Default)]
pub struct TankFields<'a> {
    /// Site name.
    pub site: &'a str,
    /// Tank name.
    pub tank: &'a str,
    /// Fluid name.
    pub fluid: &'a str,
    /// vertical or horizontal.
    pub orientation: &'a str,
    /// Inner diameter, m.
    pub diameter_m: &'a str,
    /// Straight shell length, m.
    pub length_m: &'a str,
    /// Head shape.
    pub heads: &'a str,
    /// Line temperature, °C.
    pub line_temperature_c: &'a str,
    /// Optional torispherical crown ratio.
    pub crown_ratio: &'a str,
    /// Optional torispherical knuckle ratio.
    pub knuckle_ratio: &'a str,
    /// Optional gauge unit (default inH2O).
    pub dp_unit: &'a str,
    /// Optional gauge span in the gauge unit.
    pub gauge_span: &'a str,
    /// Optional accuracy, % of span.
    pub gauge_accuracy_percent: &'a str,
    /// Optional relief set pressure number.
    pub relief_pressure: &'a str,
    /// Its unit.
    pub relief_pressure_unit: &'a str,
    /// Optional reorder level, % of gross volume.
    pub reorder_percent: &'a str,
    /// Optional nameplate NER, % per day.
    pub ner_percent_per_day: &'a str,
    /// Optional strapping table: `level_m:volume_m3` pairs separated by `;`.
    pub strapping: &'a str,
}

/// Parse a strapping table written as `level_m:volume_m3;level_m:volume_m3;...`.
pub fn parse_strapping(text: &str) -> Result<Vec<(f64, f64)>, String> {
    let mut points = Vec::new();
    for (i, pair) in text
        .split(';')
        .map(str::trim)
        .filter(|p| !p.is_empty())
        .enumerate()
    {
        let (l, v) = pair
            .split_once(':')
            .ok_or_else(|| format!("point {} '{pair}' is not level_m:volume_m3", i + 1))?;
        let l: f64 = l
            .trim()
            .parse()
            .map_err(|_| format!("point {}: level '{l}' is not a number", i + 1))?;
        let v: f64 = v
            .trim()
            .parse()
            .map_err(|_| format!("point {}: volume '{v}' is not a number", i + 1))?;
        if !l.is_finite() || !v.is_finite() || l < 0.0 || v < 0.0 {
            return Err(format!(
                "point {}: level and volume must be finite and not negative",
                i + 1
            ));
        }
        points.push((l, v));
    }
    if points.len() < 2 {
        return Err("a strapping table needs at least two points".into());
    }
    for w in points.windows(2) {
        if let [(l0, v0), (l1, v1)] = w
            && (l1 <= l0 || v1 < v0)
        {
            return Err(format!(
                "not monotonic: level {l1} m / volume {v1} m³ after {l0} m / {v0} m³"
            ));
        }
    }
    Ok(points)
}

/// Write a strapping table in the form [`parse_strapping`] reads.
pub fn format_strapping(points: &[(f64, f64)]) -> String {
    points
        .iter()
        .map(|(l, v)| format!("{l}:{v}"))
        .collect::<Vec<_>>()
        .join(";")
}

impl TankFields<'_> {
    /// Check every field.
    pub fn check(&self) -> Result<TankSpec, Vec<FieldError>> {
        let mut c = Checker::default();
        let site = c.required_text("site", self.site);
        let name = c.required_text("tank", self.tank);
        let fluid = c.named::<FluidId>("fluid", self.fluid);
        let orientation = c.named::<Orientation>("orientation", self.orientation);
        let d = c.number("diameter_m", self.diameter_m);
        let d = c.plausible("diameter_m", d, &tank::PLAUSIBLE_DIAMETER_M);
        let l = c.number("length_m", self.length_m);
        let l = c.plausible("length_m", l, &tank::PLAUSIBLE_LENGTH_M);
        let heads = c.named::<HeadShape>("heads", self.heads);
        let line_c = c.number("line_temperature_c", self.line_temperature_c);
        let line_c = match line_c {
            Some(t) if t + units::CELSIUS_ZERO_K > 0.0 => Some(t),
            Some(t) => {
                c.fail(
                    "line_temperature_c",
                    format!("{t} C is below absolute zero"),
                );
                None
            }
            None => None,
        };
        let ratio = |c: &mut Checker, field: &str, text: &str| match c.opt_number(field, text) {
            Some(Some(r)) => c.positive(field, Some(r)).map(Some),
            other => other,
        };
        let crown = ratio(&mut c, "crown_ratio", self.crown_ratio);
        let knuckle = ratio(&mut c, "knuckle_ratio", self.knuckle_ratio);
        if let (Some(Some(cr)), Some(Some(kn))) = (crown, knuckle)
            && kn >= cr
        {
            c.fail(
                "knuckle_ratio",
                format!("knuckle ratio {kn} must be below the crown ratio {cr}"),
            );
        }
        let dp_unit = if self.dp_unit.trim().is_empty() {
            Some(DpUnit::InH2O)
        } else {
            c.unit::<DpUnit>("dp_unit", self.dp_unit)
        };
        let span = match (c.opt_number("gauge_span", self.gauge_span), dp_unit) {
            (Some(Some(s)), Some(_)) => c.positive("gauge_span", Some(s)).map(Some),
            (Some(None), _) => Some(None),
            _ => None,
        };
        let acc = match c.opt_number("gauge_accuracy_percent", self.gauge_accuracy_percent) {
            Some(Some(a)) => c.positive("gauge_accuracy_percent", Some(a)).map(Some),
            other => other,
        };
        let relief = if self.relief_pressure.trim().is_empty() {
            Some(None)
        } else {
            c.tank_pressure(
                "relief_pressure",
                "relief_pressure_unit",
                self.relief_pressure,
                self.relief_pressure_unit,
                units::STANDARD_ATMOSPHERE_PA,
            )
            .map(Some)
        };
        let percent =
            |c: &mut Checker, field: &str, text: &str, max: f64| match c.opt_number(field, text) {
                Some(Some(p)) if (0.0..=max).contains(&p) => Some(Some(p)),
                Some(Some(p)) => {
                    c.fail(field, format!("{p} is outside 0 to {max}"));
                    None
                }
                other => other,
            };
        let reorder = percent(&mut c, "reorder_percent", self.reorder_percent, 100.0);
        let ner = percent(
            &mut c,
            "ner_percent_per_day",
            self.ner_percent_per_day,
            100.0,
        );
        let strapping = if self.strapping.trim().is_empty() {
            Some(Vec::new())
        } else {
            match parse_strapping(self.strapping) {
                Ok(p) => Some(p),
                Err(e) => {
                    c.fail("strapping", e);
                    None
                }
            }
        };
        let value = (|| {
            Some(TankSpec {
                name: name?,
                site: site?,
                fluid: fluid?,
                orientation: orientation?,
                diameter_m: d?,
                length_m: l?,
                heads: heads?,
                crown_ratio: crown?,
                knuckle_ratio: knuckle?,
                line_temperature_c: line_c?,
                dp_unit: dp_unit?,
                gauge_span: span?,
                gauge_accuracy_percent: acc?,
                relief_pressure: relief?,
                reorder_percent: reorder?,
                ner_percent_per_day: ner?,
                strapping: strapping?,
            })
        })();
        c.finish(value)
    }
}
