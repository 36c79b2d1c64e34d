//! A mergeable histogram of any positive `f64` at 0.1 % resolution, stored sparsely.
//!
//! Bins are keyed on the bits of the value ([`super::bin_key`]): 1024 bins per octave, each
//! at most 2⁻¹⁰ ≈ 0.098 % wide, from the smallest subnormal to `f64::MAX`. Bin edges depend
//! on nothing but the value, so histograms from different threads, shards or checkpoints add
//! bin by bin, exactly. Zero, negative values, NaN and ±∞ are counted apart, never dropped
//! or clamped. Each bin keeps a count and, for weighted photons, the exact sum of their
//! weights ([`super::WeightSum`]).
//!
//! Memory: bins live in pages of 256 (a quarter octave, 2 KB of counts; 4 KB more of weight
//! sums when weighted) allocated on first use, so a distribution spanning a few decades
//! takes tens of kilobytes whatever its scale. Recording a value is a few bit operations
//! and one indexed increment.
//!
//! Quantiles ([`LogHistogram::quantile`]) are weighted type-1 sample quantiles (the
//! smallest x with F(x) ≥ p) located to their bin: the answer lies in the same bin as the
//! exact sample quantile, hence within a relative 2⁻¹⁰ of it, and always inside the
//! observed [min, max]; with one value every quantile is that value. When every value
//! counted is a whole number (scattering counts of direct walks) quantiles are whole
//! numbers too.

use serde::de::{self, SeqAccess, Visitor};
use serde::ser::SerializeTuple;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

use super::bin_key::{
    MAX_KEY, MIN_KEY, RESOLUTION_BITS, bin_edges, is_valid_key, key_of, snap_down,
};
use super::error::TallyError;
use super::weight::{Weight, WeightSum};

/// Bins per page (a quarter octave).
const PAGE_BITS: u32 = 8;
const PAGE_BINS: usize = 1 << PAGE_BITS;

/// A count and its weight sum.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
struct Bucket {
    count: u64,
    weight: WeightSum,
}

impl Bucket {
    fn add(&mut self, weight: Weight) {
        self.count += 1;
        self.weight.add(weight);
    }

    fn merge(&mut self, other: &Bucket) {
        self.count += other.count;
        self.weight.merge(other.weight);
    }
}

/// 256 consecutive bins.
#[derive(Debug, Clone, PartialEq)]
struct Page {
    counts: [u64; PAGE_BINS],
    weights: Option<Box<[WeightSum; PAGE_BINS]>>,
}

impl Page {
    fn new(weighted: bool) -> Box<Page> {
        Box::new(Page {
            counts: [0; PAGE_BINS],
            weights: weighted.then(|| Box::new([WeightSum::ZERO; PAGE_BINS])),
        })
    }
}

/// One occupied bin of a [`LogHistogram`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HistogramBin {
    /// Lower edge (included), in the histogram's unit.
    pub low: f64,
    /// Upper edge (excluded).
    pub high: f64,
    /// Values counted.
    pub count: u64,
    /// Sum of their weights (equals `count` for analog photons).
    pub weight: f64,
}

/// Counts of a [`LogHistogram`] on a coarser grid ([`LogHistogram::regroup`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Regrouped {
    /// Bar edges, increasing: the requested edges moved down to the nearest fine-bin edge
    /// (by less than 0.1 %), repeats removed.
    pub edges: Vec<f64>,
    /// Values in each bar `[edges[i], edges[i + 1])`.
    pub counts: Vec<u64>,
    /// Their weight sums.
    pub weights: Vec<f64>,
    /// Values below the first edge (zero and negative values included).
    pub below: u64,
    /// Values at or above the last edge (+∞ included). NaN values are in neither.
    pub above: u64,
}

/// A histogram of `f64` values on bins of relative width ≤ 2⁻¹⁰ covering every positive
/// `f64` (see the module docs).
#[derive(Debug, Clone)]
pub struct LogHistogram {
    weighted: bool,
    first_page: u32,
    pages: Vec<Option<Box<Page>>>,
    zero: Bucket,
    negative: Bucket,
    nan: Bucket,
    positive_infinity: Bucket,
    negative_infinity: Bucket,
    /// Smallest finite value (+∞ while there is none).
    min: f64,
    /// Largest finite value (−∞ while there is none).
    max: f64,
    /// Every finite value counted is a whole number.
    integral: bool,
}

impl Default for LogHistogram {
    fn default() -> Self {
        Self::new()
    }
}

impl PartialEq for LogHistogram {
    fn eq(&self, other: &Self) -> bool {
        self.weighted == other.weighted
            && self.buckets() == other.buckets()
            && self.min() == other.min()
            && self.max() == other.max()
            && self.integral == other.integral
            && self.occupied().eq(other.occupied())
    }
}

impl LogHistogram {
    /// An empty histogram. No memory is taken for bins until the first positive value.
    pub fn new() -> Self {
        Self {
            weighted: false,
            first_page: 0,
            pages: Vec::new(),
            zero: Bucket::default(),
            negative: Bucket::default(),
            nan: Bucket::default(),
            positive_infinity: Bucket::default(),
            negative_infinity: Bucket::default(),
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            integral: true,
        }
    }

