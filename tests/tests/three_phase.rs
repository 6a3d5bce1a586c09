//! The three-phase PT flash (opt-in, `FlashOptions::max_phases = 3`) on a water–hydrocarbon
//! system, where a vapour, a hydrocarbon liquid and an aqueous liquid coexist.
//!
//! Peng–Robinson with k_ij = 0.5 between water and each hydrocarbon and 0 otherwise (a
//! typical size for water–alkane pairs in cubic equations; common practice, no source).
//! The checks are the equilibrium conditions themselves, recomputed independently of the
//! solver: mass balance, equal fugacities of every component in all three phases, and the
//! tangent-plane certificate; and two limiting laws for a nearly immiscible aqueous phase
//! (Lewis–Randall rule: the fugacity of a nearly pure solvent is x_w times the pure
//! liquid's, so the water fugacity of every phase equals pure liquid water's to
//! O(1 − x_w); and the hydrocarbon vapour–liquid split is that of the water-free feed up to
//! the little water dissolved in it).

use tieline::equilibrium::{FlashContext, FlashOptions, FlashResult, flash_pt};
use tieline::model::{CubicEos, CubicKind, FugacityWork, LnPhi, Need, PhaseKind, RootChoice, ln_phi};
use tieline::substance::DataBank;
use tieline_validation::pinned;

fn model(names: &[&str]) -> CubicEos {
    let comps = DataBank::embedded().get_many(names).unwrap();
    let w = names.iter().position(|n| *n == "water").unwrap();
    let mut m = CubicEos::new(CubicKind::PengRobinson, comps).unwrap();
    for j in 0..names.len() {
        if j != w {
            m = m.with_pair(w, j, 0.5, 0.0).unwrap();
        }
    }
    m
}

const T: f64 = 300.0;
const P: f64 = 2.0e6;

fn three() -> FlashOptions {
    FlashOptions {
        max_phases: 3,
        ..FlashOptions::default()
    }
}

/// ln f_i (ln Pa up to the common ln p) of every phase of `r`, recomputed from its
/// composition by an independent fugacity evaluation.
fn ln_fugacities(m: &CubicEos, t: f64, p: f64, r: &FlashResult) -> Vec<Vec<f64>> {
    let nc = r.feed.len();
    let mut fw = FugacityWork::new(nc);
    let mut out = LnPhi::new(nc);
    r.phases
        .iter()
        .map(|ph| {
            ln_phi(
                m,
                t,
                p,
                &ph.composition,
                RootChoice::Stable,
                Need::VALUES,
                &mut fw,
                &mut out,
            )
            .unwrap();
            (0..nc).map(|c| ph.composition[c].ln() + out.ln_phi[c]).collect()
        })
        .collect()
}

/// Every component's ln f equal in all phases to `tol`.
fn assert_equal_fugacities(lnf: &[Vec<f64>], tol: f64, what: &str) {
    for (k, row) in lnf.iter().enumerate().skip(1) {
        for (c, v) in row.iter().enumerate() {
            assert!((v - lnf[0][c]).abs() < tol, "{what}: ln f of {c} in phase {k}: {lnf:?}");
        }
    }
}

/// Σ_k β_k x_ik = z_i to 1e-12.
fn assert_mass_balance(r: &FlashResult, z: &[f64], what: &str) {
    for (i, zi) in z.iter().enumerate() {
        let s: f64 = r.phases.iter().map(|p| p.fraction * p.composition[i]).sum();
        assert!((s - zi).abs() < 1e-12, "{what}: component {i}: {s} vs {zi}");
    }
}

