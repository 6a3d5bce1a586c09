//! IAPWS-95 against the check tables of the release, IAPWS R6-95(2018) Tables 6, 7 and 8
//! (values as listed in published-values §1b–1d: "from memory + recomputed"), against
//! IAPWS-IF97 region 4 (R7-97(2012) Tables 35 and 36, published-values §4) and Perry's
//! saturated-water table (9th ed., Table 2-135, published-values §1e, verified), and its
//! analytic derivatives against finite differences.

use tieline::model::iapws95::{self, Iapws95, MOLAR_MASS, RHOC, TC, ideal_part, residual_part};
use tieline::model::{FluidModel, PhaseState, RootChoice, if97};

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[track_caller]
fn close(what: &str, got: f64, want: f64, tol: f64) {
    assert!(
        rel(got, want) <= tol,
        "{what}: got {got:.12e}, want {want:.12e}, relative error {:.2e} > {tol:.0e}",
        rel(got, want)
    );
}

/// R6-95 Table 6: φ° and φ^r with derivatives at T = 500 K, ρ = 838.025 kg/m3
/// (published-values §1b, from memory + recomputed). Printed to 9 digits: relative 1e-8.
/// φ°_δτ is exactly 0 by construction.
#[test]
fn table6_helmholtz_parts() {
    let (d, t) = (838.025 / RHOC, TC / 500.0);
    let o = ideal_part(d, t);
    close("phi0", o.phi, 0.204797733e1, 1e-8);
    close("phi0_d", o.d, 0.384236747, 1e-8);
    close("phi0_dd", o.dd, -0.147637878, 1e-8);
    close("phi0_t", o.t, 0.904611106e1, 1e-8);
    close("phi0_tt", o.tt, -0.193249185e1, 1e-8);
    assert_eq!(o.dt, 0.0);
    let r = residual_part(d, t);
    close("phir", r.phi, -0.342693206e1, 1e-8);
    close("phir_d", r.d, -0.364366650, 1e-8);
    close("phir_dd", r.dd, 0.856063701, 1e-8);
    close("phir_t", r.t, -0.581403435e1, 1e-8);
    close("phir_tt", r.tt, -0.223440737e1, 1e-8);
    close("phir_dt", r.dt, -0.112176915e1, 1e-8);
}

/// R6-95 Table 7: (T/K, ρ/(kg m-3)) → p/MPa, c_v, w, s (kJ/(kg K), m/s)
/// (published-values §1c, from memory + recomputed).
const TABLE7: [(f64, f64, f64, f64, f64, f64); 11] = [
    (
        300.0,
        0.9965560e3,
        0.992418352e-1,
        0.413018112e1,
        0.150151914e4,
        0.393062643,
    ),
    (
        300.0,
        0.1005308e4,
        0.200022515e2,
        0.406798347e1,
        0.153492501e4,
        0.387405401,
    ),
    (
        300.0,
        0.1188202e4,
        0.700004704e3,
        0.346135580e1,
        0.244357992e4,
        0.132609616,
    ),
    (
        500.0,
        0.4350000,
        0.999679423e-1,
        0.150817541e1,
        0.548314253e3,
        0.794488271e1,
    ),
    (
        500.0,
        0.4532000e1,
        0.999938125,
        0.166991025e1,
        0.535739001e3,
        0.682502725e1,
    ),
    (
        500.0,
        0.8380250e3,
        0.100003858e2,
        0.322106219e1,
        0.127128441e4,
        0.256690918e1,
    ),
    (
        500.0,
        0.1084564e4,
        0.700000405e3,
        0.307437693e1,
        0.241200877e4,
        0.203237509e1,
    ),
    (
        647.0,
        0.3580000e3,
        0.220384756e2,
        0.618315728e1,
        0.252145078e3,
        0.432092307e1,
    ),
    (
        900.0,
        0.2410000,
        0.100062559,
        0.175890657e1,
        0.724027147e3,
        0.916653194e1,
    ),
    (
        900.0,
        0.5261500e2,
        0.200000690e2,
        0.193510526e1,
        0.698445674e3,
        0.659070225e1,
    ),
    (
        900.0,
        0.8707690e3,
        0.700000006e3,
        0.266422350e1,
        0.201933608e4,
        0.417223802e1,
    ),
];

