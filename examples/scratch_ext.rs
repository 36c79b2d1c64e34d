use sojourn::diffusion::ks::{BinnedSample, binned_ks_test};
use sojourn::diffusion::{estimate, transient::solve};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::transport::PhaseFunction;

fn layer(s: f64) -> Layer { Layer::new("", s, 1.0, PhaseFunction::Isotropic, 1.0).unwrap() }
fn main() {
    let photons: u64 = std::env::args().nth(1).map_or(20000, |s| s.parse().unwrap());
    let cases = vec![
        ("tau5", Medium::sphere(vec![(1.0, layer(5.0))], Source::centre()).unwrap()),
        ("tau10", Medium::sphere(vec![(1.0, layer(10.0))], Source::centre()).unwrap()),
        ("tau20", Medium::sphere(vec![(1.0, layer(20.0))], Source::centre()).unwrap()),
        ("ember", Medium::sphere(vec![(0.3, layer(300.0)), (1.0, layer(3.0))], Source::centre()).unwrap()),
        ("slab10 plane", Medium::slab(vec![(1.0, layer(10.0))], 1.0, Source::SlabPlane{depth_cm:0.5}).unwrap()),
    ];
    for (name, m) in cases {
        let config = RunConfig { photons, seed: 3, method: Method::Direct, ..RunConfig::default() };
        let r = run(&m, &config);
        let esc = r.tally.all_escapes();
        let mc = esc.time_s().mean().unwrap();
        let se = esc.time_s().std_error().unwrap();
        let sol = solve(&m).unwrap();
        let est = estimate(&m);
        let h = esc.time_histogram().contiguous().unwrap();
        let cdf = sol.escape_cdf_at(&h.edges);
        let ks = binned_ks_test(&BinnedSample{edges:&h.edges,counts:&h.weights,below:h.below as f64,above:h.above as f64,effective_size:esc.effective_count()}, &cdf).unwrap();
        println!("{name}: MC/solver {:.4} ± {:.4}  MC/closed-ext {:.4}  KS {:.4} p {:.3}  lambda1 {:.4e}", mc/sol.mean_escape_time_s().unwrap(), se/sol.mean_escape_time_s().unwrap(), mc/est.mean_time_extrapolated_s, ks.distance, ks.p_value, sol.decay_rate_per_s());
    }
}
