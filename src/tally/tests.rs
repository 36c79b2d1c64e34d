//! Tally-level tests: weighted estimates, merging, and the checks on reading.

use super::*;
use proptest::prelude::*;
use serde_json::{Value, json};

fn photon(outcome: Outcome, time_s: f64, scatterings: f64, weight: f64) -> PhotonRecord {
    PhotonRecord {
        outcome,
        time_s,
        scatterings,
        jumps: 0.0,
        direct_steps: scatterings + 1.0,
        jump_time_s: 0.0,
        position_cm: [0.1, -0.2, 0.5],
        direction: [0.0, 0.6, 0.8],
        layer: 0,
        weight,
    }
}

fn slab_layout() -> ResolvedLayout {
    ResolvedLayout {
        time_bin_s: 1e-11,
        time_bins: 10,
        depth_bin_cm: 0.1,
        depth_bins: 10,
        cosine_bins: 4,
        radial_min_cm: 0.01,
        radial_max_cm: 1.0,
        radial_bins: 5,
        layers: 1,
    }
}

/// A small slab tally: 4 reflected, 3 transmitted, 2 absorbed, 1 specular photon.
fn sample_tally(weighted: bool) -> Tally {
    let mut tally = Tally::with_resolved(Some(slab_layout()));
    let w = |k: usize| if weighted { 0.2 + 0.08 * k as f64 } else { 1.0 };
    let outcomes = [
        Outcome::Reflected,
        Outcome::Transmitted,
        Outcome::Reflected,
        Outcome::Absorbed,
        Outcome::Transmitted,
        Outcome::Reflected,
        Outcome::Specular,
        Outcome::Absorbed,
        Outcome::Reflected,
        Outcome::Transmitted,
    ];
    for (k, outcome) in outcomes.into_iter().enumerate() {
        let time = 3e-11 * (1.0 + k as f64);
        tally.record(&photon(outcome, time, (2 * k) as f64, w(k)));
    }
    tally
}

fn refused(value: Value) -> TallyError {
    Tally::from_json(value).expect_err("a damaged tally must be refused")
}

#[test]
fn analog_fractions_are_binomial() {
    let tally = sample_tally(false);
    assert!(!tally.is_weighted());
    let reflected = tally.fraction(tally.reflected()).unwrap();
    assert_eq!(reflected.value, 0.4);
    assert_eq!(reflected.stderr, (0.4f64 * 0.6 / 10.0).sqrt());
    assert_eq!(tally.effective_photons(), 10.0);
}

#[test]
fn weighted_fractions_and_their_errors_against_a_direct_evaluation() {
    let tally = sample_tally(true);
    assert!(tally.is_weighted());
    // Reflected photons are k = 0, 2, 5, 8 with w = 0.2 + 0.08 k.
    let weights: Vec<f64> = [0usize, 2, 5, 8]
        .iter()
        .map(|&k| 0.2 + 0.08 * k as f64)
        .collect();
    let n = 10.0;
    let f = weights.iter().sum::<f64>() / n;
    let second = weights.iter().map(|w| w * w).sum::<f64>() / n;
    let estimate = tally.fraction(tally.reflected()).unwrap();
    assert!((estimate.value - f).abs() < 1e-15);
    assert!((estimate.stderr - ((second - f * f) / n).sqrt()).abs() < 1e-15);
    // Kish's effective number of photons over every outcome but absorption (k = 3, 7).
    let all: Vec<f64> = (0..10)
        .filter(|k| ![3, 7].contains(k))
        .map(|k| 0.2 + 0.08 * k as f64)
        .collect();
    let kish = all.iter().sum::<f64>().powi(2) / all.iter().map(|w| w * w).sum::<f64>();
    assert!((tally.effective_photons() - kish).abs() < 1e-12);
    let resolved = tally.resolved().unwrap();
    let in_bins: f64 = resolved.reflected_by_time().weights().iter().sum();
    assert!((in_bins - weights.iter().sum::<f64>()).abs() < 1e-15);
}

