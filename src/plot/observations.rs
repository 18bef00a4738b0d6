//! The observations the figures draw (histogram, rug, kernel estimate, empirical CDF), held
//! as the run holds them: one entry per row, or per distinct value with its count for
//! frequency weights and values recorded at a resolution. A counted entry stands for that
//! many equal observations in a row, so every figure reads the same sequence of values as
//! when the counts were expanded in memory, and draws the same bytes, while memory grows
//! with the entries, not with the observations.

/// Observations, in the order of the run's rows, each entry `count` times.
#[derive(Debug, Clone, PartialEq)]
pub struct Observations {
    values: Vec<f64>,
    counts: Option<Vec<u64>>,
    total: usize,
    tabulated: bool,
}

impl Observations {
    /// `values` each `counts[i]` times (`None`: once). `tabulated`: the entries are the
    /// distinct recorded values of data recorded at a resolution (the empirical CDF then
    /// draws one step per entry).
    pub fn new(values: Vec<f64>, counts: Option<Vec<u64>>, tabulated: bool) -> Observations {
        if let Some(c) = &counts {
            assert_eq!(c.len(), values.len(), "one count per value");
        }
        let total = match &counts {
            Some(c) => c.iter().map(|&c| c as usize).sum(),
            None => values.len(),
        };
        Observations {
            values,
            counts,
            total,
            tabulated,
        }
    }

    /// Number of observations (counts expanded).
    pub fn len(&self) -> usize {
        self.total
    }

    pub fn is_empty(&self) -> bool {
        self.total == 0
    }

    /// Whether the entries are the distinct values of data recorded at a resolution.
    pub fn tabulated(&self) -> bool {
        self.tabulated
    }

    fn count(&self, i: usize) -> u64 {
        self.counts.as_ref().map_or(1, |c| c[i])
    }

    /// (value, count) of each entry, in row order.
    pub fn entries(&self) -> impl Iterator<Item = (f64, u64)> + '_ {
        self.values
            .iter()
            .enumerate()
            .map(|(i, &v)| (v, self.count(i)))
    }

    /// Every observation, counts expanded, in row order.
    pub fn iter(&self) -> impl Iterator<Item = f64> + '_ {
        self.entries()
            .flat_map(|(v, c)| std::iter::repeat_n(v, c as usize))
    }

    /// The entries sorted by value (`f64::total_cmp`, stable), zero counts left out: their
    /// expansion is the sorted sample. Uncounted observations take 8 bytes each, as a
    /// sorted copy would.
    pub fn sorted(&self) -> SortedObservations {
        let Some(counts) = &self.counts else {
            let mut values = self.values.clone();
            values.sort_by(f64::total_cmp);
            return SortedObservations { values, end: None };
        };
        let mut table: Vec<(f64, u64)> = self
            .values
            .iter()
            .zip(counts)
            .map(|(&v, &c)| (v, c))
            .filter(|&(_, c)| c > 0)
            .collect();
        table.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut end = Vec::with_capacity(table.len());
        let mut acc = 0usize;
        for &(_, c) in &table {
            acc += c as usize;
            end.push(acc);
        }
        SortedObservations {
            values: table.into_iter().map(|e| e.0).collect(),
            end: Some(end),
        }
    }
}

/// The sorted sample as runs of equal values: each value once per observation, or with
/// the cumulative count of its run.
#[derive(Debug, Clone, PartialEq)]
pub struct SortedObservations {
    values: Vec<f64>,
    /// `end[j]`: observations in runs 0..=j; `None`: one observation a run.
    end: Option<Vec<usize>>,
}

impl SortedObservations {
    /// Number of observations.
    pub fn len(&self) -> usize {
        match &self.end {
            Some(e) => e.last().copied().unwrap_or(0),
            None => self.values.len(),
        }
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// (value, count) of each run, ascending (one value may come in more than one run).
    pub fn runs(&self) -> impl Iterator<Item = (f64, u64)> + '_ {
        self.values.iter().enumerate().map(|(j, &v)| {
            let c = match &self.end {
                Some(e) => e[j] - if j == 0 { 0 } else { e[j - 1] },
                None => 1,
            };
            (v, c as u64)
        })
    }

    /// The i-th smallest observation (0-based; i < len).
    pub fn at(&self, i: usize) -> f64 {
        match &self.end {
            Some(e) => self.values[e.partition_point(|&x| x <= i)],
            None => self.values[i],
        }
    }

    /// [`crate::summary::quantile_sorted`] of the expanded sample, from the runs: the same
    /// order statistics and the same arithmetic, so the same bits.
    pub fn quantile(&self, p: f64) -> f64 {
        let n = self.len();
        let h = (n - 1) as f64 * p;
        let lo = h.floor() as usize;
        let hi = (lo + 1).min(n - 1);
        let frac = h - lo as f64;
        let (a, b) = (self.at(lo), self.at(hi));
        if frac == 0.0 || a == b {
            return a;
        }
        a + frac * (b - a)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::summary::quantile_sorted;

    #[test]
    fn counted_entries_read_as_the_expanded_sample() {
        let o = Observations::new(vec![2.5, -1.0, 2.5, 7.0], Some(vec![3, 2, 1, 0]), false);
        assert_eq!(o.len(), 6);
        let x: Vec<f64> = o.iter().collect();
        assert_eq!(x, vec![2.5, 2.5, 2.5, -1.0, -1.0, 2.5]);
        let s = o.sorted();
        let mut sorted = x.clone();
        sorted.sort_by(f64::total_cmp);
        assert_eq!(s.len(), 6);
        for (i, &v) in sorted.iter().enumerate() {
            assert_eq!(s.at(i), v);
        }
        let plain = Observations::new(x.clone(), None, false).sorted();
        assert_eq!(plain.len(), 6);
        for p in [0.0, 0.1, 0.25, 0.5, 0.75, 0.9, 1.0] {
            let want = quantile_sorted(&sorted, p).to_bits();
            assert_eq!(s.quantile(p).to_bits(), want, "{p}");
            assert_eq!(plain.quantile(p).to_bits(), want, "{p}");
        }
        let runs: Vec<(f64, u64)> = s.runs().collect();
        assert_eq!(runs, vec![(-1.0, 2), (2.5, 3), (2.5, 1)]);
        assert_eq!(plain.runs().map(|r| r.1).sum::<u64>(), 6);
    }
}
