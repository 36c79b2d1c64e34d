//! Time and scattering statistics of the photons that ended one way.

use serde::{Deserialize, Serialize};

use super::error::TallyError;
use super::exact_sum::{ExactSum, ExactSumRepr};
use super::histogram::{HistogramRepr, LogHistogram};
use super::moments::{Moments, MomentsRepr};
use super::weight::{Weight, WeightSum};

/// Weight sums of every photon of the outcome (NaN times included), kept once some photon
/// carried a weight other than 1.
#[derive(Debug, Clone, PartialEq)]
struct PathWeights {
    /// Σw.
    weight: WeightSum,
    /// Σw².
    weight_squared: ExactSum,
}

/// Time and scattering statistics of the photons that ended one way: moments and
/// histograms of the time in the medium (s) and of the number of scatterings, with the
/// photons' weights. The parts always agree with each other (same photons, same extremes,
/// same weights); a deserialised `PathStats` is checked for that.
#[derive(Debug, Clone, PartialEq)]
pub struct PathStats {
    weights: Option<Box<PathWeights>>,
    time_s: Moments,
    scatterings: Moments,
    time_histogram: LogHistogram,
    scattering_histogram: LogHistogram,
}

impl Default for PathStats {
    fn default() -> Self {
        Self::new()
    }
}

impl PathStats {
    /// No photons yet.
    pub fn new() -> Self {
        Self {
            weights: None,
            time_s: Moments::new(),
            scatterings: Moments::new(),
            time_histogram: LogHistogram::new(),
            scattering_histogram: LogHistogram::new(),
        }
    }

    /// Number of photons counted.
    pub fn count(&self) -> u64 {
        self.time_s.count()
    }

    /// Sum of the photons' weights (their number for analog photons).
    pub fn weight(&self) -> f64 {
        self.weight_sum().value()
    }

    pub(crate) fn weight_sum(&self) -> WeightSum {
        match &self.weights {
            Some(weights) => weights.weight,
            None => WeightSum::of_unit_weights(self.count()),
        }
    }

    /// Sum of the squares of the photons' weights (their number for analog photons).
    pub fn weight_squared(&self) -> f64 {
        match &self.weights {
            Some(weights) => weights.weight_squared.value(),
            None => self.count() as f64,
        }
    }

    /// Kish's effective number of photons (Σw)²/Σw² (the count for analog photons).
    pub fn effective_count(&self) -> f64 {
        match &self.weights {
            None => self.count() as f64,
            Some(_) => {
                let (v1, v2) = (self.weight(), self.weight_squared());
                if v2 > 0.0 { v1 * v1 / v2 } else { 0.0 }
            }
        }
    }

    /// Whether some photon carried a weight other than 1.
    pub fn is_weighted(&self) -> bool {
        self.weights.is_some()
    }

    /// Moments of the time in the medium, s.
    pub fn time_s(&self) -> &Moments {
        &self.time_s
    }

    /// Moments of the number of scatterings.
    pub fn scatterings(&self) -> &Moments {
        &self.scatterings
    }

    /// Histogram of the time in the medium, s.
    pub fn time_histogram(&self) -> &LogHistogram {
        &self.time_histogram
    }

    /// Histogram of the number of scatterings.
    pub fn scattering_histogram(&self) -> &LogHistogram {
        &self.scattering_histogram
    }

    /// Counts one photon.
    #[inline]
    pub(crate) fn add(&mut self, time_s: f64, scatterings: f64, weight: Weight) {
        if !weight.is_one() && self.weights.is_none() {
            self.make_weighted();
        }
        self.time_s.add_weighted(time_s, weight);
        self.scatterings.add_weighted(scatterings, weight);
        self.time_histogram.add_weighted(time_s, weight);
        self.scattering_histogram.add_weighted(scatterings, weight);
        if let Some(weights) = &mut self.weights {
            weights.weight.add(weight);
            let w = weight.value();
            weights.weight_squared.add(w * w);
        }
    }

