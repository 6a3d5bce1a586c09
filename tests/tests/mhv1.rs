//! A cubic equation of state with the MHV1 mixing rule (Michelsen, "A modified Huron–Vidal
//! mixing rule for cubic equations of state", Fluid Phase Equilib. 60 (1990) 213–219) fed by
//! an NRTL model: the rule's defining purpose — the cubic reproduces the activity model's
//! low-pressure phase behaviour — checked against the γ–φ description with the same activity
//! model, plus fugacity identities, derivatives and the JSON description. Vectors:
//! tests/vectors/mhv1.json, each with its source.

use serde::Deserialize;
use tieline::equilibrium::saturation::{SaturationOptions, bubble_pressure};
use tieline::model::activity::{Nrtl, NrtlParams, Unifac};
use tieline::model::{
    ActivityModel, CubicEos, CubicKind, ExcessDerivs, ExcessGibbs, FluidModel, FugacityWork, LnPhi, MixingRule, Model,
    Need, RootChoice, ln_phi, model_from_json,
};
use tieline::substance::{DataBank, R};

#[derive(Deserialize)]
struct NrtlSet {
    components: Vec<String>,
    dg_j_per_mol: Vec<Vec<f64>>,
    alpha: f64,
    t_min: f64,
    t_max: f64,
}

#[derive(Deserialize)]
struct BubbleCase {
    #[allow(dead_code)]
    source: String,
    kind: CubicKind,
    /// "unifac_ethanol_water", or absent for the NRTL methanol–water set.
    #[serde(default)]
    activity: Option<String>,
    /// "mhv2", or absent for MHV1.
    #[serde(default)]
    rule: Option<String>,
    t: f64,
    x1: f64,
    tolerance: f64,
}

#[derive(Deserialize)]
struct Vectors {
    nrtl_methanol_water: NrtlSet,
    bubble_pressure: Vec<BubbleCase>,
}