#[test]
fn an_empty_tally_has_no_fractions() {
    let tally = Tally::new();
    assert_eq!(tally.fraction(tally.escaped()), None);
    assert_eq!(tally.escaped().time_histogram().quantile(0.5), None);
    assert_eq!(tally.escaped().time_s().mean(), None);
    let back = Tally::from_json(serde_json::to_value(&tally).unwrap()).unwrap();
    assert_eq!(back, tally);
}

#[test]
#[should_panic(expected = "outside [0, 1]")]
fn a_weight_above_one_is_a_walker_bug() {
    Tally::new().record(&photon(Outcome::Escaped, 1.0, 1.0, 1.5));
}

#[test]
fn analog_and_weighted_parts_merge_as_if_recorded_together() {
    let records: Vec<PhotonRecord> = (0..40)
        .map(|k| {
            let outcome = [Outcome::Reflected, Outcome::Transmitted, Outcome::Absorbed][k % 3];
            let weight = if k < 20 { 1.0 } else { 0.5 + 0.01 * k as f64 };
            photon(outcome, 1e-11 * (1.0 + k as f64), k as f64, weight)
        })
        .collect();
    let mut whole = Tally::with_resolved(Some(slab_layout()));
    records.iter().for_each(|r| whole.record(r));
    let mut analog = Tally::with_resolved(Some(slab_layout()));
    let mut weighted = Tally::with_resolved(Some(slab_layout()));
    records[..20].iter().for_each(|r| analog.record(r));
    records[20..].iter().for_each(|r| weighted.record(r));
    assert!(!analog.is_weighted() && weighted.is_weighted());
    let mut one = analog.clone();
    one.merge(&weighted);
    let mut other = weighted.clone();
    other.merge(&analog);
    let text = serde_json::to_string(&whole).unwrap();
    assert_eq!(serde_json::to_string(&one).unwrap(), text);
    assert_eq!(serde_json::to_string(&other).unwrap(), text);
    assert_eq!(one, whole);
}

#[test]
fn serde_round_trips_keep_every_bit() {
    for weighted in [false, true] {
        let tally = sample_tally(weighted);
        let text = serde_json::to_string(&tally).unwrap();
        let back = Tally::from_json(serde_json::from_str(&text).unwrap()).unwrap();
        assert_eq!(back, tally);
        assert_eq!(serde_json::to_string(&back).unwrap(), text);
        let through_serde: Tally = serde_json::from_str(&text).unwrap();
        assert_eq!(through_serde, tally);
    }
}

#[test]
fn non_finite_times_are_counted_and_survive_a_round_trip() {
    let mut tally = Tally::new();
    tally.record(&photon(Outcome::Escaped, 2e-9, 3.0, 1.0));
    tally.record(&photon(Outcome::Escaped, f64::NAN, 4.0, 1.0));
    tally.record(&photon(Outcome::Escaped, f64::INFINITY, 5.0, 1.0));
    let escaped = tally.escaped();
    assert_eq!(escaped.count(), 3);
    assert_eq!(escaped.time_s().non_finite(), 2);
    assert_eq!(escaped.time_histogram().non_finite_count(), 2);
    assert_eq!(escaped.time_s().mean(), Some(2e-9));
    assert_eq!(tally.walk().total_time_s.value(), 2e-9);
    let back = Tally::from_json(serde_json::to_value(&tally).unwrap()).unwrap();
    assert_eq!(back, tally);
}

