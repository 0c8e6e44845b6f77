//! A small deterministic random number generator (no dependency, same stream on every platform).

/// xoshiro256** (Blackman and Vigna, "Scrambled linear pseudorandom number generators", ACM TOMS 47,
/// 2021), seeded through SplitMix64 as its authors recommend.
#[derive(Debug, Clone)]
pub struct Rng {
    s: [u64; 4],
}

fn splitmix(x: &mut u64) -> u64 {
    *x = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut z = *x;
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

impl Rng {
    /// A generator from a seed.
    pub fn new(seed: u64) -> Self {
        let mut x = seed;
        Rng {
            s: [
                splitmix(&mut x),
                splitmix(&mut x),
                splitmix(&mut x),
                splitmix(&mut x),
            ],
        }
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        let result = self.s[1].wrapping_mul(5).rotate_left(7).wrapping_mul(9);
        let t = self.s[1] << 17;
        self.s[2] ^= self.s[0];
        self.s[3] ^= self.s[1];
        self.s[1] ^= self.s[2];
        self.s[0] ^= self.s[3];
        self.s[2] ^= t;
        self.s[3] = self.s[3].rotate_left(45);
        result
    }

    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Uniform in [lo, hi).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.uniform()
    }

    /// Uniform integer in 0 ..n (n > 0).
    pub fn below(&mut self, n: usize) -> usize {
        ((self.uniform() * n as f64) as usize).min(n.saturating_sub(1))
    }

    /// Standard normal (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let u1 = self.uniform().max(1e-300);
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Mean and variance of 100 000 uniform and normal draws (the distributions' moments; tolerances
    /// about 5 standard errors).
    #[test]
    fn moments() {
        let mut r = Rng::new(7);
        let n = 100_000;
        let (mut su, mut sn, mut sn2) = (0.0, 0.0, 0.0);
        for _ in 0..n {
            su += r.uniform();
            let z = r.normal();
            sn += z;
            sn2 += z * z;
        }
        let nf = f64::from(n);
        assert!((su / nf - 0.5).abs() < 5.0 * (1.0 / 12.0 / nf).sqrt());
        assert!((sn / nf).abs() < 5.0 / nf.sqrt());
        assert!((sn2 / nf - 1.0).abs() < 5.0 * (2.0 / nf).sqrt());
        assert_eq!(Rng::new(3).next_u64(), Rng::new(3).next_u64());
    }
}
