//! Runs one operation of the multiphase benchmark (`benches/benches/multiphase.rs`: the
//! methane–n-hexane–water Peng–Robinson model with k_ij = 0.5 between water and each
//! hydrocarbon, common practice, no source, at 300 K and 2 MPa) a given number of times, for
//! instruction counting under `valgrind --tool=callgrind`. `benches/multiphase-instructions.sh`
//! runs each operation at two repetition counts and reports the difference per call and its
//! ratios to one ln φ evaluation and to the two-phase flash.
//!
//! Usage: `multiphase-instructions OPERATION REPETITIONS`. Operations (cold: a reset context
//! each call; warm: T alternating 300 ± 0.5 K on one context; `-nocert`: without the
//! certificate):
//! - `ln-phi`: one ln φ evaluation (values) of the three-phase feed;
//! - `two-cold`, `two-cold-nocert`, `two-warm`, `two-warm-nocert`: `flash_pt` with
//!   `max_phases = 2` of the two-phase feed z = (0.5999, 0.4, 1e-4);
//! - `pt3-cold`, `pt3-warm`: `flash_pt` with `max_phases = 3` of the three-phase feed
//!   z = (0.3, 0.2, 0.5);
//! - `multi-cold`, `multi-cold-nocert`, `multi-warm`, `multi-warm-nocert`:
//!   `flash_multiphase` (a `MultiphaseContext`) of the three-phase feed; the `-nocert`
//!   variants allow two liquids, so that three phases reach the limit and no test of the
//!   answer runs;
//! - `multi-two-cold`: `flash_multiphase` of the two-phase feed;
//! - `diag` (any REPETITIONS): prints the diagnostics of one flash of each kind.

use std::hint::black_box;
use tieline::equilibrium::{FlashContext, FlashOptions, MultiphaseContext, MultiphaseOptions};
use tieline::model::{CubicEos, CubicKind, FugacityWork, LnPhi, Need, RootChoice, ln_phi};
use tieline::substance::DataBank;

const T: f64 = 300.0;
const P: f64 = 2.0e6;
const THREE: [f64; 3] = [0.3, 0.2, 0.5];
const TWO: [f64; 3] = [0.5999, 0.4, 1e-4];

fn model() -> CubicEos {
    let comps = DataBank::embedded()
        .get_many(&["methane", "n-hexane", "water"])
        .expect("components are in the bank");
    CubicEos::new(CubicKind::PengRobinson, comps)
        .and_then(|m| m.with_pair(0, 2, 0.5, 0.0))
        .and_then(|m| m.with_pair(1, 2, 0.5, 0.0))
        .expect("benchmark model is valid")
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let usage = || -> ! {
        eprintln!(
            "usage: {} OPERATION REPETITIONS (ln-phi, two-cold, two-cold-nocert, two-warm, two-warm-nocert, \
             pt3-cold, pt3-warm, multi-cold, multi-cold-nocert, multi-warm, multi-warm-nocert, multi-two-cold)",
            args[0]
        );
        std::process::exit(2)
    };
    if args.len() != 3 {
        usage();
    }
    let reps: usize = args[2].parse().unwrap_or_else(|_| usage());
    let op = args[1].as_str();
    let m = model();
    let nocert = op.ends_with("-nocert");
    let fopts = FlashOptions {
        max_phases: if op.starts_with("pt3") { 3 } else { 2 },
        certificate: !nocert,
        ..FlashOptions::default()
    };
    let mopts = MultiphaseOptions {
        certificate: !nocert,
        max_liquids: if nocert { 2 } else { 3 },
        ..MultiphaseOptions::default()
    };
    let warm = op.contains("-warm");
    let mut fctx = FlashContext::new(3);
    let mut mctx = MultiphaseContext::new(3);
    let mut k = 0usize;
    let mut temp = || {
        k += 1;
        if warm {
            T + if k.is_multiple_of(2) { 0.5 } else { -0.5 }
        } else {
            T
        }
    };
    let expect = |n: usize, want: usize| {
        if n != want {
            eprintln!("{op}: {n} phases, expected {want}");
            std::process::exit(1)
        }
    };
    match op {
        "ln-phi" => {
            let mut w = FugacityWork::new(3);
            let mut out = LnPhi::new(3);
            for _ in 0..reps {
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
                .expect("ln phi");
            }
        }
        "two-cold" | "two-cold-nocert" | "two-warm" | "two-warm-nocert" | "pt3-cold" | "pt3-warm" => {
            let (feed, want) = if op.starts_with("pt3") { (&THREE, 3) } else { (&TWO, 2) };
            for _ in 0..reps {
                if !warm {
                    fctx.reset();
                }
                let t = temp();
                expect(
                    fctx.flash(&m, t, black_box(P), feed, &fopts)
                        .expect("flash")
                        .phases
                        .len(),
                    want,
                );
            }
        }
        "multi-cold" | "multi-cold-nocert" | "multi-warm" | "multi-warm-nocert" | "multi-two-cold" => {
            let (feed, want) = if op == "multi-two-cold" { (&TWO, 2) } else { (&THREE, 3) };
            for _ in 0..reps {
                if !warm {
                    mctx.reset();
                }
                let t = temp();
                expect(
                    mctx.flash(&m, t, black_box(P), feed, &mopts)
                        .expect("flash")
                        .phases
                        .len(),
                    want,
                );
            }
        }
        "diag" => {
            let full = FlashOptions {
                max_phases: 3,
                ..FlashOptions::default()
            };
            let two = fctx
                .flash(&m, T, P, &TWO, &FlashOptions::default())
                .expect("flash")
                .clone();
            println!("two-phase flash_pt: {:?}", two.diagnostics);
            let r = fctx.flash(&m, T, P, &THREE, &full).expect("flash").clone();
            println!("flash_pt max_phases = 3: {:?}", r.diagnostics);
            let r = mctx
                .flash(&m, T, P, &THREE, &MultiphaseOptions::default())
                .expect("flash")
                .clone();
            println!("flash_multiphase cold: {:?}", r.diagnostics);
            for ph in &r.phases {
                println!("  {:?} {:.12} {:?}", ph.kind, ph.fraction, ph.composition);
            }
            for t in [T + 0.5, T - 0.5, T + 0.5, T - 0.5] {
                let r = mctx
                    .flash(&m, t, P, &THREE, &MultiphaseOptions::default())
                    .expect("flash")
                    .clone();
                println!("flash_multiphase warm: {:?}", r.diagnostics);
            }
            let r = mctx
                .flash(&m, T, P, &TWO, &MultiphaseOptions::default())
                .expect("flash")
                .clone();
            println!("flash_multiphase two-phase feed: {:?}", r.diagnostics);
        }
        _ => usage(),
    }
}
