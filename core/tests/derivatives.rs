//! Analytic derivatives of the cubic equations of state against central finite differences,
//! and the exact identities of fugacity coefficients (Michelsen & Mollerup 2007, ch. 2):
//! Σ n_i ln φ_i = G^r/RT, Gibbs–Duhem Σ_i n_i ∂ln φ_i/∂n_j = 0, symmetry of ∂ln φ_i/∂n_j.

use proptest::prelude::*;
use tieline::model::{CubicEos, CubicKind, FluidModel, FugacityWork, HelmholtzDerivs, LnPhi, Need, RootChoice, ln_phi};
use tieline::substance::DataBank;

fn model(kind: CubicKind, shift: bool) -> CubicEos {
    let comps = DataBank::embedded()
        .get_many(&["methane", "ethane", "nitrogen", "n-butane"])
        .unwrap();
    let mut m = CubicEos::new(kind, comps)
        .unwrap()
        .with_pair(0, 1, 0.02, 1e-4)
        .unwrap()
        .with_pair(1, 3, 0.01, -2e-5)
        .unwrap()
        .with_pair(0, 2, 0.035, 0.0)
        .unwrap();
    if shift {
        m = m.with_peneloux_estimate().unwrap();
    }
    m
}

/// Relative difference, with an absolute floor of 1e-2 in the denominator: quantities far
/// below the size of the cancelling terms they are built from (O(1e-2..1) here) are compared
/// in absolute terms, where the finite differences' own round-off (~1e-10) sets the limit.
fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / (a.abs().max(b.abs()).max(1e-2))
}

fn check_residual(m: &CubicEos, t: f64, v: f64, n: &[f64]) {
    let nc = n.len();
    let mut d = HelmholtzDerivs::new(nc);
    m.residual(t, v, n, Need::ALL, &mut d).unwrap();
    let f = |t: f64, v: f64, n: &[f64]| {
        let mut e = HelmholtzDerivs::new(nc);
        m.residual(t, v, n, Need::ALL, &mut e).unwrap();
        e
    };
    // Five-point central differences (error O(h^4)) with relative steps of 1e-4 (T, V) and
    // 1e-4 of the total amount (n), so that round-off in the cancelling repulsive and
    // attractive terms stays far below the tolerance.
    type Sel<'a> = &'a dyn Fn(&HelmholtzDerivs) -> f64;
    let stencil = |g: &dyn Fn(f64) -> HelmholtzDerivs, h: f64| {
        let (p1, m1, p2, m2) = (g(h), g(-h), g(2.0 * h), g(-2.0 * h));
        move |sel: Sel| (8.0 * (sel(&p1) - sel(&m1)) - (sel(&p2) - sel(&m2))) / (12.0 * h)
    };
    let tol = 1e-7;
    let dv = stencil(&|h| f(t, v + h, n), v * 1e-4);
    let dt = stencil(&|h| f(t + h, v, n), t * 1e-4);
    assert!(rel(d.f_v, dv(&|e| e.f)) < tol, "F_V");
    assert!(rel(d.f_vv, dv(&|e| e.f_v)) < tol, "F_VV");
    assert!(rel(d.f_t, dt(&|e| e.f)) < tol, "F_T");
    assert!(rel(d.f_tt, dt(&|e| e.f_t)) < tol, "F_TT");
    assert!(rel(d.f_tv, dt(&|e| e.f_v)) < tol, "F_TV");
    let hn = n.iter().sum::<f64>() * 1e-4;
    for i in 0..nc {
        let di = stencil(
            &|h| {
                let mut m = n.to_vec();
                m[i] += h;
                f(t, v, &m)
            },
            hn,
        );
        assert!(
            rel(d.f_n[i], di(&|e| e.f)) < tol,
            "F_n{i}: {} vs {}",
            d.f_n[i],
            di(&|e| e.f)
        );
        assert!(
            rel(d.f_nv[i], di(&|e| e.f_v)) < tol,
            "F_nV{i}: {} vs {}",
            d.f_nv[i],
            di(&|e| e.f_v)
        );
        assert!(rel(d.f_nt[i], di(&|e| e.f_t)) < tol, "F_nT{i}");
        assert!(rel(d.f_nt[i], dt(&|e| e.f_n[i])) < tol, "F_nT{i} (via T)");
        for j in 0..nc {
            let fd = di(&|e| e.f_n[j]);
            assert!(
                rel(d.f_nn[j * nc + i], fd) < tol,
                "F_n{j}n{i}: {} vs {fd}",
                d.f_nn[j * nc + i]
            );
        }
    }
}

