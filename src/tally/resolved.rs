//! Resolved slab tallies (opt-in): time of flight of reflected and transmitted light,
//! absorption by layer and by depth, emergent angular distribution, and the radial
//! distributions of reflectance and transmittance around the beam axis (the normal through
//! x = y = 0, where the beam's centre enters), on logarithmic bins. Every bin holds an
//! integer count and, for weighted photons, the exact sum of their weights, so tallies
//! merge exactly.

use serde::de::{self, MapAccess, SeqAccess, Visitor};
use serde::{Deserialize, Deserializer, Serialize, Serializer};

use super::error::TallyError;
use super::weight::{Weight, WeightSum};
use super::{Outcome, PhotonRecord};

/// Bins of a [`ResolvedTally`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ResolvedLayout {
    /// Width of a time-of-flight bin, s (bins start at 0).
    pub time_bin_s: f64,
    /// Number of time-of-flight bins (later times are counted apart).
    pub time_bins: usize,
    /// Width of a depth bin, cm (bins start at the top face).
    pub depth_bin_cm: f64,
    /// Number of depth bins (covering the slab).
    pub depth_bins: usize,
    /// Number of bins in the exit cosine |μ| on [0, 1].
    pub cosine_bins: usize,
    /// Lower edge of the first logarithmic radial bin, cm (exits nearer the axis are counted
    /// apart, in the series' first entry).
    pub radial_min_cm: f64,
    /// Upper edge of the last radial bin, cm (farther exits are counted apart, in the
    /// series' last entry).
    pub radial_max_cm: f64,
    /// Number of radial bins between the two, of equal width in ln ρ.
    pub radial_bins: usize,
    /// Number of layers of the medium.
    pub layers: usize,
}

/// Most bins of any kind a layout may ask for (a guard against damaged files).
const MAX_BINS: usize = 10_000_000;

impl ResolvedLayout {
    /// Whether the layout is usable: positive finite widths, at least one bin of each kind,
    /// and no more than 10⁷ bins of any kind (a guard against damaged files).
    pub fn is_sane(&self) -> bool {
        let width = |w: f64| w.is_finite() && w > 0.0;
        let count = |n: usize| (1..=MAX_BINS).contains(&n);
        width(self.time_bin_s)
            && width(self.depth_bin_cm)
            && width(self.radial_min_cm)
            && self.radial_max_cm.is_finite()
            && self.radial_max_cm > self.radial_min_cm
            && count(self.time_bins)
            && count(self.depth_bins)
            && count(self.cosine_bins)
            && count(self.radial_bins)
            && count(self.layers)
    }
}

impl ResolvedLayout {
    /// The radial bin edges, cm: `radial_bins + 1` values from `radial_min_cm` to
    /// `radial_max_cm`, equally spaced in ln ρ.
    pub fn radial_edges_cm(&self) -> Vec<f64> {
        let ratio = (self.radial_max_cm / self.radial_min_cm).ln();
        (0..=self.radial_bins)
            .map(|i| {
                if i == self.radial_bins {
                    self.radial_max_cm
                } else {
                    self.radial_min_cm * (ratio * i as f64 / self.radial_bins as f64).exp()
                }
            })
            .collect()
    }

    /// The entry of a radial series for distance `rho_cm` from the axis: 0 below
    /// `radial_min_cm`, 1..=`radial_bins` for the logarithmic bins, `radial_bins + 1` at or
    /// beyond `radial_max_cm` (and for NaN).
    #[inline]
    pub fn radial_entry(&self, rho_cm: f64) -> usize {
        if rho_cm < self.radial_min_cm {
            return 0;
        }
        if rho_cm >= self.radial_max_cm || rho_cm.is_nan() {
            return self.radial_bins + 1;
        }
        let position = (rho_cm / self.radial_min_cm).ln()
            / (self.radial_max_cm / self.radial_min_cm).ln()
            * self.radial_bins as f64;
        1 + (position as usize).min(self.radial_bins - 1)
    }
}

/// Counts and weight sums on one set of bins.
#[derive(Debug, Clone, PartialEq)]
pub struct BinSeries {
    counts: Vec<u64>,
    weights: Option<Vec<WeightSum>>,
}

