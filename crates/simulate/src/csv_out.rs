//! The fleet in the store's CSV import formats, written with the csv crate.

use std::io::Write;

use units::Unit as _;

use crate::fleet::Fleet;

pub use units::rfc3339_from_ms;

fn text(w: csv::Writer<Vec<u8>>) -> String {
    w.into_inner()
        .map(|bytes| String::from_utf8_lossy(&bytes).into_owned())
        .unwrap_or_default()
}

impl Fleet {
    /// The tanks CSV (with the optional columns the simulator knows).
    pub fn tanks_csv(&self) -> String {
        let mut w = csv::Writer::from_writer(Vec::new());
        // writing into memory cannot fail
        let _ = w.write_record([
            "site",
            "tank",
            "fluid",
            "orientation",
            "diameter_m",
            "length_m",
            "heads",
            "line_temperature_c",
            "elevation_m",
            "dp_unit",
            "gauge_span",
            "gauge_accuracy_percent",
            "relief_pressure",
            "relief_pressure_unit",
            "reorder_percent",
            "ner_percent_per_day",
            "time_zone",
        ]);
        // the demo's sites keep UK time (their use follows it; their readings are taken around
        // 08:00-09:00 UTC, the morning round); numbered test fleets name no zone
        let zone = self.config.naming.zone_name();
        let mut sites = std::collections::BTreeSet::new();
        for t in &self.tanks {
            // the store keeps a site's elevation once: give it with the site's first tank only
            let first = sites.insert(t.site.as_str());
            let elevation = if first {
                format!("{}", t.elevation_m)
            } else {
                String::new()
            };
            let _ = w.write_record([
                t.site.clone(),
                t.name.clone(),
                t.fluid.name().to_owned(),
                t.orientation.as_str().to_owned(),
                format!("{}", t.diameter_m),
                format!("{}", t.length_m),
                t.heads.as_str().to_owned(),
                "15".to_owned(),
                elevation,
                t.dp_unit.symbol().to_owned(),
                format!("{}", t.gauge_span),
                format!("{}", t.gauge_accuracy_percent),
                format!("{:.1}", t.relief_barg),
                "barg".to_owned(),
                format!("{}", t.reorder_percent),
                format!("{}", t.ner_percent_per_day),
                if first { zone } else { "" }.to_owned(),
            ]);
        }
        text(w)
    }

    /// The readings CSV, by tank then time.
    pub fn readings_csv(&self) -> String {
        let mut out = Vec::with_capacity(self.readings.len() * 48 + 64);
        // writing into memory cannot fail
        let _ = self.write_readings_csv(&mut out);
        String::from_utf8_lossy(&out).into_owned()
    }

    /// Write the readings CSV (header included) to `w` (for large fleets, without a copy in memory).
    pub fn write_readings_csv(&self, out: &mut impl Write) -> std::io::Result<()> {
        let mut w = csv::Writer::from_writer(out);
        w.write_record(["tank", "time", "dp", "dp_unit", "pressure", "pressure_unit"])?;
        for r in &self.readings {
            let Some(t) = self.tanks.get(r.tank) else {
                continue;
            };
            w.write_record([
                t.name.as_str(),
                &rfc3339_from_ms(r.time_ms),
                &format!("{}", r.dp),
                t.dp_unit.symbol(),
                &format!("{}", r.pressure),
                t.pressure_unit,
            ])?;
        }
        w.flush()
    }

    /// The deliveries CSV (logged fills only), by tank then time.
    pub fn deliveries_csv(&self) -> String {
        let mut w = csv::Writer::from_writer(Vec::new());
        // writing into memory cannot fail
        let _ = w.write_record([
            "tank",
            "ticket",
            "start",
            "end",
            "quantity",
            "quantity_unit",
            "carrier",
            "vehicle",
            "supply_pressure",
            "supply_pressure_unit",
        ]);
        for d in self.deliveries.iter().filter(|d| d.logged) {
            let (Some(t), Some(v)) = (self.tanks.get(d.tank), self.vehicles.get(d.vehicle)) else {
                continue;
            };
            let (sp, spu) = match d.supply_pressure_barg {
                Some(p) => (format!("{p}"), "barg"),
                None => (String::new(), ""),
            };
            let _ = w.write_record([
                t.name.as_str(),
                &d.ticket,
                &rfc3339_from_ms(d.start_ms),
                &rfc3339_from_ms(d.end_ms),
                &format!("{}", d.billed_kg),
                "kg",
                &v.carrier,
                &v.name,
                &sp,
                spu,
            ]);
        }
        text(w)
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
