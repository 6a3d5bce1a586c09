//! State-function flash benchmarks on the 10-component PR gas of the fixtures: a warm PH flash
//! (a [`StateFlashContext`] alternating between the enthalpies of T ± 0.5 K at the two-phase
//! point) and a cold PH flash (context reset each call), both against a warm PT flash
//! alternating T ± 0.5 K. Ratios are measured in the same run (targets: warm PH ≤ 2× and
//! cold PH ≤ 4× the warm PT flash; common practice, no source).

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::time::Duration;
use tieline::equilibrium::{FlashContext, StateFlashContext, StateFlashOptions, StateSpec, flash_pt};
use tieline_benches::{FEED, TWO_PHASE, median_ns, model, no_certificate};

fn benches(c: &mut Criterion) {
    let m = model();
    let (t2, p2) = TWO_PHASE;
    let nocert = no_certificate();
    let sopts = StateFlashOptions {
        flash: nocert,
        ..Default::default()
    };
    let h_at = |t: f64| {
        flash_pt(&m, t, p2, &FEED, &nocert)
            .and_then(|r| r.mixture_properties(&m))
            .expect("the benchmark point flashes")
            .enthalpy
    };
    let specs = [t2 - 0.5, t2 + 0.5].map(|t| StateSpec::PressureEnthalpy {
        pressure: p2,
        enthalpy: h_at(t),
    });
    let mut pt = FlashContext::new(10);
    let mut sf = StateFlashContext::new(10);

    let mut g = c.benchmark_group("pr10_state");
    g.measurement_time(Duration::from_secs(3))
        .warm_up_time(Duration::from_millis(500));
    let mut k = 0usize;
    g.bench_function("warm_pt", |b| {
        b.iter(|| {
            k += 1;
            let t = t2 + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
            pt.flash(&m, t, black_box(p2), &FEED, &nocert).unwrap().phases.len()
        })
    });
    g.bench_function("warm_ph", |b| {
        b.iter(|| {
            k += 1;
            sf.flash(&m, black_box(&specs[k % 2]), &FEED, &sopts)
                .unwrap()
                .pt_flashes
        })
    });
    g.bench_function("cold_ph", |b| {
        b.iter(|| {
            k += 1;
            sf.reset();
            sf.flash(&m, black_box(&specs[k % 2]), &FEED, &sopts)
                .unwrap()
                .pt_flashes
        })
    });
    g.finish();

    let mut warm_pt = || {
        k += 1;
        let t = t2 + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
        black_box(pt.flash(&m, t, p2, &FEED, &nocert).unwrap().phases.len());
    };
    let warm_pt_ns = median_ns(&mut warm_pt, 200);
    let mut warm_flashes = 0usize;
    let mut warm_calls = 0usize;
    let mut warm_ph = || {
        k += 1;
        let r = sf.flash(&m, &specs[k % 2], &FEED, &sopts).unwrap();
        warm_flashes += r.pt_flashes;
        warm_calls += 1;
    };
    let warm_ph_ns = median_ns(&mut warm_ph, 100);
    let mut cold_flashes = 0usize;
    let mut cold_calls = 0usize;
    let mut cold_ph = || {
        k += 1;
        sf.reset();
        let r = sf.flash(&m, &specs[k % 2], &FEED, &sopts).unwrap();
        cold_flashes += r.pt_flashes;
        cold_calls += 1;
    };
    let cold_ph_ns = median_ns(&mut cold_ph, 50);
    println!("\n== PH flash vs warm PT flash (10-component PR, two-phase, same run) ==");
    println!("warm PT flash (T ± 0.5 K):       {:>10.0} ns   1.0", warm_pt_ns);
    println!(
        "warm PH flash (h of T ± 0.5 K):   {:>10.0} ns   {:.2}  (target ≤ 2; {:.2} PT flashes per call)",
        warm_ph_ns,
        warm_ph_ns / warm_pt_ns,
        warm_flashes as f64 / warm_calls as f64
    );
    println!(
        "cold PH flash:                    {:>10.0} ns   {:.2}  (target ≤ 4; {:.2} PT flashes per call)",
        cold_ph_ns,
        cold_ph_ns / warm_pt_ns,
        cold_flashes as f64 / cold_calls as f64
    );
}

criterion_group!(group, benches);
criterion_main!(group);
