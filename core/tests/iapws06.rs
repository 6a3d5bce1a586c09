//! Ice Ih by IAPWS-06 against the release's check-value table (IAPWS R10-06(2009), Table 6;
//! published-values §2b, from memory + recomputed), its derivatives against finite
//! differences, and the solid model's molar interface.

use tieline::model::iapws95::{self, MOLAR_MASS};
use tieline::model::solid::{IceIh, SolidModel};

#[track_caller]
fn close(what: &str, got: f64, want: f64, tol: f64) {
    let r = (got - want).abs() / want.abs();
    assert!(
        r <= tol,
        "{what}: got {got:.12e}, want {want:.12e}, relative {r:.2e} > {tol:.0e}"
    );
}

/// R10-06 check values at (273.16 K, 611.657 Pa), (273.152519 K, 101325 Pa) and
/// (100 K, 100 MPa): g, g_p, g_T, g_pp, g_Tp, g_TT, h, f, u, s, c_p, ρ, α, β, κ_T, κ_s, all
/// to 1e-8 relative except where the printed value has fewer digits: g at the triple point
/// (0.611784135, 9 digits) and f there (−0.55446875e-1, 8 digits: 1e-7). Each value is a
/// small difference of terms of order 1e5–1e6 J/kg, so the printed digits test every
/// coefficient.
#[test]
fn r10_06_check_table() {
    let ice = IceIh::new();
    #[allow(clippy::type_complexity)]
    let cols: [(f64, f64, [f64; 16]); 3] = [
        (
            273.16,
            611.657,
            [
                0.611784135,
                0.109085812737e-2,
                0.122069433940e4,
                -0.128495941571e-12,
                0.174387964700e-6,
                -0.767602985875e1,
                -0.333444253966e6,
                -0.55446875e-1,
                -0.333444921197e6,
                -0.122069433940e4,
                0.209678431622e4,
                0.916709492200e3,
                0.159863102566e-3,
                0.135714764659e7,
                0.117793449348e-9,
                0.114161597779e-9,
            ],
        ),
        (
            273.152519,
            101325.0,
            [
                0.10134274069e3,
                0.109084388214e-2,
                0.122076932550e4,
                -0.128485364928e-12,
                0.174362219972e-6,
                -0.767598233365e1,
                -0.333354873637e6,
                -0.918701567e1,
                -0.333465403393e6,
                -0.122076932550e4,
                0.209671391024e4,
                0.916721463419e3,
                0.159841589458e-3,
                0.135705899321e7,
                0.117785291765e-9,
                0.114154442556e-9,
            ],
        ),
        (
            100.0,
            100e6,
            [
                -0.222296513088e6,
                0.106193389260e-2,
                0.261195122589e4,
                -0.941807981761e-13,
                0.274505162488e-7,
                -0.866333195517e1,
                -0.483491635676e6,
                -0.328489902347e6,
                -0.589685024936e6,
                -0.261195122589e4,
                0.866333195517e3,
                0.941678203297e3,
                0.258495528207e-4,
                0.291466166994e6,
                0.886880048115e-10,
                0.886060982687e-10,
            ],
        ),
    ];
    let names = [
        "g", "g_p", "g_T", "g_pp", "g_Tp", "g_TT", "h", "f", "u", "s", "cp", "rho", "alpha", "beta", "kappa_T",
        "kappa_s",
    ];
    for (t, p, want) in cols {
        let d = ice.gibbs(t, p).unwrap();
        let pr = ice.specific_properties(t, p).unwrap();
        let got = [
            d.g,
            d.g_p,
            d.g_t,
            d.g_pp,
            d.g_tp,
            d.g_tt,
            pr.enthalpy,
            pr.helmholtz,
            pr.internal_energy,
            pr.entropy,
            pr.cp,
            pr.density,
            pr.thermal_expansion,
            pr.pressure_coefficient,
            pr.isothermal_compressibility,
            pr.isentropic_compressibility,
        ];
        for k in 0..16 {
            let tol = if t == 273.16 && names[k] == "f" { 1e-7 } else { 1e-8 };
            close(&format!("{} at {t} K, {p} Pa", names[k]), got[k], want[k], tol);
        }
    }
}

/// Analytic first and second derivatives against central differences (steps 1e-5 K and
/// 1 Pa·1e3 relative; g_pp by differences loses ~3 digits, as published-values notes, so
/// 1e-5 is asserted there, 1e-3 for g_Tp from differences of g_T in p, and 1e-7 elsewhere).
#[test]
fn ice_derivatives_vs_finite_differences() {
    let ice = IceIh::new();
    for (t, p) in [(250.0, 1e5), (150.0, 50e6), (30.0, 1e3), (270.0, 200e6)] {
        let d = ice.gibbs(t, p).unwrap();
        let ht = 1e-4 * t;
        let hp = 1e-3 * p;
        let (tp, tm) = (ice.gibbs(t + ht, p).unwrap(), ice.gibbs(t - ht, p).unwrap());
        let (pp, pm) = (ice.gibbs(t, p + hp).unwrap(), ice.gibbs(t, p - hp).unwrap());
        let c = |a: f64, b: f64, h: f64| (a - b) / (2.0 * h);
        let tag = format!("{t} K, {p} Pa");
        close(&format!("g_T {tag}"), d.g_t, c(tp.g, tm.g, ht), 1e-7);
        close(&format!("g_TT {tag}"), d.g_tt, c(tp.g_t, tm.g_t, ht), 1e-7);
        close(&format!("g_p {tag}"), d.g_p, c(pp.g, pm.g, hp), 1e-7);
        // (∂g_T/∂p by differences cancels badly: g_T changes by ~1e-9 of itself over the step.)
        close(&format!("g_Tp {tag}"), d.g_tp, c(pp.g_t, pm.g_t, hp), 1e-3);
        close(&format!("g_pT {tag}"), d.g_tp, c(tp.g_p, tm.g_p, ht), 1e-7);
        close(&format!("g_pp {tag}"), d.g_pp, c(pp.g_p, pm.g_p, hp), 1e-5);
    }
}

/// The molar solid interface is the per-kg function times M, shifted to the library
/// reference by the same constants as the IAPWS-95 water model.
#[test]
fn ice_molar_interface() {
    let ice = IceIh::new();
    let (h0, s0) = iapws95::library_shift();
    let (t, p) = (260.0, 2e5);
    let nat = ice.specific_properties(t, p).unwrap();
    let m = ice.properties(t, p).unwrap();
    close("h", m.enthalpy, MOLAR_MASS * nat.enthalpy + h0, 1e-13);
    close("s", m.entropy, MOLAR_MASS * nat.entropy + s0, 1e-13);
    close("g", m.gibbs, m.enthalpy - t * m.entropy, 1e-15);
    close("v", m.molar_volume, MOLAR_MASS / nat.density, 1e-14);
    close("cp", m.cp, MOLAR_MASS * nat.cp, 1e-14);
    assert_eq!(ice.species(), "water");
}