#[test]
fn contradictions_are_refused_with_the_field_and_the_reason() {
    let good = serde_json::to_value(sample_tally(false)).unwrap();
    let check = |edit: &dyn Fn(&mut Value), field: &str, reason: &str| {
        let mut bad = good.clone();
        edit(&mut bad);
        let error = refused(bad);
        assert!(error.field().starts_with(field), "{field}: {error}");
        assert!(error.to_string().contains(reason), "{reason}: {error}");
    };
    check(
        &|v| v["launched"] = json!(11),
        "launched",
        "found 11, expected 10",
    );
    check(
        &|v| v["reflected"]["time_histogram"]["bins"][0][1] = json!(2),
        "reflected.time_histogram",
        "photons counted, against the outcome's count: found 5, expected 4",
    );
    check(
        &|v| v["reflected"]["time_histogram"]["bins"][0][0] = json!(5_000_000),
        "reflected.time_histogram.bins[0]",
        "is outside",
    );
    check(
        &|v| v["resolved"]["reflected_by_time"][3] = json!(1u64 << 63),
        "resolved.reflected_by_time",
        "against the reflected photons",
    );
    check(
        &|v| v["transmitted"]["time_s"]["max"] = json!(1e308),
        "transmitted.time_s.max",
        "max 1e308 is impossible",
    );
    check(
        &|v| v["transmitted"]["time_s"]["min"] = json!(1.0),
        "transmitted.time_s",
        "is above max",
    );
    check(
        &|v| v["escaped"]["count"] = json!(1),
        "escaped.time_s",
        "photons counted",
    );
    // An exact-sum limb changed (its rounded value kept in step) so that the mean exceeds
    // the max.
    let mut other = ExactSum::new();
    [3e-11, 1e-6].iter().for_each(|&v| other.add(v));
    check(
        &|v| v["absorbed"]["time_s"]["sum"] = serde_json::to_value(&other).unwrap(),
        "absorbed.time_s.sum",
        "lies outside",
    );
    check(
        &|v| v["reflected"]["weight"] = json!("100"),
        "reflected.weight",
        "come together",
    );
    check(
        &|v| v["walk"]["total_time_s"] = serde_json::to_value(&other).unwrap(),
        "walk.total_time_s",
        "against the sum of the outcomes' times",
    );
    check(
        &|v| v["escaped"]["time_s"]["sum"]["limbs"] = json!("nonsense"),
        "escaped.time_s.sum.limbs",
        "invalid type",
    );
}

#[test]
fn weights_the_mode_does_not_permit_are_refused() {
    let weighted = serde_json::to_value(sample_tally(true)).unwrap();
    let mut claims_analog = weighted.clone();
    claims_analog["weighted"] = json!(false);
    let error = refused(claims_analog);
    assert!(
        error
            .to_string()
            .contains("weights, though the tally is analog"),
        "{error}"
    );
    let mut heavy = weighted.clone();
    heavy["reflected"]["time_histogram"]["bin_weights"][0][0] = json!("18446744073709551616");
    let error = refused(heavy);
    assert!(
        error.to_string().contains("exceeds its 1 values"),
        "{error}"
    );
    let mut claims_weighted = serde_json::to_value(sample_tally(false)).unwrap();
    claims_weighted["weighted"] = json!(true);
    let error = refused(claims_weighted);
    assert!(
        error
            .to_string()
            .contains("no weights, though the tally is weighted"),
        "{error}"
    );
}

fn arbitrary_record() -> impl Strategy<Value = PhotonRecord> {
    (
        0usize..6,
        prop_oneof![1e-30f64..1e-20, 1e-12f64..1e-6, 1e10f64..1e20],
        0u32..5000,
        prop_oneof![Just(1.0), 0.0f64..=1.0],
    )
        .prop_map(|(outcome, time, scatterings, weight)| {
            let outcome = [
                Outcome::Escaped,
                Outcome::Reflected,
                Outcome::Specular,
                Outcome::Transmitted,
                Outcome::Absorbed,
                Outcome::Censored,
            ][outcome];
            photon(outcome, time, scatterings as f64, weight)
        })
}