impl BinSeries {
    fn zeros(bins: usize) -> Self {
        Self {
            counts: vec![0; bins],
            weights: None,
        }
    }

    fn add(&mut self, bin: usize, weight: Weight) {
        self.counts[bin] += 1;
        if let Some(weights) = &mut self.weights {
            weights[bin].add(weight);
        }
    }

    fn make_weighted(&mut self) {
        if self.weights.is_none() {
            self.weights = Some(
                self.counts
                    .iter()
                    .map(|&c| WeightSum::of_unit_weights(c))
                    .collect(),
            );
        }
    }

    fn merge(&mut self, other: &BinSeries) {
        for (a, b) in self.counts.iter_mut().zip(&other.counts) {
            *a += b;
        }
        if let Some(weights) = &mut self.weights {
            for (bin, weight) in weights.iter_mut().enumerate() {
                weight.merge(match &other.weights {
                    Some(theirs) => theirs[bin],
                    None => WeightSum::of_unit_weights(other.counts[bin]),
                });
            }
        }
    }

    /// Photons per bin.
    pub fn counts(&self) -> &[u64] {
        &self.counts
    }

    /// Sum of the photons' weights per bin (equal to the counts for analog photons).
    pub fn weights(&self) -> Vec<f64> {
        match &self.weights {
            Some(weights) => weights.iter().map(|w| w.value()).collect(),
            None => self.counts.iter().map(|&c| c as f64).collect(),
        }
    }

    /// Number of bins.
    pub fn len(&self) -> usize {
        self.counts.len()
    }

    /// Whether there are no bins.
    pub fn is_empty(&self) -> bool {
        self.counts.is_empty()
    }

    /// Photons in all bins.
    pub fn total(&self) -> u64 {
        self.counts.iter().sum()
    }

    fn checked_totals(&self) -> Option<(u64, WeightSum)> {
        let count = self
            .counts
            .iter()
            .try_fold(0u64, |sum, &c| sum.checked_add(c))?;
        let weight = match &self.weights {
            Some(weights) => weights
                .iter()
                .try_fold(WeightSum::ZERO, |sum, &w| sum.checked_add(w))?,
            None => WeightSum::of_unit_weights(count),
        };
        Some((count, weight))
    }
}

/// Resolved counts of a slab run (see the module docs).
#[derive(Debug, Clone, PartialEq)]
pub struct ResolvedTally {
    layout: ResolvedLayout,
    weighted: bool,
    reflected_by_time: BinSeries,
    transmitted_by_time: BinSeries,
    absorbed_by_layer: BinSeries,
    absorbed_by_depth: BinSeries,
    reflected_by_cosine: BinSeries,
    transmitted_by_cosine: BinSeries,
    reflected_by_radius: BinSeries,
    transmitted_by_radius: BinSeries,
}

fn bin(value: f64, width: f64, bins: usize) -> usize {
    if value.is_nan() || value < 0.0 {
        return 0;
    }
    ((value / width) as usize).min(bins)
}

impl ResolvedTally {
    /// Empty counts on `layout`.
    pub fn new(layout: ResolvedLayout) -> Self {
        Self {
            layout,
            weighted: false,
            reflected_by_time: BinSeries::zeros(layout.time_bins + 1),
            transmitted_by_time: BinSeries::zeros(layout.time_bins + 1),
            absorbed_by_layer: BinSeries::zeros(layout.layers),
            absorbed_by_depth: BinSeries::zeros(layout.depth_bins),
            reflected_by_cosine: BinSeries::zeros(layout.cosine_bins),
            transmitted_by_cosine: BinSeries::zeros(layout.cosine_bins),
            reflected_by_radius: BinSeries::zeros(layout.radial_bins + 2),
            transmitted_by_radius: BinSeries::zeros(layout.radial_bins + 2),
        }
    }

    /// The bins.
    pub fn layout(&self) -> ResolvedLayout {
        self.layout
    }

    /// Reflected photons per time-of-flight bin; the last bin counts later times.
    pub fn reflected_by_time(&self) -> &BinSeries {
        &self.reflected_by_time
    }

    /// Transmitted photons per time-of-flight bin; the last bin counts later times.
    pub fn transmitted_by_time(&self) -> &BinSeries {
        &self.transmitted_by_time
    }

