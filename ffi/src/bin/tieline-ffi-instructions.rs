//! Runs one cheap call a given number of times, either through the Rust API of the core crate
//! or through the C ABI of this crate, for instruction counting under
//! `valgrind --tool=callgrind`. `ffi/benches/instructions.sh` runs each call at two repetition
//! counts and both ways, and reports the instructions per call and the ratio C ABI / Rust
//! (counts, unlike times, do not depend on the load of a shared machine).
//!
//! Usage: `tieline-ffi-instructions WAY CALL REPETITIONS`, WAY `rust` or `c`, CALL one of
//! - `flash2-cert`, `flash2`: warm PT flash at a two-phase point (alternating T ± 0.5 K), with
//!   and without the stability certificate; the C call fills a `tl_result`;
//! - `flash2-same`: the warm flash without certificate repeated at one point (the cheapest
//!   flash: the warm start is the answer; the point of `benches/ffi_overhead.rs`);
//! - `flash1-cert`, `flash1`: the same at a one-phase (vapour) point;
//! - `props`: properties of one phase at (T, p, n) with ln φ (`tl_phase_properties`);
//! - `sat`: vapour pressure of a pure component (`tl_saturation_pressure`).
//!
//! The mixture is Peng–Robinson methane/ethane/n-butane 0.6/0.25/0.15 mol (that of
//! `benches/ffi_overhead.rs`): two phases at 250 K and 3 MPa, vapour at 350 K and 3 MPa;
//! the saturation pressure is that of n-butane at 350 K.

#![allow(missing_docs)]

use std::ffi::CString;
use std::hint::black_box;
use std::ptr;
use tieline::equilibrium::{FlashContext, FlashOptions, SaturationOptions, saturation_pressure};
use tieline::model::{CubicEos, CubicKind, Model, PhaseState, RootChoice};
use tieline::substance::DataBank;
use tieline_ffi::*;

const NAMES: [&str; 3] = ["methane", "ethane", "n-butane"];
const FEED: [f64; 3] = [0.6, 0.25, 0.15];
const TWO_PHASE: (f64, f64) = (250.0, 3.0e6);
const ONE_PHASE: (f64, f64) = (350.0, 3.0e6);
const SAT_T: f64 = 350.0;
const SAT_COMPONENT: usize = 2;

fn usage(prog: &str) -> ! {
    eprintln!("usage: {prog} rust|c flash2-cert|flash2|flash2-same|flash1-cert|flash1|props|sat REPETITIONS");
    std::process::exit(2)
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args.len() != 4 {
        usage(&args[0]);
    }
    let reps: usize = args[3].parse().unwrap_or_else(|_| usage(&args[0]));
    let call = args[2].as_str();
    let certificate = call.ends_with("-cert");
    let (t0, p) = match call {
        "flash2-cert" | "flash2" | "flash2-same" | "props" => TWO_PHASE,
        "flash1-cert" | "flash1" => ONE_PHASE,
        "sat" => (SAT_T, 0.0),
        _ => usage(&args[0]),
    };
    // Alternate the temperature so a warm start has something to do.
    let same = call == "flash2-same";
    let temp = |k: usize| {
        if same {
            t0
        } else {
            t0 + if k.is_multiple_of(2) { 0.5 } else { -0.5 }
        }
    };
    match args[1].as_str() {
        "rust" => {
            let comps = DataBank::embedded().get_many(&NAMES).expect("components");
            let m: Model = CubicEos::new(CubicKind::PengRobinson, comps).expect("model").into();
            let opts = FlashOptions {
                certificate,
                ..Default::default()
            };
            let mut ctx = FlashContext::new(3);
            let sopts = SaturationOptions::default();
            for k in 0..reps {
                match call {
                    "props" => {
                        let s = PhaseState::new(&m, black_box(t0), p, &FEED, RootChoice::Stable).expect("state");
                        black_box(s.properties(&m).expect("properties").ln_phi[0]);
                    }
                    "sat" => {
                        black_box(saturation_pressure(&m, black_box(SAT_T), SAT_COMPONENT, &sopts).expect("sat"));
                    }
                    _ => {
                        black_box(ctx.flash(&m, temp(k), p, &FEED, &opts).expect("flash").phases.len());
                    }
                }
            }
        }
        "c" => {
            let cnames: Vec<CString> = NAMES.iter().map(|n| CString::new(*n).unwrap()).collect();
            let cptrs: Vec<*const std::ffi::c_char> = cnames.iter().map(|c| c.as_ptr()).collect();
            let (mut m, mut ctx, mut res) = (ptr::null(), ptr::null_mut(), ptr::null_mut());
            let mut opts = std::mem::MaybeUninit::uninit();
            // SAFETY: valid arguments and out-pointers; the handles live to the end.
            let mut opts = unsafe {
                assert_eq!(
                    tl_model_new(cptrs.as_ptr(), 3, TL_CUBIC_PENG_ROBINSON, &mut m),
                    tl_status::Ok
                );
                assert_eq!(tl_context_new(m, &mut ctx), tl_status::Ok);
                assert_eq!(tl_result_new(&mut res), tl_status::Ok);
                assert_eq!(tl_flash_options_default(opts.as_mut_ptr()), tl_status::Ok);
                opts.assume_init()
            };
            opts.certificate = certificate;
            let mut props = std::mem::MaybeUninit::<tl_properties>::uninit();
            let mut sat = std::mem::MaybeUninit::<tl_saturation_point>::uninit();
            let mut ln_phi = [0.0; 3];
            for k in 0..reps {
                // SAFETY: live handles, arrays of the stated lengths, writable outputs.
                let s = unsafe {
                    match call {
                        "props" => tl_phase_properties(
                            m,
                            black_box(t0),
                            p,
                            FEED.as_ptr(),
                            3,
                            TL_ROOT_STABLE,
                            props.as_mut_ptr(),
                            ln_phi.as_mut_ptr(),
                            3,
                        ),
                        "sat" => {
                            tl_saturation_pressure(m, SAT_COMPONENT, black_box(SAT_T), ptr::null(), sat.as_mut_ptr())
                        }
                        _ => tl_context_flash(ctx, temp(k), p, FEED.as_ptr(), 3, &opts, res),
                    }
                };
                assert_eq!(s, tl_status::Ok);
                black_box(&ln_phi);
            }
            // SAFETY: handles created above, freed once.
            unsafe {
                tl_result_free(res);
                tl_context_free(ctx);
                tl_model_free(m);
            }
        }
        _ => usage(&args[0]),
    }
}
