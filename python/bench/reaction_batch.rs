//! The Rust side of `python/bench/bench_reaction.py`: a 10^5-point temperature sweep of the
//! water-gas-shift equilibrium (ideal gas, 1 bar, 600–1400 K), as a Rust batch (blocks of 64
//! warm-started points on a rayon pool, the core's `ReactionContext` directly) and through the
//! calculations-by-name layer with the records stacked into columns (the work the Python
//! package does before it hands arrays to numpy). Prints one JSON object.
//!
//! Run: `cargo bench -p tieline-python --bench reaction_batch -- [threads]`.

use rayon::prelude::*;
use std::time::Instant;
use tieline::calc::{Columns, Plan, Workspace};
use tieline::equilibrium::reaction::{ReactionContext, ReactionOptions, ReactionSystem};
use tieline::model::{Model, model_from_json};
use tieline::substance::DataBank;

const SPECIES: [&str; 4] = ["carbon monoxide", "water", "carbon dioxide", "hydrogen"];
const FEED: [f64; 4] = [1.0, 1.0, 0.0, 0.0];
const POINTS: usize = 100_000;
const BLOCK: usize = 64;

fn best_of<F: FnMut()>(runs: usize, mut f: F) -> f64 {
    (0..runs)
        .map(|_| {
            let s = Instant::now();
            f();
            s.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min)
}

fn main() {
    let threads: usize = std::env::args()
        .skip(1)
        .find(|a| !a.starts_with('-'))
        .and_then(|a| a.parse().ok())
        .unwrap_or(2);
    let t: Vec<f64> = (0..POINTS)
        .map(|i| 600.0 + 800.0 * i as f64 / (POINTS - 1) as f64)
        .collect();
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("pool");
    let sys = ReactionSystem::from_names(&SPECIES).expect("species");
    let opts = ReactionOptions::default();
    let batch = best_of(3, || {
        let n: usize = pool.install(|| {
            (0..POINTS.div_ceil(BLOCK))
                .into_par_iter()
                .map(|b| {
                    let mut ctx = ReactionContext::new(&sys);
                    (b * BLOCK..((b + 1) * BLOCK).min(POINTS))
                        .map(|i| {
                            ctx.equilibrate_tp(&sys, None, t[i], 1e5, &FEED, &opts)
                                .expect("equilibrium")
                                .iterations
                        })
                        .sum::<usize>()
                })
                .sum()
        });
        assert!(n > 0);
    });
    let desc = r#"{"model": "cubic", "kind": "peng_robinson",
        "components": ["carbon monoxide", "water", "carbon dioxide", "hydrogen"]}"#;
    let m: Model = model_from_json(desc, DataBank::embedded()).expect("model");
    let plan = Plan::new("reaction_tp", None).expect("plan");
    let mut stack_s = f64::INFINITY;
    let records = best_of(3, || {
        let results: Vec<_> = pool.install(|| {
            (0..POINTS.div_ceil(BLOCK))
                .into_par_iter()
                .flat_map_iter(|b| {
                    let mut ws = Workspace::default();
                    (b * BLOCK..((b + 1) * BLOCK).min(POINTS))
                        .map(|i| plan.run(&mut ws, &m, &[t[i], 1e5], &FEED))
                        .collect::<Vec<_>>()
                })
                .collect()
        });
        let s = Instant::now();
        let c = Columns::from_results("reaction_tp", results);
        stack_s = stack_s.min(s.elapsed().as_secs_f64());
        assert!(c.failures.is_empty());
    });
    let records_only = best_of(3, || {
        let n: usize = pool.install(|| {
            (0..POINTS.div_ceil(BLOCK))
                .into_par_iter()
                .map(|b| {
                    let mut ws = Workspace::default();
                    (b * BLOCK..((b + 1) * BLOCK).min(POINTS))
                        .map(|i| plan.run(&mut ws, &m, &[t[i], 1e5], &FEED).expect("record").fields.len())
                        .sum::<usize>()
                })
                .sum()
        });
        assert!(n > 0);
    });
    println!(
        "{{\"points\": {POINTS}, \"threads\": {threads}, \"rust_batch_s\": {batch}, \"records_s\": {records_only}, \"records_and_columns_s\": {records}, \"columns_s\": {stack_s}}}"
    );
}