#[test]
fn methane_hexane_water_splits_into_three_phases() {
    let m = model(&["methane", "n-hexane", "water"]);
    let z = [0.3, 0.2, 0.5];
    // By default a third phase is reported, not hidden.
    let e = flash_pt(&m, T, P, &z, &FlashOptions::default()).unwrap_err();
    assert!(e.to_string().contains("more than two phases"), "{e}");

    let r = flash_pt(&m, T, P, &z, &three()).unwrap();
    assert_eq!(r.phases.len(), 3, "{r:?}");
    let kinds: Vec<_> = r.phases.iter().map(|p| p.kind.unwrap()).collect();
    assert_eq!(kinds, [PhaseKind::Vapor, PhaseKind::Liquid2, PhaseKind::Liquid]);
    let (v, hc, aq) = (&r.phases[0], &r.phases[1], &r.phases[2]);
    assert!(v.composition[0] > 0.9, "vapour is methane-rich: {:?}", v.composition);
    assert!(
        hc.composition[1] > 0.8,
        "the lighter liquid is hexane-rich: {:?}",
        hc.composition
    );
    assert!(
        aq.composition[2] > 0.999,
        "the denser liquid is water: {:?}",
        aq.composition
    );
    assert_mass_balance(&r, &z, "z_w = 0.5");
    // Equal fugacities, recomputed from the phase compositions.
    let lnf = ln_fugacities(&m, T, P, &r);
    assert_equal_fugacities(&lnf, 1e-9, "z_w = 0.5");
    // Certificate: no fourth phase lowers G.
    let cert = r.diagnostics.certificate.unwrap();
    assert!(cert >= -1e-10, "certificate {cert}");
    // Lewis–Randall for the nearly pure water: ln f_w = ln x_w + ln f_w(pure liquid).
    let mut fw = FugacityWork::new(3);
    let mut pure = LnPhi::new(3);
    ln_phi(
        &m,
        T,
        P,
        &[0.0, 0.0, 1.0],
        RootChoice::Liquid,
        Need::VALUES,
        &mut fw,
        &mut pure,
    )
    .unwrap();
    let lr = aq.composition[2].ln() + pure.ln_phi[2];
    assert!(
        (lnf[0][2] - lr).abs() < 10.0 * (1.0 - aq.composition[2]),
        "{} vs {lr}",
        lnf[0][2]
    );
    // The hydrocarbon split is that of the water-free feed, up to the water dissolved in the
    // hydrocarbon phases (well below 1 %).
    let dry = model(&["methane", "n-hexane", "water"]);
    let rd = flash_pt(&dry, T, P, &[0.6, 0.4, 0.0], &FlashOptions::default()).unwrap();
    let water_in_hc = v.composition[2].max(hc.composition[2]);
    assert!(water_in_hc < 1e-2);
    let yd = &rd.phases[0].composition;
    assert!((v.composition[0] / (1.0 - v.composition[2]) - yd[0]).abs() < 2.0 * water_in_hc + 1e-3);
    // G/RT of three phases lies below every two-phase candidate the certificate rejected:
    // the three-phase split is the Gibbs-energy minimum found.
    println!(
        "three phases at {T} K, {P} Pa: beta = ({:.6}, {:.6}, {:.6}), water in vapour {:.3e}, \
         G/RT = {:.8}, certificate {cert:.3e}, SS iterations {}",
        v.fraction, hc.fraction, aq.fraction, v.composition[2], r.diagnostics.gibbs, r.diagnostics.ss_iterations
    );
}

/// A feed with too little water for a free-water phase stays two-phase with three phases
/// allowed, and the result equals the default two-phase flash.
#[test]
fn a_dry_enough_feed_stays_two_phase() {
    let m = model(&["methane", "n-hexane", "water"]);
    let z = [0.5999, 0.4, 1e-4];
    let a = flash_pt(&m, T, P, &z, &FlashOptions::default()).unwrap();
    let b = flash_pt(&m, T, P, &z, &three()).unwrap();
    assert_eq!(a.phases.len(), 2);
    assert_eq!(a.phases, b.phases);
}

/// A reused context gives the same three-phase answer as a fresh one, call after call, and
/// goes back to two phases where the water runs out.
#[test]
fn context_sweep_through_the_three_phase_region() {
    let m = model(&["methane", "n-hexane", "water"]);
    let mut ctx = FlashContext::new(3);
    for k in 0..6 {
        let zw = 0.5 - 0.1 * k as f64 + 1e-9;
        let z = [0.6 * (1.0 - zw), 0.4 * (1.0 - zw), zw];
        let got = ctx.flash(&m, T, P, &z, &three());
        let fresh = flash_pt(&m, T, P, &z, &three());
        match (got, fresh) {
            (Ok(a), Ok(b)) => {
                assert_eq!(a.phases.len(), if k < 5 { 3 } else { 2 }, "z_w = {zw}");
                assert_eq!(a.phases.len(), b.phases.len(), "z_w = {zw}");
                for (pa, pb) in a.phases.iter().zip(&b.phases) {
                    assert!((pa.fraction - pb.fraction).abs() < 1e-9, "z_w = {zw}");
                }
            }
            (a, b) => panic!(
                "z_w = {zw}: {:?} / {:?}",
                a.map(|r| r.phases.len()),
                b.map(|r| r.phases.len())
            ),
        }
    }
    let bad = FlashOptions {
        max_phases: 4,
        ..FlashOptions::default()
    };
    assert!(flash_pt(&m, T, P, &[0.3, 0.2, 0.5], &bad).is_err());
}

