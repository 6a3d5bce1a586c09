//! The multiphase PT flash (`flash_multiphase`): the water–hydrocarbon three-phase cases of
//! tests/vectors/multiphase.json solved with Newton-polished splits and compared with the PT
//! flash's three-phase answer; independent checks of each answer (equal fugacities recomputed
//! from the phase compositions, mass balance, G below every two-phase split of its phases,
//! the phase rule, a stability test of every phase); liquid–liquid equilibrium of a cubic
//! (`allow_vapor = false`) against Michelsen's CH4/H2S example; a four-phase state; warm
//! starts; and random feeds (typed errors only).
//!
//! Peng–Robinson with k_ij = 0.5 between water and each hydrocarbon (a typical size for
//! water–alkane pairs in cubic equations; common practice, no source), as the shared
//! three-phase vectors use.

use proptest::prelude::*;
use serde::Deserialize;
use tieline::equilibrium::{
    FlashOptions, FlashResult, MultiphaseContext, MultiphaseOptions, StabilityOptions, flash_multiphase, flash_pt,
    rachford_rice, stability,
};
use tieline::model::{CubicEos, CubicKind, FugacityWork, LnPhi, Need, PhaseKind, RootChoice, ln_phi};
use tieline::substance::DataBank;
use tieline::{Error, ErrorKind};
use tieline_validation::{load_vectors, pinned};

#[derive(Debug, Deserialize)]
struct Vectors {
    cases: Vec<Case>,
}

#[derive(Debug, Deserialize)]
struct Case {
    id: String,
    source: String,
    components: Vec<String>,
    /// (i, j, k_ij) pairs.
    kij: Vec<(usize, usize, f64)>,
    temperature: f64,
    pressure: f64,
    feed: Vec<f64>,
    /// Expected phase kinds, vapour first.
    kinds: Vec<PhaseKind>,
    /// Whether flash_pt with max_phases = 3 gives the same answer (three phases or fewer).
    compare_flash_pt: bool,
}

fn build(components: &[String], kij: &[(usize, usize, f64)]) -> CubicEos {
    let names: Vec<&str> = components.iter().map(String::as_str).collect();
    let mut m = CubicEos::new(CubicKind::PengRobinson, DataBank::embedded().get_many(&names).unwrap()).unwrap();
    for &(i, j, k) in kij {
        m = m.with_pair(i, j, k, 0.0).unwrap();
    }
    m
}

fn water_hc(names: &[&str]) -> CubicEos {
    let w = names.iter().position(|n| *n == "water").unwrap();
    let kij: Vec<_> = (0..names.len()).filter(|&j| j != w).map(|j| (w, j, 0.5)).collect();
    let comps: Vec<String> = names.iter().map(|s| s.to_string()).collect();
    build(&comps, &kij)
}

/// ln f_i (up to the common ln p) of every phase, recomputed from its composition on the
/// branch it was reported on (the liquid branch for liquids when `liquid_only`).
fn ln_fugacities(m: &CubicEos, r: &FlashResult, liquid_only: bool) -> Vec<Vec<f64>> {
    let nc = r.feed.len();
    let mut fw = FugacityWork::new(nc);
    let mut out = LnPhi::new(nc);
    r.phases
        .iter()
        .map(|ph| {
            let root = if liquid_only {
                RootChoice::Liquid
            } else {
                RootChoice::Stable
            };
            ln_phi(
                m,
                r.temperature,
                r.pressure,
                &ph.composition,
                root,
                Need::VALUES,
                &mut fw,
                &mut out,
            )
            .unwrap();
            (0..nc)
                .map(|c| {
                    if r.feed[c] > 0.0 {
                        ph.composition[c].ln() + out.ln_phi[c]
                    } else {
                        0.0
                    }
                })
                .collect()
        })
        .collect()
}

/// max_{i,k} |ln f_ik − ln f_i0|.
fn fugacity_residual(lnf: &[Vec<f64>]) -> f64 {
    lnf.iter()
        .skip(1)
        .flat_map(|row| row.iter().zip(&lnf[0]).map(|(a, b)| (a - b).abs()))
        .fold(0.0, f64::max)
}

