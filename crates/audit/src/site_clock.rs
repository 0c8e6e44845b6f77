//! The site's clock when the site names no time zone: the whole-hour offset from UTC whose days,
//! nights and weekends explain the tank's use best.
//!
//! The use model's blocks (the quarters of a weekday, Saturday, Sunday) are the site's. A site
//! recorded without a time zone was read as UTC, so at a site five hours west a laboratory's working
//! day fell half in the model's day and half in its night (when the model had a day and a night
//! block), and a Saturday began on Friday evening: the use between two readings was mispredicted
//! by a good part of a day's use where the readings fell at different hours. Every third whole-hour
//! offset from −12 to +14 h, then the two either side of the best, is fitted to the stretches
//! between readings (at most [`MAX_STRETCHES`], every k-th of a longer record) by weighted least
//! squares (one rate per block, each stretch weighted by the inverse of its length, its squared
//! standardized residual held within 3² of the UTC fit's robust scale so that a leak or an unlogged
//! fill does not choose the clock), among those whose weekday day uses at least as much as its
//! night (a clock twelve hours away swaps the two and, read on weekdays, fits alike; a customer's
//! work is by day); the best is taken when its likelihood ratio against UTC, n ln(S_UTC / S_best),
//! exceeds the χ²₁ quantile at 0.01 over the 26 other candidates (Bonferroni; Wilks, Ann. Math.
//! Statist. 9, 1938, for the ratio's χ² distribution), else the clock stays UTC.

use crate::stats::{mad_sigma, normal_quantile};
use crate::use_model::{Observed, solve_spd_with};

/// The clock is chosen on six blocks, a coarser week than the use model's (a weekday's day and
/// night, Saturday's and Sunday's): a day against a night is what tells one clock from another, and
/// the quarters of a weekday would follow a shifted shift without it.
const BLOCKS: usize = 6;

const HOUR_MS: i64 = 3_600_000;
const WEEK_H: usize = 168;
/// The day block's hours (the use model's weekend day; its weekday's middle two quarters).
const DAY_HOURS: std::ops::Range<usize> = 6..18;
/// Offsets tried, hours east of UTC (the zones in use run from −12 to +14).
const OFFSETS: std::ops::RangeInclusive<i32> = -12..=14;
/// Fewest stretches to choose a clock from.
const MIN_STRETCHES: usize = 20;
/// Stretches longer than this say little about the hours of use (as in the use model).
const LONGEST_MS: i64 = 15 * 24 * HOUR_MS;
/// The family-wise level of choosing a clock other than UTC.
const ALPHA: f64 = 0.01;
/// The search's coarse step, hours.
const COARSE_STEP: i32 = 3;
/// Most stretches the clock is chosen from (a daily record's over half a year).
const MAX_STRETCHES: usize = 260;

/// Whether `o` is a candidate other than UTC.
fn is_candidate(o: i32) -> bool {
    o != 0 && OFFSETS.contains(&o)
}

/// The block of an hour of the week counted from Thursday 00:00 (1970-01-01 was a Thursday), in
/// this order: weekday day, weekday night, Saturday day and night, Sunday day and night.
fn block_of(hour_of_week: usize) -> usize {
    let base = match hour_of_week / 24 {
        2 => 2,
        3 => 4,
        _ => 0,
    };
    base + usize::from(!DAY_HOURS.contains(&(hour_of_week % 24)))
}

/// Hours of each block before each hour of the week: `prefix[k][h]` counts block k's hours among
/// hours 0..h.
fn prefix() -> [[f64; WEEK_H + 1]; BLOCKS] {
    let mut p = [[0.0; WEEK_H + 1]; BLOCKS];
    for h in 0..WEEK_H {
        for (k, row) in p.iter_mut().enumerate() {
            row[h + 1] = row[h] + f64::from(u8::from(block_of(h) == k));
        }
    }
    p
}

/// One stretch as whole hours: its first whole hour (hours since the epoch, UTC), the count of whole
/// hours, and the fractions of the hours it starts and ends in.
#[derive(Debug, Clone, Copy)]
struct Span {
    first: i64,
    whole: i64,
    head: (i64, f64),
    tail: (i64, f64),
}

impl Span {
    fn of(o: &Observed) -> Span {
        let h0 = o.from_ms.div_euclid(HOUR_MS);
        let h1 = o.to_ms.div_euclid(HOUR_MS);
        if h0 == h1 {
            let f = (o.to_ms - o.from_ms) as f64 / HOUR_MS as f64;
            return Span {
                first: h0 + 1,
                whole: 0,
                head: (h0, f),
                tail: (h1, 0.0),
            };
        }
        Span {
            first: h0 + 1,
            whole: h1 - h0 - 1,
            head: (
                h0,
                (HOUR_MS - o.from_ms.rem_euclid(HOUR_MS)) as f64 / HOUR_MS as f64,
            ),
            tail: (h1, o.to_ms.rem_euclid(HOUR_MS) as f64 / HOUR_MS as f64),
        }
    }

