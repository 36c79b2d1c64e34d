//! Mutation fuzzing of every loader: model files (and, for those that load, a few photons
//! and the report), sweep specs, opacity tables, column tables, run and sweep shard files
//! (and their merge) and checkpoints. Each mutant must give `Ok` or an error with a
//! message, never a panic, and no single input may take more than [`SLOW`].
//!
//! `quick_campaign_finds_no_panic` runs a fixed, seeded set of mutants in a few seconds
//! with the other tests. The long campaign is an ignored test:
//!
//! ```sh
//! SOJOURN_FUZZ_SECONDS=1800 SOJOURN_FUZZ_SEED=7 \
//!     cargo test --release --test tests fuzz::long_campaign -- --ignored --nocapture
//! ```
//!
//! It prints the executions per target, the slowest input and every failure; failing
//! inputs are saved under `target/fuzz-failures/` to become cases of the catalogue
//! (`tests/fuzz/catalogue.rs`).

mod catalogue;
mod mutate;
mod targets;

use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::Path;
use std::time::{Duration, Instant};

use mutate::Mutator;
use targets::{TARGETS, Target};

/// The longest one input may take (the issue's bound for a hang).
const SLOW: Duration = Duration::from_secs(10);

/// What went wrong with one input.
struct Failure {
    target: &'static str,
    seed: u64,
    what: String,
    input: String,
}

/// Totals of a campaign.
#[derive(Default)]
struct Campaign {
    executions: Vec<(&'static str, u64, u64)>,
    failures: Vec<Failure>,
    slowest: (Duration, &'static str, u64),
}

impl Campaign {
    /// Runs the mutant of `seed` of every corpus file of `target`.
    fn run_one(&mut self, target: &Target, corpus: &[(String, String)], seed: u64) {
        let mut mutator = Mutator::new(seed ^ target.salt);
        for (file, text) in corpus {
            let input = mutator.mutate(text);
            let started = Instant::now();
            let outcome = catch_unwind(AssertUnwindSafe(|| (target.run)(&input, file)));
            let elapsed = started.elapsed();
            if elapsed > self.slowest.0 {
                self.slowest = (elapsed, target.name, seed);
            }
            let entry = self
                .executions
                .iter_mut()
                .find(|(name, _, _)| *name == target.name);
            let ok = matches!(outcome, Ok(Ok(())));
            match entry {
                Some((_, runs, accepted)) => {
                    *runs += 1;
                    *accepted += u64::from(ok);
                }
                None => self.executions.push((target.name, 1, u64::from(ok))),
            }
            let problem = match outcome {
                Err(panic) => Some(format!("panic: {}", panic_text(&panic))),
                Ok(Err(message)) if message.trim().is_empty() => {
                    Some("an error with an empty message".into())
                }
                _ if elapsed > SLOW => Some(format!("took {elapsed:?}")),
                _ => None,
            };
            if let Some(what) = problem {
                self.failures.push(Failure {
                    target: target.name,
                    seed,
                    what,
                    input,
                });
            }
        }
    }

    fn summary(&self) -> String {
        let mut text = String::new();
        let total: u64 = self.executions.iter().map(|(_, runs, _)| runs).sum();
        text += &format!("{total} executions, {} failures\n", self.failures.len());
        for (name, runs, accepted) in &self.executions {
            text += &format!("  {name:<14} {runs:>8} runs, {accepted:>6} accepted\n");
        }
        text += &format!(
            "  slowest input: {:?} ({} seed {})\n",
            self.slowest.0, self.slowest.1, self.slowest.2
        );
        for failure in self.failures.iter().take(20) {
            text += &format!(
                "  FAIL {} seed {}: {}\n    input: {}\n",
                failure.target,
                failure.seed,
                failure.what,
                failure.input.chars().take(400).collect::<String>()
            );
        }
        text
    }

    /// Saves failing inputs under `target/fuzz-failures/`.
    fn save_failures(&self) {
        let folder = Path::new("target/fuzz-failures");
        if self.failures.is_empty() || std::fs::create_dir_all(folder).is_err() {
            return;
        }
        for failure in &self.failures {
            let path = folder.join(format!("{}-{}.txt", failure.target, failure.seed));
            let _ = std::fs::write(path, &failure.input);
        }
    }
}

fn panic_text(panic: &Box<dyn std::any::Any + Send>) -> String {
    if let Some(text) = panic.downcast_ref::<&str>() {
        (*text).to_string()
    } else if let Some(text) = panic.downcast_ref::<String>() {
        text.clone()
    } else {
        "(no message)".into()
    }
}

/// The corpus of every target, read once.
fn corpora() -> Vec<(&'static Target, Vec<(String, String)>)> {
    TARGETS
        .iter()
        .map(|target| {
            let files = target
                .corpus
                .iter()
                .map(|file| {
                    let text = std::fs::read_to_string(file)
                        .unwrap_or_else(|e| panic!("corpus file {file}: {e}"));
                    (file.to_string(), text)
                })
                .collect();
            (target, files)
        })
        .collect()
}

#[test]
fn the_corpus_loads() {
    for (target, corpus) in corpora() {
        for (file, text) in &corpus {
            (target.run)(text, file)
                .unwrap_or_else(|e| panic!("{}: corpus file {file} is refused: {e}", target.name));
        }
    }
}

/// Seeds per target in the quick campaign: every corpus file gets this many mutants.
const QUICK_SEEDS: u64 = 30;

#[test]
fn quick_campaign_finds_no_panic() {
    let corpora = corpora();
    let mut campaign = Campaign::default();
    for seed in 0..QUICK_SEEDS {
        for (target, corpus) in &corpora {
            campaign.run_one(target, corpus, seed);
        }
    }
    campaign.save_failures();
    let summary = campaign.summary();
    println!("{summary}");
    assert!(campaign.failures.is_empty(), "{summary}");
    // The mutants reach past the first check: some are accepted by every loader but the
    // byte-exact ones (a changed shard or checkpoint is refused by its checks).
    let accepted: u64 = campaign.executions.iter().map(|(_, _, a)| a).sum();
    assert!(accepted > 0, "{summary}");
}

/// The long campaign: `SOJOURN_FUZZ_SECONDS` (default 60) from seed `SOJOURN_FUZZ_SEED`
/// (default 1000) on.
#[test]
#[ignore = "long fuzz campaign; see the module docs for the command"]
fn long_campaign() {
    let seconds: u64 = std::env::var("SOJOURN_FUZZ_SECONDS")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(60);
    let first: u64 = std::env::var("SOJOURN_FUZZ_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(1000);
    let corpora = corpora();
    let mut campaign = Campaign::default();
    let started = Instant::now();
    let mut seed = first;
    while started.elapsed() < Duration::from_secs(seconds) {
        for (target, corpus) in &corpora {
            campaign.run_one(target, corpus, seed);
        }
        seed += 1;
    }
    campaign.save_failures();
    let summary = campaign.summary();
    println!(
        "seeds {first}..{seed} in {:.0} s\n{summary}",
        started.elapsed().as_secs_f64()
    );
    assert!(campaign.failures.is_empty(), "{summary}");
}
