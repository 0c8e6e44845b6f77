//! Geometry against an independent, test-only numerical integration of the head profiles, and
//! round-trip / monotonicity properties (proptest).

use proptest::prelude::*;
use std::f64::consts::PI;
use tank::{Cylinder, Geometry, Head, Orientation, SolverOptions, StrappingTable};

/// Radius of a head's circular section at axial distance `x` (0 = tangent line, `a` = apex),
/// written here from the profile's definition, independently of the engine.
fn profile(head: Head, d: f64, x: f64) -> f64 {
    let r = d / 2.0;
    match head {
        Head::Flat => 0.0,
        Head::Hemispherical => (r * r - x * x).max(0.0).sqrt(),
        Head::Ellipsoidal { depth_ratio } => {
            let a = depth_ratio * d;
            r * (1.0 - (x / a).powi(2)).max(0.0).sqrt()
        }
        Head::Torispherical {
            crown_ratio,
            knuckle_ratio,
        } => {
            let (rc, rk) = (crown_ratio * d, knuckle_ratio * d);
            let a = head.depth_m(d);
            let crown = |x: f64| (rc * rc - (x - (a - rc)).powi(2)).max(0.0).sqrt();
            let knuckle = |x: f64| (r - rk) + (rk * rk - x * x).max(0.0).sqrt();
            // The junction is where the two circles touch: golden-section search for the
            // smallest gap crown − knuckle on [0, rk].
            let (mut lo, mut hi) = (0.0, rk);
            let phi = 0.5 * (5f64.sqrt() - 1.0);
            for _ in 0..200 {
                let (m1, m2) = (hi - phi * (hi - lo), lo + phi * (hi - lo));
                if crown(m1) - knuckle(m1) < crown(m2) - knuckle(m2) {
                    hi = m2
                } else {
                    lo = m1
                }
            }
            if x <= 0.5 * (lo + hi) {
                knuckle(x)
            } else {
                crown(x)
            }
        }
    }
}

/// Composite Simpson's rule with n (even) panels.
fn simpson(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
    if b <= a {
        return 0.0;
    }
    let h = (b - a) / n as f64;
    let mut s = f(a) + f(b);
    for i in 1..n {
        s += f(a + h * i as f64) * if i % 2 == 1 { 4.0 } else { 2.0 };
    }
    s * h / 3.0
}

fn segment(r: f64, d: f64) -> f64 {
    if r <= d.abs() {
        return if d < 0.0 { PI * r * r } else { 0.0 };
    }
    r * r * (d / r).acos() - d * (r * r - d * d).sqrt()
}

fn reference_volume(o: Orientation, d: f64, l: f64, head: Head, h: f64) -> f64 {
    let a = head.depth_m(d);
    let r = d / 2.0;
    let n = 20_000;
    match o {
        Orientation::Vertical => {
            let bottom = simpson(|z| PI * profile(head, d, a - z).powi(2), 0.0, h.min(a), n);
            let shell = PI * r * r * (h.min(a + l) - a).max(0.0);
            let top = simpson(
                |z| PI * profile(head, d, z - a - l).powi(2),
                a + l,
                h.max(a + l),
                n,
            );
            bottom + shell + top
        }
        Orientation::Horizontal => {
            let dd = r - h;
            l * segment(r, dd) + 2.0 * simpson(|x| segment(profile(head, d, x), dd), 0.0, a, n)
        }
    }
}

fn heads() -> impl Strategy<Value = Head> {
    prop_oneof![
        Just(Head::Flat),
        Just(Head::Hemispherical),
        (0.1f64..0.6).prop_map(|depth_ratio| Head::Ellipsoidal { depth_ratio }),
        (0.6f64..1.5, 0.03f64..0.3).prop_map(|(crown_ratio, knuckle_ratio)| Head::Torispherical {
            crown_ratio,
            knuckle_ratio
        }),
    ]
}

fn cylinders() -> impl Strategy<Value = Cylinder> {
    (
        prop_oneof![Just(Orientation::Vertical), Just(Orientation::Horizontal)],
        0.5f64..4.0,
        0.5f64..15.0,
        heads(),
    )
        .prop_map(|(o, d, l, head)| Cylinder::new(o, d, l, head).unwrap())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    /// Engine volume vs test-only Simpson integration of the profile (20 000 panels; the kinks
    /// where the liquid meets the wall limit it to ~1e-7 relative). Tolerance 1e-6 of gross volume.
    #[test]
    fn volume_matches_numerical_integration(c in cylinders(), frac in 0.0f64..=1.0) {
        let s = c.spec();
        let h = frac * c.inner_height_m();
        let got = c.volume_from_level(h).unwrap();
        let want = reference_volume(s.orientation, s.diameter_m, s.length_m, s.head, h);
        prop_assert!((got - want).abs() <= 1e-6 * c.gross_volume_m3(), "{:?} h={} got={} want={}", s, h, got, want);
    }

    /// level -> volume -> level returns the level (1e-9 of the height; solver tolerance 1e-13 of
    /// gross volume, but dV/dh vanishes at the bottom of a dished head, so the level is less sharp there).
    #[test]
    fn level_volume_round_trip(c in cylinders(), frac in 0.0f64..=1.0) {
        let h = frac * c.inner_height_m();
        let v = c.volume_from_level(h).unwrap();
        let back = c.level_from_volume(v, &SolverOptions::default()).unwrap();
        let v_back = c.volume_from_level(back).unwrap();
        prop_assert!((v_back - v).abs() <= 1e-12 * c.gross_volume_m3());
        prop_assert!((back - h).abs() <= 1e-6 * c.inner_height_m(), "h={} back={}", h, back);
    }

    /// Volume rises with level (strictly, except where dV/dh = 0 at a dished bottom).
    #[test]
    fn volume_monotonic(c in cylinders(), a in 0.0f64..=1.0, b in 0.0f64..=1.0) {
        let (lo, hi) = if a < b { (a, b) } else { (b, a) };
        let height = c.inner_height_m();
        prop_assert!(c.volume_from_level(lo * height).unwrap() <= c.volume_from_level(hi * height).unwrap());
    }

    /// A strapping table sampled from a cylinder every 1/40 of its height and inverted.
    #[test]
    fn strapping_round_trip(c in cylinders(), frac in 0.0f64..=1.0) {
        let height = c.inner_height_m();
        let levels: Vec<f64> = (0..=40).map(|i| (height * f64::from(i) / 40.0).min(height)).collect();
        let volumes: Vec<f64> = levels.iter().map(|h| c.volume_from_level(*h).unwrap()).collect();
        let table = StrappingTable::new(levels, volumes).unwrap();
        let g = Geometry::from(table);
        let h = frac * height;
        let v = g.volume_from_level(h).unwrap();
        let back = g.level_from_volume(v, &SolverOptions::default()).unwrap();
        prop_assert!((back - h).abs() <= 1e-9 * height);
        // Monotone cubic through 41 points of a smooth curve: within 0.5 % of gross volume
        // (interpolation error, common practice, no source).
        prop_assert!((v - c.volume_from_level(h).unwrap()).abs() <= 5e-3 * c.gross_volume_m3());
    }
}