    /// Absorbed photons per layer.
    pub fn absorbed_by_layer(&self) -> &BinSeries {
        &self.absorbed_by_layer
    }

    /// Absorbed photons per depth bin.
    pub fn absorbed_by_depth(&self) -> &BinSeries {
        &self.absorbed_by_depth
    }

    /// Reflected photons per bin of exit cosine |μ| (outside the slab).
    pub fn reflected_by_cosine(&self) -> &BinSeries {
        &self.reflected_by_cosine
    }

    /// Transmitted photons per bin of exit cosine |μ| (outside the slab).
    pub fn transmitted_by_cosine(&self) -> &BinSeries {
        &self.transmitted_by_cosine
    }

    /// Reflected photons by distance from the beam axis, entries as in
    /// [`ResolvedLayout::radial_entry`] (nearer, the logarithmic bins, farther).
    pub fn reflected_by_radius(&self) -> &BinSeries {
        &self.reflected_by_radius
    }

    /// Transmitted photons by distance from the beam axis, entries as in
    /// [`ResolvedLayout::radial_entry`].
    pub fn transmitted_by_radius(&self) -> &BinSeries {
        &self.transmitted_by_radius
    }

    fn series_mut(&mut self) -> [&mut BinSeries; 8] {
        [
            &mut self.reflected_by_time,
            &mut self.transmitted_by_time,
            &mut self.absorbed_by_layer,
            &mut self.absorbed_by_depth,
            &mut self.reflected_by_cosine,
            &mut self.transmitted_by_cosine,
            &mut self.reflected_by_radius,
            &mut self.transmitted_by_radius,
        ]
    }