/// Every value of Table 7 to the printed 9 digits (relative 1e-8; a printed value is
/// rounded to half a unit in the 9th digit, at most 5e-9 relative). Two exceptions, stated:
/// * 500 K, 838.025 kg/m3, s: published-values notes that the recalled last digit may be
///   truncated (an independent evaluation gives 2.5669091854): compared to 2e-8.
/// * 647 K, 358 kg/m3, c_v and w: 0.09 K below Tc on the critical isochore the non-analytic
///   terms dominate the second derivatives; the recomputation behind the listed values only
///   confirmed ~6 digits there (numerical differentiation). We evaluate analytically and
///   compare to 1e-8 all the same; see the assertion.
#[test]
fn table7_single_phase() {
    let m = Iapws95::new();
    for &(t, rho, p, cv, w, s) in &TABLE7 {
        let st = m.state_td(t, rho).unwrap();
        let tag = format!("T = {t} K, rho = {rho}");
        close(&format!("p at {tag}"), st.pressure / 1e6, p, 1e-8);
        close(&format!("cv at {tag}"), st.cv / 1e3, cv, 1e-8);
        close(&format!("w at {tag}"), st.speed_of_sound, w, 1e-8);
        let stol = if t == 500.0 && rho == 838.025 { 2e-8 } else { 1e-8 };
        close(&format!("s at {tag}"), st.entropy / 1e3, s, stol);
    }
}

/// R6-95 Table 8 (published-values §1d, from memory + recomputed): saturation at 275, 450,
/// 625 K from a full phase-equilibrium solve at the given T (not p(T, ρ') — see the note in
/// published-values: the stiff liquid makes p(ρ' rounded) differ by 0.3 Pa at 275 K).
/// Printed 9 digits: relative 1e-8.
#[test]
fn table8_saturation() {
    let m = Iapws95::new();
    #[allow(clippy::type_complexity)]
    let rows: [(f64, [f64; 7]); 3] = [
        (
            275.0,
            [
                0.698451167e-3,
                0.999887406e3,
                0.550664919e-2,
                0.775972202e1,
                0.250428995e4,
                0.283094670e-1,
                0.910660121e1,
            ],
        ),
        (
            450.0,
            [
                0.932203564,
                0.890341250e3,
                0.481200360e1,
                0.749161585e3,
                0.277441078e4,
                0.210865845e1,
                0.660921221e1,
            ],
        ),
        (
            625.0,
            [
                0.169082693e2,
                0.567090385e3,
                0.118290280e3,
                0.168626976e4,
                0.255071625e4,
                0.380194683e1,
                0.518506121e1,
            ],
        ),
    ];
    for (t, v) in rows {
        let s = m.saturation_at_temperature(t).unwrap();
        let tag = format!("T = {t} K");
        close(&format!("p_sigma {tag}"), s.pressure / 1e6, v[0], 1e-8);
        close(&format!("rho' {tag}"), s.liquid.density, v[1], 1e-8);
        close(&format!("rho'' {tag}"), s.vapor.density, v[2], 1e-8);
        close(&format!("h' {tag}"), s.liquid.enthalpy / 1e3, v[3], 1e-8);
        close(&format!("h'' {tag}"), s.vapor.enthalpy / 1e3, v[4], 1e-8);
        close(&format!("s' {tag}"), s.liquid.entropy / 1e3, v[5], 1e-8);
        close(&format!("s'' {tag}"), s.vapor.entropy / 1e3, v[6], 1e-8);
        // Equal pressure and Gibbs energy of the two phases, to round-off.
        // (The dense liquid's p is a small difference of large terms: ~1e-8 relative at 275 K.)
        assert!(rel(s.liquid.pressure, s.vapor.pressure) < 1e-7, "{tag}");
        assert!(
            (s.liquid.gibbs - s.vapor.gibbs).abs() < 1e-9 * s.liquid.enthalpy.abs().max(1e3),
            "{tag}"
        );
    }
}

