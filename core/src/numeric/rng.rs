//! The random number generator behind every seeded result.
//!
//! xoshiro256** (Blackman & Vigna 2018) seeded through SplitMix64, uniform doubles from the top
//! 53 bits, normals by the Box-Muller transform with the pure-Rust `libm` port of musl's `log`,
//! `sin` and `cos`. Every step is integer arithmetic or IEEE-754 basic operations plus those
//! fixed libm routines, so the same seed gives the same bits on every platform and front.
//! Each stream is keyed by (seed, index), so subject `i` draws the same numbers however many
//! subjects are asked for and whichever thread runs it.

/// A xoshiro256** stream.
#[derive(Debug, Clone)]
pub struct Rng {
    s: [u64; 4],
    spare: Option<f64>,
}

fn splitmix64(state: &mut u64) -> u64 {
    *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// A well-mixed 64-bit key for the pair (`a`, `b`) under `seed`: the same on every platform,
/// so a sample chosen by smallest keys does not depend on the order pairs are visited in.
pub(crate) fn pair_key(seed: u64, a: u64, b: u64) -> u64 {
    let mut s = seed ^ a.wrapping_mul(0xD1B5_4A32_D192_ED03);
    let h = splitmix64(&mut s);
    let mut s = h ^ b.wrapping_mul(0x8CB9_2BA7_2F3D_8DD7);
    splitmix64(&mut s)
}

impl Rng {
    /// The stream for (`seed`, `index`).
    ///
    /// # Examples
    /// ```
    /// use trajweave_core::numeric::rng::Rng;
    /// let mut a = Rng::new(7, 0);
    /// let mut b = Rng::new(7, 0);
    /// assert_eq!(a.next_u64(), b.next_u64());
    /// ```
    pub fn new(seed: u64, index: u64) -> Rng {
        let mut sm = splitmix64(&mut seed.clone()) ^ index.wrapping_mul(0xD1B5_4A32_D192_ED03);
        let s = [
            splitmix64(&mut sm),
            splitmix64(&mut sm),
            splitmix64(&mut sm),
            splitmix64(&mut sm),
        ];
        Rng { s, spare: None }
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        let s = &mut self.s;
        let result = s[1].wrapping_mul(5).rotate_left(7).wrapping_mul(9);
        let t = s[1] << 17;
        s[2] ^= s[0];
        s[3] ^= s[1];
        s[1] ^= s[2];
        s[0] ^= s[3];
        s[2] ^= t;
        s[3] = s[3].rotate_left(45);
        result
    }

    /// A uniform double in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / 9_007_199_254_740_992.0)
    }

    /// A standard normal draw (Box-Muller; the second value of each pair is kept for the next call).
    pub fn normal(&mut self) -> f64 {
        if let Some(z) = self.spare.take() {
            return z;
        }
        let u1 = 1.0 - self.uniform(); // in (0, 1], so the log is finite
        let u2 = self.uniform();
        let r = (-2.0 * libm::log(u1)).sqrt();
        let a = 2.0 * std::f64::consts::PI * u2;
        self.spare = Some(r * libm::sin(a));
        r * libm::cos(a)
    }

    /// True with probability `p`.
    pub fn bernoulli(&mut self, p: f64) -> bool {
        self.uniform() < p
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn xoshiro_reference_sequence() {
        // Reference output of xoshiro256** for state [1, 2, 3, 4], from the authors' C code
        // (prng.di.unimi.it, xoshiro256starstar.c), as quoted in the rand_xoshiro crate's tests.
        let mut r = Rng {
            s: [1, 2, 3, 4],
            spare: None,
        };
        let expected: [u64; 5] = [
            11520,
            0,
            1509978240,
            1215971899390074240,
            1216172134540287360,
        ];
        for e in expected {
            assert_eq!(r.next_u64(), e);
        }
    }

    #[test]
    fn normal_moments() {
        let mut r = Rng::new(42, 3);
        let n = 200_000;
        let z: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        let mean = z.iter().sum::<f64>() / n as f64;
        let var = z.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        // Closed form: mean 0, variance 1; 5 standard errors.
        assert!(mean.abs() < 5.0 / (n as f64).sqrt());
        assert!((var - 1.0).abs() < 5.0 * (2.0 / n as f64).sqrt());
    }
}