    /// Counts one value of weight 1.
    #[inline]
    pub fn add(&mut self, value: f64) {
        self.add_weighted(value, Weight::ONE);
    }

    /// Counts one value of weight `weight`. The first weight other than 1 makes the
    /// histogram weighted (earlier values keep weight 1).
    #[inline]
    pub fn add_weighted(&mut self, value: f64, weight: Weight) {
        if !weight.is_one() && !self.weighted {
            self.make_weighted();
        }
        if value > 0.0 && value < f64::INFINITY {
            let key = key_of(value);
            let weighted = self.weighted;
            let page = self.page_mut(key >> PAGE_BITS, weighted);
            let slot = (key as usize) & (PAGE_BINS - 1);
            page.counts[slot] += 1;
            if let Some(weights) = &mut page.weights {
                weights[slot].add(weight);
            }
        } else if value == 0.0 {
            self.zero.add(weight);
        } else if value < 0.0 && value > f64::NEG_INFINITY {
            self.negative.add(weight);
        } else if value.is_nan() {
            self.nan.add(weight);
            return;
        } else if value > 0.0 {
            self.positive_infinity.add(weight);
            return;
        } else {
            self.negative_infinity.add(weight);
            return;
        }
        let value = value + 0.0; // −0 → +0, so that min and max never depend on order
        self.min = self.min.min(value);
        self.max = self.max.max(value);
        self.integral &= is_whole(value);
    }

    /// Adds another histogram (exact; any order of merges gives the same state).
    pub fn merge(&mut self, other: &LogHistogram) {
        if other.weighted && !self.weighted {
            self.make_weighted();
        }
        let weighted = self.weighted;
        for (offset, page) in other.pages.iter().enumerate() {
            let Some(theirs) = page else { continue };
            let mine = self.page_mut(other.first_page + offset as u32, weighted);
            for (a, b) in mine.counts.iter_mut().zip(&theirs.counts) {
                *a += b;
            }
            if let Some(weights) = &mut mine.weights {
                for (slot, weight) in weights.iter_mut().enumerate() {
                    weight.merge(match &theirs.weights {
                        Some(their_weights) => their_weights[slot],
                        None => WeightSum::of_unit_weights(theirs.counts[slot]),
                    });
                }
            }
        }
        for (mine, theirs) in self.buckets_mut().into_iter().zip(other.buckets()) {
            mine.merge(&theirs);
        }
        self.min = self.min.min(other.min);
        self.max = self.max.max(other.max);
        self.integral &= other.integral;
    }

    /// Whether any value carried a weight other than 1.
    pub fn is_weighted(&self) -> bool {
        self.weighted
    }

    /// Number of values counted (all of them: zero, negative and non-finite included).
    pub fn total(&self) -> u64 {
        self.buckets().iter().map(|b| b.count).sum::<u64>()
            + self.occupied().map(|(_, count, _)| count).sum::<u64>()
    }

    /// Sum of the weights of every value counted.
    pub fn total_weight(&self) -> f64 {
        self.total_weight_sum().value()
    }

    pub(crate) fn total_weight_sum(&self) -> WeightSum {
        let mut sum = WeightSum::ZERO;
        self.buckets().iter().for_each(|b| sum.merge(b.weight));
        self.occupied().for_each(|(_, _, w)| sum.merge(w));
        sum
    }

    /// Sum of the weights of the NaN and ±∞ values.
    pub(crate) fn non_finite_weight_sum(&self) -> WeightSum {
        let mut sum = self.nan.weight;
        sum.merge(self.positive_infinity.weight);
        sum.merge(self.negative_infinity.weight);
        sum
    }

    /// Number of values equal to zero.
    pub fn zero_count(&self) -> u64 {
        self.zero.count
    }

    /// Sum of the weights of the values equal to zero.
    pub fn zero_weight(&self) -> f64 {
        self.zero.weight.value()
    }

    /// Number of finite negative values.
    pub fn negative_count(&self) -> u64 {
        self.negative.count
    }

    /// Number of NaN values.
    pub fn nan_count(&self) -> u64 {
        self.nan.count
    }

    /// Number of +∞ and −∞ values.
    pub fn infinite_count(&self) -> u64 {
        self.positive_infinity.count + self.negative_infinity.count
    }

    /// Number of NaN and infinite values (counted, never binned).
    pub fn non_finite_count(&self) -> u64 {
        self.nan_count() + self.infinite_count()
    }

    /// Smallest finite value counted.
    pub fn min(&self) -> Option<f64> {
        (self.min <= self.max).then_some(self.min)
    }

    /// Largest finite value counted.
    pub fn max(&self) -> Option<f64> {
        (self.min <= self.max).then_some(self.max)
    }

    /// Whether every finite value counted is a whole number (true when there is none).
    pub fn is_integral(&self) -> bool {
        self.integral
    }