    fn series(&self) -> [(&'static str, &BinSeries); 8] {
        [
            ("reflected_by_time", &self.reflected_by_time),
            ("transmitted_by_time", &self.transmitted_by_time),
            ("absorbed_by_layer", &self.absorbed_by_layer),
            ("absorbed_by_depth", &self.absorbed_by_depth),
            ("reflected_by_cosine", &self.reflected_by_cosine),
            ("transmitted_by_cosine", &self.transmitted_by_cosine),
            ("reflected_by_radius", &self.reflected_by_radius),
            ("transmitted_by_radius", &self.transmitted_by_radius),
        ]
    }

    /// Keeps weight sums from now on, giving the photons so far weight 1.
    pub(crate) fn make_weighted(&mut self) {
        self.weighted = true;
        self.series_mut()
            .into_iter()
            .for_each(BinSeries::make_weighted);
    }

    /// Whether weight sums are kept.
    pub fn is_weighted(&self) -> bool {
        self.weighted
    }

    /// Counts one photon of weight `weight`.
    pub(crate) fn record(&mut self, record: &PhotonRecord, weight: Weight) {
        if !weight.is_one() && !self.weighted {
            self.make_weighted();
        }
        let layout = self.layout;
        let cosine_bin = || {
            let mu = record.direction[2].abs();
            ((mu * layout.cosine_bins as f64) as usize).min(layout.cosine_bins - 1)
        };
        let time_bin = || bin(record.time_s, layout.time_bin_s, layout.time_bins);
        match record.outcome {
            Outcome::Reflected => {
                self.reflected_by_time.add(time_bin(), weight);
                self.reflected_by_cosine.add(cosine_bin(), weight);
                let [x, y, _] = record.position_cm;
                let radial = layout.radial_entry(x.hypot(y));
                self.reflected_by_radius.add(radial, weight);
            }
            Outcome::Transmitted => {
                self.transmitted_by_time.add(time_bin(), weight);
                self.transmitted_by_cosine.add(cosine_bin(), weight);
                let [x, y, _] = record.position_cm;
                let radial = layout.radial_entry(x.hypot(y));
                self.transmitted_by_radius.add(radial, weight);
            }
            Outcome::Absorbed => {
                if record.layer < layout.layers {
                    self.absorbed_by_layer.add(record.layer, weight);
                }
                let depth = bin(
                    record.position_cm[2],
                    layout.depth_bin_cm,
                    layout.depth_bins - 1,
                );
                self.absorbed_by_depth.add(depth, weight);
            }
            Outcome::Escaped | Outcome::Specular | Outcome::Censored => {}
        }
    }

    /// Counts weight `weight` that a weighted photon left at depth `depth_cm` in layer
    /// `layer` (implicit capture): one entry per deposit in the absorption series, which
    /// then hold deposits, not photons.
    pub(crate) fn deposit(&mut self, layer: usize, depth_cm: f64, weight: Weight) {
        if !self.weighted {
            self.make_weighted();
        }
        let layout = self.layout;
        if layer < layout.layers {
            self.absorbed_by_layer.add(layer, weight);
        }
        let depth = bin(depth_cm, layout.depth_bin_cm, layout.depth_bins - 1);
        self.absorbed_by_depth.add(depth, weight);
    }

    /// Adds counts made on the same layout (see [`ResolvedTally::compatible`]).
    pub(crate) fn merge(&mut self, other: &ResolvedTally) {
        if other.weighted && !self.weighted {
            self.make_weighted();
        }
        let theirs = other.series();
        for (mine, (_, theirs)) in self.series_mut().into_iter().zip(theirs) {
            mine.merge(theirs);
        }
    }

    /// Whether `other` has the same layout (and so can be merged).
    pub fn compatible(&self, other: &ResolvedTally) -> bool {
        self.layout == other.layout
    }

    /// Photons and weight of the reflected, transmitted and absorbed series, for the
    /// tally's cross-checks: `(series name, outcome, count, weight)`. Weighted counts hold
    /// the absorption as deposits along the paths (an unbiased estimate of the absorbed
    /// weight, equal to it only in expectation), so their absorption series are left out.
    pub(crate) fn outcome_totals(&self) -> Vec<(&'static str, Outcome, u64, WeightSum)> {
        self.series()
            .into_iter()
            .filter(|(name, _)| {
                *name != "absorbed_by_layer" && !(self.weighted && *name == "absorbed_by_depth")
            })
            .map(|(name, series)| {
                let outcome = if name.starts_with("reflected") {
                    Outcome::Reflected
                } else if name.starts_with("transmitted") {
                    Outcome::Transmitted
                } else {
                    Outcome::Absorbed
                };
                let (count, weight) = series
                    .checked_totals()
                    .expect("validated or recorded totals fit");
                (name, outcome, count, weight)
            })
            .collect()
    }

    /// Photons and weight absorbed in the layers.
    pub(crate) fn absorbed_by_layer_totals(&self) -> (u64, WeightSum) {
        self.absorbed_by_layer
            .checked_totals()
            .expect("validated or recorded totals fit")
    }

    /// Rebuilds resolved counts from their serialised form: a sane layout, series of the
    /// layout's lengths, weights that photons of weight ≤ 1 can carry, totals that fit.
    pub(crate) fn from_repr(repr: ResolvedRepr) -> Result<Self, TallyError> {
        let layout = repr.layout;
        if !layout.is_sane() {
            return Err(TallyError::OutOfRange {
                field: "layout".into(),
                value: format!("{layout:?}"),
                allowed: format!("positive finite widths and 1..={MAX_BINS} bins of each kind"),
            });
        }
        let fresh = ResolvedTally::new(layout);
        let given = [
            repr.reflected_by_time,
            repr.transmitted_by_time,
            repr.absorbed_by_layer,
            repr.absorbed_by_depth,
            repr.reflected_by_cosine,
            repr.transmitted_by_cosine,
            repr.reflected_by_radius,
            repr.transmitted_by_radius,
        ];
        let weighted = given.iter().any(|s| s.weights.is_some());
        let mut tally = fresh.clone();
        tally.weighted = weighted;
        for ((slot, (name, expected)), series) in tally
            .series_mut()
            .into_iter()
            .zip(fresh.series())
            .zip(given)
        {
            if series.counts.len() != expected.len() {
                return Err(TallyError::mismatch(
                    name,
                    "number of bins for this layout",
                    series.counts.len(),
                    expected.len(),
                ));
            }
            match &series.weights {
                None if weighted => {
                    return Err(TallyError::weights(
                        name,
                        "no weight sums, though other series carry them",
                    ));
                }
                Some(weights) if weights.len() != series.counts.len() => {
                    return Err(TallyError::mismatch(
                        format!("{name}.weights"),
                        "number of weight sums",
                        weights.len(),
                        series.counts.len(),
                    ));
                }
                Some(weights) => {
                    if let Some(bin) =
                        (0..weights.len()).find(|&b| !weights[b].fits(series.counts[b]))
                    {
                        return Err(TallyError::weights(
                            format!("{name}.weights[{bin}]"),
                            format!(
                                "weight sum {} exceeds the bin's {} photons (weights lie in [0, 1])",
                                weights[bin], series.counts[bin]
                            ),
                        ));
                    }
                }
                None => {}
            }
            if series.checked_totals().is_none() {
                return Err(TallyError::OutOfRange {
                    field: name.into(),
                    value: "the sum of the counts".into(),
                    allowed: "the range of a 64-bit count".into(),
                });
            }
            *slot = series;
        }
        Ok(tally)
    }

    fn to_repr(&self) -> ResolvedRepr {
        ResolvedRepr {
            layout: self.layout,
            reflected_by_time: self.reflected_by_time.clone(),
            transmitted_by_time: self.transmitted_by_time.clone(),
            absorbed_by_layer: self.absorbed_by_layer.clone(),
            absorbed_by_depth: self.absorbed_by_depth.clone(),
            reflected_by_cosine: self.reflected_by_cosine.clone(),
            transmitted_by_cosine: self.transmitted_by_cosine.clone(),
            reflected_by_radius: self.reflected_by_radius.clone(),
            transmitted_by_radius: self.transmitted_by_radius.clone(),
        }
    }
}

/// A series travels as its array of counts, or `{"counts": [...], "weights": [...]}` when
/// weighted.
impl Serialize for BinSeries {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        #[derive(Serialize)]
        struct Weighted<'a> {
            counts: &'a [u64],
            weights: &'a [WeightSum],
        }
        match &self.weights {
            None => self.counts.serialize(serializer),
            Some(weights) => Weighted {
                counts: &self.counts,
                weights,
            }
            .serialize(serializer),
        }
    }
}

