//! Strapping tables: measured level -> volume pairs, interpolated with a monotone cubic.
//!
//! Interpolation is piecewise cubic Hermite with slopes limited by the method of F. N. Fritsch and
//! R. E. Carlson, "Monotone Piecewise Cubic Interpolation", SIAM J. Numer. Anal. 17 (1980) 238–246,
//! so a strictly increasing table gives a strictly increasing, C¹ volume curve that can be inverted.

use serde::{Deserialize, Serialize};

use crate::error::{Result, TankError};

/// The serialised form of a strapping table: levels (m) and volumes (m³), row by row.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StrappingSpec {
    /// Levels, m, strictly increasing, the first 0.
    pub levels_m: Vec<f64>,
    /// Volumes, m³, strictly increasing, the first >= 0.
    pub volumes_m3: Vec<f64>,
}

/// A checked strapping table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "StrappingSpec", into = "StrappingSpec")]
pub struct StrappingTable {
    levels: Vec<f64>,
    volumes: Vec<f64>,
    slopes: Vec<f64>,
}

impl TryFrom<StrappingSpec> for StrappingTable {
    type Error = TankError;
    fn try_from(s: StrappingSpec) -> Result<Self> {
        StrappingTable::new(s.levels_m, s.volumes_m3)
    }
}

impl From<StrappingTable> for StrappingSpec {
    fn from(t: StrappingTable) -> Self {
        StrappingSpec {
            levels_m: t.levels,
            volumes_m3: t.volumes,
        }
    }
}

impl StrappingTable {
    /// A table from levels (m) and volumes (m³). Rejects fewer than two rows, unequal lengths,
    /// a first level other than 0, non-finite values and any row that does not rise in both.
    pub fn new(levels_m: Vec<f64>, volumes_m3: Vec<f64>) -> Result<Self> {
        if levels_m.len() != volumes_m3.len() {
            return Err(TankError::StrappingTable {
                row: levels_m.len().min(volumes_m3.len()),
                reason: "levels and volumes differ in length",
            });
        }
        if levels_m.len() < 2 {
            return Err(TankError::StrappingTable {
                row: 0,
                reason: "needs at least two rows",
            });
        }
        if levels_m.first() != Some(&0.0) {
            return Err(TankError::StrappingTable {
                row: 0,
                reason: "first level must be 0",
            });
        }
        for (row, (h, v)) in levels_m.iter().zip(&volumes_m3).enumerate() {
            if !h.is_finite() || !v.is_finite() || *v < 0.0 {
                return Err(TankError::StrappingTable {
                    row,
                    reason: "level and volume must be finite, volume >= 0",
                });
            }
        }
        for row in 1..levels_m.len() {
            if levels_m[row] <= levels_m[row - 1] {
                return Err(TankError::StrappingTable {
                    row,
                    reason: "levels must strictly increase",
                });
            }
            if volumes_m3[row] <= volumes_m3[row - 1] {
                return Err(TankError::StrappingTable {
                    row,
                    reason: "volumes must strictly increase",
                });
            }
        }
        let slopes = fritsch_carlson_slopes(&levels_m, &volumes_m3);
        Ok(StrappingTable {
            levels: levels_m,
            volumes: volumes_m3,
            slopes,
        })
    }

    /// Highest level in the table, m.
    pub fn max_level_m(&self) -> f64 {
        self.levels.last().copied().unwrap_or(0.0)
    }

    /// Volume at the highest level, m³.
    pub fn max_volume_m3(&self) -> f64 {
        self.volumes.last().copied().unwrap_or(0.0)
    }

    /// Rows as (level m, volume m³).
    pub fn rows(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.levels
            .iter()
            .copied()
            .zip(self.volumes.iter().copied())
    }

    /// Index k of the interval [x_k, x_k+1] holding x (clamped to the table).
    fn interval(xs: &[f64], x: f64) -> usize {
        let n = xs.len();
        match xs.binary_search_by(|p| p.total_cmp(&x)) {
            Ok(i) => i.min(n - 2),
            Err(i) => i.saturating_sub(1).min(n - 2),
        }
    }

    fn check_level(&self, level_m: f64) -> Result<f64> {
        let top = self.max_level_m();
        if level_m.is_finite() && (0.0..=top).contains(&level_m) {
            Ok(level_m)
        } else {
            Err(TankError::LevelOutOfRange {
                level_m,
                height_m: top,
            })
        }
    }

    /// Hermite basis evaluation on interval k at t in [0, 1]: (value, d value / d level).
    fn hermite(&self, k: usize, t: f64) -> (f64, f64) {
        let (x0, x1) = (self.levels[k], self.levels[k + 1]);
        let (y0, y1) = (self.volumes[k], self.volumes[k + 1]);
        let (m0, m1) = (self.slopes[k], self.slopes[k + 1]);
        let dx = x1 - x0;
        let (t2, t3) = (t * t, t * t * t);
        let v = (2.0 * t3 - 3.0 * t2 + 1.0) * y0
            + (t3 - 2.0 * t2 + t) * dx * m0
            + (-2.0 * t3 + 3.0 * t2) * y1
            + (t3 - t2) * dx * m1;
        let dv = ((6.0 * t2 - 6.0 * t) * y0
            + (3.0 * t2 - 4.0 * t + 1.0) * dx * m0
            + (-6.0 * t2 + 6.0 * t) * y1
            + (3.0 * t2 - 2.0 * t) * dx * m1)
            / dx;
        (v, dv)
    }

