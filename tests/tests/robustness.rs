//! Robustness sweeps: T–p grids of 100 × 100 points through the critical regions of the
//! METHODS §12 mixtures B2 (N2/C1/C2, PR; Hua, Brennecke & Stadtherr 1998, conditions from
//! memory) and B3 (a Y8-like gas condensate, PR with k_ij = 0; Yarborough 1972 composition,
//! from memory). Every point must converge (or give a typed error that is not a failure of
//! the solver), and the phase count is checked by an independent stability test with a
//! richer trial set than the flash uses. Target: 100 % converged, 0 wrong.

use tieline::equilibrium::{FlashContext, FlashOptions, StabilityOptions, TrialSet, stability};
use tieline::model::{CubicEos, CubicKind};
use tieline::{ErrorKind, Result};
use tieline_validation::pinned;

fn b2() -> CubicEos {
    CubicEos::new(
        CubicKind::PengRobinson,
        vec![
            pinned("nitrogen", 126.2, 33.94, 0.040),
            pinned("methane", 190.6, 46.0, 0.008),
            pinned("ethane", 305.4, 48.84, 0.098),
        ],
    )
    .and_then(|m| m.with_pair(0, 1, 0.038, 0.0))
    .and_then(|m| m.with_pair(0, 2, 0.08, 0.0))
    .and_then(|m| m.with_pair(1, 2, 0.021, 0.0))
    .unwrap()
}

fn y8() -> CubicEos {
    // METHODS §12 Table A constants (Reid–Prausnitz–Poling values, from memory).
    CubicEos::new(
        CubicKind::PengRobinson,
        vec![
            pinned("methane", 190.6, 46.0, 0.008),
            pinned("ethane", 305.4, 48.84, 0.098),
            pinned("propane", 369.8, 42.46, 0.152),
            pinned("n-pentane", 469.6, 33.74, 0.251),
            pinned("n-heptane", 540.2, 27.36, 0.351),
            pinned("n-decane", 617.6, 21.08, 0.490),
        ],
    )
    .unwrap()
}

#[derive(Debug, Default)]
struct Tally {
    converged: usize,
    typed_error: usize,
    wrong: usize,
    single: usize,
    two: usize,
}

fn sweep(model: &CubicEos, z: &[f64], t: (f64, f64), p: (f64, f64), n: usize) -> Tally {
    let opts = FlashOptions::default();
    let check = StabilityOptions {
        trials: TrialSet {
            wilson: true,
            cube_root: true,
            pure: true,
            pure_limit: 10,
        },
        ..Default::default()
    };
    let mut tally = Tally::default();
    let mut ctx = FlashContext::new(z.len());
    for i in 0..n {
        let tt = t.0 + (t.1 - t.0) * i as f64 / (n - 1) as f64;
        // Serpentine order along p so each point warm-starts from a neighbour.
        for jj in 0..n {
            let j = if i % 2 == 0 { jj } else { n - 1 - jj };
            let pp = p.0 + (p.1 - p.0) * j as f64 / (n - 1) as f64;
            let r: Result<_> = ctx.flash(model, tt, pp, z, &opts).cloned();
            match r {
                Ok(r) => {
                    tally.converged += 1;
                    // Independent check of the phase count: every phase of a correct result
                    // is stable against a richer set of trial phases.
                    let mut ok = true;
                    for ph in &r.phases {
                        let s = stability(model, tt, pp, &ph.composition, &check).unwrap();
                        if s.min_tpd < -1e-8 {
                            ok = false;
                        }
                    }
                    assert!(r.phases.iter().all(|ph| ph.fraction > 0.0 && ph.fraction <= 1.0));
                    if r.phases.len() == 1 {
                        tally.single += 1;
                    } else {
                        tally.two += 1;
                    }
                    if !ok {
                        tally.wrong += 1;
                        eprintln!(
                            "wrong phase count at T = {tt} K, p = {pp} Pa: {} phase(s)",
                            r.phases.len()
                        );
                    }
                }
                Err(e) => {
                    assert!(
                        matches!(e.kind(), ErrorKind::NotConverged | ErrorKind::NoSolution),
                        "{e}"
                    );
                    eprintln!("typed error at T = {tt} K, p = {pp} Pa: {e}");
                    tally.typed_error += 1;
                }
            }
        }
    }
    tally
}

#[test]
fn b2_grid_through_the_critical_region() {
    let m = b2();
    for z in [[0.30, 0.10, 0.60], [0.15, 0.30, 0.55]] {
        let t = sweep(&m, &z, (200.0, 320.0), (10e5, 120e5), 100);
        println!("B2 z = {z:?}: {t:?}");
        assert_eq!(t.converged, 100 * 100, "{t:?}");
        assert_eq!(t.wrong, 0, "{t:?}");
        assert!(
            t.single > 0 && t.two > 0,
            "the grid must cross the phase boundary: {t:?}"
        );
    }
}

#[test]
fn y8_grid_through_the_critical_region() {
    let m = y8();
    let z = [0.8097, 0.0566, 0.0306, 0.0457, 0.0330, 0.0244];
    let t = sweep(&m, &z, (250.0, 450.0), (20e5, 300e5), 100);
    println!("Y8: {t:?}");
    assert_eq!(t.converged, 100 * 100, "{t:?}");
    assert_eq!(t.wrong, 0, "{t:?}");
    assert!(
        t.single > 0 && t.two > 0,
        "the grid must cross the phase envelope: {t:?}"
    );
}