impl<'de> Deserialize<'de> for BinSeries {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        #[derive(Deserialize)]
        #[serde(deny_unknown_fields)]
        struct Weighted {
            counts: Vec<u64>,
            weights: Vec<WeightSum>,
        }
        struct SeriesVisitor;
        impl<'de> Visitor<'de> for SeriesVisitor {
            type Value = BinSeries;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("an array of counts, or {\"counts\": [...], \"weights\": [...]}")
            }
            fn visit_seq<A: SeqAccess<'de>>(self, seq: A) -> Result<BinSeries, A::Error> {
                let counts = Vec::deserialize(de::value::SeqAccessDeserializer::new(seq))?;
                Ok(BinSeries {
                    counts,
                    weights: None,
                })
            }
            fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<BinSeries, A::Error> {
                let weighted = Weighted::deserialize(de::value::MapAccessDeserializer::new(map))?;
                Ok(BinSeries {
                    counts: weighted.counts,
                    weights: Some(weighted.weights),
                })
            }
        }
        deserializer.deserialize_any(SeriesVisitor)
    }
}

/// Serialised form of a [`ResolvedTally`].
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ResolvedRepr {
    layout: ResolvedLayout,
    reflected_by_time: BinSeries,
    transmitted_by_time: BinSeries,
    absorbed_by_layer: BinSeries,
    absorbed_by_depth: BinSeries,
    reflected_by_cosine: BinSeries,
    transmitted_by_cosine: BinSeries,
    reflected_by_radius: BinSeries,
    transmitted_by_radius: BinSeries,
}

impl Serialize for ResolvedTally {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        self.to_repr().serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for ResolvedTally {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let repr = ResolvedRepr::deserialize(deserializer)?;
        ResolvedTally::from_repr(repr).map_err(de::Error::custom)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn layout() -> ResolvedLayout {
        ResolvedLayout {
            time_bin_s: 1e-12,
            time_bins: 4,
            depth_bin_cm: 0.1,
            depth_bins: 3,
            cosine_bins: 2,
            radial_min_cm: 0.01,
            radial_max_cm: 1.0,
            radial_bins: 2,
            layers: 2,
        }
    }

