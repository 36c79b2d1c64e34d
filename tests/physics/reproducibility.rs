//! A seed fixes the result bit for bit, whatever the thread count.

use sojourn::medium::{Medium, Source};
use sojourn::simulation::{RunConfig, run};
use sojourn::transport::PhaseFunction;

use crate::support::layer;

fn tally_json(threads: usize, medium: &Medium) -> String {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap();
    let config = RunConfig {
        photons: 5_000,
        seed: 99,
        ..RunConfig::default()
    };
    let result = pool.install(|| run(medium, &config));
    serde_json::to_string(&result.tally).unwrap()
}

#[test]
fn same_seed_same_tally_for_one_two_and_three_threads() {
    let medium = Medium::slab(
        vec![
            (
                0.3,
                layer(10.0, 0.95, PhaseFunction::henyey_greenstein(0.5).unwrap()),
            ),
            (1.0, layer(2.0, 0.7, PhaseFunction::Rayleigh)),
        ],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let one = tally_json(1, &medium);
    assert_eq!(one, tally_json(2, &medium));
    assert_eq!(one, tally_json(3, &medium));
}
