//! How absorption is simulated: analog (an absorbed photon ends) or weighted (implicit
//! capture with Russian roulette).
//!
//! **Implicit capture** (survival weighting): at an interaction in a layer of albedo ω a
//! photon of weight w always scatters and carries on with weight ω·w; the weight (1 − ω)·w
//! is left in the medium as absorbed. In a diffusion passage with absorption hazard h the
//! weight is multiplied by e^(−h). The expected weight leaving the medium equals the analog
//! probability of leaving, so escape fractions and weighted time distributions are
//! unbiased, and every photon that would have been absorbed still contributes.
//!
//! **Russian roulette.** A photon whose weight has fallen below
//! [`ROULETTE_THRESHOLD`] = 10⁻³ survives with probability [`ROULETTE_SURVIVAL`] = 1/10 and
//! then carries 10 times its weight, or ends (weight 0). The expected weight after the
//! roulette is (1/10)·10w + (9/10)·0 = w, so it adds no bias; it only stops the walk of
//! photons whose weight no longer matters (both numbers are common practice). A survivor
//! carries at most 10⁻² < 1, so weights stay in [0, 1].

/// How absorption is simulated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Absorption {
    /// An interaction is an absorption with probability 1 − ω, which ends the walk.
    #[default]
    Analog,
    /// Implicit capture with Russian roulette (see the module docs).
    Weighted,
}

impl Absorption {
    /// The name as written on the command line, in sweep specs and in reports.
    pub fn name(self) -> &'static str {
        match self {
            Absorption::Analog => "analog",
            Absorption::Weighted => "weighted",
        }
    }
}

impl std::str::FromStr for Absorption {
    type Err = String;

    fn from_str(text: &str) -> Result<Self, Self::Err> {
        match text {
            "analog" => Ok(Absorption::Analog),
            "weighted" => Ok(Absorption::Weighted),
            other => Err(format!(
                "unknown absorption treatment {other:?}: expected analog (an absorbed photon \
                 ends its walk) or weighted (implicit capture with Russian roulette)"
            )),
        }
    }
}

/// Weight below which a weighted photon plays Russian roulette.
pub const ROULETTE_THRESHOLD: f64 = 1e-3;

/// Probability that a photon survives the roulette (its weight is then divided by it).
pub const ROULETTE_SURVIVAL: f64 = 0.1;

/// Russian roulette on `weight` with the uniform random number `xi` ∈ [0, 1): the new
/// weight (0 when the photon ends). Weights at or above the threshold pass unchanged.
#[inline]
pub(super) fn roulette(weight: f64, xi: f64) -> f64 {
    if weight >= ROULETTE_THRESHOLD {
        weight
    } else if xi < ROULETTE_SURVIVAL {
        weight / ROULETTE_SURVIVAL
    } else {
        0.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn roulette_keeps_the_expected_weight() {
        // Over a uniform grid of ξ the mean weight after the roulette is the weight before.
        let weight = 4e-4;
        let n = 10_000;
        let mean: f64 = (0..n)
            .map(|i| roulette(weight, (i as f64 + 0.5) / n as f64))
            .sum::<f64>()
            / n as f64;
        assert!((mean / weight - 1.0).abs() < 1e-12, "{mean}");
        assert_eq!(roulette(0.5, 0.99), 0.5);
        assert_eq!(roulette(ROULETTE_THRESHOLD, 0.99), ROULETTE_THRESHOLD);
    }

    #[test]
    fn names_round_trip() {
        for mode in [Absorption::Analog, Absorption::Weighted] {
            assert_eq!(mode.name().parse::<Absorption>().unwrap(), mode);
        }
        let error = "implicit".parse::<Absorption>().unwrap_err();
        assert!(error.contains("expected analog"), "{error}");
    }
}
