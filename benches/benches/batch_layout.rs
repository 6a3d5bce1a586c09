//! Layouts of the batch flash: the default of `flash_batch` (blocks of `block_len` points,
//! warm starts between neighbours only) against blocks of 16, 64 and 256 points and about four
//! contiguous chunks per thread, each warm-starting from every previous point, on a sorted
//! sweep (T fastest, then p) and on the same points shuffled. Prints the best wall time of
//! each layout over the rounds and its ratio to the default, in one run; no assertions.
//!
//! `cargo bench -p tieline-benches --bench batch_layout -- [threads] [points] [rounds]`
//! (defaults: 2 threads, 100000 points, 3 rounds). The layouts alternate within each round,
//! in a rotating order, so drift of the machine affects all alike.

#![allow(missing_docs)]

use std::time::Instant;
use tieline::equilibrium::FlashOptions;
use tieline::equilibrium::batch::{BatchLayout, Partition, WarmStart, flash_batch_with};
use tieline::model::{Model, model_from_json};
use tieline::substance::DataBank;

fn sweep(points: usize) -> (Vec<f64>, Vec<f64>) {
    let np = ((points as f64 / 1.6).sqrt().round() as usize).max(1);
    let nt = points.div_ceil(np);
    let (mut t, mut p) = (Vec::with_capacity(nt * np), Vec::with_capacity(nt * np));
    for j in 0..np {
        for i in 0..nt {
            t.push(170.0 + 150.0 * i as f64 / (nt - 1).max(1) as f64);
            p.push(0.5e6 + 7.5e6 * j as f64 / (np - 1).max(1) as f64);
        }
    }
    (t, p)
}

/// The same points in a fixed pseudo-random order (Fisher–Yates with a 64-bit LCG).
fn shuffled(t: &[f64], p: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let mut idx: Vec<usize> = (0..t.len()).collect();
    let mut s: u64 = 0x9E37_79B9_7F4A_7C15;
    for i in (1..idx.len()).rev() {
        s = s
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        idx.swap(i, (s >> 33) as usize % (i + 1));
    }
    (idx.iter().map(|&i| t[i]).collect(), idx.iter().map(|&i| p[i]).collect())
}

fn main() {
    let args: Vec<usize> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let threads = args.first().copied().unwrap_or(2);
    let points = args.get(1).copied().unwrap_or(100_000);
    let rounds = args.get(2).copied().unwrap_or(3);
    let desc = r#"{"model": "cubic", "kind": "peng_robinson",
        "components": ["nitrogen", "methane", "ethane", "n-butane"],
        "kij": [[0, 1, 0.03], [0, 2, 0.04], [1, 3, 0.02]]}"#;
    let m: Model = model_from_json(desc, DataBank::embedded()).expect("model");
    let z = [0.05, 0.8, 0.1, 0.05];
    let opts = FlashOptions::default();
    let always = |partition| BatchLayout {
        partition,
        warm_start: WarmStart::Always,
    };
    let layouts: Vec<(&str, BatchLayout)> = vec![
        ("default (auto blocks, warm when near)", BatchLayout::default()),
        ("blocks of 16, always warm", always(Partition::Blocks(16))),
        ("blocks of 64, always warm", always(Partition::Blocks(64))),
        ("blocks of 256, always warm", always(Partition::Blocks(256))),
        ("4 chunks per thread, always warm", always(Partition::Chunks)),
        (
            "blocks of 256, warm when near",
            BatchLayout {
                partition: Partition::Blocks(256),
                warm_start: WarmStart::Near,
            },
        ),
        (
            "auto blocks, always cold",
            BatchLayout {
                partition: Partition::Auto,
                warm_start: WarmStart::Never,
            },
        ),
    ];
    let (ts, ps) = sweep(points);
    let (th, ph) = shuffled(&ts, &ps);
    println!(
        "batch flash layouts: {} points (PR, N2/C1/C2/nC4), {threads} threads, best of {rounds} rounds",
        ts.len()
    );
    for (name, t, p) in [("sorted sweep", &ts, &ps), ("shuffled sweep", &th, &ph)] {
        let mut best = vec![f64::INFINITY; layouts.len()];
        for round in 0..rounds {
            // Each round starts with another layout, so that none is always first.
            for j in 0..layouts.len() {
                let k = (j + round) % layouts.len();
                let layout = &layouts[k].1;
                let s = Instant::now();
                let r = flash_batch_with(&m, t, p, &z, &opts, threads, layout).expect("batch");
                best[k] = best[k].min(s.elapsed().as_secs_f64());
                assert!(r.iter().all(|x| x.is_ok()));
            }
        }
        println!("\n{name:<40} {:>9} {:>14}", "s", "ratio to default");
        for (k, (label, _)) in layouts.iter().enumerate() {
            println!("{label:<40} {:>9.3} {:>14.3}", best[k], best[k] / best[0]);
        }
    }
}
