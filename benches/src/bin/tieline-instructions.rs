//! Runs one benchmark operation of the 10-component Peng–Robinson mixture a given number of
//! times, for instruction counting under `valgrind --tool=callgrind` (counts, unlike times,
//! do not depend on the load of a shared machine). `benches/instructions.sh` runs every
//! operation at two repetition counts and reports the difference per call and its ratio to
//! one ln φ evaluation.
//!
//! Usage: `tieline-instructions OPERATION REPETITIONS`, OPERATION one of `ln-phi`,
//! `ln-phi-derivs`, `cold`, `warm`, `single-phase`, `certificate`, `cold-certified`,
//! `sensitivities` (derivatives of the converged two-phase result, reused work), `warm-ph`
//! (a warm PH flash alternating between the enthalpies of T ± 0.5 K at the two-phase point),
//! `cold-ph` (the same from a reset context).

use std::hint::black_box;
use tieline::equilibrium::{
    FlashContext, FlashOptions, FlashSensitivities, SensitivityWork, StabilityOptions, StateFlashContext,
    StateFlashOptions, StateSpec, flash_pt, stability,
};
use tieline::model::{FugacityWork, LnPhi, Need, RootChoice, ln_phi};
use tieline_benches::{FEED, ONE_PHASE, TWO_PHASE, equilibrium_liquid, model, no_certificate};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let usage = || -> ! {
        eprintln!(
            "usage: {} OPERATION REPETITIONS (ln-phi, ln-phi-derivs, cold, warm, single-phase, certificate, cold-certified, sensitivities, warm-ph, cold-ph)",
            args[0]
        );
        std::process::exit(2)
    };
    if args.len() != 3 {
        usage();
    }
    let reps: usize = args[2].parse().unwrap_or_else(|_| usage());
    let m = model();
    let (t2, p2) = TWO_PHASE;
    let (t1, p1) = ONE_PHASE;
    let nocert = no_certificate();
    let mut w = FugacityWork::new(10);
    let mut out = LnPhi::new(10);
    let mut ctx = FlashContext::new(10);
    let liquid = equilibrium_liquid(&m);
    let run = |f: &mut dyn FnMut()| {
        for _ in 0..reps {
            f();
        }
    };
    match args[1].as_str() {
        "ln-phi" | "ln-phi-derivs" => {
            let need = if args[1] == "ln-phi" {
                Need::VALUES
            } else {
                Need::COMPOSITION
            };
            run(&mut || {
                ln_phi(&m, t2, p2, black_box(&FEED), RootChoice::Stable, need, &mut w, &mut out).expect("ln phi");
            })
        }
        "cold" => run(&mut || {
            ctx.reset();
            black_box(ctx.flash(&m, t2, p2, &FEED, &nocert).expect("flash").phases.len());
        }),
        "warm" => {
            let mut k = 0usize;
            run(&mut || {
                k += 1;
                let t = t2 + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
                black_box(ctx.flash(&m, t, p2, &FEED, &nocert).expect("flash").phases.len());
            })
        }
        "single-phase" => run(&mut || {
            ctx.reset();
            black_box(ctx.flash(&m, t1, p1, &FEED, &nocert).expect("flash").phases.len());
        }),
        "certificate" => run(&mut || {
            black_box(
                stability(&m, t2, p2, &liquid, &StabilityOptions::default())
                    .expect("stability")
                    .stable,
            );
        }),
        "cold-certified" => {
            let opts = FlashOptions::default();
            run(&mut || {
                ctx.reset();
                black_box(ctx.flash(&m, t2, p2, &FEED, &opts).expect("flash").phases.len());
            })
        }
        "sensitivities" => {
            let r = ctx.flash(&m, t2, p2, &FEED, &nocert).expect("flash").clone();
            let mut work = SensitivityWork::new(10);
            let mut s = FlashSensitivities::default();
            run(&mut || {
                work.compute(&m, black_box(&r), &mut s).expect("sensitivities");
                black_box(s.temperature.enthalpy);
            })
        }
        "warm-ph" | "cold-ph" => {
            let sopts = StateFlashOptions {
                flash: nocert,
                ..Default::default()
            };
            let specs = [t2 - 0.5, t2 + 0.5].map(|t| StateSpec::PressureEnthalpy {
                pressure: p2,
                enthalpy: flash_pt(&m, t, p2, &FEED, &nocert)
                    .and_then(|r| r.mixture_properties(&m))
                    .expect("flash")
                    .enthalpy,
            });
            let cold = args[1] == "cold-ph";
            let mut sf = StateFlashContext::new(10);
            let mut k = 0usize;
            run(&mut || {
                k += 1;
                if cold {
                    sf.reset();
                }
                black_box(sf.flash(&m, &specs[k % 2], &FEED, &sopts).expect("PH flash").pt_flashes);
            })
        }
        _ => usage(),
    }
}