/// IF97 region 4 (R7-97(2012) Table 35: p_s at 300, 500, 600 K; Table 36: T_s at 0.1, 1,
/// 10 MPa; published-values §4, from memory + recomputed): our Eq. 30/31 reproduce the
/// printed 9 digits (relative 1e-8). IAPWS-95 saturation (Akasaka) agrees with IF97 within
/// the consistency IF97 was built to: p_s within 0.025 % and T_s within 0.02 % (the
/// release's permissible deviations from IAPWS-95 as recalled, from memory; the observed
/// deviations are ~1e-5 relative, far inside).
#[test]
fn if97_region4_cross_check() {
    let m = Iapws95::new();
    for (t, p_mpa) in [(300.0, 0.353658941e-2), (500.0, 0.263889776e1), (600.0, 0.123443146e2)] {
        let p = if97::saturation_pressure(t).unwrap();
        close(&format!("IF97 p_s({t})"), p / 1e6, p_mpa, 1e-8);
        let s = m.saturation_at_temperature(t).unwrap();
        close(&format!("IAPWS-95 vs IF97 p_s({t})"), s.pressure, p, 2.5e-4);
    }
    for (p_mpa, t) in [(0.1, 0.372755919e3), (1.0, 0.453035632e3), (10.0, 0.584149488e3)] {
        let ts = if97::saturation_temperature(p_mpa * 1e6).unwrap();
        close(&format!("IF97 T_s({p_mpa} MPa)"), ts, t, 1e-8);
        let s = m.saturation_at_pressure(p_mpa * 1e6).unwrap();
        close(&format!("IAPWS-95 vs IF97 T_s({p_mpa} MPa)"), s.temperature, ts, 2e-4);
        close("p of the T_s solve", s.pressure, p_mpa * 1e6, 1e-12);
    }
}

/// Perry's Chemical Engineers' Handbook, 9th ed., Table 2-135 (saturated water, molar units,
/// itself generated from IAPWS-95; published-values §1e, verified): every listed value agrees
/// to half a unit of its last printed digit.
#[test]
fn perry_saturated_water_table() {
    let m = Iapws95::new();
    let mm = MOLAR_MASS;
    // (T, p/MPa, ρ'/(mol/dm3), h'/(kJ/mol), s'/(kJ/(mol K)), cp'/(kJ/(mol K)), w'/(m/s)); NaN = not listed.
    let nan = f64::NAN;
    let rows = [
        (273.16, 0.000612, 55.497, nan, nan, 0.076023, 1402.3),
        (300.0, 0.003537, 55.315, 2.0279, 0.007082, 0.075320, 1501.4),
        (350.0, 0.041682, 54.049, 5.7972, nan, nan, nan),
        (400.0, 0.24577, 52.038, nan, nan, nan, nan),
    ];
    let half_unit = |x: f64| {
        // Half a unit in the last printed digit of x (printed with 5 significant digits,
        // or 3 for the 273.16 K and 300 K pressures).
        let s = format!("{x}");
        let decimals = s.split('.').nth(1).map_or(0, |d| d.len());
        0.5 * 10f64.powi(-(decimals as i32))
    };
    for (t, p, rho, h, s, cp, w) in rows {
        let sat = m.saturation_at_temperature(t).unwrap();
        let l = &sat.liquid;
        let got = [
            (sat.pressure / 1e6, p, "p"),
            (l.density / mm / 1e3, rho, "rho'"),
            (l.enthalpy * mm / 1e3, h, "h'"),
            (l.entropy * mm / 1e3, s, "s'"),
            (l.cp * mm / 1e3, cp, "cp'"),
            (l.speed_of_sound, w, "w'"),
        ];
        for (g, want, what) in got {
            if want.is_nan() {
                continue;
            }
            assert!(
                (g - want).abs() <= half_unit(want) * (1.0 + 1e-9),
                "Perry 2-135 {what} at {t} K: {g} vs {want}"
            );
        }
    }
}