proptest! {
    #[test]
    fn merges_are_bit_identical_for_any_split_and_order(
        records in proptest::collection::vec(arbitrary_record(), 0..60),
        cuts in proptest::collection::vec(0usize..60, 0..4),
        reverse in any::<bool>(),
    ) {
        let mut whole = Tally::with_resolved(Some(slab_layout()));
        records.iter().for_each(|r| whole.record(r));
        let mut cuts: Vec<usize> = cuts.into_iter().map(|c| c.min(records.len())).collect();
        cuts.push(0);
        cuts.push(records.len());
        cuts.sort_unstable();
        let mut parts: Vec<Tally> = cuts
            .windows(2)
            .map(|w| {
                let mut part = Tally::with_resolved(Some(slab_layout()));
                records[w[0]..w[1]].iter().for_each(|r| part.record(r));
                part
            })
            .collect();
        if reverse {
            parts.reverse();
        }
        let mut merged = Tally::new();
        parts.iter().for_each(|p| merged.merge(p));
        let text = serde_json::to_string(&whole).unwrap();
        prop_assert_eq!(&serde_json::to_string(&merged).unwrap(), &text);
        let back = Tally::from_json(serde_json::from_str(&text).unwrap()).unwrap();
        prop_assert_eq!(&back, &whole);
    }
}

#[test]
fn a_tally_is_small_to_move() {
    // The photon loop moves a tally through rayon's fold once per photon.
    assert!(
        std::mem::size_of::<Tally>() <= 256,
        "{}",
        std::mem::size_of::<Tally>()
    );
}