    /// Keeps weights from now on, giving the photons so far weight 1.
    pub(crate) fn make_weighted(&mut self) {
        if self.weights.is_none() {
            self.weights = Some(Box::new(PathWeights {
                weight: WeightSum::of_unit_weights(self.count()),
                weight_squared: ExactSum::of_count(self.count()),
            }));
        }
        self.time_s.make_weighted();
        self.scatterings.make_weighted();
        self.time_histogram.make_weighted();
        self.scattering_histogram.make_weighted();
    }

    /// Adds another set of statistics (exact; any order gives the same state).
    pub fn merge(&mut self, other: &PathStats) {
        if other.is_weighted() {
            self.make_weighted();
        }
        if let Some(mine) = &mut self.weights {
            match &other.weights {
                Some(theirs) => {
                    mine.weight.merge(theirs.weight);
                    mine.weight_squared.merge(&theirs.weight_squared);
                }
                None => {
                    mine.weight.merge(WeightSum::of_unit_weights(other.count()));
                    mine.weight_squared
                        .merge(&ExactSum::of_count(other.count()));
                }
            }
        }
        self.time_s.merge(&other.time_s);
        self.scatterings.merge(&other.scatterings);
        self.time_histogram.merge(&other.time_histogram);
        self.scattering_histogram.merge(&other.scattering_histogram);
    }

    /// Rebuilds the statistics from their serialised form, refusing parts that disagree.
    pub(crate) fn from_repr(repr: PathStatsRepr) -> Result<Self, TallyError> {
        let time_s = Moments::from_repr(repr.time_s).map_err(|e| e.within("time_s"))?;
        let scatterings =
            Moments::from_repr(repr.scatterings).map_err(|e| e.within("scatterings"))?;
        let time_histogram =
            LogHistogram::from_repr(repr.time_histogram).map_err(|e| e.within("time_histogram"))?;
        let scattering_histogram = LogHistogram::from_repr(repr.scattering_histogram)
            .map_err(|e| e.within("scattering_histogram"))?;
        let weights = match (repr.weight, repr.weight_squared) {
            (None, None) => None,
            (Some(weight), Some(squared)) => Some(Box::new(PathWeights {
                weight,
                weight_squared: ExactSum::from_repr(squared)
                    .map_err(|e| e.within("weight_squared"))?,
            })),
            _ => {
                return Err(TallyError::weights(
                    "weight",
                    "weight and weight_squared come together",
                ));
            }
        };
        let mut stats = PathStats {
            weights,
            time_s,
            scatterings,
            time_histogram,
            scattering_histogram,
        };
        let count = repr.count;
        let parts = [
            ("time_s", stats.time_s.count()),
            ("scatterings", stats.scatterings.count()),
            ("time_histogram", stats.time_histogram.total()),
            ("scattering_histogram", stats.scattering_histogram.total()),
        ];
        for (name, found) in parts {
            if found != count {
                return Err(TallyError::mismatch(
                    name,
                    "photons counted, against the outcome's count",
                    found,
                    count,
                ));
            }
        }
        stats.check_agreement("time", |s| (&s.time_s, &s.time_histogram))?;
        stats.check_agreement("scattering", |s| (&s.scatterings, &s.scattering_histogram))?;
        stats.check_weights()?;
        if stats.is_weighted() {
            stats.make_weighted();
        }
        Ok(stats)
    }

    /// Moments and histogram of one quantity hold the same values.
    fn check_agreement(
        &self,
        quantity: &str,
        parts: impl Fn(&PathStats) -> (&Moments, &LogHistogram),
    ) -> Result<(), TallyError> {
        let (moments, histogram) = parts(self);
        let field = format!("{quantity}_histogram");
        if moments.non_finite() != histogram.non_finite_count() {
            return Err(TallyError::mismatch(
                field,
                "NaN and infinite values, against the moments",
                histogram.non_finite_count(),
                moments.non_finite(),
            ));
        }
        for (which, a, b) in [
            ("min", moments.min(), histogram.min()),
            ("max", moments.max(), histogram.max()),
        ] {
            if a.map(f64::to_bits) != b.map(f64::to_bits) {
                return Err(TallyError::mismatch(
                    format!("{field}.{which}"),
                    "the histogram's extreme, against the moments'",
                    format!("{b:?}"),
                    format!("{a:?}"),
                ));
            }
        }
        Ok(())
    }