    /// Its hours in each block of a clock `offset` hours east of UTC.
    fn hours(&self, offset: i32, p: &[[f64; WEEK_H + 1]; BLOCKS]) -> [f64; BLOCKS] {
        let local = |h: i64| (h + i64::from(offset)).rem_euclid(WEEK_H as i64) as usize;
        let mut x = [0.0; BLOCKS];
        x[block_of(local(self.head.0))] += self.head.1;
        x[block_of(local(self.tail.0))] += self.tail.1;
        let weeks = (self.whole / WEEK_H as i64) as f64;
        let rest = (self.whole % WEEK_H as i64) as usize;
        let s = local(self.first);
        for (k, xk) in x.iter_mut().enumerate() {
            let row = &p[k];
            let within = if s + rest <= WEEK_H {
                row[s + rest] - row[s]
            } else {
                row[WEEK_H] - row[s] + row[s + rest - WEEK_H]
            };
            *xk += weeks * row[WEEK_H] + within;
        }
        x
    }
}

/// Weighted least squares of the losses on the block hours (a small ridge keeps blocks no stretch
/// touches solvable): the rates and the standardized residuals.
fn residuals(rows: &[([f64; BLOCKS], f64, f64)]) -> Option<([f64; BLOCKS], Vec<f64>)> {
    let mut m = [[0.0; BLOCKS]; BLOCKS];
    let mut b = [0.0; BLOCKS];
    for (x, y, w) in rows {
        // a stretch of a day or two falls in two or three blocks: the others add exact zeros
        for i in 0..BLOCKS {
            if x[i] == 0.0 {
                continue;
            }
            b[i] += w * x[i] * y;
            for j in 0..BLOCKS {
                m[i][j] += w * x[i] * x[j];
            }
        }
    }
    let trace: f64 = (0..BLOCKS).map(|i| m[i][i]).sum();
    for (i, row) in m.iter_mut().enumerate() {
        row[i] += 1e-9 * trace.max(1e-300);
    }
    let (rate, _) = solve_spd_with(m, b, false)?;
    let z = rows
        .iter()
        .map(|(x, y, w)| (y - x.iter().zip(&rate).map(|(a, r)| a * r).sum::<f64>()) * w.sqrt())
        .collect();
    Some((rate, z))
}

