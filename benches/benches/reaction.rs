//! Reaction-equilibrium benchmarks: a TP equilibrium of a 15-species C/H/O/N gas (methane–air
//! products with dissociation) cold (a fresh context) and warm (a context reused at a nearby
//! temperature), and the HP adiabatic flame temperature, with a printed summary of the
//! medians and the HP/TP ratio measured in the same run.

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::time::Instant;
use tieline::equilibrium::reaction::{
    ReactionContext, ReactionOptions, ReactionSystem, equilibrate_hp, equilibrate_tp,
};

const SPECIES: [&str; 15] = [
    "CH4", "O2", "N2", "H2O", "CO2", "CO", "H2", "OH", "H", "O", "NO", "N", "NO2", "NH3", "CH3OH",
];

fn setup() -> (ReactionSystem, Vec<f64>, f64) {
    let sys = ReactionSystem::from_names(&SPECIES).unwrap();
    let mut feed = vec![0.0; SPECIES.len()];
    feed[0] = 1.0;
    feed[1] = 2.0;
    feed[2] = 7.52;
    let h = sys.enthalpy(&feed, 298.15).unwrap();
    (sys, feed, h)
}

fn median_us(mut f: impl FnMut(), n: usize) -> f64 {
    let mut v: Vec<f64> = (0..n)
        .map(|_| {
            let t0 = Instant::now();
            f();
            t0.elapsed().as_secs_f64() * 1e6
        })
        .collect();
    v.sort_by(|a, b| a.partial_cmp(b).unwrap());
    v[n / 2]
}

fn benches(c: &mut Criterion) {
    let (sys, feed, h) = setup();
    let o = ReactionOptions::default();
    let mut g = c.benchmark_group("reaction");
    g.bench_function("tp_15_species_cold", |b| {
        b.iter(|| equilibrate_tp(&sys, None, black_box(2000.0), black_box(1e5), &feed, &o).unwrap())
    });
    let mut ctx = ReactionContext::new(&sys);
    let mut k = 0u32;
    g.bench_function("tp_15_species_warm", |b| {
        b.iter(|| {
            k += 1;
            let t = 2000.0 + (k % 2) as f64;
            ctx.equilibrate_tp(&sys, None, black_box(t), black_box(1e5), &feed, &o)
                .unwrap()
        })
    });
    g.bench_function("hp_flame_temperature_cold", |b| {
        b.iter(|| equilibrate_hp(&sys, None, black_box(101325.0), black_box(h), &feed, &o).unwrap())
    });
    g.finish();

    // Summary (medians of 2000 timed calls each, same run).
    let cold = median_us(
        || {
            black_box(equilibrate_tp(&sys, None, 2000.0, 1e5, &feed, &o).unwrap());
        },
        2000,
    );
    let mut ctx = ReactionContext::new(&sys);
    let mut k = 0u32;
    let warm = median_us(
        || {
            k += 1;
            let t = 2000.0 + (k % 2) as f64;
            black_box(ctx.equilibrate_tp(&sys, None, t, 1e5, &feed, &o).unwrap());
        },
        2000,
    );
    let hp = median_us(
        || {
            black_box(equilibrate_hp(&sys, None, 101325.0, h, &feed, &o).unwrap());
        },
        2000,
    );
    let r = equilibrate_tp(&sys, None, 2000.0, 1e5, &feed, &o).unwrap();
    println!(
        "reaction summary (medians): TP 15 species cold {cold:.1} us ({} Newton iterations), warm {warm:.1} us, \
         HP flame {hp:.1} us = {:.1} x cold TP",
        r.iterations,
        hp / cold
    );
}

criterion_group!(benches_group, benches);
criterion_main!(benches_group);
