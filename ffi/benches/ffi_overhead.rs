//! Cost of the C ABI over the Rust call, and batch throughput, measured in one run.
//!
//! `cargo bench -p tieline-ffi --bench ffi_overhead` prints, for the same point and the same
//! warm-started solver state, the median per-call time of `FlashContext::flash` (Rust) and
//! of `tl_context_flash` (C ABI, which also copies the result into a `tl_result`), their
//! ratio, the same for one-shot cold flashes, and the throughput of `tl_flash_batch` on one
//! and two threads next to the Rust `flash_batch`. The Rust and C variants alternate within
//! each round, so drift of the machine affects both alike. No assertions: figures only.
//! `TL_BENCH_QUICK=1` runs the warm per-call comparison alone.

#![allow(missing_docs)]

use std::hint::black_box;
use std::ptr;
use std::time::Instant;
use tieline::equilibrium::{FlashContext, FlashOptions, flash_batch, flash_pt};
use tieline::model::{CubicEos, CubicKind, Model};
use tieline::substance::DataBank;
use tieline_ffi::*;

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(|a, b| a.partial_cmp(b).unwrap());
    v[v.len() / 2]
}

/// Median over `rounds` of the per-call time (ns) of `calls` calls of each closure, the two
/// interleaved round by round.
fn compare(rounds: usize, calls: usize, mut a: impl FnMut(), mut b: impl FnMut()) -> (f64, f64) {
    for _ in 0..calls {
        a();
        b();
    }
    let (mut ta, mut tb) = (Vec::new(), Vec::new());
    for _ in 0..rounds {
        let s = Instant::now();
        for _ in 0..calls {
            a();
        }
        ta.push(s.elapsed().as_nanos() as f64 / calls as f64);
        let s = Instant::now();
        for _ in 0..calls {
            b();
        }
        tb.push(s.elapsed().as_nanos() as f64 / calls as f64);
    }
    (median(&mut ta), median(&mut tb))
}

fn main() {
    let names = ["methane", "ethane", "n-butane"];
    let comps = DataBank::embedded().get_many(&names).unwrap();
    let rust_model: Model = CubicEos::new(CubicKind::PengRobinson, comps).unwrap().into();
    let (t, p, z) = (250.0, 3.0e6, [0.6, 0.25, 0.15]);
    let opts = FlashOptions::default();

    let cnames: Vec<std::ffi::CString> = names.iter().map(|n| std::ffi::CString::new(*n).unwrap()).collect();
    let cptrs: Vec<*const std::ffi::c_char> = cnames.iter().map(|c| c.as_ptr()).collect();
    let (mut m, mut ctx, mut res) = (ptr::null(), ptr::null_mut(), ptr::null_mut());
    // SAFETY: valid arguments; handles freed at the end.
    unsafe {
        assert_eq!(
            tl_model_new(cptrs.as_ptr(), 3, TL_CUBIC_PENG_ROBINSON, &mut m),
            tl_status::Ok
        );
        assert_eq!(tl_context_new(m, &mut ctx), tl_status::Ok);
        assert_eq!(tl_result_new(&mut res), tl_status::Ok);
    }

    println!("tieline-ffi overhead (PR, methane/ethane/n-butane 0.6/0.25/0.15 at {t} K, {p} Pa; two phases)");
    println!("{:<44} {:>12} {:>12} {:>8}", "call", "Rust ns", "C ABI ns", "C/Rust");
    for (label, certificate) in [
        ("warm context flash, with certificate", true),
        ("warm context flash, no certificate", false),
    ] {
        let o = FlashOptions { certificate, ..opts };
        let co = tl_flash_options {
            certificate,
            ..{
                let mut d = std::mem::MaybeUninit::uninit();
                // SAFETY: valid out-pointer.
                unsafe { tl_flash_options_default(d.as_mut_ptr()) };
                // SAFETY: initialised by the call above.
                unsafe { d.assume_init() }
            }
        };
        let mut rctx = FlashContext::new(3);
        let (r, c) = compare(
            31,
            2000,
            || {
                black_box(rctx.flash(&rust_model, black_box(t), p, &z, &o).unwrap());
            },
            || {
                // SAFETY: live handles, valid arrays.
                let s = unsafe { tl_context_flash(ctx, black_box(t), p, z.as_ptr(), 3, &co, res) };
                assert_eq!(s, tl_status::Ok);
            },
        );
        println!("{label:<44} {r:>12.0} {c:>12.0} {:>8.3}", c / r);
    }
    if std::env::var_os("TL_BENCH_QUICK").is_some() {
        return; // the per-call comparison only
    }
    let (r, c) = compare(
        15,
        200,
        || {
            black_box(flash_pt(&rust_model, black_box(t), p, &z, &opts).unwrap());
        },
        || {
            // SAFETY: live handles, valid arrays.
            let s = unsafe { tl_flash(m, black_box(t), p, z.as_ptr(), 3, ptr::null(), res) };
            assert_eq!(s, tl_status::Ok);
        },
    );
    println!("{:<44} {r:>12.0} {c:>12.0} {:>8.3}", "one-shot cold flash", c / r);

    // Batch throughput: a 2048-point T sweep through the two-phase region.
    let npts = 2048;
    let temps: Vec<f64> = (0..npts).map(|k| 200.0 + 100.0 * k as f64 / npts as f64).collect();
    let press = vec![p; npts];
    let mut status = vec![tl_status::Ok; npts];
    let mut nph = vec![0usize; npts];
    let mut frac = vec![0.0; npts * 2];
    let mut comp = vec![0.0; npts * 2 * 3];
    println!();
    println!(
        "batch of {npts} points           {:>12} {:>12} {:>8}",
        "Rust pts/s", "C ABI pts/s", "C/Rust"
    );
    let mut one = 0.0;
    for threads in [1usize, 2] {
        let out = tl_batch_output {
            points: npts,
            max_phases: 2,
            status: status.as_mut_ptr(),
            num_phases: nph.as_mut_ptr(),
            phase_kind: ptr::null_mut(),
            phase_fraction: frac.as_mut_ptr(),
            phase_molar_volume: ptr::null_mut(),
            phase_composition: comp.as_mut_ptr(),
        };
        let (r, c) = compare(
            7,
            1,
            || {
                black_box(flash_batch(&rust_model, &temps, &press, &z, &opts, threads).unwrap());
            },
            || {
                // SAFETY: output arrays sized for npts points and 2 phases of 3 components.
                let s = unsafe {
                    tl_flash_batch(
                        m,
                        temps.as_ptr(),
                        press.as_ptr(),
                        npts,
                        z.as_ptr(),
                        3,
                        ptr::null(),
                        threads,
                        &out,
                    )
                };
                assert_eq!(s, tl_status::Ok);
            },
        );
        let (rr, cr) = (npts as f64 / (r * 1e-9), npts as f64 / (c * 1e-9));
        if threads == 1 {
            one = cr;
        }
        println!(
            "  {threads} thread(s)                     {rr:>12.0} {cr:>12.0} {:>8.3}   (C speed-up over 1 thread {:.2}x)",
            r / c,
            cr / one
        );
    }
    assert!(status.iter().all(|s| *s == tl_status::Ok));
    // SAFETY: handles created above, freed once.
    unsafe {
        tl_result_free(res);
        tl_context_free(ctx);
        tl_model_free(m);
    }
}
