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
//! `cold-ph` (the same from a reset context), and the plain textbook flash of
//! [`tieline_benches::reference_flash`] as `ref-cold`, `ref-warm`, `ref-single-phase` (the
//! counterparts of `cold`, `warm`, `single-phase`; before counting, each checks that the
//! reference and tieline's flash give the same phase fractions to 1e-8).
//!
//! `tieline-instructions calls` prints, instead, how many ln φ evaluations (values only, with
//! composition derivatives) each flash operation asks of the model.

use std::hint::black_box;
use tieline::equilibrium::{
    FlashContext, FlashOptions, FlashSensitivities, SensitivityWork, StabilityOptions, StateFlashContext,
    StateFlashOptions, StateSpec, flash_pt, stability,
};
use tieline::model::{FugacityWork, LnPhi, Need, RootChoice, ln_phi};
use tieline_benches::counting::Counting;
use tieline_benches::reference_flash::ReferenceFlash;
use tieline_benches::{FEED, ONE_PHASE, TWO_PHASE, equilibrium_liquid, model, no_certificate};

/// Checks that the reference flash and tieline's flash agree at (T (K), p (Pa)) on the number
/// of phases and the fraction of the lighter phase (to 1e-8).
fn check_reference(m: &tieline::model::CubicEos, t: f64, p: f64) {
    let r = flash_pt(m, t, p, &FEED, &no_certificate()).expect("flash");
    let q = ReferenceFlash::new(10).flash(m, t, p, &FEED).expect("reference flash");
    assert_eq!(q.phases, r.phases.len(), "number of phases at {t} K, {p} Pa");
    let d = (q.light_fraction - r.phases[0].fraction).abs();
    assert!(d < 1e-8, "phase fractions differ by {d} at {t} K, {p} Pa");
}

/// Prints the ln φ evaluations of one call of each flash operation.
fn print_calls(m0: &tieline::model::CubicEos) {
    let m = Counting::new(m0);
    let (t2, p2) = TWO_PHASE;
    let (t1, p1) = ONE_PHASE;
    let nocert = no_certificate();
    let mut ctx = FlashContext::new(10);
    let mut rf = ReferenceFlash::new(10);
    let liquid = equilibrium_liquid(m0);
    let row = |op: &str, (v, d): (usize, usize)| println!("{op:<16} {v:>6} {d:>6}");
    println!("{:<16} {:>6} {:>6}", "operation", "values", "derivs");
    ctx.flash(&m, t2, p2, &FEED, &nocert).expect("flash");
    m.take();
    ctx.flash(&m, t2 + 0.5, p2, &FEED, &nocert).expect("flash");
    ctx.flash(&m, t2 - 0.5, p2, &FEED, &nocert).expect("flash");
    let (v, d) = m.take();
    row("warm", (v / 2, d / 2));
    ctx.reset();
    ctx.flash(&m, t2, p2, &FEED, &nocert).expect("flash");
    row("cold", m.take());
    ctx.reset();
    ctx.flash(&m, t1, p1, &FEED, &nocert).expect("flash");
    row("single-phase", m.take());
    stability(&m, t2, p2, &liquid, &StabilityOptions::default()).expect("stability");
    row("certificate", m.take());
    ctx.reset();
    ctx.flash(&m, t2, p2, &FEED, &FlashOptions::default()).expect("flash");
    row("cold-certified", m.take());
    rf.flash(&m, t2, p2, &FEED).expect("reference");
    m.take();
    rf.flash(&m, t2 + 0.5, p2, &FEED).expect("reference");
    rf.flash(&m, t2 - 0.5, p2, &FEED).expect("reference");
    let (v, d) = m.take();
    row("ref-warm", (v / 2, d / 2));
    rf.reset();
    rf.flash(&m, t2, p2, &FEED).expect("reference");
    row("ref-cold", m.take());
    rf.reset();
    rf.flash(&m, t1, p1, &FEED).expect("reference");
    row("ref-single-phase", m.take());
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let usage = || -> ! {
        eprintln!(
            "usage: {} OPERATION REPETITIONS (ln-phi, ln-phi-derivs, cold, warm, single-phase, certificate, cold-certified, sensitivities, warm-ph, cold-ph, ref-cold, ref-warm, ref-single-phase) | {} calls",
            args[0], args[0]
        );
        std::process::exit(2)
    };
    if args.len() == 2 && args[1] == "calls" {
        print_calls(&model());
        return;
    }
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
        "ref-cold" | "ref-single-phase" => {
            let (t, p) = if args[1] == "ref-cold" { (t2, p2) } else { (t1, p1) };
            check_reference(&m, t, p);
            let mut rf = ReferenceFlash::new(10);
            run(&mut || {
                rf.reset();
                black_box(rf.flash(&m, t, p, &FEED).expect("reference flash").phases);
            })
        }
        "ref-warm" => {
            for t in [t2, t2 - 0.5, t2 + 0.5] {
                check_reference(&m, t, p2);
            }
            let mut rf = ReferenceFlash::new(10);
            rf.flash(&m, t2, p2, &FEED).expect("reference flash");
            let mut k = 0usize;
            run(&mut || {
                k += 1;
                let t = t2 + if k.is_multiple_of(2) { 0.5 } else { -0.5 };
                black_box(rf.flash(&m, t, p2, &FEED).expect("reference flash").phases);
            })
        }
        _ => usage(),
    }
}
