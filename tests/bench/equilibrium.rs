//! Benchmark: 10,000 pO2 points of a 10-species defect model on one core.
//!
//! Target: under 20 ms with every point converged. Run with
//! `cargo bench --bench equilibrium`. Prints the median of several runs;
//! the line starting with `bench:` is read by `tests/peers/compare.sh`.

use lacuna::model::{Model, Overrides, read};
use lacuna::solve::equilibrium::{log_grid, po2_sweep};
use std::time::Instant;

/// Acceptor-doped MO2 with every native defect family and association
/// (10 species). The same file is solved by the scipy peer
/// (`tests/peers/equilibrium_scipy.py`).
const MODEL: &str = include_str!("../peers/model.kvr");

fn main() {
    let doc = read("<bench>", MODEL, None);
    let model = match Model::build(&doc, Overrides::default()) {
        Ok(m) => m,
        Err(e) => {
            eprintln!("benchmark model did not build: {e:#?}");
            std::process::exit(2);
        }
    };
    assert_eq!(
        model.species.len(),
        10,
        "the benchmark model has 10 species"
    );
    let po2s = log_grid(1e-30, 1e5, 10_000);
    let mut times = Vec::new();
    let mut converged = 0;
    for _ in 0..7 {
        let start = Instant::now();
        let points = po2_sweep(&model, 1273.0, &po2s).expect("K known");
        let elapsed = start.elapsed().as_secs_f64();
        converged = points.iter().filter(|p| p.converged).count();
        times.push(elapsed);
        std::hint::black_box(&points);
    }
    times.sort_by(f64::total_cmp);
    let (best, median) = (times[0], times[times.len() / 2]);
    println!(
        "equilibrium: 10000 pO2 points, 10 species, 1 fixed total: {:.2} ms (median of 7; best {:.2} ms), {converged}/10000 converged",
        median * 1e3,
        best * 1e3
    );
    println!(
        "bench: equilibrium.ns_per_point = {:.1}",
        median * 1e9 / po2s.len() as f64
    );
    if converged != po2s.len() {
        eprintln!("not every point converged");
        std::process::exit(1);
    }
}
