//! Helpers shared by the test modules.

/// |a - b| / |b|
pub fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

/// Asserts |a - b| <= tol |b| with a message naming what was compared.
#[track_caller]
pub fn assert_rel(what: &str, got: f64, want: f64, tol: f64) {
    let r = rel(got, want);
    assert!(
        r <= tol,
        "{what}: got {got}, want {want}, relative deviation {r:.3e} > {tol:.1e}"
    );
}

/// n points from a to b inclusive.
pub fn lin(a: f64, b: f64, n: usize) -> impl Iterator<Item = f64> {
    (0..n).map(move |i| a + (b - a) * i as f64 / (n - 1) as f64)
}