/// Saturation by Akasaka's method over the whole range, triple point to 1 mK below Tc:
/// converged, p_L = p_V and g_L = g_V, liquid denser than vapour, and the IAPWS-95 triple-point
/// vapour pressure 611.655 Pa (R6-95, published-values §1a, from memory, low-medium
/// confidence) to its printed 6 digits.
#[test]
fn saturation_from_triple_to_critical_point() {
    let m = Iapws95::new();
    let mut t = iapws95::T_TRIPLE;
    let mut last_p = 0.0;
    while t < TC {
        let s = m.saturation_at_temperature(t).unwrap_or_else(|e| panic!("{t}: {e}"));
        assert!(s.liquid.density > RHOC && s.vapor.density < RHOC, "{t}");
        assert!(s.pressure > last_p, "p_sigma must rise with T at {t}");
        let rt = iapws95::R_SPECIFIC * t;
        assert!(((s.liquid.gibbs - s.vapor.gibbs) / rt).abs() < 1e-11, "g at {t}");
        assert!(rel(s.liquid.pressure, s.vapor.pressure) < 1e-7, "p at {t}");
        last_p = s.pressure;
        t = if t < 640.0 {
            t + 3.7
        } else if t < 647.0 {
            t + 0.37
        } else {
            t + (TC - t) * 0.6 + 1e-4
        };
    }
    let tp = m.saturation_at_temperature(iapws95::T_TRIPLE).unwrap();
    assert!(
        (tp.pressure - 611.655).abs() <= 0.0005,
        "triple-point pressure {}",
        tp.pressure
    );
    // Saturation at p inverts saturation at T.
    for p in [700.0, 1e4, 101325.0, 3e6, 2.2e7] {
        let s = m.saturation_at_pressure(p).unwrap();
        let back = m.saturation_at_temperature(s.temperature).unwrap();
        close("p_sigma(T_sigma(p))", back.pressure, p, 1e-11);
    }
    assert!(m.saturation_at_pressure(500.0).is_err());
    assert!(m.saturation_at_pressure(2.3e7).is_err());
    assert!(m.saturation_at_temperature(273.0).is_err());
}

fn fd_check(d: f64, t: f64) {
    let r = residual_part(d, t);
    let o = ideal_part(d, t);
    let hd = 1e-6 * d;
    let ht = 1e-6 * t;
    let (rdp, rdm) = (residual_part(d + hd, t), residual_part(d - hd, t));
    let (rtp, rtm) = (residual_part(d, t + ht), residual_part(d, t - ht));
    let (odp, odm) = (ideal_part(d + hd, t), ideal_part(d - hd, t));
    let (otp, otm) = (ideal_part(d, t + ht), ideal_part(d, t - ht));
    let c = |a: f64, b: f64, h: f64| (a - b) / (2.0 * h);
    let err = |an: f64, fd: f64, scale: f64| (an - fd).abs() / an.abs().max(fd.abs()).max(scale);
    let tol = 3e-7;
    let tag = format!("delta = {d}, tau = {t}");
    assert!(err(r.d, c(rdp.phi, rdm.phi, hd), 1.0) < tol, "phir_d {tag}");
    assert!(err(r.dd, c(rdp.d, rdm.d, hd), 1.0) < tol, "phir_dd {tag}");
    assert!(err(r.t, c(rtp.phi, rtm.phi, ht), 1.0) < tol, "phir_t {tag}");
    assert!(
        err(r.tt, c(rtp.t, rtm.t, ht), 1.0) < tol,
        "phir_tt {tag}: {} vs {}",
        r.tt,
        c(rtp.t, rtm.t, ht)
    );
    assert!(err(r.dt, c(rtp.d, rtm.d, ht), 1.0) < tol, "phir_dt {tag}");
    assert!(err(r.dt, c(rdp.t, rdm.t, hd), 1.0) < tol, "phir_td {tag}");
    assert!(err(o.d, c(odp.phi, odm.phi, hd), 1.0) < tol, "phi0_d {tag}");
    assert!(err(o.dd, c(odp.d, odm.d, hd), 1.0) < tol, "phi0_dd {tag}");
    assert!(err(o.t, c(otp.phi, otm.phi, ht), 1.0) < tol, "phi0_t {tag}");
    assert!(err(o.tt, c(otp.t, otm.t, ht), 1.0) < tol, "phi0_tt {tag}");
}

