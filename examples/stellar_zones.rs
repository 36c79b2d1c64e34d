//! Scratch: print the stellar analysis of a model.
use sojourn::medium::model_file::load_model;
use sojourn::star::analysis::StellarAnalysis;

fn main() {
    let path = std::env::args().nth(1).expect("model");
    let medium = load_model(std::path::Path::new(&path)).unwrap();
    let a = StellarAnalysis::of(&medium).unwrap();
    println!("{}", serde_json::to_string_pretty(&a).unwrap());
}