    /// Interpolated volume at a level, m³.
    pub fn volume_from_level(&self, level_m: f64) -> Result<f64> {
        let h = self.check_level(level_m)?;
        let k = Self::interval(&self.levels, h);
        let t = (h - self.levels[k]) / (self.levels[k + 1] - self.levels[k]);
        Ok(self.hermite(k, t).0)
    }

    /// Slope dV/dh of the interpolant at a level, m².
    pub fn slope_at_level(&self, level_m: f64) -> Result<f64> {
        let h = self.check_level(level_m)?;
        let k = Self::interval(&self.levels, h);
        let t = (h - self.levels[k]) / (self.levels[k + 1] - self.levels[k]);
        Ok(self.hermite(k, t).1)
    }

    /// Level at which the interpolant gives `volume_m3`: the interval by binary search, then
    /// Newton steps on the (monotone) cubic, kept inside the interval by bisection.
    pub fn level_from_volume(&self, volume_m3: f64) -> Result<f64> {
        let (v_min, v_max) = (self.volumes[0], self.max_volume_m3());
        if !(volume_m3.is_finite() && (v_min..=v_max).contains(&volume_m3)) {
            return Err(TankError::VolumeOutOfRange {
                volume_m3,
                gross_m3: v_max,
            });
        }
        let k = Self::interval(&self.volumes, volume_m3);
        let (mut lo, mut hi) = (0.0_f64, 1.0_f64);
        let span = self.volumes[k + 1] - self.volumes[k];
        let dx = self.levels[k + 1] - self.levels[k];
        let mut t = (volume_m3 - self.volumes[k]) / span;
        let mut residual = f64::INFINITY;
        for _ in 0..100 {
            let (v, dv) = self.hermite(k, t);
            residual = v - volume_m3;
            if residual.abs() <= 1e-14 * v_max {
                return Ok(self.levels[k] + t * dx);
            }
            if residual > 0.0 {
                hi = t;
            } else {
                lo = t;
            }
            if hi - lo < 1e-15 {
                return Ok(self.levels[k] + t * dx);
            }
            let step = t - residual / (dv * dx);
            t = if dv > 0.0 && step > lo && step < hi {
                step
            } else {
                0.5 * (lo + hi)
            };
        }
        Err(TankError::NotConverged {
            iterations: 100,
            residual,
        })
    }
}

/// Fritsch–Carlson slopes for strictly increasing data.
fn fritsch_carlson_slopes(x: &[f64], y: &[f64]) -> Vec<f64> {
    let n = x.len();
    let delta: Vec<f64> = (0..n - 1)
        .map(|k| (y[k + 1] - y[k]) / (x[k + 1] - x[k]))
        .collect();
    let mut m = vec![0.0; n];
    m[0] = delta[0];
    m[n - 1] = delta[n - 2];
    for k in 1..n - 1 {
        m[k] = if delta[k - 1] * delta[k] <= 0.0 {
            0.0
        } else {
            0.5 * (delta[k - 1] + delta[k])
        };
    }
    for k in 0..n - 1 {
        if delta[k] == 0.0 {
            m[k] = 0.0;
            m[k + 1] = 0.0;
            continue;
        }
        let (a, b) = (m[k] / delta[k], m[k + 1] / delta[k]);
        let s = a * a + b * b;
        if s > 9.0 {
            let tau = 3.0 / s.sqrt();
            m[k] = tau * a * delta[k];
            m[k + 1] = tau * b * delta[k];
        }
    }
    m
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A cubic Hermite reproduces data that are linear exactly (calculus), tolerance 1e-14.
    #[test]
    fn linear_table_is_exact() {
        let t = StrappingTable::new(vec![0.0, 0.5, 1.0, 2.0], vec![0.0, 1.0, 2.0, 4.0]).unwrap();
        for i in 0..=40 {
            let h = f64::from(i) * 0.05;
            assert!((t.volume_from_level(h).unwrap() - 2.0 * h).abs() < 1e-14);
            assert!((t.level_from_volume(2.0 * h).unwrap() - h).abs() < 1e-13);
        }
    }

    /// Passes through every row (interpolation property), tolerance 1e-15 relative.
    #[test]
    fn hits_rows_and_stays_monotone() {
        let levels = vec![0.0, 0.1, 0.2, 0.9, 1.0, 1.8, 2.0];
        let volumes = vec![0.0, 0.01, 0.5, 0.6, 2.0, 2.01, 3.0];
        let t = StrappingTable::new(levels.clone(), volumes.clone()).unwrap();
        for (h, v) in levels.iter().zip(&volumes) {
            assert!((t.volume_from_level(*h).unwrap() - v).abs() <= 1e-15 * 3.0);
        }
        let mut prev = -1.0;
        for i in 0..=2000 {
            let v = t.volume_from_level(f64::from(i) * 1e-3).unwrap();
            assert!(v >= prev, "not monotone at {i}");
            prev = v;
        }
    }

    #[test]
    fn rejects_bad_tables() {
        assert!(matches!(
            StrappingTable::new(vec![0.0, 1.0, 1.0], vec![0.0, 1.0, 2.0]),
            Err(TankError::StrappingTable { row: 2, .. })
        ));
        assert!(matches!(
            StrappingTable::new(vec![0.0, 1.0, 2.0], vec![0.0, 1.0, 0.5]),
            Err(TankError::StrappingTable { row: 2, .. })
        ));
        assert!(StrappingTable::new(vec![0.1, 1.0], vec![0.0, 1.0]).is_err());
        assert!(StrappingTable::new(vec![0.0], vec![0.0]).is_err());
    }
}
