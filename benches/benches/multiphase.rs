//! Multiphase flash benchmarks on the methane–n-hexane–water Peng–Robinson model (k_ij = 0.5
//! between water and each hydrocarbon; common practice, no source) at 300 K, 2 MPa: the
//! three-phase flash (vapour, hexane-rich liquid, water) of z = (0.3, 0.2, 0.5) against the
//! two-phase flash of a similar feed with too little water for a free-water phase,
//! z = (0.5999, 0.4, 1e-4). Every flash is certified and, unless marked warm (T alternating
//! 300 ± 0.5 K on one context), cold. The figures are reported also as ratios to one ln φ
//! evaluation and to the two-phase flash (cold to cold, warm also to warm), measured in the
//! same run. On a loaded machine compare instruction counts instead:
//! `benches/multiphase-instructions.sh`.

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::time::Duration;
use tieline::equilibrium::{FlashContext, FlashOptions, MultiphaseContext, MultiphaseOptions};
use tieline::model::{CubicEos, CubicKind, FugacityWork, LnPhi, Need, RootChoice, ln_phi};
use tieline::substance::DataBank;
use tieline_benches::median_ns;

const T: f64 = 300.0;
const P: f64 = 2.0e6;
const THREE: [f64; 3] = [0.3, 0.2, 0.5];
const TWO: [f64; 3] = [0.5999, 0.4, 1e-4];

fn model() -> CubicEos {
    let comps = DataBank::embedded()
        .get_many(&["methane", "n-hexane", "water"])
        .unwrap();
    CubicEos::new(CubicKind::PengRobinson, comps)
        .unwrap()
        .with_pair(0, 2, 0.5, 0.0)
        .unwrap()
        .with_pair(1, 2, 0.5, 0.0)
        .unwrap()
}

fn benches(c: &mut Criterion) {
    let m = model();
    let mopts = MultiphaseOptions::default();
    let fopts = FlashOptions::default();
    let fopts3 = FlashOptions {
        max_phases: 3,
        ..FlashOptions::default()
    };
    let mut mctx = MultiphaseContext::new(3);
    let mut fctx = FlashContext::new(3);
    assert_eq!(mctx.flash(&m, T, P, &THREE, &mopts).unwrap().phases.len(), 3);
    assert_eq!(mctx.flash(&m, T, P, &TWO, &mopts).unwrap().phases.len(), 2);
    assert_eq!(fctx.flash(&m, T, P, &TWO, &fopts).unwrap().phases.len(), 2);
    assert_eq!(fctx.flash(&m, T, P, &THREE, &fopts3).unwrap().phases.len(), 3);

    let mut g = c.benchmark_group("c1_c6_water");
    g.measurement_time(Duration::from_secs(3))
        .warm_up_time(Duration::from_millis(500));
    g.bench_function("multiphase_three_phase", |b| {
        b.iter(|| {
            mctx.reset();
            mctx.flash(&m, T, black_box(P), &THREE, &mopts).unwrap().phases.len()
        })
    });
    g.bench_function("pt_flash_two_phase", |b| {
        b.iter(|| {
            fctx.reset();
            fctx.flash(&m, T, black_box(P), &TWO, &fopts).unwrap().phases.len()
        })
    });
    g.finish();

    let mut w = FugacityWork::new(3);
    let mut out = LnPhi::new(3);
    let mut lnphi = || {
        ln_phi(
            &m,
            T,
            P,
            black_box(&THREE),
            RootChoice::Stable,
            Need::VALUES,
            &mut w,
            &mut out,
        )
        .unwrap();
    };
    let base = median_ns(&mut lnphi, 2000);
    let mut two = || {
        fctx.reset();
        black_box(fctx.flash(&m, T, P, &TWO, &fopts).unwrap().phases.len());
    };
    let two_ns = median_ns(&mut two, 50);
    let mut multi_two = || {
        mctx.reset();
        black_box(mctx.flash(&m, T, P, &TWO, &mopts).unwrap().phases.len());
    };
    let multi_two_ns = median_ns(&mut multi_two, 50);
    let mut three = || {
        mctx.reset();
        black_box(mctx.flash(&m, T, P, &THREE, &mopts).unwrap().phases.len());
    };
    let three_ns = median_ns(&mut three, 50);
    let mut pt_three = || {
        fctx.reset();
        black_box(fctx.flash(&m, T, P, &THREE, &fopts3).unwrap().phases.len());
    };
    let pt_three_ns = median_ns(&mut pt_three, 50);
    let mut k = 0usize;
    let mut warm_three = || {
        k += 1;
        let t = T + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
        black_box(mctx.flash(&m, t, P, &THREE, &mopts).unwrap().phases.len());
    };
    let warm_three_ns = median_ns(&mut warm_three, 50);
    let mut k = 0usize;
    let mut warm_two = || {
        k += 1;
        let t = T + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
        black_box(fctx.flash(&m, t, P, &TWO, &fopts).unwrap().phases.len());
    };
    let warm_two_ns = median_ns(&mut warm_two, 50);
    println!("\n== C1/nC6/H2O, 300 K, 2 MPa, cold and certified (same run) ==");
    println!("ln φ evaluation (values):              {base:>10.0} ns");
    println!(
        "two-phase flash_pt, z_w = 1e-4:        {two_ns:>10.0} ns   {:.1} ln φ   1.00",
        two_ns / base
    );
    println!(
        "flash_multiphase, z_w = 1e-4 (2 ph.):  {multi_two_ns:>10.0} ns   {:.1} ln φ   {:.2}",
        multi_two_ns / base,
        multi_two_ns / two_ns
    );
    println!(
        "flash_multiphase, z_w = 0.5 (3 ph.):   {three_ns:>10.0} ns   {:.1} ln φ   {:.2}  (target ≤ 3)",
        three_ns / base,
        three_ns / two_ns
    );
    println!(
        "flash_pt max_phases = 3 (3 ph.):       {pt_three_ns:>10.0} ns   {:.1} ln φ   {:.2}",
        pt_three_ns / base,
        pt_three_ns / two_ns
    );
    println!(
        "two-phase flash_pt warm (±0.5 K):      {warm_two_ns:>10.0} ns   {:.1} ln φ   {:.2}",
        warm_two_ns / base,
        warm_two_ns / two_ns
    );
    println!(
        "flash_multiphase warm (3 ph., ±0.5 K): {warm_three_ns:>10.0} ns   {:.1} ln φ   {:.2}  (to the warm two-phase flash: {:.2})",
        warm_three_ns / base,
        warm_three_ns / two_ns,
        warm_three_ns / warm_two_ns
    );
}

criterion_group!(group, benches);
criterion_main!(group);
