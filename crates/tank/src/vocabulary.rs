//! The trade's words for a vessel, defined once for the whole workspace: how its axis stands
//! ([`Orientation`]), the kind of its heads ([`HeadShape`]), and the range of sizes a real bulk tank
//! has ([`PLAUSIBLE_DIAMETER_M`], [`PLAUSIBLE_LENGTH_M`]). Each word has one parser (`FromStr`,
//! ASCII case-insensitive) used by the CSV importer, the window's forms and the command line.

use std::fmt;
use std::ops::RangeInclusive;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

use crate::error::TankError;
use crate::geometry::Head;

/// Inner diameters a bulk tank can have, m: from a small 0.2 m dewar-sized vessel to a 20 m
/// flat-bottomed storage tank (common practice, no source; wide on purpose, to refuse typing slips
/// such as a diameter in millimetres entered as metres).
pub const PLAUSIBLE_DIAMETER_M: RangeInclusive<f64> = 0.2..=20.0;

/// Straight-shell lengths a bulk tank can have, m (0 for a sphere-like vessel of two hemispherical
/// heads; 60 m covers the longest horizontal storage vessels; common practice, no source).
pub const PLAUSIBLE_LENGTH_M: RangeInclusive<f64> = 0.0..=60.0;

macro_rules! word {
    ($(#[$doc:meta])* $name:ident, $what:literal, { $($(#[$vdoc:meta])* $var:ident => $text:literal),+ $(,)? }) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
        #[serde(rename_all = "kebab-case")]
        pub enum $name { $($(#[$vdoc])* $var),+ }

        impl $name {
            /// Every value, in the order offered to users.
            pub const ALL: &'static [Self] = &[$(Self::$var),+];
            /// The name used in files, the database and on the command line.
            pub fn as_str(self) -> &'static str { match self { $(Self::$var => $text),+ } }
        }

        impl FromStr for $name {
            type Err = TankError;
            fn from_str(s: &str) -> Result<Self, TankError> {
                let wanted = s.trim();
                Self::ALL
                    .iter()
                    .copied()
                    .find(|v| v.as_str().eq_ignore_ascii_case(wanted))
                    .ok_or_else(|| TankError::UnknownName {
                        what: $what,
                        given: wanted.to_string(),
                        expected: &[$($text),+],
                    })
            }
        }

        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result { f.write_str(self.as_str()) }
        }
    };
}

word!(
    /// Orientation of a cylinder's axis.
    Orientation, "orientation", {
        /// Axis vertical; heads at bottom and top.
        Vertical => "vertical",
        /// Axis horizontal; heads at the ends.
        Horizontal => "horizontal",
    }
);

word!(
    /// The kind of both heads of a cylinder, as a user names it; [`HeadShape::head`] gives the
    /// geometric [`Head`].
    HeadShape, "heads", {
        /// Flat plates.
        Flat => "flat",
        /// Hemispheres (depth D/2).
        Hemispherical => "hemispherical",
        /// 2:1 semi-ellipsoids (depth D/4).
        Ellipsoidal => "ellipsoidal",
        /// Torispherical (flanged and dished); ASME F&D unless the ratios say otherwise.
        Torispherical => "torispherical",
    }
);

impl HeadShape {
    /// The geometric head: a torispherical head takes the given crown and knuckle radii as fractions
    /// of D (ASME flanged and dished, 1.0 and 0.06, when not given); the ratios are ignored otherwise.
    pub fn head(self, crown_ratio: Option<f64>, knuckle_ratio: Option<f64>) -> Head {
        match self {
            HeadShape::Flat => Head::Flat,
            HeadShape::Hemispherical => Head::Hemispherical,
            HeadShape::Ellipsoidal => Head::ELLIPSOIDAL_2_1,
            HeadShape::Torispherical => Head::Torispherical {
                crown_ratio: crown_ratio.unwrap_or(1.0),
                knuckle_ratio: knuckle_ratio.unwrap_or(0.06),
            },
        }
    }
}

impl Head {
    /// The kind of this head (an ellipsoid of any depth is `Ellipsoidal`).
    pub fn shape(&self) -> HeadShape {
        match self {
            Head::Flat => HeadShape::Flat,
            Head::Hemispherical => HeadShape::Hemispherical,
            Head::Ellipsoidal { .. } => HeadShape::Ellipsoidal,
            Head::Torispherical { .. } => HeadShape::Torispherical,
        }
    }
}

/// Refuse a dimension outside the range a real tank has, naming the range.
pub fn check_plausible(
    name: &'static str,
    value: f64,
    range: &RangeInclusive<f64>,
) -> Result<f64, TankError> {
    if value.is_finite() && range.contains(&value) {
        Ok(value)
    } else {
        Err(TankError::Implausible {
            name,
            value,
            low: *range.start(),
            high: *range.end(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Each name parses back to its value, in any case and with spaces around (common practice).
    #[test]
    fn names_round_trip() {
        for o in Orientation::ALL {
            assert_eq!(
                o.as_str().to_uppercase().parse::<Orientation>().ok(),
                Some(*o)
            );
        }
        for h in HeadShape::ALL {
            assert_eq!(format!(" {h} ").parse::<HeadShape>().ok(), Some(*h));
            assert_eq!(h.head(None, None).shape(), *h);
        }
        let e = "dished".parse::<HeadShape>().unwrap_err().to_string();
        assert!(e.contains("'dished'") && e.contains("torispherical"), "{e}");
    }

    #[test]
    fn implausible_sizes_name_the_range() {
        let e = check_plausible("diameter_m", 1e300, &PLAUSIBLE_DIAMETER_M).unwrap_err();
        assert!(
            e.to_string().contains("0.2") && e.to_string().contains("20"),
            "{e}"
        );
        assert!(check_plausible("length_m", f64::NAN, &PLAUSIBLE_LENGTH_M).is_err());
        assert_eq!(
            check_plausible("length_m", 9.0, &PLAUSIBLE_LENGTH_M).ok(),
            Some(9.0)
        );
    }
}