/// max_i |Σ_k β_k x_ik − z_i| (z as mole fractions).
fn mass_balance(r: &FlashResult) -> f64 {
    let ntot: f64 = r.feed.iter().sum();
    (0..r.feed.len())
        .map(|i| (r.phases.iter().map(|p| p.fraction * p.composition[i]).sum::<f64>() - r.feed[i] / ntot).abs())
        .fold(0.0, f64::max)
}

/// Reduced Gibbs energy per mol of feed, Σ_k β_k Σ_i x_ik (ln x_ik + ln φ_ik), recomputed.
fn gibbs(m: &CubicEos, t: f64, p: f64, phases: &[(f64, Vec<f64>)]) -> f64 {
    let nc = phases[0].1.len();
    let mut fw = FugacityWork::new(nc);
    let mut out = LnPhi::new(nc);
    phases
        .iter()
        .map(|(b, x)| {
            ln_phi(m, t, p, x, RootChoice::Stable, Need::VALUES, &mut fw, &mut out).unwrap();
            b * (0..nc)
                .filter(|&i| x[i] > 0.0)
                .map(|i| x[i] * (x[i].ln() + out.ln_phi[i]))
                .sum::<f64>()
        })
        .sum()
}

/// A two-phase split of feed z started from the compositions a and b, by plain successive
/// substitution on ln K with the two-phase Rachford–Rice equation (Michelsen 1982b), written
/// here independently of the solver under test. Returns (β, y, x) or None if it collapses.
fn two_phase_split(m: &CubicEos, t: f64, p: f64, z: &[f64], a: &[f64], b: &[f64]) -> Option<(f64, Vec<f64>, Vec<f64>)> {
    let nc = z.len();
    let mut fw = FugacityWork::new(nc);
    let (mut pa, mut pb) = (LnPhi::new(nc), LnPhi::new(nc));
    let mut k: Vec<f64> = (0..nc).map(|i| a[i] / b[i]).collect();
    let (mut x, mut y) = (vec![0.0; nc], vec![0.0; nc]);
    for _ in 0..5000 {
        let rr = rachford_rice::solve(z, &k, false).ok()?;
        if !(rr.beta > 0.0 && rr.beta < 1.0) {
            return None;
        }
        rachford_rice::compositions(z, &k, &rr, &mut x, &mut y);
        let (sx, sy): (f64, f64) = (x.iter().sum(), y.iter().sum());
        x.iter_mut().for_each(|v| *v /= sx);
        y.iter_mut().for_each(|v| *v /= sy);
        ln_phi(m, t, p, &y, RootChoice::Stable, Need::VALUES, &mut fw, &mut pa).ok()?;
        ln_phi(m, t, p, &x, RootChoice::Stable, Need::VALUES, &mut fw, &mut pb).ok()?;
        let mut err = 0.0f64;
        for i in 0..nc {
            let kn = (pb.ln_phi[i] - pa.ln_phi[i]).exp();
            err = err.max((kn.ln() - k[i].ln()).abs());
            k[i] = kn;
        }
        if err < 1e-11 {
            if x.iter().zip(&y).all(|(u, v)| (u - v).abs() < 1e-6) {
                return None;
            }
            return Some((rr.beta, y, x));
        }
    }
    None
}

/// Every phase of `r` is stable against a full set of trial phases (no early exit): its
/// least tangent-plane distance, over stationary points other than the phases themselves, is
/// ≥ −1e-9.
fn assert_every_phase_stable(m: &CubicEos, r: &FlashResult, what: &str) {
    let opts = StabilityOptions::default();
    for (k, ph) in r.phases.iter().enumerate() {
        let s = stability(m, r.temperature, r.pressure, &ph.composition, &opts).unwrap();
        for pt in &s.points {
            let own = r.phases.iter().any(|q| {
                q.composition
                    .iter()
                    .zip(&pt.composition)
                    .all(|(a, b)| (a - b).abs() < 1e-5)
            });
            assert!(own || pt.tpd >= -1e-9, "{what}: phase {k}: stationary point {pt:?}");
        }
    }
}

