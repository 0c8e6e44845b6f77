//! A site's time zone (an IANA name, through chrono-tz): instants shown and entered in the site's local
//! time, with daylight-saving gaps and repeats told apart. Storage stays UTC.

use chrono::{LocalResult, NaiveDate, Offset, TimeZone};
use std::fmt;
use std::str::FromStr;

/// A time zone from the IANA database (e.g. `Europe/London`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Zone(chrono_tz::Tz);

/// Why a local time names no single instant.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum LocalTimeError {
    /// No such day or time of day.
    #[error("{0} is not a date and time (YYYY-MM-DD and HH:MM)")]
    Invalid(String),
    /// The clocks skip this time (a daylight-saving gap).
    #[error("{time} does not happen in {zone}: the clocks go forward past it that day")]
    Gap {
        /// The local time asked for.
        time: String,
        /// The zone's name.
        zone: &'static str,
    },
    /// The clocks show this time twice (a daylight-saving repeat); say which.
    #[error(
        "{time} happens twice in {zone} as the clocks go back: choose the first ({first}) or the second ({second})"
    )]
    Repeated {
        /// The local time asked for.
        time: String,
        /// The zone's name.
        zone: &'static str,
        /// The first, with its offset (RFC 3339).
        first: String,
        /// The second, with its offset (RFC 3339).
        second: String,
    },
}

/// Which of a repeated local time is meant.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Repeat {
    /// Refuse a repeated time and say both.
    #[default]
    Ask,
    /// The first (still on the earlier offset).
    First,
    /// The second (on the later offset).
    Second,
}

impl FromStr for Zone {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let t = s.trim();
        t.parse::<chrono_tz::Tz>().map(Zone).map_err(|_| {
            format!("'{t}' is not a time zone: use an IANA name such as Europe/London or America/Chicago")
        })
    }
}

impl fmt::Display for Zone {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.0.name())
    }
}

impl Default for Zone {
    fn default() -> Self {
        Zone::UTC
    }
}

impl Zone {
    /// Coordinated Universal Time.
    pub const UTC: Zone = Zone(chrono_tz::UTC);
    /// UK time (GMT in winter, BST in summer).
    pub const LONDON: Zone = Zone(chrono_tz::Europe::London);

    /// A clock a whole number of hours east of UTC (the IANA `Etc/GMT` zones, whose names count
    /// west as positive); None outside −12 to +14.
    pub fn fixed_hours_east(hours: i32) -> Option<Zone> {
        match hours {
            0 => Some(Zone::UTC),
            -12..=14 => format!("Etc/GMT{:+}", -hours).parse().ok(),
            _ => None,
        }
    }

