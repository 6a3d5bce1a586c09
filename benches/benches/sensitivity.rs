//! Flash sensitivities (derivatives by the implicit function theorem) against the flash that
//! produced the result, on the 10-component PR mixture at its two-phase point. Figures are
//! also printed as ratios measured in the same run (target: sensitivities ≤ 0.3 × the flash).

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::time::Duration;
use tieline::equilibrium::{FlashContext, FlashSensitivities, SensitivityWork, flash_sensitivities};
use tieline::model::{FugacityWork, LnPhi, Need, RootChoice, ln_phi};
use tieline_benches::{FEED, TWO_PHASE, median_ns, model, no_certificate};

fn benches(c: &mut Criterion) {
    let m = model();
    let (t, p) = TWO_PHASE;
    let nocert = no_certificate();
    let mut ctx = FlashContext::new(10);
    let converged = ctx.flash(&m, t, p, &FEED, &nocert).unwrap().clone();
    assert_eq!(converged.phases.len(), 2);
    let mut work = SensitivityWork::new(10);
    let mut out = FlashSensitivities::default();

    let mut g = c.benchmark_group("pr10_sensitivities");
    g.measurement_time(Duration::from_secs(3))
        .warm_up_time(Duration::from_millis(500));
    g.bench_function("cold_two_phase_flash", |b| {
        b.iter(|| {
            ctx.reset();
            ctx.flash(&m, t, black_box(p), &FEED, &nocert).unwrap().phases.len()
        })
    });
    g.bench_function("sensitivities", |b| {
        b.iter(|| {
            work.compute(&m, black_box(&converged), &mut out).unwrap();
            out.temperature.enthalpy
        })
    });
    g.bench_function("sensitivities_one_shot", |b| {
        b.iter(|| {
            flash_sensitivities(&m, black_box(&converged))
                .unwrap()
                .temperature
                .enthalpy
        })
    });
    g.finish();

    let mut w = FugacityWork::new(10);
    let mut phi = LnPhi::new(10);
    let mut lnphi = || {
        ln_phi(
            &m,
            t,
            p,
            black_box(&FEED),
            RootChoice::Stable,
            Need::VALUES,
            &mut w,
            &mut phi,
        )
        .unwrap();
    };
    let base = median_ns(&mut lnphi, 2000);
    let mut cold = || {
        ctx.reset();
        black_box(ctx.flash(&m, t, p, &FEED, &nocert).unwrap().phases.len());
    };
    let cold_ns = median_ns(&mut cold, 50);
    let mut k = 0usize;
    let mut warm = || {
        k += 1;
        let tk = t + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
        black_box(ctx.flash(&m, tk, p, &FEED, &nocert).unwrap().phases.len());
    };
    let warm_ns = median_ns(&mut warm, 200);
    let mut sens = || {
        work.compute(&m, black_box(&converged), &mut out).unwrap();
        black_box(out.temperature.enthalpy);
    };
    let sens_ns = median_ns(&mut sens, 500);
    let mut once = || {
        black_box(
            flash_sensitivities(&m, black_box(&converged))
                .unwrap()
                .temperature
                .enthalpy,
        );
    };
    let once_ns = median_ns(&mut once, 500);
    println!("\n== flash sensitivities (10-component PR, two phases, same run) ==");
    println!(
        "ln φ evaluation (values, one phase):  {:>10.0} ns   {:.1} × ln φ",
        base, 1.0
    );
    println!(
        "cold two-phase flash (no cert.):      {:>10.0} ns   {:.1} × ln φ",
        cold_ns,
        cold_ns / base
    );
    println!(
        "warm-started flash (no cert.):        {:>10.0} ns   {:.1} × ln φ",
        warm_ns,
        warm_ns / base
    );
    println!(
        "sensitivities (reused work):          {:>10.0} ns   {:.1} × ln φ, {:.3} × cold flash, {:.3} × warm flash  (target ≤ 0.3 × flash)",
        sens_ns,
        sens_ns / base,
        sens_ns / cold_ns,
        sens_ns / warm_ns
    );
    println!(
        "sensitivities (one-shot, allocating): {:>10.0} ns   {:.1} × ln φ, {:.3} × cold flash",
        once_ns,
        once_ns / base,
        once_ns / cold_ns
    );
}

criterion_group!(group, benches);
criterion_main!(group);