fn check_lnphi(m: &CubicEos, t: f64, p: f64, n: &[f64], root: RootChoice) {
    let nc = n.len();
    let mut w = FugacityWork::new(nc);
    let mut o = LnPhi::new(nc);
    ln_phi(m, t, p, n, root, Need::ALL, &mut w, &mut o).unwrap();
    let mut e = LnPhi::new(nc);
    let mut eval = |t: f64, p: f64, n: &[f64]| {
        ln_phi(m, t, p, n, root, Need::VALUES, &mut w, &mut e).unwrap();
        (e.ln_phi.clone(), e.two_roots, e.v)
    };
    let ntot: f64 = n.iter().sum();
    // Σ n ln φ = G^r/RT and Gibbs–Duhem.
    let g: f64 = n.iter().zip(&o.ln_phi).map(|(a, b)| a * b).sum();
    assert!((g - o.g_res).abs() < 1e-12 * (1.0 + g.abs()));
    for j in 0..nc {
        let gd: f64 = (0..nc).map(|i| n[i] * o.dn[i * nc + j]).sum();
        assert!(gd.abs() < 1e-9 * (1.0 + ntot), "Gibbs–Duhem column {j}: {gd}");
        for i in 0..nc {
            assert!((o.dn[i * nc + j] - o.dn[j * nc + i]).abs() < 1e-9 * (1.0 + o.dn[i * nc + j].abs()));
        }
    }
    let ht = t * 1e-6;
    let hp = p * 1e-6;
    let (tp, c1, _) = eval(t + ht, p, n);
    let (tm, c2, _) = eval(t - ht, p, n);
    let (pp, c3, _) = eval(t, p + hp, n);
    let (pm, c4, _) = eval(t, p - hp, n);
    if c1 != c2 || c3 != c4 {
        return; // a root appeared or vanished inside the stencil
    }
    for i in 0..nc {
        let fdt = (tp[i] - tm[i]) / (2.0 * ht);
        let fdp = (pp[i] - pm[i]) / (2.0 * hp);
        assert!(
            (o.dt[i] - fdt).abs() < 1e-6 * (1.0 + fdt.abs()) / t,
            "dlnphi/dT {i}: {} vs {fdt}",
            o.dt[i]
        );
        assert!(
            (o.dp[i] - fdp).abs() < 1e-6 * (1.0 + (fdp * p).abs()) / p,
            "dlnphi/dp {i}: {} vs {fdp}",
            o.dp[i]
        );
    }
    for j in 0..nc {
        let hn = n[j].max(1e-3) * 1e-6;
        let mut np = n.to_vec();
        np[j] += hn;
        let mut nm = n.to_vec();
        nm[j] -= hn;
        let (a, ca, _) = eval(t, p, &np);
        let (b, cb, _) = eval(t, p, &nm);
        if ca != cb {
            continue;
        }
        for i in 0..nc {
            let fd = (a[i] - b[i]) / (2.0 * hn);
            assert!(
                (o.dn[i * nc + j] - fd).abs() < 1e-5 * (1.0 + fd.abs()),
                "dlnphi{i}/dn{j}: {} vs {fd}",
                o.dn[i * nc + j]
            );
        }
    }
}

