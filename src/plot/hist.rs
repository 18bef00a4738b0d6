//! Histogram of the sample scaled to a density (bar heights integrate to the fraction of
//! observations inside the bars), with Freedman–Diaconis bin widths
//! (Freedman & Diaconis 1981: width 2 · IQR · n^(−1/3)).

use super::observations::{Observations, SortedObservations};

/// Bins of equal width from `start`; `density[i]` = count_i / (n · width).
#[derive(Debug, Clone, PartialEq)]
pub struct Histogram {
    pub start: f64,
    pub width: f64,
    pub density: Vec<f64>,
}

/// Bin count limits, so a tiny or huge sample still gives a readable picture.
const MIN_BINS: usize = 6;
const MAX_BINS: usize = 80;

impl Histogram {
    /// Bins spanning the sample's range (n ≥ 2, not constant).
    pub fn of(x: &[f64]) -> Histogram {
        Self::of_sorted(&Observations::new(x.to_vec(), None, false).sorted())
    }

    /// [`Histogram::of`] the expanded sample of `s`, from its sorted (value, count) runs.
    pub fn of_sorted(s: &SortedObservations) -> Histogram {
        let n = s.len();
        let (lo, hi) = (s.at(0), s.at(n - 1));
        let range = hi - lo;
        let iqr = s.quantile(0.75) - s.quantile(0.25);
        let fd = 2.0 * iqr * (n as f64).powf(-1.0 / 3.0);
        let bins = if fd > 0.0 && (range / fd).is_finite() {
            (range / fd).ceil() as usize
        } else {
            // Sturges' rule when the quartiles coincide.
            (n as f64).log2().ceil() as usize + 1
        }
        .clamp(MIN_BINS, MAX_BINS);
        let width = range / bins as f64;
        let mut counts = vec![0usize; bins];
        for (v, c) in s.runs() {
            let i = (((v - lo) / width).floor() as usize).min(bins - 1);
            counts[i] += c as usize;
        }
        Histogram {
            start: lo,
            width,
            density: counts
                .iter()
                .map(|&c| c as f64 / (n as f64 * width))
                .collect(),
        }
    }

    /// (left edge, right edge, height) of each bar.
    pub fn bars(&self) -> impl Iterator<Item = (f64, f64, f64)> + '_ {
        self.density.iter().enumerate().map(|(i, &d)| {
            let l = self.start + self.width * i as f64;
            (l, l + self.width, d)
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn integrates_to_one_over_the_sample_range() {
        let x: Vec<f64> = (0..200).map(|i| ((i * 37) % 101) as f64 / 7.0).collect();
        let h = Histogram::of(&x);
        let area: f64 = h.bars().map(|(l, r, d)| (r - l) * d).sum();
        assert!((area - 1.0).abs() < 1e-12, "area {area}");
    }

    #[test]
    fn counted_runs_give_the_histogram_of_the_expanded_sample() {
        // The histogram as computed on an expanded sample before counted observations
        // existed (sort, quartiles of the sorted vector, one count per value).
        fn expanded(x: &[f64]) -> Histogram {
            let mut s = x.to_vec();
            s.sort_by(f64::total_cmp);
            let n = s.len();
            let (lo, hi) = (s[0], s[n - 1]);
            let q = crate::summary::quantile_sorted;
            let iqr = q(&s, 0.75) - q(&s, 0.25);
            let fd = 2.0 * iqr * (n as f64).powf(-1.0 / 3.0);
            let bins = if fd > 0.0 && ((hi - lo) / fd).is_finite() {
                ((hi - lo) / fd).ceil() as usize
            } else {
                (n as f64).log2().ceil() as usize + 1
            }
            .clamp(MIN_BINS, MAX_BINS);
            let width = (hi - lo) / bins as f64;
            let mut counts = vec![0usize; bins];
            for &v in &s {
                counts[(((v - lo) / width).floor() as usize).min(bins - 1)] += 1;
            }
            Histogram {
                start: lo,
                width,
                density: counts
                    .iter()
                    .map(|&c| c as f64 / (n as f64 * width))
                    .collect(),
            }
        }
        let values: Vec<f64> = (0..150).map(|i| ((i * 53) % 97) as f64 / 10.0).collect();
        let counts: Vec<u64> = (0..150).map(|i| (i % 4) as u64).collect();
        let obs = Observations::new(values, Some(counts), true);
        let x: Vec<f64> = obs.iter().collect();
        assert_eq!(Histogram::of_sorted(&obs.sorted()), expanded(&x));
        assert_eq!(Histogram::of(&x), expanded(&x));
    }
}