/// A context flashing along T inside the three-phase region starts each call from the
/// previous three-phase answer and gives the answers of one-shot flashes.
#[test]
fn context_warm_starts_from_a_three_phase_answer() {
    let m = model(&["methane", "n-hexane", "water"]);
    let z = [0.3, 0.2, 0.5];
    let mut ctx = FlashContext::new(3);
    for k in 0..12 {
        let t = T + 0.5 * k as f64;
        let a = ctx.flash(&m, t, P, &z, &three()).unwrap().clone();
        let b = flash_pt(&m, t, P, &z, &three()).unwrap();
        assert_eq!(a.phases.len(), 3, "{t} K");
        assert_eq!(b.phases.len(), 3, "{t} K");
        assert_eq!(a.diagnostics.warm_start, k > 0, "{t} K");
        assert!(!b.diagnostics.warm_start);
        for (pa, pb) in a.phases.iter().zip(&b.phases) {
            assert_eq!(pa.kind, pb.kind, "{t} K");
            assert!((pa.fraction - pb.fraction).abs() < 1e-9, "{t} K");
            for (xa, xb) in pa.composition.iter().zip(&pb.composition) {
                assert!((xa - xb).abs() < 1e-9, "{t} K");
            }
        }
        assert_equal_fugacities(&ln_fugacities(&m, t, P, &a), 1e-9, "warm");
        assert!(
            a.diagnostics.certificate.is_some_and(|c| c > -1e-9),
            "{t} K: {:?}",
            a.diagnostics
        );
    }
    // A far jump starts cold.
    let far = ctx.flash(&m, T + 40.0, P, &z, &three()).unwrap();
    assert!(!far.diagnostics.warm_start);
}

/// METHODS §12 B1 (CH4/H2S with SRK, k12 = 0.08, 190 K, 40.53 bar; Michelsen 1982a): a binary
/// has three phases only on a line of (T, p), so allowing three changes none of the answers:
/// the same phase counts for all six feeds, and at z = 0.5 the same liquid–liquid split
/// (β = 0.480/0.520, G/RT = −2.70205).
#[test]
fn b1_answers_are_unchanged_with_three_phases_allowed() {
    // The constants of METHODS Table A (Reid–Prausnitz–Poling, from memory), as the shared
    // vectors pin them.
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
    for z1 in [0.9885, 0.9813, 0.93, 0.5, 0.112, 0.11] {
        let z = [z1, 1.0 - z1];
        let a = flash_pt(&m, 190.0, 40.53e5, &z, &FlashOptions::default()).unwrap();
        let b = flash_pt(&m, 190.0, 40.53e5, &z, &three()).unwrap();
        assert_eq!(a.phases, b.phases, "z1 = {z1}");
        if z1 == 0.5 {
            assert!(
                (b.diagnostics.gibbs + 2.70205).abs() < 5e-6,
                "G/RT = {}",
                b.diagnostics.gibbs
            );
        }
    }
}

/// A 40 × 40 T–p grid over the three-phase region and its edges (250–450 K, 1–100 bar) of
/// the methane–hexane–water feed: every point either converges with a certificate
/// ≥ −1e-10 and fugacities equal to 1e-9 in all its phases, or fails with a typed error.
#[test]
fn grid_through_the_three_phase_region() {
    let m = model(&["methane", "n-hexane", "water"]);
    let z = [0.3, 0.2, 0.5];
    let mut ctx = FlashContext::new(3);
    let (mut counts, mut errors) = ([0usize; 4], Vec::new());
    for i in 0..40 {
        for j in 0..40 {
            let t = 250.0 + 200.0 * i as f64 / 39.0;
            let p = 1e5 + 99e5 * j as f64 / 39.0;
            match ctx.flash(&m, t, p, &z, &three()) {
                Ok(r) => {
                    counts[r.phases.len()] += 1;
                    assert!(r.diagnostics.certificate.unwrap() >= -1e-10, "T {t} p {p}");
                    assert_equal_fugacities(&ln_fugacities(&m, t, p, r), 1e-9, &format!("T {t} p {p}"));
                }
                Err(e) => errors.push(format!("T {t:.1} p {p:.0}: {e}")),
            }
        }
    }
    println!(
        "phases: 1 → {}, 2 → {}, 3 → {}; errors {}",
        counts[1],
        counts[2],
        counts[3],
        errors.len()
    );
    for e in errors.iter().take(5) {
        println!("  {e}");
    }
    assert!(counts[3] > 100, "the grid crosses the three-phase region");
    assert!(errors.is_empty(), "{} typed errors", errors.len());
}

/// Across the water content, from just above what the hydrocarbon phases dissolve (aqueous
/// fraction ~1e-4) to a trace of hydrocarbon in water (vapour and hexane-rich fractions
/// ~1e-5): three phases, mass balance to 1e-12 and fugacities equal to 1e-9 everywhere.
#[test]
fn three_phases_from_a_trace_of_water_to_a_trace_of_hydrocarbon() {
    let m = model(&["methane", "n-hexane", "water"]);
    for zw in [0.0012, 0.002, 0.01, 0.1, 0.5, 0.9, 0.99, 0.999, 0.9999, 0.99999] {
        let z = [0.6 * (1.0 - zw), 0.4 * (1.0 - zw), zw];
        let r = flash_pt(&m, T, P, &z, &three()).unwrap_or_else(|e| panic!("z_w = {zw}: {e}"));
        assert_eq!(r.phases.len(), 3, "z_w = {zw}");
        let what = format!("z_w = {zw}");
        assert_mass_balance(&r, &z, &what);
        assert_equal_fugacities(&ln_fugacities(&m, T, P, &r), 1e-9, &what);
        assert!(r.diagnostics.certificate.unwrap() >= -1e-10, "z_w = {zw}");
    }
}