    fn photon(outcome: Outcome, time_s: f64) -> PhotonRecord {
        PhotonRecord {
            outcome,
            time_s,
            scatterings: 1.0,
            jumps: 0.0,
            direct_steps: 2.0,
            jump_time_s: 0.0,
            position_cm: [0.2, 0.0, 0.15],
            direction: [0.0, 0.0, 0.9],
            layer: 1,
            weight: 1.0,
        }
    }

    #[test]
    fn weights_follow_the_counts() {
        let mut tally = ResolvedTally::new(layout());
        tally.record(&photon(Outcome::Reflected, 2.5e-12), Weight::ONE);
        tally.record(
            &photon(Outcome::Reflected, 2.7e-12),
            Weight::new(0.25).unwrap(),
        );
        tally.record(&photon(Outcome::Absorbed, 0.0), Weight::new(0.5).unwrap());
        assert!(tally.is_weighted());
        assert_eq!(tally.reflected_by_time().counts(), &[0, 0, 2, 0, 0]);
        assert_eq!(
            tally.reflected_by_time().weights(),
            vec![0.0, 0.0, 1.25, 0.0, 0.0]
        );
        assert_eq!(tally.absorbed_by_layer().weights(), vec![0.0, 0.5]);
        let text = serde_json::to_string(&tally).unwrap();
        let back: ResolvedTally = serde_json::from_str(&text).unwrap();
        assert_eq!(back, tally);
    }

    #[test]
    fn radial_entries_are_logarithmic_with_under_and_overflow() {
        let layout = layout();
        let edges = layout.radial_edges_cm();
        assert_eq!(edges.len(), 3);
        assert!((edges[1] - 0.1).abs() < 1e-15);
        assert_eq!(layout.radial_entry(0.0), 0);
        assert_eq!(layout.radial_entry(0.009), 0);
        assert_eq!(layout.radial_entry(0.01), 1);
        assert_eq!(layout.radial_entry(0.099), 1);
        assert_eq!(layout.radial_entry(0.11), 2);
        assert_eq!(layout.radial_entry(0.999_999), 2);
        assert_eq!(layout.radial_entry(1.0), 3);
        assert_eq!(layout.radial_entry(f64::NAN), 3);
        let mut tally = ResolvedTally::new(layout);
        tally.record(&photon(Outcome::Transmitted, 1e-12), Weight::ONE);
        // The photon leaves at ρ = 0.2 cm: the second logarithmic bin.
        assert_eq!(tally.transmitted_by_radius().counts(), &[0, 0, 1, 0]);
    }

    #[test]
    fn damaged_series_are_refused() {
        let mut tally = ResolvedTally::new(layout());
        tally.record(&photon(Outcome::Transmitted, 1e-12), Weight::ONE);
        let good = serde_json::to_value(&tally).unwrap();
        let refuse = |edit: &dyn Fn(&mut serde_json::Value), needle: &str| {
            let mut bad = good.clone();
            edit(&mut bad);
            let error = serde_json::from_value::<ResolvedTally>(bad)
                .unwrap_err()
                .to_string();
            assert!(error.contains(needle), "{needle}: {error}");
        };
        refuse(
            &|v| v["layout"]["time_bins"] = serde_json::json!(0),
            "layout",
        );
        refuse(
            &|v| v["reflected_by_time"] = serde_json::json!([1, 2]),
            "reflected_by_time: number of bins",
        );
        refuse(
            &|v| v["absorbed_by_depth"] = serde_json::json!([u64::MAX, 1, 0]),
            "the sum of the counts",
        );
        refuse(
            &|v| {
                v["absorbed_by_layer"] =
                    serde_json::json!({"counts": [1, 0], "weights": ["1", "0"]})
            },
            "reflected_by_time: no weight sums",
        );
        let mut weighted = tally.clone();
        weighted.record(&photon(Outcome::Absorbed, 0.0), Weight::new(0.5).unwrap());
        let mut bad = serde_json::to_value(&weighted).unwrap();
        bad["absorbed_by_layer"]["weights"][1] = serde_json::json!("9223372036854775809");
        let error = serde_json::from_value::<ResolvedTally>(bad)
            .unwrap_err()
            .to_string();
        assert!(
            error.contains(
                "absorbed_by_layer.weights[1]: weight sum 1 (9223372036854775809·2^-63) exceeds"
            ),
            "{error}"
        );
    }
}
