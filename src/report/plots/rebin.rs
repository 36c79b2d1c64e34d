//! From the tally's fine log-binned histograms (200 bins per decade) to a readable number
//! of bars, and from counts to probability densities.

use crate::tally::LogHistogram;

/// Number of bars for `n` samples by the Rice rule, 2 n^(1/3), kept between 8 and 60.
pub fn bar_count(n: u64) -> usize {
    ((2.0 * (n as f64).cbrt()).round() as usize).clamp(8, 60)
}

/// Bars made of whole groups of the histogram's fine bins, in its own units.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadableBins {
    /// Bar edges, `counts.len() + 1` of them, increasing.
    pub edges: Vec<f64>,
    /// Samples in each bar.
    pub counts: Vec<u64>,
    /// All samples of the histogram, including those outside the bars (zero, below or
    /// above the range): densities are fractions of this total.
    pub total: u64,
    /// Fine bins grouped into each bar.
    pub fine_bins_per_bar: usize,
}

/// Groups the fine bins of `histogram` into about `target` bars over its occupied range.
/// Groups hold a divisor of the bins per decade and start on multiples of it, so bar edges
/// fall on round values (whole decades among them) and do not depend on the data. `None`
/// for a histogram with no sample in range.
pub fn readable_bins(histogram: &LogHistogram, target: usize) -> Option<ReadableBins> {
    let (first, last, group) = grouping(histogram, target)?;
    let layout = histogram.layout();
    let counts_fine = histogram.bin_counts();
    let (low, high) = (first / group, last / group);
    let edges = (low..=high + 1).map(|g| layout.edge(g * group)).collect();
    let counts = (low..=high)
        .map(|g| group_count(&counts_fine, g * group, group))
        .collect();
    Some(ReadableBins {
        edges,
        counts,
        total: histogram.total(),
        fine_bins_per_bar: group,
    })
}

/// The occupied fine bins and the group size that gives about `target` bars.
fn grouping(histogram: &LogHistogram, target: usize) -> Option<(usize, usize, usize)> {
    let (first, last) = histogram.occupied_range()?;
    let per_decade = histogram.layout().bins_per_decade as usize;
    let target = target.max(1);
    let bars_for = |k: usize| last / k - first / k + 1;
    let group = (1..=per_decade)
        .filter(|k| per_decade.is_multiple_of(*k))
        .min_by_key(|&k| bars_for(k).abs_diff(target))
        .unwrap_or(1);
    Some((first, last, group))
}

fn group_count(counts_fine: &[u64], start: usize, group: usize) -> u64 {
    let end = (start + group).min(counts_fine.len());
    counts_fine[start.min(end)..end].iter().sum()
}

/// Like [`readable_bins`], for whole-number values such as scattering counts. Each bar is
/// widened to the half-integers around the integers it holds, [n_lo − ½, n_hi + ½), and a
/// bar that holds no integer is merged into the next one. Then every bar's width counts
/// exactly the integers in it, so densities carry no aliasing between the logarithmic
/// edges and the integers (empty bars between 1 and 2, alternating bar heights). Exact for
/// integer data; a non-integer value (an accelerated walk's estimated count) goes with the
/// integers of its group.
pub fn readable_count_bins(histogram: &LogHistogram, target: usize) -> Option<ReadableBins> {
    let (first, last, group) = grouping(histogram, target)?;
    let layout = histogram.layout();
    let counts_fine = histogram.bin_counts();
    let mut edges: Vec<f64> = Vec::new();
    let mut counts: Vec<u64> = Vec::new();
    let mut pending = 0u64;
    let mut top = f64::NEG_INFINITY;
    for g in first / group..=last / group {
        pending += group_count(&counts_fine, g * group, group);
        let (a, b) = (layout.edge(g * group), layout.edge((g + 1) * group));
        let (low, high) = (a.ceil().max(top + 1.0), b.ceil() - 1.0);
        if high < low {
            continue;
        }
        if edges.is_empty() {
            edges.push(low - 0.5);
        }
        edges.push(high + 0.5);
        counts.push(pending);
        pending = 0;
        top = high;
    }
    if pending > 0 {
        match counts.last_mut() {
            Some(count) => *count += pending,
            None => return readable_bins(histogram, target),
        }
    }
    Some(ReadableBins {
        edges,
        counts,
        total: histogram.total(),
        fine_bins_per_bar: group,
    })
}

impl ReadableBins {
    /// Probability density per unit natural log of the value: count / (total · ln(b/a)).
    pub fn density_per_ln(&self) -> Vec<f64> {
        self.densities(|a, b| (b / a).ln())
    }

    /// Probability density per unit of the value, with values shown in units of
    /// `unit_size` (base units): count / (total · (b − a) / unit_size).
    pub fn density_per_unit(&self, unit_size: f64) -> Vec<f64> {
        self.densities(|a, b| (b - a) / unit_size)
    }

    fn densities(&self, width: impl Fn(f64, f64) -> f64) -> Vec<f64> {
        let total = self.total.max(1) as f64;
        self.counts
            .iter()
            .zip(self.edges.windows(2))
            .map(|(&c, e)| c as f64 / (total * width(e[0], e[1])))
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
    use crate::tally::LogLayout;

    #[test]
    fn bars_keep_every_sample_and_integrate_to_one() {
        let mut histogram = LogHistogram::new(LogLayout::TIME_S);
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
        assert_eq!(200 % bins.fine_bins_per_bar, 0);
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
    }

    #[test]
    fn count_bars_sit_on_half_integers() {
        let mut histogram = LogHistogram::new(LogLayout::SCATTERINGS);
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
    fn rice_rule_is_clamped() {
        assert_eq!(bar_count(10), 8);
        assert_eq!(bar_count(1000), 20);
        assert_eq!(bar_count(10_000_000), 60);
    }
}
