//! Checks every excess-Gibbs model must pass: analytic derivatives against central
//! differences, Σ x ln γ = g^E/RT, symmetry and Gibbs–Duhem of ∂ln γ/∂n, h^E and s^E against
//! numerical temperature derivatives of g^E, and no reallocation after the first call.

use super::{ExcessDerivs, ExcessGibbs};
use crate::model::Need;
use crate::substance::R;

fn close(a: f64, b: f64, rel: f64, abs: f64) -> bool {
    (a - b).abs() <= rel * a.abs().max(b.abs()) + abs
}

/// Runs every check at T (K) and amounts n (mol).
pub(crate) fn check_model<M: ExcessGibbs + ?Sized>(m: &M, t: f64, n: &[f64]) {
    let nc = m.num_components();
    let total: f64 = n.iter().sum();
    let mut out = ExcessDerivs::new(nc);
    m.excess(t, n, Need::ALL, &mut out).unwrap();
    let ptr = out.scratch.as_ptr();
    let cap = out.scratch.capacity();
    let base = out.clone();
    m.excess(t, n, Need::ALL, &mut out).unwrap();
    assert_eq!(
        (ptr, cap),
        (out.scratch.as_ptr(), out.scratch.capacity()),
        "scratch reallocated"
    );
    assert_eq!(out.ln_gamma, base.ln_gamma);

    // Values only give the same ln γ.
    let mut v = ExcessDerivs::new(nc);
    m.excess(t, n, Need::VALUES, &mut v).unwrap();
    for i in 0..nc {
        assert!(close(v.ln_gamma[i], base.ln_gamma[i], 1e-14, 1e-15));
    }
    // Σ x_i ln γ_i = g^E/RT.
    let sum: f64 = (0..nc).map(|i| n[i] / total * base.ln_gamma[i]).sum();
    assert!(
        close(sum, base.g_excess, 1e-12, 1e-14),
        "Σx lnγ = {sum} vs gE/RT {}",
        base.g_excess
    );

    // Composition derivatives against central differences (one-sided, second-order at n_j = 0).
    let h = 1e-5 * total;
    let mut w = ExcessDerivs::new(nc);
    let mut lg = |nn: &[f64]| {
        m.excess(t, nn, Need::VALUES, &mut w).unwrap();
        w.ln_gamma.clone()
    };
    for j in 0..nc {
        let mut np = n.to_vec();
        let num: Vec<f64> = if n[j] > 2.0 * h {
            np[j] = n[j] + h;
            let p = lg(&np);
            np[j] = n[j] - h;
            let q = lg(&np);
            (0..nc).map(|i| (p[i] - q[i]) / (2.0 * h)).collect()
        } else {
            let f0 = lg(n);
            np[j] = n[j] + h;
            let f1 = lg(&np);
            np[j] = n[j] + 2.0 * h;
            let f2 = lg(&np);
            (0..nc)
                .map(|i| (-3.0 * f0[i] + 4.0 * f1[i] - f2[i]) / (2.0 * h))
                .collect()
        };
        for i in 0..nc {
            let a = base.dn[i * nc + j];
            assert!(
                close(a, num[i], 1e-6, 1e-8 / total),
                "dlnγ{i}/dn{j}: analytic {a}, numeric {}",
                num[i]
            );
        }
    }
    // Symmetry and Gibbs–Duhem (Σ_j n_j ∂ln γ_i/∂n_j = 0 = Σ_i n_i ∂ln γ_i/∂n_j).
    for i in 0..nc {
        let mut gd = 0.0;
        let mut scale = 0.0;
        for j in 0..nc {
            let (a, b) = (base.dn[i * nc + j], base.dn[j * nc + i]);
            assert!(close(a, b, 1e-12, 1e-14), "asymmetric ({i}, {j}): {a} vs {b}");
            gd += n[j] * a;
            scale += (n[j] * a).abs();
        }
        assert!(gd.abs() <= 1e-12 * scale + 1e-14, "Gibbs–Duhem row {i}: {gd}");
    }

    // Temperature derivatives.
    let ht = 1e-4 * t;
    let mut wp = ExcessDerivs::new(nc);
    let mut wm = ExcessDerivs::new(nc);
    m.excess(t + ht, n, Need::VALUES, &mut wp).unwrap();
    m.excess(t - ht, n, Need::VALUES, &mut wm).unwrap();
    for i in 0..nc {
        let num = (wp.ln_gamma[i] - wm.ln_gamma[i]) / (2.0 * ht);
        assert!(
            close(base.dt[i], num, 1e-6, 1e-10),
            "dlnγ{i}/dT: analytic {}, numeric {num}",
            base.dt[i]
        );
    }
    let dg = (wp.g_excess - wm.g_excess) / (2.0 * ht);
    let he = -R * t * t * dg;
    assert!(
        close(base.h_excess, he, 1e-6, 1e-7),
        "hE analytic {}, numeric {he}",
        base.h_excess
    );
    let ge = |w: &ExcessDerivs, t: f64| R * t * w.g_excess;
    let se = -(ge(&wp, t + ht) - ge(&wm, t - ht)) / (2.0 * ht);
    assert!(
        close(base.s_excess, se, 1e-6, 1e-9),
        "sE analytic {}, numeric {se}",
        base.s_excess
    );
}