    /// The weighted `p`-quantile (0 ≤ p ≤ 1) of the values: the smallest x with F(x) ≥ p,
    /// F the weighted empirical CDF (type-1 quantile), located to its bin and interpolated
    /// inside it. It lies in the bin of that exact sample quantile (relative error < 2⁻¹⁰,
    /// 0.098 %) and inside [min, max]; it is a whole number whenever every value is one.
    /// `None` for p outside [0, 1], without any weight, or when NaN or negative values make
    /// the order unknown; 0 where it falls among zero values and +∞ among +∞ values.
    pub fn quantile(&self, p: f64) -> Option<f64> {
        if !(0.0..=1.0).contains(&p)
            || self.negative.count > 0
            || self.negative_infinity.count > 0
            || self.nan.count > 0
        {
            return None;
        }
        let total = self.total_weight_sum().raw();
        if total == 0 {
            return None;
        }
        let target = p * total as f64;
        let mut cumulative = 0u128;
        let mut reached = |weight: WeightSum| -> Option<f64> {
            if weight.raw() == 0 {
                return None;
            }
            let before = cumulative;
            cumulative += weight.raw();
            (target <= cumulative as f64)
                .then(|| ((target - before as f64) / weight.raw() as f64).clamp(0.0, 1.0))
        };
        if reached(self.zero.weight).is_some() {
            return Some(0.0);
        }
        for (key, _, weight) in self.occupied() {
            if let Some(fraction) = reached(weight) {
                return Some(self.value_in_bin(key, fraction));
            }
        }
        if self.positive_infinity.weight.raw() > 0 {
            return Some(f64::INFINITY);
        }
        self.max()
    }

    /// The point a fraction `fraction` of the way through bin `key`, kept inside the
    /// observed range and, for whole-number data, rounded to a whole number of the bin.
    fn value_in_bin(&self, key: u32, fraction: f64) -> f64 {
        let (low, high) = bin_edges(key);
        let lowest = low.max(self.min);
        let highest = f64::from_bits(high.to_bits() - 1).min(self.max);
        let inside = (low + fraction * (high - low)).clamp(lowest, highest);
        if self.integral {
            let (first, last) = (lowest.ceil(), highest.floor());
            if first <= last {
                return inside.round().clamp(first, last);
            }
        }
        inside
    }

    /// The occupied bins, in increasing order.
    pub fn bins(&self) -> Vec<HistogramBin> {
        self.occupied()
            .map(|(key, count, weight)| {
                let (low, high) = bin_edges(key);
                HistogramBin {
                    low,
                    high,
                    count,
                    weight: weight.value(),
                }
            })
            .collect()
    }

    /// Counts and weights on the coarser grid `edges` (increasing, positive, finite; others
    /// are ignored). Each edge is moved down to the edge of the fine bin holding it, so every
    /// value lands in exactly one bar and the bars add up exactly.
    pub fn regroup(&self, edges: &[f64]) -> Regrouped {
        let mut keys: Vec<u32> = edges
            .iter()
            .filter(|e| e.is_finite() && **e > 0.0)
            .map(|&e| key_of(e))
            .collect();
        keys.dedup();
        keys.retain({
            let mut last = None;
            move |&k| {
                let keep = last.is_none_or(|l| k > l);
                if keep {
                    last = Some(k);
                }
                keep
            }
        });
        let bars = keys.len().saturating_sub(1);
        let mut regrouped = Regrouped {
            edges: keys.iter().map(|&k| bin_edges(k).0).collect(),
            counts: vec![0; bars],
            weights: vec![0.0; bars],
            below: self.zero.count + self.negative.count + self.negative_infinity.count,
            above: self.positive_infinity.count,
        };
        let mut sums = vec![WeightSum::ZERO; bars];
        for (key, count, weight) in self.occupied() {
            let bar = keys.partition_point(|&k| k <= key);
            if bar == 0 {
                regrouped.below += count;
            } else if bar > bars {
                regrouped.above += count;
            } else {
                regrouped.counts[bar - 1] += count;
                sums[bar - 1].merge(weight);
            }
        }
        regrouped.weights = sums.iter().map(|s| s.value()).collect();
        regrouped
    }

    /// Every fine bin from the lowest to the highest occupied one, empty bins between them
    /// included, as a [`Regrouped`]: the form a binned comparison with a theory CDF needs
    /// (contiguous edges). `None` for a histogram with no positive finite value.
    pub fn contiguous(&self) -> Option<Regrouped> {
        let mut occupied = self.occupied().peekable();
        let first = occupied.peek()?.0;
        let mut regrouped = Regrouped {
            edges: vec![bin_edges(first).0],
            counts: Vec::new(),
            weights: Vec::new(),
            below: self.zero.count + self.negative.count + self.negative_infinity.count,
            above: self.positive_infinity.count,
        };
        for (key, count, weight) in occupied {
            let next = first + regrouped.counts.len() as u32;
            for empty in next..key {
                regrouped.edges.push(bin_edges(empty).1);
                regrouped.counts.push(0);
                regrouped.weights.push(0.0);
            }
            regrouped.edges.push(bin_edges(key).1);
            regrouped.counts.push(count);
            regrouped.weights.push(weight.value());
        }
        Some(regrouped)
    }

