//! The random numbers behind the Monte Carlo: xoshiro256** (Blackman and Vigna, 2018) seeded through
//! SplitMix64, as its authors recommend, so that any 64-bit seed gives a well-mixed state and the same seed
//! gives the same builds on every machine. Our own few lines rather than a crate: the stream is part of the
//! output's reproducibility, and it must not change under us when a dependency is updated.

/// SplitMix64: a tiny generator used only to expand a seed into a xoshiro state.
#[derive(Clone, Debug)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    /// A generator starting from `seed`.
    pub fn new(seed: u64) -> SplitMix64 {
        SplitMix64(seed)
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
}

/// xoshiro256**: fast, 256 bits of state, and statistically sound for simulation.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Rng {
    s: [u64; 4],
}

impl Rng {
    /// A generator whose state is four SplitMix64 outputs from `seed`.
    pub fn seeded(seed: u64) -> Rng {
        let mut sm = SplitMix64::new(seed);
        Rng {
            s: [sm.next_u64(), sm.next_u64(), sm.next_u64(), sm.next_u64()],
        }
    }

    /// A generator with exactly this state (it must not be all zero).
    pub fn from_state(s: [u64; 4]) -> Rng {
        Rng { s }
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

    /// A uniform draw from [0, 1): the top 53 bits, so every value is a multiple of 2⁻⁵³.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform draw from [−1, 1).
    pub fn symmetric(&mut self) -> f64 {
        2.0 * self.uniform() - 1.0
    }

    /// A standard normal draw (mean 0, sd 1) by Marsaglia's polar method; exact, and needs no tables.
    pub fn normal(&mut self) -> f64 {
        loop {
            let u = self.symmetric();
            let v = self.symmetric();
            let s = u * u + v * v;
            if s > 0.0 && s < 1.0 {
                // The pair's second normal is thrown away: keeping it would make a draw depend on whether
                // the previous call was odd or even, and the saving is not worth that.
                return u * (-2.0 * s.ln() / s).sqrt();
            }
        }
    }

    /// A standard normal draw truncated to [−limit, limit], by rejection.
    pub fn normal_within(&mut self, limit: f64) -> f64 {
        loop {
            let z = self.normal();
            if z.abs() <= limit {
                return z;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix64_matches_its_published_sequence() {
        // Rosetta Code, "Pseudo-random numbers/Splitmix64": the first five outputs for seed 1234567.
        let mut sm = SplitMix64::new(1_234_567);
        let want = [
            6_457_827_717_110_365_317,
            3_203_168_211_198_807_973,
            9_817_491_932_198_370_423,
            4_593_380_528_125_082_431,
            16_408_922_859_458_223_821,
        ];
        for w in want {
            assert_eq!(sm.next_u64(), w);
        }
    }

    #[test]
    fn xoshiro256starstar_matches_the_reference_code() {
        // The first ten outputs of Vigna's reference xoshiro256starstar.c from the state {1, 2, 3, 4}, as
        // published with ports' test suites.
        let mut r = Rng::from_state([1, 2, 3, 4]);
        let want: [u64; 10] = [
            11_520,
            0,
            1_509_978_240,
            1_215_971_899_390_074_240,
            1_216_172_134_540_287_360,
            607_988_272_756_665_600,
            16_172_922_978_634_559_625,
            8_476_171_486_693_032_832,
            10_595_114_339_597_558_777,
            2_904_607_092_377_533_576,
        ];
        for w in want {
            assert_eq!(r.next_u64(), w);
        }
    }

    #[test]
    fn uniform_moments() {
        // U(0, 1) has mean 1/2 and variance 1/12; with n = 200 000 the standard error of the mean is
        // sqrt(1/12/n) = 6.5e-4, and we allow 5 of them.
        let mut r = Rng::seeded(7);
        let n = 200_000;
        let xs: Vec<f64> = (0..n).map(|_| r.uniform()).collect();
        assert!(xs.iter().all(|&x| (0.0..1.0).contains(&x)));
        let mean = xs.iter().sum::<f64>() / n as f64;
        let var = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        assert!(
            (mean - 0.5).abs() < 5.0 * (1.0 / 12.0 / n as f64).sqrt(),
            "{mean}"
        );
        assert!((var - 1.0 / 12.0).abs() < 0.002, "{var}");
    }

    #[test]
    fn normal_matches_the_tables() {
        // Standard normal: P(|Z| < 1) = 0.682 69 and P(|Z| < 2) = 0.954 50 (NIST/SEMATECH e-Handbook of
        // Statistical Methods, table of the normal distribution). With n = 200 000 a proportion near 0.68
        // has a standard error of 0.001; we allow 0.005.
        let mut r = Rng::seeded(11);
        let n = 200_000;
        let zs: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        let frac = |k: f64| zs.iter().filter(|z| z.abs() < k).count() as f64 / n as f64;
        assert!((frac(1.0) - 0.682_69).abs() < 0.005, "{}", frac(1.0));
        assert!((frac(2.0) - 0.954_50).abs() < 0.003, "{}", frac(2.0));
        let mean = zs.iter().sum::<f64>() / n as f64;
        assert!(mean.abs() < 5.0 / (n as f64).sqrt(), "{mean}");
    }

    #[test]
    fn truncated_normal_stays_inside_and_has_its_variance() {
        // Truncated at ±3 the variance is 1 − 2·3·φ(3)/(2Φ(3) − 1) = 1 − 6·0.004 432/0.997 30 = 0.973 3
        // (φ(3) = 0.004 432 and Φ(3) = 0.998 65 from the same NIST tables).
        let mut r = Rng::seeded(3);
        let n = 200_000;
        let zs: Vec<f64> = (0..n).map(|_| r.normal_within(3.0)).collect();
        assert!(zs.iter().all(|z| z.abs() <= 3.0));
        let var = zs.iter().map(|z| z * z).sum::<f64>() / n as f64;
        assert!((var - 0.9733).abs() < 0.01, "{var}");
    }

    #[test]
    fn same_seed_same_stream_other_seed_other_stream() {
        let (mut a, mut b, mut c) = (Rng::seeded(42), Rng::seeded(42), Rng::seeded(43));
        let xa: Vec<u64> = (0..100).map(|_| a.next_u64()).collect();
        let xb: Vec<u64> = (0..100).map(|_| b.next_u64()).collect();
        let xc: Vec<u64> = (0..100).map(|_| c.next_u64()).collect();
        assert_eq!(xa, xb);
        assert!(xa.iter().zip(&xc).all(|(x, y)| x != y));
    }
}
