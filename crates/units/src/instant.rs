//! Instants as RFC 3339 text and as milliseconds since 1970-01-01 UTC, through chrono: the one home of
//! calendar arithmetic for the whole workspace.

use chrono::{DateTime, Datelike, NaiveDate, SecondsFormat, Timelike, Utc};

/// Days from 1970-01-01 to a proleptic Gregorian date; None for a date that does not exist.
pub fn days_from_civil(year: i64, month: i64, day: i64) -> Option<i64> {
    let date = NaiveDate::from_ymd_opt(
        i32::try_from(year).ok()?,
        u32::try_from(month).ok()?,
        u32::try_from(day).ok()?,
    )?;
    Some(i64::from(date.num_days_from_ce()) - 719_163)
}

/// A UTC calendar date and time of day.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Civil {
    /// Year.
    pub year: i64,
    /// Month, 1 to 12.
    pub month: i64,
    /// Day of the month, 1 to 31.
    pub day: i64,
    /// Hour, 0 to 23.
    pub hour: i64,
    /// Minute, 0 to 59.
    pub minute: i64,
    /// Second, 0 to 59.
    pub second: i64,
}

fn utc(ms: i64) -> DateTime<Utc> {
    DateTime::from_timestamp_millis(ms).unwrap_or(DateTime::<Utc>::MIN_UTC)
}

/// The UTC calendar date and time (whole seconds) of an instant.
pub fn civil_from_ms(ms: i64) -> Civil {
    let t = utc(ms);
    Civil {
        year: i64::from(t.year()),
        month: i64::from(t.month()),
        day: i64::from(t.day()),
        hour: i64::from(t.hour()),
        minute: i64::from(t.minute()),
        second: i64::from(t.second()),
    }
}

/// `YYYY-MM-DDTHH:MM:SSZ` of an instant (whole seconds, truncated; UTC).
pub fn rfc3339_from_ms(ms: i64) -> String {
    utc(ms.div_euclid(1000) * 1000).to_rfc3339_opts(SecondsFormat::Secs, true)
}

/// Milliseconds since 1970-01-01 UTC of an RFC 3339 date-time
/// (`YYYY-MM-DDTHH:MM:SS[.fraction](Z|+HH:MM|-HH:MM)`; `t`, `z` and a space for `T` accepted; fractions
/// beyond milliseconds truncated; a leap second refused), or None.
pub fn ms_from_rfc3339(t: &str) -> Option<i64> {
    let parsed = DateTime::parse_from_rfc3339(t).ok()?;
    // chrono reads a leap second (:60) as the 1000th millisecond of :59; operators never enter one
    (parsed.nanosecond() < 1_000_000_000).then(|| parsed.timestamp_millis())
}

/// The current instant, ms since the epoch.
pub fn now_ms() -> i64 {
    Utc::now().timestamp_millis()
}