    /// Counts of `self` and `other` side by side on the union of their occupied bins (zero
    /// values first, +∞ last), for two-sample comparisons.
    pub fn aligned_counts(&self, other: &LogHistogram) -> (Vec<u64>, Vec<u64>) {
        let mut left = vec![self.zero.count];
        let mut right = vec![other.zero.count];
        let (mut a, mut b) = (self.occupied().peekable(), other.occupied().peekable());
        loop {
            let (ka, kb) = (a.peek().map(|x| x.0), b.peek().map(|x| x.0));
            let key = match (ka, kb) {
                (None, None) => break,
                (Some(x), Some(y)) => x.min(y),
                (Some(x), None) => x,
                (None, Some(y)) => y,
            };
            left.push(a.next_if(|x| x.0 == key).map_or(0, |x| x.1));
            right.push(b.next_if(|x| x.0 == key).map_or(0, |x| x.1));
        }
        left.push(self.positive_infinity.count);
        right.push(other.positive_infinity.count);
        (left, right)
    }

    /// Gives every value counted so far weight 1 explicitly and keeps weights from now on.
    pub(crate) fn make_weighted(&mut self) {
        if self.weighted {
            return;
        }
        self.weighted = true;
        for page in self.pages.iter_mut().flatten() {
            let mut weights = Box::new([WeightSum::ZERO; PAGE_BINS]);
            for (weight, &count) in weights.iter_mut().zip(&page.counts) {
                *weight = WeightSum::of_unit_weights(count);
            }
            page.weights = Some(weights);
        }
    }

    /// The page `index`, created (and the window grown) if needed.
    #[inline]
    fn page_mut(&mut self, index: u32, weighted: bool) -> &mut Page {
        if self.pages.is_empty() {
            self.first_page = index;
            self.pages.push(None);
        } else if index < self.first_page {
            let extra = (self.first_page - index) as usize;
            self.pages.splice(0..0, std::iter::repeat_n(None, extra));
            self.first_page = index;
        } else if (index - self.first_page) as usize >= self.pages.len() {
            self.pages
                .resize_with((index - self.first_page) as usize + 1, || None);
        }
        self.pages[(index - self.first_page) as usize].get_or_insert_with(|| Page::new(weighted))
    }

