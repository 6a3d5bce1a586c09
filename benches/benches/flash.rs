//! Flash benchmarks on the 10-component PR mixture. Every figure is reported also as a ratio
//! to one ln φ evaluation measured in the same run (printed at the end), since absolute times
//! on a shared machine are noisy.

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::time::{Duration, Instant};
use tieline::equilibrium::{FlashContext, FlashOptions, StabilityOptions, flash_batch, stability};
use tieline::model::{FugacityWork, LnPhi, Need, RootChoice, ln_phi};
use tieline_benches::{FEED, ONE_PHASE, TWO_PHASE, equilibrium_liquid, median_ns, model, no_certificate};

fn benches(c: &mut Criterion) {
    let m = model();
    let (t2, p2) = TWO_PHASE;
    let (t1, p1) = ONE_PHASE;
    let nocert = no_certificate();
    let mut w = FugacityWork::new(10);
    let mut out = LnPhi::new(10);
    let mut ctx = FlashContext::new(10);
    let liquid = equilibrium_liquid(&m);

    let mut g = c.benchmark_group("pr10");
    g.measurement_time(Duration::from_secs(3))
        .warm_up_time(Duration::from_millis(500));
    g.bench_function("ln_phi", |b| {
        b.iter(|| {
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
            .unwrap()
        })
    });
    g.bench_function("cold_two_phase", |b| {
        b.iter(|| {
            ctx.reset();
            ctx.flash(&m, t2, black_box(p2), &FEED, &nocert).unwrap().phases.len()
        })
    });
    let mut k = 0usize;
    g.bench_function("warm_two_phase", |b| {
        b.iter(|| {
            k += 1;
            let t = t2 + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
            ctx.flash(&m, t, black_box(p2), &FEED, &nocert).unwrap().phases.len()
        })
    });
    g.bench_function("single_phase", |b| {
        b.iter(|| {
            ctx.reset();
            ctx.flash(&m, t1, black_box(p1), &FEED, &nocert).unwrap().phases.len()
        })
    });
    g.bench_function("certificate", |b| {
        b.iter(|| {
            stability(&m, t2, p2, black_box(&liquid), &StabilityOptions::default())
                .unwrap()
                .stable
        })
    });
    g.finish();

    // Ratios within this run, by a simple median timer on the same closures.
    let mut lnphi = || {
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
    };
    let base = median_ns(&mut lnphi, 2000);
    let mut cold = || {
        ctx.reset();
        black_box(ctx.flash(&m, t2, p2, &FEED, &nocert).unwrap().phases.len());
    };
    let cold_ns = median_ns(&mut cold, 50);
    let mut k = 0usize;
    let mut warm = || {
        k += 1;
        let t = t2 + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
        black_box(ctx.flash(&m, t, p2, &FEED, &nocert).unwrap().phases.len());
    };
    let warm_ns = median_ns(&mut warm, 200);
    let mut single = || {
        ctx.reset();
        black_box(ctx.flash(&m, t1, p1, &FEED, &nocert).unwrap().phases.len());
    };
    let single_ns = median_ns(&mut single, 100);
    let mut cert = || {
        black_box(
            stability(&m, t2, p2, &liquid, &StabilityOptions::default())
                .unwrap()
                .stable,
        );
    };
    let cert_ns = median_ns(&mut cert, 100);
    let withcert = FlashOptions::default();
    let mut cold_cert = || {
        ctx.reset();
        black_box(ctx.flash(&m, t2, p2, &FEED, &withcert).unwrap().phases.len());
    };
    let cold_cert_ns = median_ns(&mut cold_cert, 50);

    // Batch of 10^4 points (a 100 × 100 T–p grid) on 1 and 2 threads.
    let n = 100;
    let mut ts = Vec::with_capacity(n * n);
    let mut ps = Vec::with_capacity(n * n);
    for i in 0..n {
        for j in 0..n {
            ts.push(250.0 + 150.0 * i as f64 / (n - 1) as f64);
            ps.push(10e5 + 90e5 * j as f64 / (n - 1) as f64);
        }
    }
    let batch = |threads: usize| {
        let t0 = Instant::now();
        let r = flash_batch(&m, &ts, &ps, &FEED, &nocert, threads).unwrap();
        let el = t0.elapsed().as_secs_f64();
        assert!(r.iter().all(|x| x.is_ok()));
        el
    };
    let mut b1 = Vec::new();
    let mut b2 = Vec::new();
    for _ in 0..5 {
        b1.push(batch(1));
        b2.push(batch(2));
    }
    b1.sort_by(|a, b| a.total_cmp(b));
    b2.sort_by(|a, b| a.total_cmp(b));
    println!("\n== ratios to one ln φ evaluation (10-component PR, same run) ==");
    println!("ln φ evaluation (values, one phase): {:>10.0} ns   1.0", base);
    println!(
        "cold two-phase flash (no cert.):    {:>10.0} ns   {:.1}  (target ≤ 60)",
        cold_ns,
        cold_ns / base
    );
    println!(
        "warm-started flash (no cert.):      {:>10.0} ns   {:.1}  (target ≤ 10)",
        warm_ns,
        warm_ns / base
    );
    println!(
        "single-phase point (stability):     {:>10.0} ns   {:.1}  (target ≤ 20)",
        single_ns,
        single_ns / base
    );
    println!(
        "certificate alone:                  {:>10.0} ns   {:.1}",
        cert_ns,
        cert_ns / base
    );
    println!(
        "cold two-phase flash with cert.:    {:>10.0} ns   {:.1}",
        cold_cert_ns,
        cold_cert_ns / base
    );
    println!("batch 10^4 points, 1 thread:        {:>10.3} s", b1[2]);
    println!(
        "batch 10^4 points, 2 threads:       {:>10.3} s    speed-up {:.2}  (target ≥ 1.8)",
        b2[2],
        b1[2] / b2[2]
    );
}

criterion_group!(group, benches);
criterion_main!(group);
