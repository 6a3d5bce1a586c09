//! Phase-envelope and critical-point benchmarks on the 10-component PR natural gas of the
//! other benchmarks. Figures are also reported as ratios to one ln φ evaluation measured in
//! the same run (printed at the end), since absolute times on a shared machine are noisy.

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::time::{Duration, Instant};
use tieline::equilibrium::{CriticalOptions, EnvelopeOptions, critical_point, phase_envelope};
use tieline::model::{FugacityWork, LnPhi, Need, RootChoice, ln_phi};
use tieline_benches::{FEED, TWO_PHASE, model};

fn median_ns(f: &mut dyn FnMut(), reps: usize) -> f64 {
    let mut samples = Vec::with_capacity(21);
    for _ in 0..21 {
        let t0 = Instant::now();
        for _ in 0..reps {
            f();
        }
        samples.push(t0.elapsed().as_nanos() as f64 / reps as f64);
    }
    samples.sort_by(|a, b| a.total_cmp(b));
    samples[10]
}

fn benches(c: &mut Criterion) {
    let m = model();
    let opts = EnvelopeOptions::default();
    let copts = CriticalOptions::default();
    let mut g = c.benchmark_group("pr10_envelope");
    g.measurement_time(Duration::from_secs(4))
        .warm_up_time(Duration::from_millis(500))
        .sample_size(20);
    g.bench_function("phase_envelope", |b| {
        b.iter(|| phase_envelope(&m, black_box(&FEED), &opts).unwrap().points.len())
    });
    g.bench_function("critical_point", |b| {
        b.iter(|| critical_point(&m, black_box(&FEED), &copts).unwrap().temperature)
    });
    g.finish();

    let (t2, p2) = TWO_PHASE;
    let mut w = FugacityWork::new(10);
    let mut out = LnPhi::new(10);
    let base = median_ns(
        &mut || {
            ln_phi(
                &m,
                t2,
                p2,
                black_box(&FEED),
                RootChoice::Stable,
                Need::VALUES,
                &mut w,
                &mut out,
            )
            .unwrap();
        },
        2000,
    );
    let env = phase_envelope(&m, &FEED, &opts).unwrap();
    let env_ns = median_ns(
        &mut || {
            black_box(phase_envelope(&m, &FEED, &opts).unwrap().points.len());
        },
        3,
    );
    let crit_ns = median_ns(
        &mut || {
            black_box(critical_point(&m, &FEED, &copts).unwrap().temperature);
        },
        3,
    );
    let cp = &env.critical[0];
    println!(
        "\n10-component PR natural gas, envelope from {} Pa:",
        opts.start_pressure
    );
    println!(
        "  points {}, critical point {:.3} K / {:.4e} Pa, cricondenbar {:.4e} Pa, cricondentherm {:.3} K",
        env.points.len(),
        cp.temperature,
        cp.pressure,
        env.cricondenbar.as_ref().map_or(f64::NAN, |p| p.pressure),
        env.cricondentherm.as_ref().map_or(f64::NAN, |p| p.temperature)
    );
    println!("  ln_phi (values)     {:>12.0} ns  (1)", base);
    println!(
        "  phase_envelope      {:>12.0} ns  ({:.0} ln_phi; {:.2} us per point)",
        env_ns,
        env_ns / base,
        env_ns / env.points.len() as f64 / 1e3
    );
    println!(
        "  critical_point      {:>12.0} ns  ({:.0} ln_phi)",
        crit_ns,
        crit_ns / base
    );
}

criterion_group!(envelope, benches);
criterion_main!(envelope);