    /// `(key, count, weight)` of every occupied bin, increasing.
    fn occupied(&self) -> impl Iterator<Item = (u32, u64, WeightSum)> + '_ {
        self.pages
            .iter()
            .enumerate()
            .filter_map(|(offset, page)| page.as_ref().map(|p| (offset, p)))
            .flat_map(move |(offset, page)| {
                let base = (self.first_page + offset as u32) << PAGE_BITS;
                page.counts
                    .iter()
                    .enumerate()
                    .filter(|(_, count)| **count > 0)
                    .map(move |(slot, &count)| {
                        let weight = match &page.weights {
                            Some(weights) => weights[slot],
                            None => WeightSum::of_unit_weights(count),
                        };
                        (base + slot as u32, count, weight)
                    })
            })
    }

    fn buckets(&self) -> [Bucket; 5] {
        [
            self.zero,
            self.negative,
            self.nan,
            self.positive_infinity,
            self.negative_infinity,
        ]
    }

    fn buckets_mut(&mut self) -> [&mut Bucket; 5] {
        [
            &mut self.zero,
            &mut self.negative,
            &mut self.nan,
            &mut self.positive_infinity,
            &mut self.negative_infinity,
        ]
    }

    fn to_repr(&self) -> HistogramRepr {
        // Runs of consecutive occupied keys: (first key, counts, weight sums).
        let mut runs: Vec<(u32, Vec<u64>, Vec<WeightSum>)> = Vec::new();
        for (key, count, weight) in self.occupied() {
            match runs.last_mut() {
                Some((start, counts, weights)) if *start + counts.len() as u32 == key => {
                    counts.push(count);
                    weights.push(weight);
                }
                _ => runs.push((key, vec![count], vec![weight])),
            }
        }
        let entry = |bucket: Bucket| CountWeight {
            count: bucket.count,
            weight: (self.weighted && bucket.count > 0).then_some(bucket.weight),
        };
        HistogramRepr {
            resolution_bits: RESOLUTION_BITS,
            min: self.min(),
            max: self.max(),
            integral: self.integral,
            zero: entry(self.zero),
            negative: entry(self.negative),
            nan: entry(self.nan),
            positive_infinity: entry(self.positive_infinity),
            negative_infinity: entry(self.negative_infinity),
            bins: runs
                .iter()
                .map(|(start, counts, _)| RunRepr {
                    start: *start,
                    counts: counts.clone(),
                })
                .collect(),
            bin_weights: self
                .weighted
                .then(|| runs.into_iter().map(|(_, _, weights)| weights).collect()),
        }
    }

    /// Rebuilds a histogram from its serialised form, refusing contradictions.
    pub(crate) fn from_repr(repr: HistogramRepr) -> Result<Self, TallyError> {
        if repr.resolution_bits != RESOLUTION_BITS {
            return Err(TallyError::OutOfRange {
                field: "resolution_bits".into(),
                value: repr.resolution_bits.to_string(),
                allowed: format!("{{{RESOLUTION_BITS}}} (the only layout this sojourn reads)"),
            });
        }
        let named = [
            ("zero", &repr.zero),
            ("negative", &repr.negative),
            ("nan", &repr.nan),
            ("positive_infinity", &repr.positive_infinity),
            ("negative_infinity", &repr.negative_infinity),
        ];
        let weighted = named.iter().any(|(_, b)| b.weight.is_some()) || repr.bin_weights.is_some();
        let mut histogram = LogHistogram::new();
        histogram.weighted = weighted;
        let check_weight = |field: String, count: u64, weight: Option<WeightSum>| match weight {
            None if weighted && count > 0 => Err(TallyError::weights(
                field,
                "no weight sum, though other entries of this histogram carry weights",
            )),
            Some(w) if !w.fits(count) => Err(TallyError::weights(
                field,
                format!("weight sum {w} exceeds its {count} values (weights lie in [0, 1])"),
            )),
            Some(w) => Ok(w),
            None => Ok(WeightSum::of_unit_weights(count)),
        };
        let mut buckets = [Bucket::default(); 5];
        for (slot, (name, entry)) in buckets.iter_mut().zip(named) {
            *slot = Bucket {
                count: entry.count,
                weight: check_weight(name.to_string(), entry.count, entry.weight)?,
            };
        }
        for (slot, bucket) in histogram.buckets_mut().into_iter().zip(buckets) {
            *slot = bucket;
        }
        let mut total = buckets
            .iter()
            .try_fold(0u64, |sum, b| sum.checked_add(b.count));
        if let Some(weights) = &repr.bin_weights {
            let shapes = |runs: &mut dyn Iterator<Item = usize>| runs.collect::<Vec<_>>();
            let counts = shapes(&mut repr.bins.iter().map(|run| run.counts.len()));
            if shapes(&mut weights.iter().map(Vec::len)) != counts {
                return Err(TallyError::weights(
                    "bin_weights",
                    "not one weight sum per bin of `bins`",
                ));
            }
        }
        let mut previous: Option<u32> = None;
        for (run_index, run) in repr.bins.iter().enumerate() {
            if run.counts.is_empty() {
                return Err(TallyError::malformed(
                    format!("bins[{run_index}]"),
                    "a run of bins without counts",
                ));
            }
            if previous.is_some_and(|p| run.start == p.wrapping_add(1)) {
                return Err(TallyError::malformed(
                    format!("bins[{run_index}]"),
                    "a run that continues the one before (runs are separated by empty bins)",
                ));
            }
            for (offset, &count) in run.counts.iter().enumerate() {
                let field = format!("bins[{run_index}][{}]", offset + 1);
                let key = run.start.saturating_add(offset as u32);
                if !is_valid_key(key) {
                    return Err(TallyError::OutOfRange {
                        field,
                        value: format!("bin key {key}"),
                        allowed: format!(
                            "the keys of the f64 bin layout ({MIN_KEY}..={MAX_KEY}, see the docs)"
                        ),
                    });
                }
                if previous.is_some_and(|p| p >= key) {
                    return Err(TallyError::malformed(field, "bin keys must increase"));
                }
                previous = Some(key);
                if count == 0 {
                    return Err(TallyError::malformed(field, "an empty bin is listed"));
                }
                let given = repr
                    .bin_weights
                    .as_ref()
                    .map(|weights| weights[run_index][offset]);
                let weight = check_weight(field, count, given)?;
                let page = histogram.page_mut(key >> PAGE_BITS, weighted);
                let slot = key as usize & (PAGE_BINS - 1);
                page.counts[slot] = count;
                if let Some(weights) = &mut page.weights {
                    weights[slot] = weight;
                }
                total = total.and_then(|t| t.checked_add(count));
            }
        }
        let Some(total) = total else {
            return Err(TallyError::OutOfRange {
                field: "bins".into(),
                value: "the sum of the counts".into(),
                allowed: "the range of a 64-bit count".into(),
            });
        };
        histogram.integral = repr.integral;
        let finite = total - histogram.non_finite_count();
        histogram.check_extremes(finite, repr.min, repr.max)?;
        Ok(histogram)
    }

    /// Checks `min` and `max` against the bins and sets them.
    fn check_extremes(
        &mut self,
        finite: u64,
        min: Option<f64>,
        max: Option<f64>,
    ) -> Result<(), TallyError> {
        let (min, max) = match (finite, min, max) {
            (0, None, None) => return Ok(()),
            (0, _, _) => {
                return Err(TallyError::malformed(
                    "min",
                    "min and max are given, but no finite value was counted",
                ));
            }
            (_, Some(min), Some(max)) => (min, max),
            _ => {
                return Err(TallyError::malformed(
                    "min",
                    format!("{finite} finite values were counted, but min or max is missing"),
                ));
            }
        };
        let impossible = |which: &'static str, value: f64, reason: String| {
            Err(TallyError::ImpossibleExtreme {
                field: which.to_string(),
                which,
                value,
                reason,
            })
        };
        for (which, value) in [("min", min), ("max", max)] {
            if !value.is_finite() {
                return impossible(which, value, "the extremes are of finite values".into());
            }
        }
        if min > max {
            return Err(TallyError::MinAboveMax {
                field: String::new(),
                min,
                max,
            });
        }
        let first = self.occupied().next().map(|(key, _, _)| key);
        let last = self.occupied().last().map(|(key, _, _)| key);
        let describe = |key: Option<u32>| match key {
            Some(key) => {
                let (a, b) = bin_edges(key);
                format!("[{a:e}, {b:e})")
            }
            None => "none".to_string(),
        };
        let min_ok = if self.negative.count > 0 {
            min < 0.0
        } else if self.zero.count > 0 {
            min == 0.0
        } else {
            min > 0.0 && Some(key_of(min)) == first
        };
        if !min_ok {
            return impossible(
                "min",
                min,
                format!(
                    "the histogram holds {} negative and {} zero values, lowest occupied bin {}",
                    self.negative.count,
                    self.zero.count,
                    describe(first)
                ),
            );
        }
        let max_ok = match last {
            Some(key) => max > 0.0 && key_of(max) == key,
            None if self.zero.count > 0 => max == 0.0,
            None => max < 0.0,
        };
        if !max_ok {
            return impossible(
                "max",
                max,
                format!("the highest occupied bin is {}", describe(last)),
            );
        }
        if self.integral {
            if min.fract() != 0.0 || max.fract() != 0.0 {
                return Err(TallyError::malformed(
                    "integral",
                    format!("whole numbers only, but min {min:e} or max {max:e} is not one"),
                ));
            }
            let empty = self.occupied().find(|&(key, _, _)| {
                let (low, high) = bin_edges(key);
                low.ceil() >= high
            });
            if let Some((key, _, _)) = empty {
                return Err(TallyError::malformed(
                    "integral",
                    format!(
                        "whole numbers only, but bin {} holds none",
                        describe(Some(key))
                    ),
                ));
            }
        }
        self.min = min;
        self.max = max;
        Ok(())
    }
}

