//! Heap allocations per warm-started flash, per sensitivity evaluation with reused work, and
//! per warm PH flash of a [`StateFlashContext`], after warm-up, counted by a counting global
//! allocator (target: zero).

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering};
use tieline::equilibrium::{
    FlashContext, FlashOptions, FlashSensitivities, SensitivityWork, StateFlashContext, StateFlashOptions, StateSpec,
    flash_pt,
};
use tieline_benches::{FEED, TWO_PHASE, model};

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

fn main() {
    let m = model();
    let (t, p) = TWO_PHASE;
    let opts = FlashOptions {
        certificate: false,
        ..Default::default()
    };
    let mut ctx = FlashContext::new(10);
    for k in 0..10 {
        ctx.flash(&m, t + 0.1 * k as f64, p, &FEED, &opts).unwrap();
    }
    let calls = 1000;
    let before = ALLOCS.load(Ordering::Relaxed);
    let mut warm = 0;
    for k in 0..calls {
        let r = ctx
            .flash(&m, t + 0.5 * ((k % 7) as f64 - 3.0), p, &FEED, &opts)
            .unwrap();
        warm += usize::from(r.diagnostics.warm_start);
    }
    let after = ALLOCS.load(Ordering::Relaxed);
    println!(
        "heap allocations per warm-started flash after warm-up: {:.3} ({} allocations over {calls} flashes, {warm} warm)",
        (after - before) as f64 / calls as f64,
        after - before
    );

    // Sensitivities of the last result with reused storage.
    let r = ctx.flash(&m, t, p, &FEED, &opts).unwrap().clone();
    let mut work = SensitivityWork::new(10);
    let mut out = FlashSensitivities::default();
    work.compute(&m, &r, &mut out).unwrap();
    let before = ALLOCS.load(Ordering::Relaxed);
    for _ in 0..calls {
        work.compute(&m, &r, &mut out).unwrap();
    }
    let after = ALLOCS.load(Ordering::Relaxed);
    println!(
        "heap allocations per sensitivity evaluation with reused work: {:.3} ({} over {calls})",
        (after - before) as f64 / calls as f64,
        after - before
    );

    // Warm PH flashes between the enthalpies of seven temperatures around the point.
    let sopts = StateFlashOptions {
        flash: opts,
        ..Default::default()
    };
    let specs: Vec<StateSpec> = (0..7)
        .map(|k| StateSpec::PressureEnthalpy {
            pressure: p,
            enthalpy: flash_pt(&m, t + 0.5 * (k as f64 - 3.0), p, &FEED, &opts)
                .and_then(|r| r.mixture_properties(&m))
                .unwrap()
                .enthalpy,
        })
        .collect();
    let mut sf = StateFlashContext::new(10);
    for s in &specs {
        sf.flash(&m, s, &FEED, &sopts).unwrap();
    }
    let calls = 700;
    let before = ALLOCS.load(Ordering::Relaxed);
    for k in 0..calls {
        sf.flash(&m, &specs[k % 7], &FEED, &sopts).unwrap();
    }
    let after = ALLOCS.load(Ordering::Relaxed);
    println!(
        "heap allocations per warm PH flash after warm-up: {:.3} ({} allocations over {calls} flashes)",
        (after - before) as f64 / calls as f64,
        after - before
    );
}