/// The common checks of a converged multiphase answer.
fn check_answer(m: &CubicEos, r: &FlashResult, liquid_only: bool, what: &str) {
    let lnf = ln_fugacities(m, r, liquid_only);
    let res = fugacity_residual(&lnf);
    assert!(res <= 1e-10, "{what}: fugacity residual {res:e}");
    assert!(r.diagnostics.residual <= 1e-10, "{what}: {:?}", r.diagnostics);
    let mb = mass_balance(r);
    assert!(mb <= 1e-12, "{what}: mass balance {mb:e}");
    // Phase rule at fixed T and p: at most as many phases as components present.
    let present = r.feed.iter().filter(|v| **v > 0.0).count();
    assert!(r.phases.len() <= present, "{what}: {} phases", r.phases.len());
    for ph in &r.phases {
        assert!(ph.fraction > 0.0 && ph.fraction <= 1.0, "{what}: {ph:?}");
        let s: f64 = ph.composition.iter().sum();
        assert!((s - 1.0).abs() < 1e-12, "{what}: Σx = {s}");
    }
    // Ordered vapour first, then liquids by increasing density.
    for w in r.phases.windows(2) {
        assert!(w[0].molar_volume >= w[1].molar_volume, "{what}: order");
    }
    if let Some(c) = r.diagnostics.certificate {
        assert!(c >= -1e-10, "{what}: certificate {c}");
    }
}

#[test]
fn vectors_water_hydrocarbon_three_phase() {
    let v: Vectors = load_vectors("multiphase.json");
    assert!(v.cases.len() >= 5);
    for c in &v.cases {
        assert!(!c.source.is_empty(), "{}", c.id);
        let m = build(&c.components, &c.kij);
        let (t, p) = (c.temperature, c.pressure);
        let r = flash_multiphase(&m, t, p, &c.feed, &MultiphaseOptions::default())
            .unwrap_or_else(|e| panic!("{}: {e}", c.id));
        let kinds: Vec<_> = r.phases.iter().map(|p| p.kind.unwrap()).collect();
        assert_eq!(kinds, c.kinds, "{}", c.id);
        check_answer(&m, &r, false, &c.id);
        assert!(r.diagnostics.certificate.is_some(), "{}", c.id);
        assert_every_phase_stable(&m, &r, &c.id);
        if c.compare_flash_pt {
            let opts = FlashOptions {
                max_phases: 3,
                ..FlashOptions::default()
            };
            let f = flash_pt(&m, t, p, &c.feed, &opts).unwrap_or_else(|e| panic!("{}: {e}", c.id));
            assert_eq!(f.phases.len(), r.phases.len(), "{}", c.id);
            for (a, b) in r.phases.iter().zip(&f.phases) {
                assert_eq!(a.kind, b.kind, "{}", c.id);
                assert!((a.fraction - b.fraction).abs() < 1e-9, "{}: {a:?} / {b:?}", c.id);
                for (x, y) in a.composition.iter().zip(&b.composition) {
                    assert!((x - y).abs() < 1e-9 * x.abs().max(1e-3), "{}: {x} / {y}", c.id);
                }
            }
            assert!((r.diagnostics.gibbs - f.diagnostics.gibbs).abs() < 1e-12, "{}", c.id);
        }
        // G of the answer lies at or below every two-phase split of two of its phases
        // (each solved independently, from the pair's compositions).
        let g = gibbs(
            &m,
            t,
            p,
            &r.phases
                .iter()
                .map(|p| (p.fraction, p.composition.clone()))
                .collect::<Vec<_>>(),
        );
        assert!(
            (g - r.diagnostics.gibbs).abs() < 1e-10,
            "{}: G {g} vs {}",
            c.id,
            r.diagnostics.gibbs
        );
        let mut splits = 0;
        for a in 0..r.phases.len() {
            for b in a + 1..r.phases.len() {
                let (xa, xb) = (&r.phases[a].composition, &r.phases[b].composition);
                if let Some((beta, y, x)) = two_phase_split(&m, t, p, &c.feed, xa, xb) {
                    let g2 = gibbs(&m, t, p, &[(beta, y), (1.0 - beta, x)]);
                    assert!(g <= g2 + 1e-12, "{}: G = {g} above a two-phase split's {g2}", c.id);
                    splits += 1;
                }
            }
        }
        println!(
            "{}: {} phases, G/RT = {:.10}, residual {:.1e}, SS {}, Newton {}, certificate {:?}, \
             {splits} two-phase splits all above",
            c.id,
            r.phases.len(),
            r.diagnostics.gibbs,
            r.diagnostics.residual,
            r.diagnostics.ss_iterations,
            r.diagnostics.newton_iterations,
            r.diagnostics.certificate
        );
    }
}

