//! Histograms of the Monte Carlo builds: equal-width bins over the builds' own range. The renderers live in
//! [`crate::report::histogram`].

use serde::Serialize;

/// Counts of samples in equal-width bins between `lo` and `hi`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Histogram {
    /// The lower edge of the first bin (SI base units).
    pub lo: f64,
    /// The upper edge of the last bin.
    pub hi: f64,
    /// Samples in each bin, lowest first.
    pub counts: Vec<u64>,
}

impl Histogram {
    /// Bins spanning the samples' own range; a sample at `hi` counts in the last bin. A range of zero width
    /// (every sample equal) is widened by a part in a million so that the bins still have a width.
    pub fn of(samples: &[f64], bins: usize) -> Histogram {
        let bins = bins.max(1);
        let finite = samples.iter().copied().filter(|x| x.is_finite());
        let (mut lo, mut hi) = finite.fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), x| {
            (l.min(x), h.max(x))
        });
        if lo > hi {
            return Histogram {
                lo: 0.0,
                hi: 0.0,
                counts: vec![0; bins],
            };
        }
        if hi - lo <= 1e-6 * lo.abs().max(hi.abs()).max(f64::MIN_POSITIVE) {
            let pad = 1e-6 * lo.abs().max(1e-300);
            lo -= pad;
            hi += pad;
        }
        let mut counts = vec![0u64; bins];
        let scale = bins as f64 / (hi - lo);
        for &x in samples.iter().filter(|x| x.is_finite()) {
            let k = (((x - lo) * scale) as usize).min(bins - 1);
            counts[k] += 1;
        }
        Histogram { lo, hi, counts }
    }

    /// The width of one bin.
    pub fn width(&self) -> f64 {
        (self.hi - self.lo) / self.counts.len() as f64
    }

    /// The bin's centre.
    pub fn centre(&self, k: usize) -> f64 {
        self.lo + (k as f64 + 0.5) * self.width()
    }

    /// The number of samples counted.
    pub fn total(&self) -> u64 {
        self.counts.iter().sum()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_every_sample_once_in_the_right_bin() {
        // 0..10 in 5 bins of width 2: {0,1}, {2,3}, {4,5}, {6,7}, {8,9,10} (the top edge joins the last bin).
        let xs: Vec<f64> = (0..=10).map(f64::from).collect();
        let h = Histogram::of(&xs, 5);
        assert_eq!(h.counts, vec![2, 2, 2, 2, 3]);
        assert_eq!((h.lo, h.hi), (0.0, 10.0));
        assert_eq!(h.total(), 11);
        assert!((h.centre(0) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn a_constant_sample_and_an_empty_one() {
        let h = Histogram::of(&[2e-3; 7], 4);
        assert_eq!(h.total(), 7);
        assert!(h.lo < 2e-3 && h.hi > 2e-3);
        let e = Histogram::of(&[], 4);
        assert_eq!(e.total(), 0);
    }
}