/// Whether a finite `value` is a whole number (without a libm call: every `f64` of
/// magnitude ≥ 2⁵² is one, and below that the conversion to `i64` is exact).
#[inline]
fn is_whole(value: f64) -> bool {
    value.abs() >= 4_503_599_627_370_496.0 || (value as i64) as f64 == value
}

/// Where a positive value's bin starts (used to snap plot edges onto the fine bins).
pub fn fine_bin_floor(value: f64) -> Option<f64> {
    (value > 0.0 && value.is_finite()).then(|| snap_down(value))
}

/// A count with its weight sum when weighted: `count` or `[count, "weight"]` in JSON.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub(crate) struct CountWeight {
    count: u64,
    weight: Option<WeightSum>,
}

impl CountWeight {
    fn is_empty(&self) -> bool {
        self.count == 0
    }
}

impl Serialize for CountWeight {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        match self.weight {
            None => serializer.serialize_u64(self.count),
            Some(weight) => {
                let mut tuple = serializer.serialize_tuple(2)?;
                tuple.serialize_element(&self.count)?;
                tuple.serialize_element(&weight)?;
                tuple.end()
            }
        }
    }
}

impl<'de> Deserialize<'de> for CountWeight {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct CountWeightVisitor;
        impl<'de> Visitor<'de> for CountWeightVisitor {
            type Value = CountWeight;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a count, or [count, \"weight sum\"]")
            }
            fn visit_u64<E: de::Error>(self, count: u64) -> Result<CountWeight, E> {
                Ok(CountWeight {
                    count,
                    weight: None,
                })
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<CountWeight, A::Error> {
                let count = seq
                    .next_element()?
                    .ok_or_else(|| de::Error::invalid_length(0, &self))?;
                let weight = seq
                    .next_element()?
                    .ok_or_else(|| de::Error::invalid_length(1, &self))?;
                if seq.next_element::<de::IgnoredAny>()?.is_some() {
                    return Err(de::Error::invalid_length(3, &self));
                }
                Ok(CountWeight {
                    count,
                    weight: Some(weight),
                })
            }
        }
        deserializer.deserialize_any(CountWeightVisitor)
    }
}

/// A run of consecutive occupied bins: `[first key, count, count, ...]`.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct RunRepr {
    start: u32,
    counts: Vec<u64>,
}

impl Serialize for RunRepr {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut tuple = serializer.serialize_tuple(1 + self.counts.len())?;
        tuple.serialize_element(&self.start)?;
        for count in &self.counts {
            tuple.serialize_element(count)?;
        }
        tuple.end()
    }
}

impl<'de> Deserialize<'de> for RunRepr {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct RunVisitor;
        impl<'de> Visitor<'de> for RunVisitor {
            type Value = RunRepr;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a run of bins [first key, count, count, ...]")
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<RunRepr, A::Error> {
                let start = seq
                    .next_element()?
                    .ok_or_else(|| de::Error::invalid_length(0, &self))?;
                let mut counts = Vec::new();
                while let Some(count) = seq.next_element()? {
                    counts.push(count);
                }
                Ok(RunRepr { start, counts })
            }
        }
        deserializer.deserialize_seq(RunVisitor)
    }
}

/// Serialised form of a [`LogHistogram`].
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct HistogramRepr {
    /// Fraction bits per bin key (10).
    resolution_bits: u32,
    #[serde(default)]
    min: Option<f64>,
    #[serde(default)]
    max: Option<f64>,
    integral: bool,
    #[serde(default, skip_serializing_if = "CountWeight::is_empty")]
    zero: CountWeight,
    #[serde(default, skip_serializing_if = "CountWeight::is_empty")]
    negative: CountWeight,
    #[serde(default, skip_serializing_if = "CountWeight::is_empty")]
    nan: CountWeight,
    #[serde(default, skip_serializing_if = "CountWeight::is_empty")]
    positive_infinity: CountWeight,
    #[serde(default, skip_serializing_if = "CountWeight::is_empty")]
    negative_infinity: CountWeight,
    /// Runs of consecutive occupied bins, `[first key, count, ...]`.
    bins: Vec<RunRepr>,
    /// Weight sums of the bins of `bins`, run by run (weighted histograms only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    bin_weights: Option<Vec<Vec<WeightSum>>>,
}

