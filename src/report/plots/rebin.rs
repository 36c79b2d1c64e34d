//! From the tally's fine histograms (1024 bins per octave) to a readable number of bars,
//! and from counts (or weights) to probability densities.

use crate::tally::{LogHistogram, Regrouped};

/// Number of bars for `n` samples by the Rice rule, 2 n^(1/3), kept between 8 and 60.
pub fn bar_count(n: u64) -> usize {
    ((2.0 * (n as f64).cbrt()).round() as usize).clamp(8, 60)
}

/// Bars per decade that may be offered: divisors of 200, so that bar edges 10^(j/k) fall
/// on round values (whole decades among them) and do not depend on the data.
const BARS_PER_DECADE: [u32; 12] = [1, 2, 4, 5, 8, 10, 20, 25, 40, 50, 100, 200];

/// Bars made of whole groups of the histogram's fine bins, in its own units.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadableBins {
    /// Bar edges, `counts.len() + 1` of them, increasing.
    pub edges: Vec<f64>,
    /// Samples in each bar.
    pub counts: Vec<u64>,
    /// Sum of the samples' weights in each bar (the counts for analog photons).
    pub weights: Vec<f64>,
    /// All samples of the histogram, including those outside the bars (zero, negative,
    /// non-finite).
    pub total: u64,
    /// Their total weight: densities are fractions of it.
    pub total_weight: f64,
    /// Bars per decade of the grid the bars were cut from.
    pub bars_per_decade: u32,
}

/// The log grid 10^(j/k), j from `first` to `last`, whose bars cover `[low, high]`.
fn decade_grid(low: f64, high: f64, per_decade: u32) -> (i64, i64) {
    let k = per_decade as f64;
    let edge = |j: i64| 10f64.powf(j as f64 / k);
    let mut first = (low.log10() * k).floor() as i64;
    while edge(first) > low {
        first -= 1;
    }
    let mut last = (high.log10() * k).ceil() as i64;
    while edge(last) < high {
        last += 1;
    }
    (first, last.max(first + 1))
}

/// The grid of about `target` bars over the positive values of `histogram`: requested
/// edges and bars per decade. `None` without a positive finite value.
fn grid(histogram: &LogHistogram, target: usize) -> Option<(Vec<f64>, u32)> {
    let bins = histogram.bins();
    let low = bins.first()?.low;
    let high = bins.last()?.high.min(f64::MAX);
    let target = target.max(1) as i64;
    let per_decade = *BARS_PER_DECADE.iter().min_by_key(|&&k| {
        let (first, last) = decade_grid(low, high, k);
        (last - first).abs_diff(target)
    })?;
    let (first, last) = decade_grid(low, high, per_decade);
    let edges = (first..=last)
        .map(|j| 10f64.powf(j as f64 / per_decade as f64))
        .collect();
    Some((edges, per_decade))
}

fn readable(histogram: &LogHistogram, regrouped: Regrouped, per_decade: u32) -> ReadableBins {
    ReadableBins {
        edges: regrouped.edges,
        counts: regrouped.counts,
        weights: regrouped.weights,
        total: histogram.total(),
        total_weight: histogram.total_weight(),
        bars_per_decade: per_decade,
    }
}

/// Groups the fine bins of `histogram` into about `target` bars over its positive values,
/// on a logarithmic grid of k bars per decade (k a divisor of 200), each edge moved down to
/// the fine bin that holds it (by less than 0.1 %). `None` for a histogram with no positive
/// finite value.
pub fn readable_bins(histogram: &LogHistogram, target: usize) -> Option<ReadableBins> {
    let (edges, per_decade) = grid(histogram, target)?;
    Some(readable(histogram, histogram.regroup(&edges), per_decade))
}

/// Like [`readable_bins`], for whole-number values such as scattering counts. Each bar
/// holds the whole numbers n_lo..n_hi of a grid bar and is drawn on the half-integers around
/// them, [n_lo − ½, n_hi + ½); a bar that holds no whole number is merged into the next one.
/// Then every bar's width counts exactly the whole numbers in it, so densities carry no
/// aliasing between the logarithmic edges and the integers (empty bars between 1 and 2,
/// alternating bar heights). Exact for whole-number data; a non-integer value (an
/// accelerated walk's estimated count) goes with the whole numbers of its bar. Values below
/// 1 fall back to [`readable_bins`].
pub fn readable_count_bins(histogram: &LogHistogram, target: usize) -> Option<ReadableBins> {
    let (edges, per_decade) = grid(histogram, target)?;
    if histogram.bins().first()?.low < 1.0 {
        return readable_bins(histogram, target);
    }
    let mut integers: Vec<f64> = edges.iter().map(|e| e.ceil()).collect();
    integers.dedup();
    let mut bins = readable(histogram, histogram.regroup(&integers), per_decade);
    bins.edges.iter_mut().for_each(|edge| *edge -= 0.5);
    Some(bins)
}