fn vectors() -> Vectors {
    let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/vectors/mhv1.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

/// NRTL with τ_ij = Δg_ij/(RT), i.e. b_ij = Δg_ij/R, and a constant α.
fn nrtl(set: &NrtlSet) -> ActivityModel {
    let nc = set.components.len();
    let b = set
        .dg_j_per_mol
        .iter()
        .map(|r| r.iter().map(|g| g / R).collect())
        .collect();
    let c = (0..nc)
        .map(|i| (0..nc).map(|j| if i == j { 0.0 } else { set.alpha }).collect())
        .collect();
    ActivityModel::Nrtl(
        Nrtl::new(NrtlParams {
            components: set.components.clone(),
            a: vec![vec![0.0; nc]; nc],
            b,
            c,
            d: vec![],
            e: vec![],
            f: vec![],
            t_min: set.t_min,
            t_max: set.t_max,
        })
        .unwrap(),
    )
}

fn mhv1(kind: CubicKind, act: &ActivityModel) -> CubicEos {
    with_rule(kind, act, false)
}

/// The cubic over the activity model's components with MHV1 or MHV2 (default constants).
fn with_rule(kind: CubicKind, act: &ActivityModel, mhv2: bool) -> CubicEos {
    let names: Vec<&str> = act.component_names().iter().map(|s| s.as_str()).collect();
    let comps = DataBank::embedded().get_many(&names).unwrap();
    let activity = act.clone();
    let rule = if mhv2 {
        MixingRule::Mhv2 {
            activity,
            q1: None,
            q2: None,
        }
    } else {
        MixingRule::Mhv1 { activity, q1: None }
    };
    CubicEos::new(kind, comps).unwrap().with_mixing(rule).unwrap()
}

/// γ–φ bubble pressure with the same activity model: y_i φ_i^V(T, p, y) = x_i γ_i φ_i°(T, p),
/// the vapour φ and the pure-liquid φ° both from the cubic (φ° on the pure liquid root at p,
/// which carries the Poynting correction), so the only difference from the cubic's own
/// bubble point is the liquid's ln φ_i − ln φ_i° against ln γ_i — the quantity MHV1
/// approximates. Fixed-point iteration on p.
fn gamma_phi_bubble(m: &CubicEos, act: &ActivityModel, t: f64, x: &[f64]) -> f64 {
    let nc = x.len();
    let mut w = FugacityWork::new(nc);
    let mut o = LnPhi::new(nc);
    let mut ex = ExcessDerivs::new(nc);
    act.excess(t, x, Need::VALUES, &mut ex).unwrap();
    let mut p = 1e5;
    let mut y = x.to_vec();
    for _ in 0..200 {
        let mut f = vec![0.0; nc];
        for i in 0..nc {
            let mut e = vec![0.0; nc];
            e[i] = 1.0;
            ln_phi(m, t, p, &e, RootChoice::Liquid, Need::VALUES, &mut w, &mut o).unwrap();
            f[i] = x[i] * ex.ln_gamma[i].exp() * o.ln_phi[i].exp() * p;
        }
        ln_phi(m, t, p, &y, RootChoice::Vapor, Need::VALUES, &mut w, &mut o).unwrap();
        let terms: Vec<f64> = (0..nc).map(|i| f[i] / o.ln_phi[i].exp()).collect();
        let p_new: f64 = terms.iter().sum();
        y = terms.iter().map(|v| v / p_new).collect();
        if (p_new - p).abs() < 1e-12 * p {
            return p_new;
        }
        p = p_new;
    }
    panic!("γ–φ bubble pressure did not converge");
}

/// The rule's purpose (Michelsen 1990): the cubic with MHV1 reproduces the low-pressure VLE
/// of its activity model. Bubble pressures of methanol–water (NRTL, source in the vectors
/// file) and ethanol–water (UNIFAC) at 333–350 K agree with the γ–φ values within the
/// vectors' tolerance. Measured: MHV1 within 0.2–4.3 %, MHV2 within 0.1–0.6 % (the second-order
/// rule follows q(α) more closely, as Dahl & Michelsen 1990 intended).
#[test]
fn bubble_pressure_matches_gamma_phi() {
    let v = vectors();
    let nrtl_set = nrtl(&v.nrtl_methanol_water);
    let unifac = ActivityModel::Unifac(Unifac::from_names(&["ethanol", "water"]).unwrap());
    let mut worst: f64 = 0.0;
    for c in &v.bubble_pressure {
        let act = match c.activity.as_deref() {
            None => &nrtl_set,
            Some("unifac_ethanol_water") => &unifac,
            Some(other) => panic!("unknown activity set {other}"),
        };
        let m = with_rule(c.kind, act, c.rule.as_deref() == Some("mhv2"));
        let x = [c.x1, 1.0 - c.x1];
        let eos = bubble_pressure(&m, c.t, &x, &SaturationOptions::default()).unwrap();
        let gp = gamma_phi_bubble(&m, act, c.t, &x);
        let d = (eos.pressure - gp) / gp;
        eprintln!(
            "{:?} {:?} {:?} T = {} K x1 = {}: p_EOS = {:.1} Pa, p_γφ = {:.1} Pa, rel. diff. {:+.4}",
            c.kind, c.activity, c.rule, c.t, c.x1, eos.pressure, gp, d
        );
        worst = worst.max(d.abs());
        assert!(d.abs() < c.tolerance, "{:?} {} {}: {d}", c.kind, c.t, c.x1);
    }
    eprintln!("largest relative difference: {worst:.4}");
}

/// The defining property of the rule: at low pressure the cubic's own excess Gibbs energy at
/// the liquid roots, g^E_EOS/RT = Σ x_i (ln φ_i − ln φ_i°), is close to the activity model's.
/// Approximate by construction: the linear q(α) of MHV1 is exact only near the α at which q1
/// was fitted (about 10–13 for SRK, Michelsen 1990, from memory), and water's α at 330 K lies
/// above it. Measured here: the cubic's g^E/RT is 27–31 % above the NRTL value over the whole
/// composition range for PR, 27–30 % for SRK (0.017 at most in absolute terms), while the bubble pressures
/// (previous test) differ by under 3 %; the bound allows a little more than measured.
#[test]
fn excess_gibbs_energy_at_low_pressure() {
    let v = vectors();
    let act = nrtl(&v.nrtl_methanol_water);
    for kind in [CubicKind::PengRobinson, CubicKind::SoaveRedlichKwong] {
        let m = mhv1(kind, &act);
        let (t, p) = (330.0, 101_325.0);
        let mut w = FugacityWork::new(2);
        let mut o = LnPhi::new(2);
        let mut pure = [0.0; 2];
        for (i, lp) in pure.iter_mut().enumerate() {
            let mut e = [0.0; 2];
            e[i] = 1.0;
            ln_phi(&m, t, p, &e, RootChoice::Liquid, Need::VALUES, &mut w, &mut o).unwrap();
            *lp = o.ln_phi[i];
        }
        let mut ex = ExcessDerivs::new(2);
        let mut worst: f64 = 0.0;
        for x1 in [0.1, 0.3, 0.5, 0.7, 0.9] {
            let x = [x1, 1.0 - x1];
            ln_phi(&m, t, p, &x, RootChoice::Liquid, Need::VALUES, &mut w, &mut o).unwrap();
            let g_eos: f64 = (0..2).map(|i| x[i] * (o.ln_phi[i] - pure[i])).sum();
            act.excess(t, &x, Need::VALUES, &mut ex).unwrap();
            let d = (g_eos - ex.g_excess).abs() / ex.g_excess;
            worst = worst.max(d);
            eprintln!("{kind:?} x1 = {x1}: g^E/RT model {:.5}, EOS {:.5}", ex.g_excess, g_eos);
        }
        eprintln!("{kind:?}: largest relative difference {worst:.4}");
        assert!(worst < 0.35, "{kind:?}: {worst}");
    }
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / a.abs().max(b.abs()).max(1e-2)
}

/// ln φ through the public model: Σ n ln φ = G^r/RT, Gibbs–Duhem, symmetry, and the n, T, p
/// derivatives against central differences (Michelsen & Mollerup 2007, ch. 2 identities).
#[test]
fn fugacity_identities_and_derivatives() {
    let v = vectors();
    let act = nrtl(&v.nrtl_methanol_water);
    for kind in [CubicKind::PengRobinson, CubicKind::SoaveRedlichKwong] {
        let m = mhv1(kind, &act);
        for &(t, p, x1, root) in &[
            (330.0, 1e5, 0.3, RootChoice::Liquid),
            (360.0, 5e4, 0.6, RootChoice::Vapor),
            (390.0, 3e6, 0.45, RootChoice::Stable),
        ] {
            let n = [x1 * 1.3, (1.0 - x1) * 1.3];
            let mut w = FugacityWork::new(2);
            let mut o = LnPhi::new(2);
            ln_phi(&m, t, p, &n, root, Need::ALL, &mut w, &mut o).unwrap();
            let g: f64 = n.iter().zip(&o.ln_phi).map(|(a, b)| a * b).sum();
            assert!((g - o.g_res).abs() < 1e-12 * (1.0 + g.abs()));
            for j in 0..2 {
                let gd: f64 = (0..2).map(|i| n[i] * o.dn[i * 2 + j]).sum();
                assert!(gd.abs() < 1e-9, "Gibbs–Duhem {gd}");
            }
            assert!((o.dn[1] - o.dn[2]).abs() < 1e-9 * (1.0 + o.dn[1].abs()));
            let mut e = LnPhi::new(2);
            let mut eval = |t: f64, p: f64, n: &[f64]| {
                ln_phi(&m, t, p, n, root, Need::VALUES, &mut w, &mut e).unwrap();
                e.ln_phi.clone()
            };
            let (ht, hp) = (t * 1e-6, p * 1e-6);
            let (tp, tm) = (eval(t + ht, p, &n), eval(t - ht, p, &n));
            let (pp, pm) = (eval(t, p + hp, &n), eval(t, p - hp, &n));
            for i in 0..2 {
                assert!(rel(o.dt[i] * t, (tp[i] - tm[i]) / (2.0 * ht) * t) < 1e-6, "dT {i}");
                assert!(rel(o.dp[i] * p, (pp[i] - pm[i]) / (2.0 * hp) * p) < 1e-6, "dp {i}");
            }
            for j in 0..2 {
                let h = 1e-6;
                let mut a = n;
                a[j] += h;
                let mut b = n;
                b[j] -= h;
                let (fa, fb) = (eval(t, p, &a), eval(t, p, &b));
                for i in 0..2 {
                    assert!(rel(o.dn[i * 2 + j], (fa[i] - fb[i]) / (2.0 * h)) < 1e-6, "dn {i}{j}");
                }
            }
        }
    }
}

/// The description JSON: `"mixing": {"rule": "mhv1", "activity": {...}}` builds the model, the
/// full model round-trips, descriptions without the field keep the classic rule, and
/// mismatched components or k_ij with the rule are typed errors.
#[test]
fn description_json() {
    let v = vectors();
    let act = nrtl(&v.nrtl_methanol_water);
    let text = format!(
        r#"{{"model": "cubic", "kind": "peng_robinson", "components": ["methanol", "water"],
            "mixing": {{"rule": "mhv1", "activity": {}}}}}"#,
        act.to_json()
    );
    let m = model_from_json(&text, DataBank::embedded()).unwrap();
    let Model::Cubic(c) = &m else { panic!() };
    assert_eq!(c.mixing().activity(), Some(&act));
    assert_eq!(m, Model::Cubic(mhv1(CubicKind::PengRobinson, &act)));
    let full = m.to_json();
    assert!(full.contains(r#""rule":"mhv1""#), "{full}");
    assert_eq!(Model::from_json(&full).unwrap(), m);
    assert_eq!(model_from_json(&full, DataBank::embedded()).unwrap(), m);
    // The same model evaluates identically after the round trip.
    let back = Model::from_json(&full).unwrap();
    let mut w = FugacityWork::new(2);
    let (mut a, mut b) = (LnPhi::new(2), LnPhi::new(2));
    ln_phi(
        &m,
        340.0,
        1e5,
        &[0.4, 0.6],
        RootChoice::Liquid,
        Need::ALL,
        &mut w,
        &mut a,
    )
    .unwrap();
    ln_phi(
        &back,
        340.0,
        1e5,
        &[0.4, 0.6],
        RootChoice::Liquid,
        Need::ALL,
        &mut w,
        &mut b,
    )
    .unwrap();
    assert_eq!(a.ln_phi, b.ln_phi);
    assert_eq!(a.dn, b.dn);

    // Without the field: the classic rule, and the JSON written has no "mixing" key.
    let classic = model_from_json(
        r#"{"model": "cubic", "kind": "peng_robinson", "components": ["methanol", "water"], "kij": [[0, 1, -0.08]]}"#,
        DataBank::embedded(),
    )
    .unwrap();
    let Model::Cubic(cc) = &classic else { panic!() };
    assert!(cc.mixing().is_van_der_waals());
    assert!(!classic.to_json().contains("mixing"));

    // Errors.
    let swapped = text.replacen(r#"["methanol", "water"]"#, r#"["water", "methanol"]"#, 1);
    let e = model_from_json(&swapped, DataBank::embedded()).unwrap_err();
    assert!(e.to_string().contains("same order"), "{e}");
    let with_kij = text.replacen(r#""mixing""#, r#""kij": [[0, 1, 0.1]], "mixing""#, 1);
    let e = model_from_json(&with_kij, DataBank::embedded()).unwrap_err();
    assert!(e.to_string().contains("k_ij"), "{e}");
    let bad_q = text.replacen(r#""rule": "mhv1""#, r#""rule": "mhv1", "q1": 0.5"#, 1);
    assert!(model_from_json(&bad_q, DataBank::embedded()).is_err());
    let three = DataBank::embedded()
        .get_many(&["methanol", "water", "ethanol"])
        .unwrap();
    let e = CubicEos::new(CubicKind::PengRobinson, three)
        .unwrap()
        .with_mixing(MixingRule::Mhv1 {
            activity: act.clone(),
            q1: None,
        })
        .unwrap_err();
    assert!(e.to_string().contains("components"), "{e}");
    let e = mhv1(CubicKind::PengRobinson, &act)
        .with_pair(0, 1, 0.05, 0.0)
        .unwrap_err();
    assert!(e.to_string().contains("k_ij"), "{e}");
    // MHV2 with PR has no built-in constants.
    let comps = DataBank::embedded().get_many(&["methanol", "water"]).unwrap();
    let e = CubicEos::new(CubicKind::PengRobinson, comps)
        .unwrap()
        .with_mixing(MixingRule::Mhv2 {
            activity: act.clone(),
            q1: None,
            q2: None,
        })
        .unwrap_err();
    assert!(e.to_string().contains("q1 and q2"), "{e}");
    // Outside the activity model's temperature range: a typed error, not a number.
    let mut w = FugacityWork::new(2);
    let mut o = LnPhi::new(2);
    let e = ln_phi(
        &m,
        250.0,
        1e5,
        &[0.5, 0.5],
        RootChoice::Liquid,
        Need::VALUES,
        &mut w,
        &mut o,
    )
    .unwrap_err();
    assert_eq!(e.kind(), tieline::ErrorKind::OutsideValidity, "{e}");
    let _ = m.num_components();
}
