//! The Rust side of `python/bench/bench_flash.py`: the same 10^5-point flash grid through the
//! core's `flash_batch`, through blocks of 64 warm-started points (what the Python package
//! does), and the per-call cost of a scalar flash. Prints one JSON object.
//!
//! Run: `cargo bench -p tieline-python --bench batch -- [threads]`.

use rayon::prelude::*;
use std::time::Instant;
use tieline::equilibrium::{FlashContext, FlashOptions, flash_batch, flash_pt};
use tieline::model::{Model, model_from_json};
use tieline::substance::DataBank;

/// The model and grid of the benchmark (the Python script builds the same ones).
pub fn setup() -> (Model, Vec<f64>, Vec<f64>, Vec<f64>) {
    let desc = r#"{"model": "cubic", "kind": "peng_robinson",
        "components": ["nitrogen", "methane", "ethane", "n-butane"],
        "kij": [[0, 1, 0.03], [0, 2, 0.04], [1, 3, 0.02]]}"#;
    let m = model_from_json(desc, DataBank::embedded()).expect("model");
    let (nt, np) = (400, 250);
    let (mut t, mut p) = (Vec::with_capacity(nt * np), Vec::with_capacity(nt * np));
    for j in 0..np {
        for i in 0..nt {
            t.push(170.0 + 150.0 * i as f64 / (nt - 1) as f64);
            p.push(0.5e6 + 7.5e6 * j as f64 / (np - 1) as f64);
        }
    }
    (m, t, p, vec![0.05, 0.8, 0.1, 0.05])
}

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
    let (m, t, p, z) = setup();
    let opts = FlashOptions::default();
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("pool");
    let batch = best_of(3, || {
        let r = flash_batch(&m, &t, &p, &z, &opts, threads).expect("batch");
        assert!(r.iter().all(|x| x.is_ok()));
    });
    let blocks = best_of(3, || {
        let block = 64;
        let out: Vec<usize> = pool.install(|| {
            (0..t.len().div_ceil(block))
                .into_par_iter()
                .map(|b| {
                    let mut ctx = FlashContext::new(z.len());
                    let mut two = 0;
                    for i in b * block..((b + 1) * block).min(t.len()) {
                        two += ctx.flash(&m, t[i], p[i], &z, &opts).expect("flash").phases.len();
                    }
                    two
                })
                .collect()
        });
        assert!(!out.is_empty());
    });
    let calls = 2000;
    let scalar_two_phase = best_of(3, || {
        for _ in 0..calls {
            flash_pt(&m, 250.0, 3.0e6, &z, &opts).expect("flash");
        }
    }) / calls as f64;
    let scalar_one_phase = best_of(3, || {
        for _ in 0..calls {
            flash_pt(&m, 300.0, 3.0e6, &z, &opts).expect("flash");
        }
    }) / calls as f64;
    println!(
        "{{\"points\": {}, \"threads\": {threads}, \"flash_batch_s\": {batch}, \"blocks64_s\": {blocks}, \
         \"scalar_two_phase_s\": {scalar_two_phase}, \"scalar_one_phase_s\": {scalar_one_phase}}}",
        t.len()
    );
}
