//! The fleet in the store's CSV import formats.

use std::fmt::Write as _;

use units::Unit as _;

use crate::fleet::Fleet;

pub use units::rfc3339_from_ms;

fn quote(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

impl Fleet {
    /// The tanks CSV (with the optional columns the simulator knows).
    pub fn tanks_csv(&self) -> String {
        let mut out = String::from(
            "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c,elevation_m,dp_unit,\
             gauge_span,gauge_accuracy_percent,relief_pressure,relief_pressure_unit,reorder_percent,\
             ner_percent_per_day\n",
        );
        let mut sites = std::collections::BTreeSet::new();
        for t in &self.tanks {
            // the store keeps a site's elevation once: give it with the site's first tank only
            let elevation = if sites.insert(t.site.as_str()) {
                format!("{}", t.elevation_m)
            } else {
                String::new()
            };
            let _ = writeln!(
                out,
                "{},{},{},{},{},{},{},15,{},{},{},{},{:.1},barg,{},{}",
                quote(&t.site),
                quote(&t.name),
                t.fluid.name(),
                match t.orientation {
                    tank::Orientation::Vertical => "vertical",
                    tank::Orientation::Horizontal => "horizontal",
                },
                t.diameter_m,
                t.length_m,
                t.heads,
                elevation,
                t.dp_unit.symbol(),
                t.gauge_span,
                t.gauge_accuracy_percent,
                t.relief_barg,
                t.reorder_percent,
                t.ner_percent_per_day,
            );
        }
        out
    }

    /// The readings CSV, by tank then time.
    pub fn readings_csv(&self) -> String {
        let mut out = String::with_capacity(self.readings.len() * 48 + 64);
        out.push_str("tank,time,dp,dp_unit,pressure,pressure_unit\n");
        self.write_readings(&mut out);
        out
    }

    /// Write the readings CSV (header included) to `w`, a tank at a time (for large fleets).
    pub fn write_readings_csv(&self, w: &mut impl std::io::Write) -> std::io::Result<()> {
        w.write_all(b"tank,time,dp,dp_unit,pressure,pressure_unit\n")?;
        let mut buf = String::with_capacity(1 << 16);
        for chunk in self.readings.chunks(4096) {
            buf.clear();
            self.write_reading_rows(chunk, &mut buf);
            w.write_all(buf.as_bytes())?;
        }
        Ok(())
    }

    /// Append the readings rows (no header) to `out`.
    pub fn write_readings(&self, out: &mut String) {
        self.write_reading_rows(&self.readings, out);
    }

    fn write_reading_rows(&self, rows: &[crate::SimReading], out: &mut String) {
        for r in rows {
            let Some(t) = self.tanks.get(r.tank) else {
                continue;
            };
            let _ = writeln!(
                out,
                "{},{},{},{},{},{}",
                quote(&t.name),
                rfc3339_from_ms(r.time_ms),
                r.dp,
                t.dp_unit.symbol(),
                r.pressure,
                t.pressure_unit
            );
        }
    }

    /// The deliveries CSV (logged fills only), by tank then time.
    pub fn deliveries_csv(&self) -> String {
        let mut out = String::from(
            "tank,ticket,start,end,quantity,quantity_unit,carrier,vehicle,supply_pressure,supply_pressure_unit\n",
        );
        for d in self.deliveries.iter().filter(|d| d.logged) {
            let (Some(t), Some(v)) = (self.tanks.get(d.tank), self.vehicles.get(d.vehicle)) else {
                continue;
            };
            let (sp, spu) = match d.supply_pressure_barg {
                Some(p) => (format!("{p}"), "barg"),
                None => (String::new(), ""),
            };
            let _ = writeln!(
                out,
                "{},{},{},{},{},kg,{},{},{},{}",
                quote(&t.name),
                d.ticket,
                rfc3339_from_ms(d.start_ms),
                rfc3339_from_ms(d.end_ms),
                d.billed_kg,
                quote(&v.carrier),
                quote(&v.name),
                sp,
                spu
            );
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Unix time 1767225600 s is 2026-01-01T00:00:00Z; 951782400 s is 2000-02-29T00:00:00Z (leap day);
    /// computed by hand from the Gregorian calendar.
    #[test]
    fn civil_dates() {
        assert_eq!(rfc3339_from_ms(1_767_225_600_000), "2026-01-01T00:00:00Z");
        assert_eq!(rfc3339_from_ms(951_782_400_000), "2000-02-29T00:00:00Z");
        assert_eq!(
            rfc3339_from_ms(951_782_400_000 + 3_723_000),
            "2000-02-29T01:02:03Z"
        );
    }
}