impl Serialize for LogHistogram {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        self.to_repr().serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for LogHistogram {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let repr = HistogramRepr::deserialize(deserializer)?;
        LogHistogram::from_repr(repr).map_err(de::Error::custom)
    }
}

#[cfg(test)]
mod tests {
    use super::super::bin_key::RELATIVE_BIN_WIDTH;
    use super::*;
    use proptest::prelude::*;
    use rand::{RngExt, SeedableRng};

    fn histogram_of(values: &[f64]) -> LogHistogram {
        let mut histogram = LogHistogram::new();
        values.iter().for_each(|&v| histogram.add(v));
        histogram
    }

    /// The type-1 sample quantile: x_(k) with k = max(1, ⌈p n⌉) of the sorted sample.
    fn exact_quantile(sorted: &[f64], p: f64) -> f64 {
        let n = sorted.len();
        let rank = ((p * n as f64).ceil() as usize).clamp(1, n);
        sorted[rank - 1]
    }

    #[test]
    fn one_value_is_every_quantile() {
        for value in [66.71e-12, 1.0, 3.3e-41, 2.9e-312, 1e300, 7.0] {
            let histogram = histogram_of(&[value]);
            for p in [0.0, 0.05, 0.25, 0.5, 0.75, 0.95, 1.0] {
                assert_eq!(histogram.quantile(p), Some(value), "{value} at {p}");
            }
        }
    }

    #[test]
    fn quantiles_never_leave_the_observed_range() {
        // Many photons at exactly the straight-line time, the rest a little later in the
        // same bin: no quantile may fall below the straight-line time.
        let straight = 2.0 / 29_979_245_800.0;
        let mut values = vec![straight; 370];
        values.extend((1..630).map(|k| straight * (1.0 + 1e-6 * k as f64)));
        let histogram = histogram_of(&values);
        for p in [0.0, 0.01, 0.05, 0.5, 0.95, 1.0] {
            let q = histogram.quantile(p).unwrap();
            assert!(q >= straight && q <= histogram.max().unwrap(), "{p}: {q}");
        }
        assert_eq!(histogram.quantile(0.0), Some(straight));
        assert_eq!(histogram.quantile(1.0), histogram.max());
    }

    #[test]
    fn quantiles_match_the_sorted_sample_within_the_bin_width() {
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(3);
        for scale in [1e-30, 1e-9, 1.0, 1e26] {
            let mut values: Vec<f64> = (0..20_001)
                .map(|_| scale * (-rng.random::<f64>().ln()).powi(3))
                .collect();
            let histogram = histogram_of(&values);
            values.sort_by(f64::total_cmp);
            for p in [0.0, 0.001, 0.05, 0.25, 0.5, 0.75, 0.95, 0.999, 1.0] {
                let exact = exact_quantile(&values, p);
                let estimate = histogram.quantile(p).unwrap();
                assert!(
                    (estimate / exact - 1.0).abs() < RELATIVE_BIN_WIDTH,
                    "scale {scale}, p {p}: {estimate} against {exact}"
                );
            }
        }
    }

    #[test]
    fn whole_numbers_give_whole_quantiles() {
        let values: Vec<f64> = (0..5000).map(|k| ((k * 7919) % 4001) as f64).collect();
        let histogram = histogram_of(&values);
        assert!(histogram.is_integral());
        let mut sorted = values.clone();
        sorted.sort_by(f64::total_cmp);
        for p in [0.05, 0.1, 0.5, 0.9, 0.95] {
            let q = histogram.quantile(p).unwrap();
            assert_eq!(q.fract(), 0.0, "{p}: {q}");
            let exact = exact_quantile(&sorted, p);
            // Below 2048 each bin holds one whole number: the quantile is exact.
            if exact < 2048.0 {
                assert_eq!(q, exact);
            } else {
                assert!((q / exact - 1.0).abs() < RELATIVE_BIN_WIDTH);
            }
        }
        let mut mixed = histogram.clone();
        mixed.add(2.5);
        assert!(!mixed.is_integral());
    }

    #[test]
    fn weighted_quantiles_use_the_weights() {
        let mut histogram = LogHistogram::new();
        histogram.add_weighted(1.0, Weight::new(0.25).unwrap());
        histogram.add_weighted(10.0, Weight::new(0.75).unwrap());
        assert!(histogram.is_weighted());
        assert_eq!(histogram.quantile(0.2), Some(1.0));
        assert_eq!(histogram.quantile(0.3), Some(10.0));
        assert_eq!(histogram.total(), 2);
        assert_eq!(histogram.total_weight(), 1.0);
    }

