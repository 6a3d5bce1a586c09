//! Liquid-solution model benchmarks: one evaluation of ln γ with composition and temperature
//! derivatives (and h^E, s^E) for NRTL with 10 components, and UNIFAC with 5 components, both
//! warm (storage reused, no allocation); values only for comparison. The temperature terms
//! (τ, G, Ψ, the pure-component group terms) are kept in the storage between calls at one T,
//! so these are the costs inside a flash at fixed T. Measured: NRTL 1.2 µs with derivatives,
//! 0.48 µs values only (14 300 and 3 800 instructions); UNIFAC 1.5 µs and 0.71 µs (13 300 and
//! 3 900 instructions); target for NRTL with derivatives ≤ 2 µs (common practice, no source).

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use tieline::model::activity::{Nrtl, NrtlParams, Unifac};
use tieline::model::{ExcessDerivs, ExcessGibbs, Need};

/// A 10-component NRTL model with invented (demonstration) parameters that use every
/// temperature term.
fn nrtl10() -> Nrtl {
    let nc = 10;
    let m = |f: &dyn Fn(usize, usize) -> f64| -> Vec<Vec<f64>> {
        (0..nc)
            .map(|i| (0..nc).map(|j| if i == j { 0.0 } else { f(i, j) }).collect())
            .collect()
    };
    Nrtl::new(NrtlParams {
        components: (0..nc).map(|i| format!("c{i}")).collect(),
        a: m(&|i, j| 0.1 * ((i * 7 + j * 3) % 5) as f64 - 0.2),
        b: m(&|i, j| 50.0 * ((i * 3 + j * 5) % 9) as f64 - 100.0),
        c: m(&|i, j| 0.2 + 0.02 * ((i + j) % 5) as f64),
        d: m(&|_, _| 1e-4),
        e: m(&|i, j| 0.01 * ((i + 2 * j) % 3) as f64),
        f: m(&|i, j| 1e-5 * ((2 * i + j) % 4) as f64),
        t_min: 250.0,
        t_max: 450.0,
    })
    .unwrap()
}

fn benches(c: &mut Criterion) {
    let nrtl = nrtl10();
    let n: Vec<f64> = (0..10).map(|i| 0.05 + 0.01 * i as f64).collect();
    let mut out = ExcessDerivs::new(10);
    let unifac = Unifac::from_names(&["water", "ethanol", "acetone", "toluene", "n-hexane"]).unwrap();
    let n5 = [0.3, 0.2, 0.2, 0.1, 0.2];
    let mut out5 = ExcessDerivs::new(5);
    // `ACTIVITY_BENCH_COUNT=OPERATION:R` runs R evaluations and exits, for instruction counting
    // under `valgrind --tool=callgrind` (counts do not depend on the machine's load): the
    // difference between two R over their difference is the count per call. OPERATION is one
    // of `nrtl10-all`, `nrtl10-values`, `unifac5-all`, `unifac5-values`.
    if let Ok(spec) = std::env::var("ACTIVITY_BENCH_COUNT") {
        let (op, reps) = spec.split_once(':').expect("OPERATION:REPETITIONS");
        let reps: usize = reps.parse().expect("repetitions");
        for _ in 0..reps {
            match op {
                "nrtl10-all" => nrtl.excess(black_box(330.0), black_box(&n), Need::ALL, &mut out),
                "nrtl10-values" => nrtl.excess(black_box(330.0), black_box(&n), Need::VALUES, &mut out),
                "unifac5-all" => unifac.excess(black_box(330.0), black_box(&n5), Need::ALL, &mut out5),
                "unifac5-values" => unifac.excess(black_box(330.0), black_box(&n5), Need::VALUES, &mut out5),
                _ => panic!("unknown operation {op}"),
            }
            .unwrap();
        }
        std::process::exit(0);
    }
    let mut g = c.benchmark_group("activity");
    g.bench_function("nrtl10_all_derivatives", |b| {
        b.iter(|| {
            nrtl.excess(black_box(330.0), black_box(&n), Need::ALL, &mut out)
                .unwrap()
        })
    });
    g.bench_function("nrtl10_values", |b| {
        b.iter(|| {
            nrtl.excess(black_box(330.0), black_box(&n), Need::VALUES, &mut out)
                .unwrap()
        })
    });
    g.bench_function("unifac5_all_derivatives", |b| {
        b.iter(|| {
            unifac
                .excess(black_box(330.0), black_box(&n5), Need::ALL, &mut out5)
                .unwrap()
        })
    });
    g.bench_function("unifac5_values", |b| {
        b.iter(|| {
            unifac
                .excess(black_box(330.0), black_box(&n5), Need::VALUES, &mut out5)
                .unwrap()
        })
    });
    g.finish();
}

criterion_group!(group, benches);
criterion_main!(group);
