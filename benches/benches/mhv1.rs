//! ln φ with composition derivatives of a 5-component liquid: Peng–Robinson with the MHV1
//! mixing rule fed by NRTL, against the classic van der Waals rule, reported as medians and
//! as the ratio of the two (same run), and the heap allocations per warm evaluation. The
//! NRTL parameters are invented for the benchmark (cost does not depend on their values).

use criterion::{Criterion, criterion_group, criterion_main};
use std::alloc::{GlobalAlloc, Layout, System};
use std::hint::black_box;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};
use tieline::model::activity::{Nrtl, NrtlParams};
use tieline::model::{
    ActivityModel, CubicEos, CubicKind, ExcessDerivs, ExcessGibbs, FugacityWork, LnPhi, MixingRule, Need, RootChoice,
    ln_phi,
};
use tieline::substance::DataBank;
use tieline_benches::median_ns;

struct Counting;
static ALLOCS: AtomicUsize = AtomicUsize::new(0);

// SAFETY: forwards to the system allocator; only counts calls.
#[allow(unsafe_code)]
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, l: Layout) -> *mut u8 {
        ALLOCS.fetch_add(1, Ordering::Relaxed);
        // SAFETY: same contract as the caller's.
        unsafe { System.alloc(l) }
    }
    unsafe fn dealloc(&self, p: *mut u8, l: Layout) {
        // SAFETY: same contract as the caller's.
        unsafe { System.dealloc(p, l) }
    }
    unsafe fn realloc(&self, p: *mut u8, l: Layout, n: usize) -> *mut u8 {
        ALLOCS.fetch_add(1, Ordering::Relaxed);
        // SAFETY: same contract as the caller's.
        unsafe { System.realloc(p, l, n) }
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

const NAMES: [&str; 5] = ["acetone", "methanol", "ethanol", "water", "benzene"];
const X: [f64; 5] = [0.15, 0.25, 0.2, 0.3, 0.1];
const T: f64 = 330.0;
const P: f64 = 1e5;

fn models() -> (CubicEos, CubicEos) {
    let comps = DataBank::embedded().get_many(&NAMES).unwrap();
    let classic = CubicEos::new(CubicKind::PengRobinson, comps).unwrap();
    let nc = NAMES.len();
    let b = (0..nc)
        .map(|i| {
            (0..nc)
                .map(|j| {
                    if i == j {
                        0.0
                    } else {
                        100.0 + 37.0 * (i * nc + j) as f64
                    }
                })
                .collect()
        })
        .collect();
    let c = (0..nc)
        .map(|i| (0..nc).map(|j| if i == j { 0.0 } else { 0.3 }).collect())
        .collect();
    let act = ActivityModel::Nrtl(
        Nrtl::new(NrtlParams {
            components: NAMES.iter().map(|s| s.to_string()).collect(),
            a: vec![vec![0.0; nc]; nc],
            b,
            c,
            d: vec![],
            e: vec![],
            f: vec![],
            t_min: 250.0,
            t_max: 450.0,
        })
        .unwrap(),
    );
    let mhv1 = classic
        .clone()
        .with_mixing(MixingRule::Mhv1 {
            activity: act,
            q1: None,
        })
        .unwrap();
    (classic, mhv1)
}

fn benches(c: &mut Criterion) {
    let (classic, mhv1) = models();
    let mut w = FugacityWork::new(5);
    let mut o = LnPhi::new(5);
    // `MHV1_BENCH_COUNT=classic:R` or `=mhv1:R` runs R evaluations and exits, for instruction
    // counting under `valgrind --tool=callgrind` (counts do not depend on the machine's load):
    // the difference between two R over their difference is the count per call.
    if let Ok(spec) = std::env::var("MHV1_BENCH_COUNT") {
        let (which, reps) = spec.split_once(':').expect("MODEL:REPETITIONS");
        let m = if which == "mhv1" { &mhv1 } else { &classic };
        for _ in 0..reps.parse::<usize>().expect("repetitions") {
            ln_phi(
                m,
                T,
                P,
                black_box(&X),
                RootChoice::Liquid,
                Need::COMPOSITION,
                &mut w,
                &mut o,
            )
            .unwrap();
        }
        std::process::exit(0);
    }
    let mut g = c.benchmark_group("ln_phi_5_liquid");
    g.measurement_time(Duration::from_secs(3))
        .warm_up_time(Duration::from_millis(500));
    for (name, m) in [("pr_classic", &classic), ("pr_mhv1_nrtl", &mhv1)] {
        g.bench_function(name, |b| {
            b.iter(|| {
                ln_phi(
                    m,
                    T,
                    P,
                    black_box(&X),
                    RootChoice::Liquid,
                    Need::COMPOSITION,
                    &mut w,
                    &mut o,
                )
                .unwrap()
            })
        });
    }
    g.finish();

    // Interleaved rounds (classic, then MHV1) so that load changes on a shared machine affect
    // both alike; the ratio is the median of the per-round ratios.
    let mut w2 = FugacityWork::new(5);
    let mut o2 = LnPhi::new(5);
    let reps = 2000;
    let (mut tc, mut tg, mut ratios) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..31 {
        let t0 = Instant::now();
        for _ in 0..reps {
            ln_phi(
                &classic,
                T,
                P,
                black_box(&X),
                RootChoice::Liquid,
                Need::COMPOSITION,
                &mut w,
                &mut o,
            )
            .unwrap();
        }
        let a = t0.elapsed().as_nanos() as f64 / reps as f64;
        let t0 = Instant::now();
        for _ in 0..reps {
            ln_phi(
                &mhv1,
                T,
                P,
                black_box(&X),
                RootChoice::Liquid,
                Need::COMPOSITION,
                &mut w2,
                &mut o2,
            )
            .unwrap();
        }
        let b = t0.elapsed().as_nanos() as f64 / reps as f64;
        tc.push(a);
        tg.push(b);
        ratios.push(b / a);
    }
    let med = |v: &mut Vec<f64>| {
        v.sort_by(|a, b| a.total_cmp(b));
        v[v.len() / 2]
    };
    let (base, ge, ratio) = (med(&mut tc), med(&mut tg), med(&mut ratios));
    let act = mhv1.mixing().activity().unwrap().clone();
    let mut ex = ExcessDerivs::new(5);
    let ge_values = median_ns(
        &mut || act.excess(T, black_box(&X), Need::VALUES, &mut ex).unwrap(),
        2000,
    );
    let ge_comp = median_ns(
        &mut || act.excess(T, black_box(&X), Need::COMPOSITION, &mut ex).unwrap(),
        2000,
    );
    let before = ALLOCS.load(Ordering::Relaxed);
    for _ in 0..1000 {
        ln_phi(&mhv1, T, P, &X, RootChoice::Liquid, Need::COMPOSITION, &mut w2, &mut o2).unwrap();
    }
    let allocs = ALLOCS.load(Ordering::Relaxed) - before;
    println!("\n== ln φ with composition derivatives, 5-component liquid, PR (same run) ==");
    println!("classic van der Waals rule:  {base:>8.0} ns   1.0");
    println!("MHV1 with NRTL:              {ge:>8.0} ns   {ratio:.2}");
    println!(
        "  of which NRTL g^E, ln γ:     {ge_values:>8.0} ns   {:.2}",
        ge_values / base
    );
    println!(
        "  of which NRTL with ∂ln γ/∂n: {ge_comp:>8.0} ns   {:.2}",
        ge_comp / base
    );
    println!(
        "heap allocations per warm MHV1 evaluation: {:.3}",
        allocs as f64 / 1000.0
    );
}

criterion_group! {
    name = mhv;
    config = Criterion::default().sample_size(20);
    targets = benches
}
criterion_main!(mhv);