fn kinds() -> impl Strategy<Value = (CubicKind, bool)> {
    prop_oneof![
        Just((CubicKind::PengRobinson, false)),
        Just((CubicKind::PengRobinson78, true)),
        Just((CubicKind::SoaveRedlichKwong, false)),
        Just((CubicKind::SoaveRedlichKwong, true)),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn helmholtz_derivatives_match_finite_differences(
        (kind, shift) in kinds(),
        t in 150.0f64..600.0,
        vfac in 1.3f64..200.0,
        // amounts well above zero: the stencil steps n_i by up to 2e-5 of the total
        n in prop::collection::vec(0.01f64..2.0, 4),
    ) {
        let m = model(kind, shift);
        let b: f64 = n.iter().zip(m.covolumes()).map(|(a, b)| a * b).sum();
        let c: f64 = n.iter().zip(m.volume_shift()).map(|(a, b)| a * b).sum();
        check_residual(&m, t, vfac * b - c, &n);
    }

    #[test]
    fn fugacity_derivatives_and_identities(
        (kind, shift) in kinds(),
        t in 150.0f64..600.0,
        p in 1e4f64..2e7,
        n in prop::collection::vec(0.01f64..2.0, 4),
        root in prop_oneof![Just(RootChoice::Stable), Just(RootChoice::Liquid), Just(RootChoice::Vapor)],
    ) {
        let m = model(kind, shift);
        check_lnphi(&m, t, p, &n, root);
    }
}

#[test]
fn volume_shift_leaves_k_values_unchanged() {
    // Péneloux et al. (1982): ln φ_i shifts by −c_i p/RT in every phase.
    let m0 = model(CubicKind::SoaveRedlichKwong, false);
    let m1 = model(CubicKind::SoaveRedlichKwong, true);
    let n = [0.4, 0.3, 0.1, 0.2];
    let (t, p) = (250.0, 3e6);
    let mut w = FugacityWork::new(4);
    let (mut a, mut b) = (LnPhi::new(4), LnPhi::new(4));
    ln_phi(&m0, t, p, &n, RootChoice::Liquid, Need::VALUES, &mut w, &mut a).unwrap();
    ln_phi(&m1, t, p, &n, RootChoice::Liquid, Need::VALUES, &mut w, &mut b).unwrap();
    for i in 0..4 {
        let c = m1.volume_shift()[i];
        let expect = a.ln_phi[i] - c * p / (tieline::substance::R * t);
        assert!((b.ln_phi[i] - expect).abs() < 1e-10, "{i}: {} vs {expect}", b.ln_phi[i]);
    }
    let c: f64 = n.iter().zip(m1.volume_shift()).map(|(a, b)| a * b).sum();
    assert!((b.v - (a.v - c)).abs() < 1e-12 * a.v);
}

/// A cubic model keeps its temperature-dependent mixing terms in the caller's storage, keyed
/// by its parameter set and T. One storage reused across models, parameter changes,
/// temperatures and derivative orders must give exactly what fresh storage gives.
#[test]
fn reused_storage_gives_the_fresh_results() {
    let a = model(CubicKind::PengRobinson, false);
    let b = a.clone().with_pair(0, 3, 0.05, 0.0).unwrap();
    let c = CubicEos::new(CubicKind::SoaveRedlichKwong, a.components().to_vec()).unwrap();
    let n = [0.4, 0.3, 0.1, 0.2];
    let mut shared = HelmholtzDerivs::new(4);
    let sequence: [(&CubicEos, f64, Need); 8] = [
        (&a, 250.0, Need::VALUES),
        (&a, 250.0, Need::ALL),
        (&a, 250.0, Need::VALUES),
        (&b, 250.0, Need::VALUES),
        (&a, 250.0, Need::COMPOSITION),
        (&c, 250.0, Need::ALL),
        (&a, 300.0, Need::ALL),
        (&b, 300.0, Need::VALUES),
    ];
    let v = 1e-3;
    for (k, (m, t, need)) in sequence.into_iter().enumerate() {
        let mut fresh = HelmholtzDerivs::new(4);
        m.residual(t, v, &n, need, &mut shared).unwrap();
        m.residual(t, v, &n, need, &mut fresh).unwrap();
        assert_eq!(shared.f.to_bits(), fresh.f.to_bits(), "step {k}: F");
        assert_eq!(shared.f_n, fresh.f_n, "step {k}: F_n");
        if need.temperature {
            assert_eq!(shared.f_t.to_bits(), fresh.f_t.to_bits(), "step {k}: F_T");
            assert_eq!(shared.f_nt, fresh.f_nt, "step {k}: F_nT");
        }
        if need.composition {
            assert_eq!(shared.f_nn, fresh.f_nn, "step {k}: F_nn");
        }
        let roots_shared = m.volume_roots(t, 5e6, &n, &mut shared).unwrap();
        let roots_fresh = m.volume_roots(t, 5e6, &n, &mut HelmholtzDerivs::new(4)).unwrap();
        assert_eq!(roots_shared, roots_fresh, "step {k}: volume roots");
    }
    // The modified model differs from its original (so the checks above could fail).
    let (mut da, mut db) = (HelmholtzDerivs::new(4), HelmholtzDerivs::new(4));
    a.residual(250.0, v, &n, Need::VALUES, &mut da).unwrap();
    b.residual(250.0, v, &n, Need::VALUES, &mut db).unwrap();
    assert_ne!(da.f, db.f);
}