impl ReadableBins {
    /// Probability density per unit natural log of the value: weight / (total · ln(b/a)).
    pub fn density_per_ln(&self) -> Vec<f64> {
        self.densities(|a, b| (b / a).ln())
    }

    /// Probability density per unit of the value, with values shown in units of
    /// `unit_size` (base units): weight / (total · (b − a) / unit_size).
    pub fn density_per_unit(&self, unit_size: f64) -> Vec<f64> {
        self.densities(|a, b| (b - a) / unit_size)
    }

    fn densities(&self, width: impl Fn(f64, f64) -> f64) -> Vec<f64> {
        let total = if self.total_weight > 0.0 {
            self.total_weight
        } else {
            1.0
        };
        self.weights
            .iter()
            .zip(self.edges.windows(2))
            .map(|(&w, e)| w / (total * width(e[0], e[1])))
            .collect()
    }

    /// Samples inside the bars.
    pub fn in_bars(&self) -> u64 {
        self.counts.iter().sum()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bars_keep_every_sample_and_integrate_to_one() {
        let mut histogram = LogHistogram::new();
        for k in 0..5000 {
            histogram.add(1.0 + 99.0 * (k as f64 + 0.5) / 5000.0);
        }
        let bins = readable_bins(&histogram, 30).unwrap();
        assert_eq!(bins.in_bars(), 5000);
        assert!(
            (20..=45).contains(&bins.counts.len()),
            "{}",
            bins.counts.len()
        );
        assert_eq!(200 % bins.bars_per_decade, 0);
        let integral: f64 = bins
            .density_per_ln()
            .iter()
            .zip(bins.edges.windows(2))
            .map(|(d, e)| d * (e[1] / e[0]).ln())
            .sum();
        assert!((integral - 1.0).abs() < 1e-12);
        let integral: f64 = bins
            .density_per_unit(1e-3)
            .iter()
            .zip(bins.edges.windows(2))
            .map(|(d, e)| d * (e[1] - e[0]) / 1e-3)
            .sum();
        assert!((integral - 1.0).abs() < 1e-12);
        assert!(bins.edges[0] <= 1.0 && *bins.edges.last().unwrap() >= 100.0);
        // Edges sit within a fine bin (0.1 %) of round values: whole decades among them.
        assert!(bins.edges.contains(&1.0));
        assert!(bins.edges.iter().any(|&e| (e / 10.0 - 1.0).abs() < 1e-3));
    }

    #[test]
    fn count_bars_sit_on_half_integers() {
        let mut histogram = LogHistogram::new();
        let values = [1.0, 1.0, 2.0, 3.0, 3.0, 3.0, 7.0, 40.0, 41.0, 300.0, 0.0];
        for v in values {
            histogram.add(v);
        }
        let bins = readable_count_bins(&histogram, 20).unwrap();
        assert_eq!(&bins.edges[..4], &[0.5, 1.5, 2.5, 3.5]);
        assert_eq!(&bins.counts[..3], &[2, 1, 3]);
        assert_eq!(bins.in_bars(), 10);
        assert_eq!(bins.total, 11);
        // Contiguous bars on half-integers: each holds whole integers only.
        assert!(bins.edges.windows(2).all(|w| w[1] > w[0]));
        assert!(bins.edges.iter().all(|e| e.fract() == 0.5));
    }

    #[test]
    fn large_counts_keep_whole_number_bars() {
        let mut histogram = LogHistogram::new();
        for k in 0..20_000u64 {
            histogram.add((1000 + (k * 7919) % 90_000) as f64);
        }
        let bins = readable_count_bins(&histogram, 30).unwrap();
        assert_eq!(bins.in_bars(), 20_000);
        assert!(bins.edges.iter().all(|e| e.fract() == 0.5));
    }

    #[test]
    fn rice_rule_is_clamped() {
        assert_eq!(bar_count(10), 8);
        assert_eq!(bar_count(1000), 20);
        assert_eq!(bar_count(10_000_000), 60);
    }
}