    /// The IANA name.
    pub fn name(&self) -> &'static str {
        self.0.name()
    }

    fn at(&self, ms: i64) -> Option<chrono::DateTime<chrono_tz::Tz>> {
        chrono::DateTime::from_timestamp_millis(ms).map(|t| t.with_timezone(&self.0))
    }

    /// The instant as the site's clock shows it: `YYYY-MM-DD HH:MM` and the zone's abbreviation.
    pub fn text(&self, ms: i64) -> String {
        use chrono::{Datelike, Timelike};
        use chrono_tz::OffsetName;
        self.at(ms).map_or_else(String::new, |t| {
            let name = t.offset().abbreviation().unwrap_or("");
            format!(
                "{:04}-{:02}-{:02} {:02}:{:02} {name}",
                t.year(),
                t.month(),
                t.day(),
                t.hour(),
                t.minute()
            )
        })
    }

    /// The zone's offset from UTC at an instant, ms (the site's clock shows UTC plus this).
    pub fn offset_ms(&self, ms: i64) -> i64 {
        self.at(ms)
            .map_or(0, |t| i64::from(t.offset().fix().local_minus_utc()) * 1000)
    }

    /// The day as the site's calendar shows it: `YYYY-MM-DD`.
    pub fn date(&self, ms: i64) -> String {
        self.at(ms)
            .map_or_else(String::new, |t| t.format("%Y-%m-%d").to_string())
    }

    /// The local date, hour and minute of an instant.
    pub fn parts(&self, ms: i64) -> Option<(NaiveDate, u32, u32)> {
        use chrono::Timelike;
        self.at(ms).map(|t| (t.date_naive(), t.hour(), t.minute()))
    }

    /// The instant as RFC 3339 with the site's offset at that instant (`2026-03-29T03:30:00+01:00`).
    pub fn rfc3339(&self, ms: i64) -> String {
        self.at(ms).map_or_else(String::new, |t| {
            t.fixed_offset()
                .to_rfc3339_opts(chrono::SecondsFormat::Secs, false)
        })
    }

    /// The instant (ms since the epoch) the site's clock shows as `date` `hour`:`minute`; a time the
    /// clocks skip is refused, and a time they show twice is refused unless `repeat` says which.
    pub fn instant(
        &self,
        date: NaiveDate,
        hour: u32,
        minute: u32,
        repeat: Repeat,
    ) -> Result<i64, LocalTimeError> {
        let shown = format!("{} {hour:02}:{minute:02}", date.format("%Y-%m-%d"));
        let naive = date
            .and_hms_opt(hour, minute, 0)
            .ok_or_else(|| LocalTimeError::Invalid(shown.clone()))?;
        match self.0.from_local_datetime(&naive) {
            LocalResult::Single(t) => Ok(t.timestamp_millis()),
            LocalResult::None => Err(LocalTimeError::Gap {
                time: shown,
                zone: self.name(),
            }),
            LocalResult::Ambiguous(a, b) => match repeat {
                Repeat::First => Ok(a.timestamp_millis()),
                Repeat::Second => Ok(b.timestamp_millis()),
                Repeat::Ask => Err(LocalTimeError::Repeated {
                    time: shown,
                    zone: self.name(),
                    first: a.fixed_offset().to_rfc3339(),
                    second: b.fixed_offset().to_rfc3339(),
                }),
            },
        }
    }

    /// The offset from UTC at an instant, seconds (east positive).
    pub fn offset_seconds(&self, ms: i64) -> i32 {
        self.at(ms)
            .map_or(0, |t| t.offset().fix().local_minus_utc())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Fixed clocks: five hours west shows 07:00 when UTC is 12:00 (offset −18,000 s), three east
    /// 15:00; zero is UTC; beyond the zones in use, none (IANA Etc/GMT names count west as positive).
    #[test]
    fn fixed_clocks_count_hours_east() {
        let noon = 12 * 3_600_000;
        let west = Zone::fixed_hours_east(-5).unwrap();
        assert_eq!(west.offset_seconds(noon), -18_000);
        assert_eq!(west.name(), "Etc/GMT+5");
        assert_eq!(
            Zone::fixed_hours_east(3).unwrap().offset_seconds(noon),
            10_800
        );
        assert_eq!(Zone::fixed_hours_east(0), Some(Zone::UTC));
        assert_eq!(Zone::fixed_hours_east(15), None);
        assert_eq!(Zone::fixed_hours_east(-13), None);
    }

    fn d(y: i32, m: u32, dd: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, dd).unwrap_or_default()
    }

    // UK clock changes of 2026 (last Sundays of March and October, at 01:00 UTC): the Summer Time
    // Order as kept in the IANA tz database (chrono-tz's copy); GMT+0 in winter, BST+1 in summer.
    #[test]
    fn a_gap_is_refused_and_a_repeat_asks_which() {
        let z: Zone = "Europe/London".parse().unwrap_or(Zone::UTC);
        assert_eq!(z.name(), "Europe/London");
        let gap = z.instant(d(2026, 3, 29), 1, 30, Repeat::Ask);
        assert!(matches!(gap, Err(LocalTimeError::Gap { .. })), "{gap:?}");
        // 03:30 BST on that day is 02:30 UTC
        let after = z.instant(d(2026, 3, 29), 3, 30, Repeat::Ask);
        assert_eq!(after, Ok(1_774_751_400_000));
        assert_eq!(z.rfc3339(1_774_751_400_000), "2026-03-29T03:30:00+01:00");
        let rep = z.instant(d(2026, 10, 25), 1, 30, Repeat::Ask);
        assert!(
            matches!(rep, Err(LocalTimeError::Repeated { .. })),
            "{rep:?}"
        );
        // the first 01:30 is BST (00:30 UTC), the second GMT (01:30 UTC)
        let first = z.instant(d(2026, 10, 25), 1, 30, Repeat::First);
        let second = z.instant(d(2026, 10, 25), 1, 30, Repeat::Second);
        assert_eq!(first, Ok(1_792_888_200_000));
        assert_eq!(second, Ok(1_792_891_800_000));
        assert_eq!(z.text(1_792_888_200_000), "2026-10-25 01:30 BST");
        assert_eq!(z.text(1_792_891_800_000), "2026-10-25 01:30 GMT");
    }

    #[test]
    fn offsets_follow_the_zone_and_its_season() {
        // IANA time zone database: Chicago is UTC−6 in January and UTC−5 (daylight saving) in July;
        // the POSIX-style Etc/GMT+6 is UTC−6 all year (its sign is inverted by convention)
        let chicago: Zone = "America/Chicago".parse().unwrap();
        let jan = 1_768_478_400_000; // 2026-01-15T12:00:00Z
        let jul = 1_784_116_800_000; // 2026-07-15T12:00:00Z
        assert_eq!(chicago.offset_ms(jan), -6 * 3_600_000);
        assert_eq!(chicago.offset_ms(jul), -5 * 3_600_000);
        let fixed: Zone = "Etc/GMT+6".parse().unwrap();
        assert_eq!(fixed.offset_ms(jul), -6 * 3_600_000);
        assert_eq!(Zone::UTC.offset_ms(jan), 0);
    }

    #[test]
    fn unknown_names_are_refused_with_an_example() {
        let e = "Mars/Olympus".parse::<Zone>();
        assert!(e.is_err_and(|m| m.contains("IANA")));
    }
}