/// Newton polishing: the answer's residual meets the tolerance asked for, and tightening the
/// tolerance from 1e-6 to 1e-12 costs at most a few more Newton iterations per phase set
/// solved on the way (quadratic convergence: each step squares the residual; successive
/// substitution would need tens more).
#[test]
fn newton_polishes_to_the_tolerance() {
    let m = water_hc(&["methane", "n-hexane", "water"]);
    let z = [0.3, 0.2, 0.5];
    let mut counts = Vec::new();
    for tol in [1e-6, 1e-10, 1e-12] {
        let opts = MultiphaseOptions {
            tolerance: tol,
            ..MultiphaseOptions::default()
        };
        let r = flash_multiphase(&m, 300.0, 2e6, &z, &opts).unwrap();
        assert_eq!(r.phases.len(), 3);
        let res = fugacity_residual(&ln_fugacities(&m, &r, false));
        assert!(res <= tol, "tolerance {tol:e}: residual {res:e}");
        counts.push(r.diagnostics.newton_iterations);
    }
    assert!(counts[2] <= counts[0] + 8, "Newton iterations {counts:?}");
}

/// METHODS §12 B1 (CH4/H2S with SRK, k12 = 0.08, 190 K, 40.53 bar; Michelsen 1982a, "The
/// isothermal flash problem. Part I. Stability", Fluid Phase Equilib. 9 (1982) 1–19): at
/// z = 0.5 the stable split is liquid–liquid, x1 = 0.9203/0.1114, β = 0.480/0.520,
/// G/RT = −2.70205. Solved as liquid–liquid equilibrium (allow_vapor = false, every phase on
/// the liquid branch) and with a vapour allowed: the same split; and for the six feeds a
/// binary never has more than two phases off its three-phase line (phase rule).
#[test]
fn liquid_liquid_equilibrium_of_a_cubic_b1() {
    let m = CubicEos::new(
        CubicKind::SoaveRedlichKwong,
        vec![
            pinned("methane", 190.6, 46.0, 0.008),
            pinned("hydrogen sulfide", 373.2, 89.4, 0.1),
        ],
    )
    .unwrap()
    .with_pair(0, 1, 0.08, 0.0)
    .unwrap();
    let (t, p) = (190.0, 40.53e5);
    let lle = MultiphaseOptions {
        allow_vapor: false,
        max_liquids: 2,
        ..MultiphaseOptions::default()
    };
    let r = flash_multiphase(&m, t, p, &[0.5, 0.5], &lle).unwrap();
    assert_eq!(r.phases.len(), 2, "{r:?}");
    assert!(
        r.phases
            .iter()
            .all(|p| matches!(p.kind, Some(PhaseKind::Liquid | PhaseKind::Liquid2)))
    );
    let lnf = ln_fugacities(&m, &r, true);
    assert!(fugacity_residual(&lnf) <= 1e-10);
    assert!(mass_balance(&r) <= 1e-12);
    assert!(
        (r.diagnostics.gibbs + 2.70205).abs() < 5e-6,
        "G/RT = {}",
        r.diagnostics.gibbs
    );
    let mut x1: Vec<f64> = r.phases.iter().map(|p| p.composition[0]).collect();
    x1.sort_by(f64::total_cmp);
    assert!((x1[0] - 0.1114).abs() < 5e-4 && (x1[1] - 0.9203).abs() < 5e-4, "{x1:?}");
    let b: Vec<f64> = r.phases.iter().map(|p| p.fraction).collect();
    assert!(
        b.iter().any(|v| (v - 0.480).abs() < 1e-3) && b.iter().any(|v| (v - 0.520).abs() < 1e-3),
        "{b:?}"
    );
    // With a vapour allowed the answer is the same split.
    let rv = flash_multiphase(&m, t, p, &[0.5, 0.5], &MultiphaseOptions::default()).unwrap();
    assert_eq!(rv.phases.len(), 2);
    assert!((rv.diagnostics.gibbs - r.diagnostics.gibbs).abs() < 1e-10);
    for z1 in [0.9885, 0.9813, 0.93, 0.5, 0.112, 0.11] {
        let z = [z1, 1.0 - z1];
        let a = flash_multiphase(&m, t, p, &z, &MultiphaseOptions::default()).unwrap();
        let f = flash_pt(&m, t, p, &z, &FlashOptions::default()).unwrap();
        assert_eq!(a.phases.len(), f.phases.len(), "z1 = {z1}");
        assert!((a.diagnostics.gibbs - f.diagnostics.gibbs).abs() < 1e-10, "z1 = {z1}");
        check_answer(&m, &a, false, &format!("B1 z1 = {z1}"));
    }
}