    #[test]
    fn special_values_are_counted_apart() {
        let histogram = histogram_of(&[0.0, -0.0, 2.0, f64::INFINITY, f64::NAN, -1.0]);
        assert_eq!(histogram.total(), 6);
        assert_eq!(histogram.zero_count(), 2);
        assert_eq!(histogram.negative_count(), 1);
        assert_eq!(histogram.non_finite_count(), 2);
        assert_eq!((histogram.min(), histogram.max()), (Some(-1.0), Some(2.0)));
        assert_eq!(histogram.quantile(0.5), None, "order unknown with NaN");
        let clean = histogram_of(&[0.0, 2.0, 3.0, f64::INFINITY]);
        assert_eq!(clean.quantile(0.1), Some(0.0));
        assert_eq!(clean.quantile(1.0), Some(f64::INFINITY));
    }

    #[test]
    fn extreme_scales_are_binned_not_clamped() {
        for low in [3.3e-41, 1e-300, f64::from_bits(1), 3e15, f64::MAX / 2.0] {
            let histogram = histogram_of(&[2.0 * low, low]);
            assert_eq!(histogram.quantile(1.0), Some(2.0 * low));
            assert_eq!(histogram.quantile(0.0), Some(low));
            assert_eq!(histogram.bins().len(), 2);
        }
    }

    #[test]
    fn regrouping_keeps_every_value() {
        let values: Vec<f64> = (1..=1000).map(|k| k as f64 * 0.37).collect();
        let histogram = histogram_of(&values);
        let grid = histogram.regroup(&[1.0, 10.0, 100.0, 1000.0]);
        let expected: Vec<f64> = [1.0, 10.0, 100.0, 1000.0]
            .iter()
            .map(|&e| fine_bin_floor(e).unwrap())
            .collect();
        assert_eq!(grid.edges, expected);
        assert_eq!(
            grid.below + grid.counts.iter().sum::<u64>() + grid.above,
            1000
        );
        assert_eq!(grid.below, 2);
        assert_eq!(
            grid.weights.iter().sum::<f64>(),
            grid.counts.iter().sum::<u64>() as f64
        );
    }

    #[test]
    fn serde_round_trips_and_refuses_contradictions() {
        let mut histogram = histogram_of(&[0.0, 5.0, 5.0, 1e40, 3.5]);
        let text = serde_json::to_string(&histogram).unwrap();
        let back: LogHistogram = serde_json::from_str(&text).unwrap();
        assert_eq!(back, histogram);
        histogram.add_weighted(2.0, Weight::new(0.5).unwrap());
        let text = serde_json::to_string(&histogram).unwrap();
        let back: LogHistogram = serde_json::from_str(&text).unwrap();
        assert_eq!(back, histogram);
        assert!(back.is_weighted());

        let good: serde_json::Value = serde_json::to_value(histogram_of(&[1.0, 2.0])).unwrap();
        let refuse = |edit: &dyn Fn(&mut serde_json::Value), needle: &str| {
            let mut bad = good.clone();
            edit(&mut bad);
            let error = serde_json::from_value::<LogHistogram>(bad)
                .unwrap_err()
                .to_string();
            assert!(error.contains(needle), "{needle}: {error}");
        };
        refuse(
            &|v| v["max"] = serde_json::json!(1e308),
            "max 1e308 is impossible",
        );
        refuse(&|v| v["min"] = serde_json::json!(3.0), "min");
        refuse(
            &|v| v["bins"][0][0] = serde_json::json!(5_000_000),
            "is outside",
        );
        refuse(&|v| v["bins"][0][1] = serde_json::json!(0), "empty bin");
        refuse(
            &|v| v["bins"][1][0] = v["bins"][0][0].clone(),
            "must increase",
        );
        refuse(
            &|v| v["resolution_bits"] = serde_json::json!(8),
            "resolution_bits",
        );
        refuse(
            &|v| v["bin_weights"] = serde_json::json!([["9223372036854775809"], ["0"]]),
            "exceeds",
        );
        refuse(
            &|v| v["bin_weights"] = serde_json::json!([["0"]]),
            "not one weight sum per bin",
        );
        refuse(
            &|v| v["bins"][0][1] = serde_json::json!(u64::MAX),
            "the sum of the counts",
        );
    }

    proptest! {
        #[test]
        fn merging_is_exact_in_any_split(
            values in proptest::collection::vec(
                prop_oneof![0.0f64..1e-300, 1e-12f64..1e12, Just(0.0), 1.0f64..1e300], 1..120),
            weights in proptest::collection::vec(0.0f64..=1.0, 120),
            split in 0usize..120,
        ) {
            let split = split.min(values.len());
            let add = |h: &mut LogHistogram, i: usize| {
                h.add_weighted(values[i], Weight::new(weights[i]).unwrap())
            };
            let mut whole = LogHistogram::new();
            (0..values.len()).for_each(|i| add(&mut whole, i));
            let (mut left, mut right) = (LogHistogram::new(), LogHistogram::new());
            (0..split).rev().for_each(|i| add(&mut left, i));
            (split..values.len()).rev().for_each(|i| add(&mut right, i));
            right.merge(&left);
            prop_assert_eq!(&whole, &right);
            let text = serde_json::to_string(&whole).unwrap();
            prop_assert_eq!(text, serde_json::to_string(&right).unwrap());
        }
    }
}