/// Analytic derivatives of φ° and φ^r against central differences (step 1e-6 relative; the
/// truncation and round-off of the differences limit the agreement to ~1e-8, so 3e-7 is
/// asserted), over the single-phase region and close to the critical point, where the
/// non-analytic terms 55–56 dominate (within 2 % of ρc and Tc; at δ = 1 exactly the
/// differences straddle the cusp of ((δ−1)²)^(1/(2β)), so they are taken off the line).
#[test]
fn analytic_vs_finite_difference_derivatives() {
    for &(d, t) in &[
        (2.6025621, 1.294192),
        (0.001, 2.0),
        (0.5, 0.8),
        (3.0, 2.3),
        (1.1, 1.02),
        (0.95, 0.99),
        (1.02, 1.003),
        (0.985, 1.0005),
        (1.3, 1.0),
        (3.6, 0.5),
    ] {
        fd_check(d, t);
    }
}

/// The molar interface ([`FluidModel`] + the generic property code) against the native
/// per-kg functions: p, ρ, cp, cv, w, μ_JT agree to round-off; h and s differ by the stated
/// reference shift only; the ideal gas at 298.15 K, 1e5 Pa has h = ΔfH°(H2O, g) and
/// g = ΔfG°(H2O, g) (CODATA/JANAF, published-values §7a, from memory).
#[test]
fn molar_interface_matches_native() {
    let m = Iapws95::new();
    let (h0, s0) = iapws95::library_shift();
    let mm = MOLAR_MASS;
    for &(t, p, root) in &[
        (300.0, 1e5, RootChoice::Liquid),
        (500.0, 1e5, RootChoice::Vapor),
        (450.0, 0.932203564e6 * 1.01, RootChoice::Vapor), // supersaturated vapour (metastable)
        (450.0, 0.932203564e6 * 0.99, RootChoice::Liquid), // superheated liquid (metastable)
        (647.0, 22.0384756e6, RootChoice::Stable),
        (900.0, 20e6, RootChoice::Stable),
        (300.0, 700e6, RootChoice::Stable),
    ] {
        let nat = m.state_tp(t, p, root).unwrap();
        let ps = PhaseState::new(&m, t, p, &[2.0], root).unwrap();
        let pr = ps.properties(&m).unwrap();
        let tag = format!("{t} K, {p} Pa");
        close(&format!("density {tag}"), pr.mass_density, nat.density, 1e-13);
        close(&format!("h {tag}"), pr.enthalpy, mm * nat.enthalpy + h0, 1e-11);
        assert!(
            (pr.entropy - (mm * nat.entropy + s0)).abs() < 1e-10 * s0.abs(),
            "s {tag}"
        );
        close(&format!("cp {tag}"), pr.cp, mm * nat.cp, 1e-10);
        close(&format!("cv {tag}"), pr.cv, mm * nat.cv, 1e-10);
        close(&format!("w {tag}"), pr.speed_of_sound, nat.speed_of_sound, 1e-10);
        close(&format!("JT {tag}"), pr.joule_thomson, nat.joule_thomson, 1e-9);
        close(
            &format!("kappa {tag}"),
            pr.isothermal_compressibility,
            nat.isothermal_compressibility,
            1e-10,
        );
    }
    let ig = m.ideal_gas(298.15, 0).unwrap();
    assert!((ig.h - -241.826e3).abs() < 1e-6);
    assert!((ig.h - 298.15 * ig.s - -228.582e3).abs() < 1e-6);
    // Generic saturation of the library on this model agrees with Akasaka's solve.
    let opts = tieline::equilibrium::SaturationOptions::default();
    for t in [280.0, 373.15, 500.0, 640.0] {
        let a = m.saturation_at_temperature(t).unwrap();
        let g = tieline::equilibrium::saturation_pressure(&m, t, 0, &opts).unwrap();
        close(&format!("generic p_sat({t})"), g.pressure, a.pressure, 1e-9);
    }
}