    /// Every part carries weights exactly when the outcome does, and they agree exactly.
    fn check_weights(&self) -> Result<(), TallyError> {
        let weighted = self.is_weighted();
        let count = self.count();
        let parts = [
            ("time_s", self.time_s.is_weighted()),
            ("scatterings", self.scatterings.is_weighted()),
            ("time_histogram", self.time_histogram.is_weighted()),
            (
                "scattering_histogram",
                self.scattering_histogram.is_weighted(),
            ),
        ];
        for (name, part) in parts {
            if part != weighted && count > 0 {
                return Err(TallyError::weights(
                    name,
                    if weighted {
                        "no weights, though the outcome carries them"
                    } else {
                        "weights, though the outcome carries none"
                    },
                ));
            }
        }
        let Some(weights) = &self.weights else {
            return Ok(());
        };
        if !weights.weight.fits(count) {
            return Err(TallyError::weights(
                "weight",
                format!(
                    "Σw = {} exceeds the {count} photons (weights lie in [0, 1])",
                    weights.weight
                ),
            ));
        }
        let squared = weights.weight_squared.value();
        if weights.weight_squared.is_poisoned()
            || !(0.0..=weights.weight.value() * (1.0 + 1e-12)).contains(&squared)
        {
            return Err(TallyError::weights(
                "weight_squared",
                format!(
                    "Σw² = {squared:e} is outside [0, Σw = {:e}]",
                    weights.weight.value()
                ),
            ));
        }
        let raw = |w: WeightSum| w.raw().to_string();
        for (name, histogram, moments) in [
            ("time", &self.time_histogram, &self.time_s),
            ("scattering", &self.scattering_histogram, &self.scatterings),
        ] {
            if histogram.total_weight_sum() != weights.weight {
                return Err(TallyError::mismatch(
                    format!("{name}_histogram"),
                    "weight sum (2^-63 units), against the outcome's",
                    raw(histogram.total_weight_sum()),
                    raw(weights.weight),
                ));
            }
            let finite = weights
                .weight
                .raw()
                .checked_sub(histogram.non_finite_weight_sum().raw());
            if finite != Some(moments.weight_sum().raw()) {
                return Err(TallyError::mismatch(
                    if name == "time" {
                        "time_s"
                    } else {
                        "scatterings"
                    },
                    "weight of the finite values (2^-63 units), against the histogram's",
                    raw(moments.weight_sum()),
                    finite.map_or("none".into(), |f| f.to_string()),
                ));
            }
        }
        Ok(())
    }
}

/// Serialised form of [`PathStats`], as read.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct PathStatsRepr {
    count: u64,
    #[serde(default)]
    weight: Option<WeightSum>,
    #[serde(default)]
    weight_squared: Option<ExactSumRepr>,
    time_s: MomentsRepr,
    scatterings: MomentsRepr,
    time_histogram: HistogramRepr,
    scattering_histogram: HistogramRepr,
}

/// Serialised form of [`PathStats`], as written.
#[derive(Serialize)]
struct PathStatsOut<'a> {
    count: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    weight: Option<WeightSum>,
    #[serde(skip_serializing_if = "Option::is_none")]
    weight_squared: Option<ExactSumRepr>,
    time_s: &'a Moments,
    scatterings: &'a Moments,
    time_histogram: &'a LogHistogram,
    scattering_histogram: &'a LogHistogram,
}

impl Serialize for PathStats {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        PathStatsOut {
            count: self.count(),
            weight: self.weights.as_ref().map(|w| w.weight),
            weight_squared: self.weights.as_ref().map(|w| w.weight_squared.to_repr()),
            time_s: &self.time_s,
            scatterings: &self.scatterings,
            time_histogram: &self.time_histogram,
            scattering_histogram: &self.scattering_histogram,
        }
        .serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for PathStats {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let repr = PathStatsRepr::deserialize(deserializer)?;
        PathStats::from_repr(repr).map_err(serde::de::Error::custom)
    }
}