/// Liquid–liquid equilibrium only (allow_vapor = false) of the water–hexane–methane feed:
/// every phase is a liquid on the liquid branch, equal fugacities there, and a liquid–liquid
/// state whose G is no lower than the vapour–liquid–liquid answer (the liquid branch is a
/// constraint).
#[test]
fn liquid_liquid_only_keeps_every_phase_liquid() {
    let m = water_hc(&["methane", "n-hexane", "water"]);
    let z = [0.05, 0.45, 0.5];
    let lle = MultiphaseOptions {
        allow_vapor: false,
        ..MultiphaseOptions::default()
    };
    let r = flash_multiphase(&m, 300.0, 2e6, &z, &lle).unwrap();
    assert_eq!(r.phases.len(), 2, "{r:?}");
    assert_eq!(
        r.phases.iter().map(|p| p.kind.unwrap()).collect::<Vec<_>>(),
        [PhaseKind::Liquid2, PhaseKind::Liquid]
    );
    check_answer(&m, &r, true, "LLE");
    let free = flash_multiphase(&m, 300.0, 2e6, &z, &MultiphaseOptions::default()).unwrap();
    assert!(free.diagnostics.gibbs <= r.diagnostics.gibbs + 1e-12);
}

/// The phase limits are honoured with typed errors: one liquid only for a vapour–liquid–
/// liquid state is `NoSolution`; bad options are `InvalidInput`.
#[test]
fn limits_and_options_give_typed_errors() {
    let m = water_hc(&["methane", "n-hexane", "water"]);
    let z = [0.3, 0.2, 0.5];
    let one = MultiphaseOptions {
        max_liquids: 1,
        ..MultiphaseOptions::default()
    };
    let e = flash_multiphase(&m, 300.0, 2e6, &z, &one).unwrap_err();
    assert_eq!(e.kind(), ErrorKind::NoSolution, "{e}");
    for bad in [
        MultiphaseOptions {
            max_liquids: 0,
            ..MultiphaseOptions::default()
        },
        MultiphaseOptions {
            tolerance: 0.5,
            ..MultiphaseOptions::default()
        },
        MultiphaseOptions {
            max_ss_iterations: 0,
            ..MultiphaseOptions::default()
        },
    ] {
        let e = flash_multiphase(&m, 300.0, 2e6, &z, &bad).unwrap_err();
        assert!(matches!(e, Error::InvalidInput { .. }), "{e}");
    }
    let e = flash_multiphase(&m, -1.0, 2e6, &z, &MultiphaseOptions::default()).unwrap_err();
    assert!(matches!(e, Error::InvalidInput { .. }), "{e}");
    let e = flash_multiphase(&m, 300.0, 2e6, &[0.5, 0.5], &MultiphaseOptions::default()).unwrap_err();
    assert!(matches!(e, Error::InvalidInput { .. }), "{e}");
    let o: MultiphaseOptions = serde_json::from_str(r#"{"allow_vapor": false}"#).unwrap();
    assert_eq!(o.max_liquids, MultiphaseOptions::default().max_liquids);
}

/// A context sweep through the three-phase region warm-starts from the previous phase set and
/// gives the cold answer, and goes back to two phases where the water runs out.
#[test]
fn context_warm_starts_agree_with_cold_answers() {
    let m = water_hc(&["methane", "n-hexane", "water"]);
    let mut ctx = MultiphaseContext::new(3);
    let opts = MultiphaseOptions::default();
    let mut warm = 0;
    for k in 0..40 {
        let t = 300.0 + 0.5 * k as f64;
        let zw = 0.5 - 0.0125 * k as f64;
        let z = [0.6 * (1.0 - zw), 0.4 * (1.0 - zw), zw];
        let a = ctx.flash(&m, t, 2e6, &z, &opts).unwrap().clone();
        let b = flash_multiphase(&m, t, 2e6, &z, &opts).unwrap();
        warm += usize::from(a.diagnostics.warm_start);
        assert_eq!(a.phases.len(), b.phases.len(), "k = {k}");
        for (pa, pb) in a.phases.iter().zip(&b.phases) {
            assert!((pa.fraction - pb.fraction).abs() < 1e-9, "k = {k}");
        }
        check_answer(&m, &a, false, &format!("sweep {k}"));
    }
    assert!(warm >= 30, "{warm} warm starts");
    let a = ctx.flash(&m, 300.0, 2e6, &[0.5999, 0.4, 1e-4], &opts).unwrap();
    assert_eq!(a.phases.len(), 2);
}

/// Four fluid phases: a vapour, a CO2-rich liquid, a decane-rich liquid and water, as the
/// model predicts near the vapour pressure of CO2 for methane + CO2 + n-decane + water at
/// 290 K. Peng–Robinson with k_ij = 0.5 water–hydrocarbons, 0.19 CO2–water, 0.15
/// CO2–n-decane and 0.1 methane–CO2 (sizes of the k_ij usually fitted for these pairs; common
/// practice, no source). With k_CO2–decane = 0.15 the equation predicts the liquid–liquid–
/// vapour behaviour that real CO2 shows with heavier oils (METHODS §12 B6: CO2 + Maljamar
/// separator oil at 305 K, 60–70 bar; real CO2 + n-decane is fully miscible in its liquid
/// there, from memory), and the water adds an aqueous liquid: a state of the model, checked
/// by the equilibrium conditions themselves. A scan over p at 290 K finds four phases from
/// 5.9 to 6.5 MPa; the case sits in the middle.
#[test]
fn four_phases_vapour_and_three_liquids() {
    let names = ["methane", "carbon dioxide", "n-decane", "water"];
    let comps: Vec<String> = names.iter().map(|s| s.to_string()).collect();
    let kij = vec![(0, 3, 0.5), (1, 3, 0.19), (2, 3, 0.5), (1, 2, 0.15), (0, 1, 0.1)];
    let m = build(&comps, &kij);
    let z = [0.05, 0.6, 0.1, 0.25];
    let (t, p) = (290.0, 6.2e6);
    let r = flash_multiphase(&m, t, p, &z, &MultiphaseOptions::default()).unwrap();
    let kinds: Vec<_> = r.phases.iter().map(|p| p.kind.unwrap()).collect();
    assert_eq!(
        kinds,
        [
            PhaseKind::Vapor,
            PhaseKind::Liquid3,
            PhaseKind::Liquid2,
            PhaseKind::Liquid
        ],
        "{r:#?}"
    );
    check_answer(&m, &r, false, "four phases");
    assert_every_phase_stable(&m, &r, "four phases");
    // Liquids by increasing density per mole: the decane-rich oil (largest molar volume),
    // the CO2-rich liquid, then water.
    let (v, oil, co2, aq) = (&r.phases[0], &r.phases[1], &r.phases[2], &r.phases[3]);
    for ph in &r.phases {
        println!(
            "{:?}: x = {:?}, v = {:e} m3/mol",
            ph.kind, ph.composition, ph.molar_volume
        );
    }
    assert!(v.composition[0] > co2.composition[0], "methane gathers in the vapour");
    assert!(
        co2.composition[1] > oil.composition[1],
        "CO2-rich liquid: {:?}",
        co2.composition
    );
    assert!(
        oil.composition[2] > co2.composition[2],
        "oil-rich liquid: {:?}",
        oil.composition
    );
    assert!(aq.composition[3] > 0.95, "aqueous liquid: {:?}", aq.composition);
    // G below every two-phase split of two of its phases.
    let g = r.diagnostics.gibbs;
    for a in 0..4 {
        for b in a + 1..4 {
            let (xa, xb) = (&r.phases[a].composition, &r.phases[b].composition);
            if let Some((beta, y, x)) = two_phase_split(&m, t, p, &z, xa, xb) {
                let g2 = gibbs(&m, t, p, &[(beta, y), (1.0 - beta, x)]);
                assert!(g <= g2 + 1e-12, "G = {g} above a two-phase split's {g2}");
            }
        }
    }
    // Fewer phases allowed: a typed error, never a three-phase answer.
    let two_liquids = MultiphaseOptions {
        max_liquids: 2,
        ..MultiphaseOptions::default()
    };
    let e = flash_multiphase(&m, t, p, &z, &two_liquids).unwrap_err();
    assert_eq!(e.kind(), ErrorKind::NoSolution, "{e}");
    let three = FlashOptions {
        max_phases: 3,
        ..FlashOptions::default()
    };
    let e = flash_pt(&m, t, p, &z, &three).unwrap_err();
    assert_eq!(e.kind(), ErrorKind::NoSolution, "{e}");
    println!(
        "four phases at {t} K, {p} Pa: beta = {:?}, residual {:.1e}, SS {}, Newton {}, certificate {:?}",
        r.phases.iter().map(|p| p.fraction).collect::<Vec<_>>(),
        r.diagnostics.residual,
        r.diagnostics.ss_iterations,
        r.diagnostics.newton_iterations,
        r.diagnostics.certificate
    );
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(96))]
    /// Random feeds, temperatures and pressures of a four-component water–hydrocarbon–CO2
    /// model: every call returns an answer that passes the equilibrium checks or a typed
    /// error; never a panic or a non-finite answer.
    #[test]
    fn random_feeds_give_answers_or_typed_errors(
        w in proptest::collection::vec(0.0f64..1.0, 4),
        t in 250.0f64..520.0,
        lp in 4.0f64..7.5,
    ) {
        let m = water_hc(&["methane", "carbon dioxide", "n-hexane", "water"]);
        let p = 10f64.powf(lp);
        match flash_multiphase(&m, t, p, &w, &MultiphaseOptions::default()) {
            Ok(r) => {
                prop_assert!(r.phases.iter().all(|ph| ph.fraction.is_finite() && ph.molar_volume.is_finite()));
                prop_assert!(mass_balance(&r) <= 1e-12);
                prop_assert!(r.diagnostics.residual <= 1e-10);
            }
            Err(e) => {
                prop_assert!(matches!(
                    e.kind(),
                    ErrorKind::InvalidInput | ErrorKind::NoSolution | ErrorKind::NotConverged | ErrorKind::OutsideValidity
                ), "{}", e);
            }
        }
    }
}
