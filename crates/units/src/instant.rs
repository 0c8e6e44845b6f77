//! Instants as RFC 3339 text and as milliseconds since 1970-01-01 UTC: the calendar arithmetic of the
//! whole workspace (importers parse one instant per row, so it is written out rather than borrowed from a
//! general date library).

/// Days from 1970-01-01 to a proleptic Gregorian date (the "days from civil" algorithm).
pub fn days_from_civil(year: i64, month: i64, day: i64) -> i64 {
    let y = if month <= 2 { year - 1 } else { year };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (month + 9) % 12;
    let doy = (153 * mp + 2) / 5 + day - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
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

/// The UTC calendar date and time (whole seconds) of an instant (the "civil from days" algorithm).
pub fn civil_from_ms(ms: i64) -> Civil {
    let s = ms.div_euclid(1000);
    let days = s.div_euclid(86_400);
    let sod = s.rem_euclid(86_400);
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    Civil {
        year: yoe + era * 400 + i64::from(month <= 2),
        month,
        day,
        hour: sod / 3600,
        minute: sod % 3600 / 60,
        second: sod % 60,
    }
}

/// `YYYY-MM-DDTHH:MM:SSZ` of an instant (whole seconds, UTC).
pub fn rfc3339_from_ms(ms: i64) -> String {
    let c = civil_from_ms(ms);
    format!(
        "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z",
        c.year, c.month, c.day, c.hour, c.minute, c.second
    )
}

/// Milliseconds since 1970-01-01 UTC of a strict RFC 3339 date-time
/// (`YYYY-MM-DDTHH:MM:SS[.fraction](Z|+HH:MM|-HH:MM)`; `t`, `z` and a space for `T` accepted; fractions
/// beyond milliseconds truncated), or None.
pub fn ms_from_rfc3339(t: &str) -> Option<i64> {
    let b = t.as_bytes();
    let num = |from: usize, len: usize| -> Option<i64> {
        let digits = b.get(from..from + len)?;
        digits.iter().try_fold(0i64, |acc, &d| {
            d.is_ascii_digit().then(|| acc * 10 + i64::from(d - b'0'))
        })
    };
    let at = |i: usize, c: u8| b.get(i) == Some(&c);
    if !(at(4, b'-')
        && at(7, b'-')
        && matches!(b.get(10), Some(b'T' | b't' | b' '))
        && at(13, b':')
        && at(16, b':'))
    {
        return None;
    }
    let (year, month, day) = (num(0, 4)?, num(5, 2)?, num(8, 2)?);
    let (hour, minute, second) = (num(11, 2)?, num(14, 2)?, num(17, 2)?);
    let leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
    let month_days = [
        31,
        if leap { 29 } else { 28 },
        31,
        30,
        31,
        30,
        31,
        31,
        30,
        31,
        30,
        31,
    ];
    let max_day = *month_days.get(usize::try_from(month - 1).ok()?)?;
    if !(1..=max_day).contains(&day) || hour > 23 || minute > 59 || second > 59 {
        return None;
    }
    let mut i = 19;
    let mut millis = 0i64;
    if at(i, b'.') {
        i += 1;
        let start = i;
        while b.get(i).is_some_and(u8::is_ascii_digit) {
            if i - start < 3 {
                millis = millis * 10 + i64::from(b[i] - b'0');
            }
            i += 1;
        }
        if i == start {
            return None;
        }
        for _ in (i - start)..3 {
            millis *= 10;
        }
    }
    let offset_s = match b.get(i) {
        Some(b'Z' | b'z') if b.len() == i + 1 => 0,
        Some(&sign @ (b'+' | b'-')) if b.len() == i + 6 && at(i + 3, b':') => {
            let (oh, om) = (num(i + 1, 2)?, num(i + 4, 2)?);
            if oh > 23 || om > 59 {
                return None;
            }
            let s = oh * 3600 + om * 60;
            if sign == b'+' { s } else { -s }
        }
        _ => return None,
    };
    let days = days_from_civil(year, month, day);
    Some((days * 86_400 + hour * 3600 + minute * 60 + second - offset_s) * 1000 + millis)
}
