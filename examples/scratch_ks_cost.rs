use std::time::Instant;
use sojourn::diffusion::ks::{BinnedSample, binned_ks_test};
use sojourn::diffusion::transient::solve;
use sojourn::medium::model_file;
use sojourn::simulation::{RunConfig, run};

fn main() {
    let path = std::env::args().nth(1).unwrap();
    let bins: usize = std::env::args().nth(2).map_or(1000, |s| s.parse().unwrap());
    let photons: u64 = std::env::args().nth(3).map_or(10000, |s| s.parse().unwrap());
    let medium = model_file::load_model(std::path::Path::new(&path)).unwrap();
    let config = RunConfig { photons, seed: 1, ..RunConfig::default() };
    let t0 = Instant::now();
    let result = run(&medium, &config);
    println!("run {:.3} s", t0.elapsed().as_secs_f64());
    let t0 = Instant::now();
    let sol = solve(&medium).unwrap();
    println!("solve {:.4} s nodes {} steps {}", t0.elapsed().as_secs_f64(), sol.grid_nodes(), sol.time_steps());
    let t0 = Instant::now();
    let q: Vec<f64> = (1..bins).map(|k| sol.escape_quantile_s(k as f64 / bins as f64).unwrap()).collect();
    println!("quantiles {:.4} s", t0.elapsed().as_secs_f64());
    let esc = result.tally.all_escapes();
    let h = esc.time_histogram();
    let reg = h.regroup(&q);
    let cdf = sol.escape_cdf_at(&reg.edges);
    let counts: Vec<f64> = reg.weights.clone();
    let t0 = Instant::now();
    let ks = binned_ks_test(&BinnedSample { edges: &reg.edges, counts: &counts, below: reg.below as f64, above: reg.above as f64, effective_size: esc.effective_count() }, &cdf).unwrap();
    println!("ks {:.4} s: {:?} edges {}", t0.elapsed().as_secs_f64(), ks, reg.edges.len());
    let c = h.contiguous().unwrap();
    let cdf = sol.escape_cdf_at(&c.edges);
    let t0 = Instant::now();
    let ks = binned_ks_test(&BinnedSample { edges: &c.edges, counts: &c.weights, below: c.below as f64, above: c.above as f64, effective_size: esc.effective_count() }, &cdf).unwrap();
    println!("ks fine {:.4} s: {:?} edges {}", t0.elapsed().as_secs_f64(), ks, c.edges.len());
    println!("mean MC {:?} solver {:?}", esc.time_s().mean(), sol.mean_escape_time_s());
}