/// Molar residual derivatives of the [`FluidModel`] implementation against central
/// differences in T, V and n.
#[test]
fn fluid_model_derivatives() {
    use tieline::model::{HelmholtzDerivs, Need};
    let m = Iapws95::new();
    for &(t, rho) in &[(300.0, 996.0), (500.0, 4.5), (647.5, 330.0), (900.0, 870.0)] {
        let n = [1.7];
        let v = n[0] * MOLAR_MASS / rho;
        let ev = |t: f64, v: f64, n: f64| {
            let mut d = HelmholtzDerivs::new(1);
            m.residual(t, v, &[n], Need::ALL, &mut d).unwrap();
            d
        };
        let d = ev(t, v, n[0]);
        let (hv, ht, hn) = (v * 1e-6, t * 1e-6, n[0] * 1e-6);
        let c = |a: f64, b: f64, h: f64| (a - b) / (2.0 * h);
        let err = |an: f64, fd: f64| (an - fd).abs() / an.abs().max(fd.abs()).max(1e-3);
        let (vp, vm, tp, tm, np, nm) = (
            ev(t, v + hv, n[0]),
            ev(t, v - hv, n[0]),
            ev(t + ht, v, n[0]),
            ev(t - ht, v, n[0]),
            ev(t, v, n[0] + hn),
            ev(t, v, n[0] - hn),
        );
        let tag = format!("{t} K, {rho} kg/m3");
        assert!(err(d.f_v, c(vp.f, vm.f, hv)) < 1e-7, "F_V {tag}");
        assert!(err(d.f_vv, c(vp.f_v, vm.f_v, hv)) < 1e-7, "F_VV {tag}");
        assert!(err(d.f_t, c(tp.f, tm.f, ht)) < 1e-7, "F_T {tag}");
        assert!(err(d.f_tt, c(tp.f_t, tm.f_t, ht)) < 1e-7, "F_TT {tag}");
        assert!(err(d.f_tv, c(tp.f_v, tm.f_v, ht)) < 1e-7, "F_TV {tag}");
        assert!(err(d.f_n[0], c(np.f, nm.f, hn)) < 1e-7, "F_n {tag}");
        assert!(err(d.f_nv[0], c(np.f_v, nm.f_v, hn)) < 1e-7, "F_nV {tag}");
        assert!(err(d.f_nt[0], c(np.f_t, nm.f_t, hn)) < 1e-7, "F_nT {tag}");
        assert!(err(d.f_nn[0], c(np.f_n[0], nm.f_n[0], hn)) < 1e-7, "F_nn {tag}");
    }
}

/// Density roots at (T, p): the stable root has the least Gibbs energy; metastable roots
/// exist on request between saturation and the spinodal and not beyond; every root
/// reproduces p.
#[test]
fn density_roots_and_metastable_states() {
    let m = Iapws95::new();
    let sat = m.saturation_at_temperature(450.0).unwrap();
    let ps = sat.pressure;
    // Just below p_sigma: vapour stable, liquid metastable.
    let p = ps * 0.98;
    let rv = m.density(450.0, p, RootChoice::Stable).unwrap();
    assert!(rv < RHOC);
    let rl = m.density(450.0, p, RootChoice::Liquid).unwrap();
    assert!(rl > RHOC);
    assert!(m.state_td(450.0, rl).unwrap().gibbs > m.state_td(450.0, rv).unwrap().gibbs);
    for (rho, want) in [(rv, p), (rl, p)] {
        close("p(rho)", m.pressure(450.0, rho).unwrap(), want, 1e-11);
    }
    // Just above: liquid stable.
    assert!(m.density(450.0, ps * 1.02, RootChoice::Stable).unwrap() > RHOC);
    // Far above p_sigma the vapour branch ends at its spinodal: no vapour root.
    assert_eq!(
        m.density(450.0, 50.0 * ps, RootChoice::Vapor).unwrap().round(),
        m.density(450.0, 50.0 * ps, RootChoice::Liquid).unwrap().round()
    );
    assert!(m.density(450.0, 50.0 * ps, RootChoice::Stable).unwrap() > RHOC);
    // Supercritical: one root for every choice.
    let a = m.density(700.0, 30e6, RootChoice::Liquid).unwrap();
    let b = m.density(700.0, 30e6, RootChoice::Vapor).unwrap();
    assert_eq!(a, b);
    close("p(700 K)", m.pressure(700.0, a).unwrap(), 30e6, 1e-12);
}
