//! A record's earlier versions, summarised for the history list under its form.

use super::*;
use store::{EarlierVersion, RecordRef};

/// The revision history of a record, oldest first, with the earlier values summarised.
pub fn history(repo: &dyn Repository, record: RecordRef) -> Result<Vec<HistoryRow>, StoreError> {
    Ok(repo
        .history(record)?
        .into_iter()
        .map(|r| HistoryRow {
            old: summarise(&r.before),
            when: store::Stamp::parse(&r.revised_at)
                .map(|s| format!("{} UTC", fmt::date_time(s.ms)))
                .unwrap_or(r.revised_at),
            action: r.action.as_str().to_owned(),
            reason: r.reason,
        })
        .collect())
}

/// One line of the values a record had before a change.
fn summarise(before: &EarlierVersion) -> String {
    let mut parts = Vec::new();
    match before {
        EarlierVersion::Reading(r) => {
            parts.push(format!("time {}", r.time.text));
            parts.push(format!("DP {}", r.dp));
            parts.push(format!("pressure {}", r.pressure));
            if let Some(k) = r.liquid_temperature_k {
                parts.push(format!("liquid {k} K"));
            }
            if let Some(n) = &r.note {
                parts.push(format!("note \"{n}\""));
            }
        }
        EarlierVersion::Delivery(d) => {
            parts.push(format!("ticket {}", d.ticket));
            parts.push(format!("start {}", d.start.text));
            parts.push(format!("quantity {}", d.quantity));
        }
        EarlierVersion::Tank(t) => {
            parts.push(format!("{} {} tank", t.fluid, t.orientation));
            parts.push(format!(
                "D {} m × L {} m, {} heads",
                t.diameter_m, t.length_m, t.heads
            ));
        }
        EarlierVersion::Site(s) => {
            parts.push(format!("site {}", s.name));
            if let Some(e) = s.elevation_m {
                parts.push(format!("elevation {e} m"));
            }
            if let Some(b) = s.barometer_kpa {
                parts.push(format!("barometer {b} kPa"));
            }
        }
    }
    parts.join(" · ")
}