/// The site's clock from the stretches no fill touches, hours east of UTC: Some(offset) when one
/// other than UTC explains the use significantly better (see the module's note), else None.
pub(crate) fn infer_offset_hours(observed: &[Observed]) -> Option<i32> {
    let spans: Vec<(Span, f64, f64)> = observed
        .iter()
        .filter(|o| o.to_ms > o.from_ms && o.to_ms - o.from_ms <= LONGEST_MS)
        .map(|o| {
            let days = (o.to_ms - o.from_ms) as f64 / (24 * HOUR_MS) as f64;
            (Span::of(o), o.lost_kg, 1.0 / days.max(1.0 / 24.0))
        })
        .collect();
    if spans.len() < MIN_STRETCHES {
        return None;
    }
    // at most every k-th stretch, so a long daily record costs no more than a few months of one
    let k = spans.len().div_ceil(MAX_STRETCHES);
    let spans: Vec<(Span, f64, f64)> = spans.into_iter().step_by(k).collect();
    let n = spans.len();
    let p = prefix();
    let rows_at = |offset: i32| -> Vec<([f64; BLOCKS], f64, f64)> {
        spans
            .iter()
            .map(|(s, y, w)| (s.hours(offset, &p), *y, *w))
            .collect()
    };
    let (_, z_utc) = residuals(&rows_at(0))?;
    let scale = mad_sigma(&z_utc)?;
    if scale.is_nan() || scale <= 0.0 {
        return None;
    }
    let cap = (3.0 * scale).powi(2);
    let score = |z: &[f64]| z.iter().map(|e| (e * e).min(cap)).sum::<f64>();
    let s_utc = score(&z_utc);
    // a clock and the one twelve hours from it swap the day and the night, and where the readings
    // fall on weekdays they fit alike: of the two, the one whose weekday day uses at least as much
    // as its night (a customer's work is by day)
    let try_at = |o: i32| {
        let (rate, z) = residuals(&rows_at(o))?;
        (rate[0] >= rate[1]).then(|| (o, score(&z)))
    };
    let better = |a: Option<(i32, f64)>, b: Option<(i32, f64)>| match (a, b) {
        (Some(x), Some(y)) => Some(if y.1 < x.1 { y } else { x }),
        (x, y) => x.or(y),
    };
    // every third hour, then the two either side of the best (use that follows the clock changes
    // slowly with it: a working day shorter than the model's day fits alike over a few hours)
    let coarse = OFFSETS
        .step_by(COARSE_STEP as usize)
        .filter(|&o| o != 0)
        .map(try_at)
        .fold(None, better)?;
    let (best, s_best) = (-2..=2)
        .map(|d| coarse.0 + d)
        .filter(|&o| is_candidate(o) && o != coarse.0)
        .map(try_at)
        .fold(Some(coarse), better)?;
    let others = (OFFSETS.end() - OFFSETS.start()) as f64;
    let z = normal_quantile(1.0 - 0.5 * ALPHA / others);
    let ratio = n as f64 * (s_utc / s_best.max(1e-300)).ln();
    (ratio > z * z).then_some(best)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A whole week covers each block by its hours: 5 × 12 weekday day hours, 5 × 12 night hours,
    /// 12 and 12 on Saturday and on Sunday, whatever the clock; and a stretch from Thursday
    /// 1970-01-01 05:30 to 07:15 UTC has half an hour of night and 1.25 h of day on the UTC clock,
    /// 1.75 h of night on a clock two hours west (03:30 to 05:15).
    #[test]
    fn hours_fall_in_the_clocks_blocks() {
        let p = prefix();
        let week = Observed {
            from_ms: 3 * HOUR_MS,
            to_ms: 3 * HOUR_MS + 168 * HOUR_MS,
            lost_kg: 0.0,
        };
        for offset in [-5, 0, 3] {
            let x = Span::of(&week).hours(offset, &p);
            assert_eq!(x, [60.0, 60.0, 12.0, 12.0, 12.0, 12.0], "{offset}");
        }
        let short = Observed {
            from_ms: 5 * HOUR_MS + HOUR_MS / 2,
            to_ms: 7 * HOUR_MS + HOUR_MS / 4,
            lost_kg: 0.0,
        };
        let utc = Span::of(&short).hours(0, &p);
        assert!(
            (utc[0] - 1.25).abs() < 1e-12 && (utc[1] - 0.5).abs() < 1e-12,
            "{utc:?}"
        );
        let west = Span::of(&short).hours(-2, &p);
        assert!(
            (west[1] - 1.75).abs() < 1e-12 && west[0].abs() < 1e-12,
            "{west:?}"
        );
    }

    /// A laboratory five hours west of UTC: 100 kg/h from 08:00 to 18:00 local on weekdays, nothing
    /// else, read once each weekday at an hour that moves through the working day (a fixed
    /// sequence), for twelve weeks, with reading noise: the clock found puts the working day in the
    /// model's weekday day, −7 to −4 hours (constructed example; +5 to +8 fit as well, day and night
    /// swapped, and are passed over). With the same use at every hour of the week no clock is
    /// chosen.
    #[test]
    fn a_laboratorys_clock_is_found_from_its_use() {
        let local_rate = |h_utc: i64, offset: i64| {
            let l = (h_utc + offset).rem_euclid(168) as usize;
            let weekday = !matches!(l / 24, 2 | 3);
            if weekday && (8..18).contains(&(l % 24)) {
                100.0
            } else {
                0.0
            }
        };
        let use_between = |a: i64, b: i64, flat: bool| -> f64 {
            // exact to the minute
            (a / 60_000..b / 60_000)
                .map(|m| {
                    if flat {
                        50.0 / 60.0
                    } else {
                        local_rate(m / 60, -5) / 60.0
                    }
                })
                .sum()
        };
        let mut times = Vec::new();
        for day in 0..84_i64 {
            let local_day = day * 24; // hours since the epoch at local midnight, shifted below
            let weekday = !matches!(day.rem_euclid(7), 2 | 3);
            if weekday {
                let hour = 8 + (day * 5) % 9; // 08:00 to 16:00 local
                times.push((local_day + hour + 5) * HOUR_MS + (day % 4) * 900_000);
            }
        }
        // reading noise: a fixed pseudo-random sequence of ±20 kg at most (a linear congruential
        // generator, Knuth's MMIX constants)
        let mut state: u64 = 7;
        let mut noise = || {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            ((state >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 40.0
        };
        for flat in [false, true] {
            let obs: Vec<Observed> = times
                .windows(2)
                .map(|w| Observed {
                    from_ms: w[0],
                    to_ms: w[1],
                    lost_kg: use_between(w[0], w[1], flat) + noise(),
                })
                .collect();
            let found = infer_offset_hours(&obs);
            if flat {
                assert_eq!(found, None);
            } else {
                // the working day (ten hours) lies within the model's day (twelve) on the clocks
                // −7 to −4 alike
                assert!(found.is_some_and(|o| (-7..=-4).contains(&o)), "{found:?}");
            }
        }
    }
}