/// Honest errors: over many independent replicas, the spread of the weighted estimates
/// matches the standard errors the tally reports. Synthetic photons: a fraction 0.3 ends
/// reflected, times are exponential (mean 1 ns), weights uniform on (0, 1) and, for the
/// reflected ones, correlated with the time (w = e^(−t/2 ns) · u), as absorption weights are.
#[test]
fn weighted_standard_errors_match_the_spread_of_replicas() {
    use rand::{RngExt, SeedableRng};
    let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(2024);
    let (replicas, photons) = (400, 500);
    let mut fractions = Vec::new();
    let mut means = Vec::new();
    let (mut fraction_errors, mut mean_errors) = (0.0, 0.0);
    for _ in 0..replicas {
        let mut tally = Tally::new();
        for _ in 0..photons {
            let time = -1e-9 * rng.random::<f64>().ln();
            let reflected = rng.random::<f64>() < 0.3;
            let weight = if reflected {
                (-time / 2e-9).exp() * rng.random::<f64>()
            } else {
                rng.random::<f64>()
            };
            let outcome = if reflected {
                Outcome::Reflected
            } else {
                Outcome::Absorbed
            };
            tally.record(&photon(outcome, time, 1.0, weight));
        }
        let fraction = tally.fraction(tally.reflected()).unwrap();
        fractions.push(fraction.value);
        fraction_errors += fraction.stderr / replicas as f64;
        let time = tally.reflected().time_s();
        means.push(time.mean().unwrap());
        mean_errors += time.std_error().unwrap() / replicas as f64;
    }
    let spread = |values: &[f64]| {
        let n = values.len() as f64;
        let mean = values.iter().sum::<f64>() / n;
        (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
    };
    // The sample standard deviation of 400 replicas has a relative error of
    // 1/√(2·399) ≈ 3.5 %; 4σ is 14 %.
    for (what, observed, reported) in [
        ("fraction", spread(&fractions), fraction_errors),
        ("mean time", spread(&means), mean_errors),
    ] {
        assert!(
            (observed / reported - 1.0).abs() < 0.14,
            "{what}: replicas spread {observed:e}, reported stderr {reported:e}"
        );
    }
}

/// Three photons walked with implicit capture: one reflected with weight 0.25 after
/// depositing 0.75 at two depths, one transmitted with weight 1 (nothing lost), one ended
/// by Russian roulette.
fn implicit_capture_tally() -> Tally {
    let mut tally = Tally::with_resolved(Some(slab_layout()));
    let deposits = |weights: &[(f64, f64)]| AbsorbedAlongPath {
        weight: weights.iter().map(|(w, _)| w).sum(),
        weighted_time_s: weights.iter().map(|(w, t)| w * t).sum(),
        weighted_scatterings: weights.iter().map(|(w, _)| w * 3.0).sum(),
        deposits: weights
            .iter()
            .map(|&(weight, time)| Deposit {
                weight,
                layer: 0,
                depth_cm: time * 1e10,
            })
            .collect(),
    };
    tally.record_weighted(
        &photon(Outcome::Reflected, 5e-11, 4.0, 0.25),
        &deposits(&[(0.5, 1e-11), (0.25, 3e-11)]),
    );
    tally.record_weighted(
        &photon(Outcome::Transmitted, 2e-11, 1.0, 1.0),
        &AbsorbedAlongPath::default(),
    );
    tally.record_weighted(
        &photon(Outcome::Absorbed, 8e-11, 9.0, 0.0),
        &deposits(&[(0.9, 2e-11), (0.0999, 6e-11)]),
    );
    tally
}

#[test]
fn implicit_capture_scores_each_photon_exactly_once() {
    let tally = implicit_capture_tally();
    assert!(tally.is_weighted());
    assert_eq!(tally.launched(), 3);
    assert_eq!(tally.reflected().weight(), 0.25);
    assert_eq!(tally.transmitted().weight(), 1.0);
    // Complements: 0.75 of the reflected photon, all of the roulette's victim.
    assert_eq!(tally.absorbed().weight(), 1.75);
    assert_eq!(tally.absorbed().count(), 2);
    // The reflected photon's absorbed share sits at its deposit-weighted mean time.
    let mean = (0.5 * 1e-11 + 0.25 * 3e-11) / 0.75;
    let absorbed_min = tally.absorbed().time_s().min().unwrap();
    assert!((absorbed_min - mean).abs() < 1e-25, "{absorbed_min}");
    // The deposits go to the resolved absorption series, one entry each.
    let resolved = tally.resolved().unwrap();
    assert_eq!(resolved.absorbed_by_layer().counts(), &[4]);
    let deposited: f64 = resolved.absorbed_by_depth().weights().iter().sum();
    assert!((deposited - 1.7499).abs() < 1e-15, "{deposited}");
    // Through JSON and back, checked on the way in.
    let value = serde_json::to_value(&tally).unwrap();
    assert_eq!(Tally::from_json(value).unwrap(), tally);
    // Kish over the photons that left: weights 0.25 and 1.
    assert!((tally.effective_photons() - 1.5625 / 1.0625).abs() < 1e-12);
}

#[test]
fn a_weighted_tally_with_impossible_counts_is_refused() {
    let mut value = serde_json::to_value(implicit_capture_tally()).unwrap();
    // Two photons counted, three launched: fewer entries than photons.
    value["launched"] = json!(6);
    let error = Tally::from_json(value).unwrap_err();
    assert!(error.to_string().contains("launched"), "{error}");
}

#[test]
fn optical_counts_are_parts_of_their_outcomes() {
    use crate::medium::Face;
    let window = DetectorWindow {
        face: Face::Bottom,
        inner_radius_cm: 0.0,
        outer_radius_cm: 10.0,
        min_exit_cosine: 0.0,
    };
    let mut tally = Tally {
        optics: Some(Box::new(OpticsTally::new(vec![window]))),
        ..Tally::new()
    };
    for k in 0..4 {
        let mut record = photon(Outcome::Transmitted, 1e-11, k as f64, 1.0);
        record.position_cm = [0.5, 0.0, 1.0];
        tally.record(&record);
    }
    tally.record(&photon(Outcome::Reflected, 1e-11, 2.0, 1.0));
    let optics = tally.optics().unwrap();
    assert_eq!(optics.collimated_transmitted().count(), 1);
    assert_eq!(optics.detected()[0].count(), 4);
    let good = serde_json::to_value(&tally).unwrap();
    assert_eq!(Tally::from_json(good.clone()).unwrap(), tally);
    // Merging keeps the parts; a tally without optics takes them over.
    let mut merged = Tally::new();
    merged.merge(&tally);
    merged.merge(&tally);
    assert_eq!(merged.optics().unwrap().detected()[0].count(), 8);
    // A detector that saw more photons than left through its face is refused: the merged
    // tally's series (8 photons) in the tally of 4 transmitted photons.
    let mut bad = good;
    bad["optics"]["detected"][0] =
        serde_json::to_value(&merged).unwrap()["optics"]["detected"][0].clone();
    let error = refused(bad).to_string();
    assert!(error.contains("optics."), "{error}");
}
