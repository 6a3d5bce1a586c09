//! Energies, heat capacities and saturation states: checks against published thermochemistry
//! and the exact identities of thermodynamics.

use tieline::equilibrium::*;
use tieline::model::{CubicEos, CubicKind, FluidModel, PhaseState, RootChoice};
use tieline::substance::{DataBank, P_STANDARD, R};

fn pr(names: &[&str]) -> CubicEos {
    CubicEos::new(CubicKind::PengRobinson, DataBank::embedded().get_many(names).unwrap()).unwrap()
}

/// Molar Gibbs energy of a pure ideal gas at T and 1e5 Pa in the library's reference state.
fn g_ig(name: &str, t: f64) -> f64 {
    let c = DataBank::embedded().get(name).unwrap();
    let ig = c.ideal_gas(t).unwrap();
    ig.h - t * ig.s
}

#[test]
fn gibbs_energies_of_formation_at_1000_k() {
    // NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998), 1000 K, 0.1 MPa (values from
    // memory, published-values §7b): ΔfG°(H2O, g) = −192.590 kJ/mol; ΔfG°(CO2) = −395.886,
    // ΔfG°(CO) = −200.275 kJ/mol. The tolerance, 0.5 kJ/mol, reflects the ideal-gas cp
    // polynomials (about 1 % in cp, integrated over 700 K; common practice, no source).
    let t = 1000.0;
    let dg_h2o = g_ig("water", t) - g_ig("hydrogen", t) - 0.5 * g_ig("oxygen", t);
    assert!(
        (dg_h2o / 1e3 + 192.590).abs() < 0.5,
        "ΔfG(H2O) = {} kJ/mol",
        dg_h2o / 1e3
    );
    // CO + ½ O2 → CO2 (graphite, absent from the fluid bank, cancels).
    let dg = g_ig("carbon dioxide", t) - g_ig("carbon monoxide", t) - 0.5 * g_ig("oxygen", t);
    assert!(
        (dg / 1e3 - (-395.886 + 200.275)).abs() < 0.5,
        "ΔrG = {} kJ/mol",
        dg / 1e3
    );
    // Water-gas shift at 1000 K: K = 1.44 (derived from the JANAF log Kf values, §7c).
    let dg_wgs = g_ig("carbon dioxide", t) + g_ig("hydrogen", t) - g_ig("carbon monoxide", t) - g_ig("water", t);
    let k = (-dg_wgs / (R * t)).exp();
    assert!((k / 1.44 - 1.0).abs() < 0.07, "K = {k}");
    // At 298.15 K the formation values are reproduced exactly by construction of the
    // reference state (h = ΔfH°, g = ΔfG°).
    let c = DataBank::embedded().get("water").unwrap();
    assert!((g_ig("water", 298.15) - c.gf298).abs() < 1e-6);
}

#[test]
fn energies_obey_the_exact_identities() {
    // (∂g/∂T)_p = −s, (∂g/∂p)_T = v, (∂h/∂T)_p = cp, μ_JT = −(∂h/∂p)_T/cp,
    // cp − cv = T v α²/κ_T, w² = (cp/cv)/(ρ_mass κ_T): identities of thermodynamics
    // (e.g. Callen, Thermodynamics, 2nd ed., ch. 7), checked by central differences.
    let m = pr(&["methane", "ethane", "propane"]);
    let n = [0.7, 0.2, 0.1];
    for (t, p, root) in [
        (300.0, 5e6, RootChoice::Stable),
        (250.0, 2e5, RootChoice::Vapor),
        (200.0, 5e6, RootChoice::Liquid),
    ] {
        let pr_at = |t: f64, p: f64| PhaseState::new(&m, t, p, &n, root).unwrap().properties(&m).unwrap();
        let x = pr_at(t, p);
        let (ht, hp) = (t * 1e-5, p * 1e-5);
        let (tp, tm) = (pr_at(t + ht, p), pr_at(t - ht, p));
        let (pp, pm) = (pr_at(t, p + hp), pr_at(t, p - hp));
        let close = |a: f64, b: f64, what: &str| {
            assert!(
                (a - b).abs() <= 1e-5 * a.abs().max(b.abs()),
                "{what} at {t} K, {p} Pa: {a} vs {b}"
            )
        };
        close(-(tp.gibbs - tm.gibbs) / (2.0 * ht), x.entropy, "-dg/dT = s");
        close((pp.gibbs - pm.gibbs) / (2.0 * hp), x.molar_volume, "dg/dp = v");
        close((tp.enthalpy - tm.enthalpy) / (2.0 * ht), x.cp, "dh/dT = cp");
        close(-(pp.enthalpy - pm.enthalpy) / (2.0 * hp) / x.cp, x.joule_thomson, "JT");
        close(
            (tp.molar_volume - tm.molar_volume) / (2.0 * ht) / x.molar_volume,
            x.thermal_expansion,
            "alpha",
        );
        close(
            -(pp.molar_volume - pm.molar_volume) / (2.0 * hp) / x.molar_volume,
            x.isothermal_compressibility,
            "kappa_T",
        );
        close(
            x.cp - x.cv,
            t * x.molar_volume * x.thermal_expansion.powi(2) / x.isothermal_compressibility,
            "cp - cv",
        );
        close(
            x.speed_of_sound.powi(2),
            x.cp / x.cv / (x.mass_density * x.isothermal_compressibility),
            "w^2",
        );
        close(x.gibbs, x.enthalpy - t * x.entropy, "g = h - Ts");
    }
}

#[test]
fn ideal_gas_limit() {
    // At vanishing pressure every residual property tends to zero and Z to one.
    let m = pr(&["nitrogen", "carbon dioxide"]);
    let s = PhaseState::new(&m, 300.0, 10.0, &[0.5, 0.5], RootChoice::Stable).unwrap();
    let x = s.properties(&m).unwrap();
    assert!((x.z - 1.0).abs() < 1e-5);
    assert!(x.residual_enthalpy.abs() < 1e-2 && x.residual_entropy.abs() < 1e-4);
    let c: Vec<_> = DataBank::embedded().get_many(&["nitrogen", "carbon dioxide"]).unwrap();
    let cp_ig = 0.5 * (c[0].ideal_gas(300.0).unwrap().cp + c[1].ideal_gas(300.0).unwrap().cp);
    assert!((x.cp - cp_ig).abs() < 1e-3, "{} vs {cp_ig}", x.cp);
    // Ideal mixing entropy: s = Σ x s_i° − R Σ x ln(x p/p°).
    let smix = 0.5 * (c[0].ideal_gas(300.0).unwrap().s + c[1].ideal_gas(300.0).unwrap().s)
        - R * (0.5f64 * 10.0 / P_STANDARD).ln();
    assert!((x.entropy - smix).abs() < 1e-3, "{} vs {smix}", x.entropy);
}

#[test]
fn outside_the_cp_range_energies_are_an_error() {
    // Fugacities do not need the ideal-gas part, energies do: no silent extrapolation.
    let m = pr(&["methane"]);
    let s = PhaseState::new(&m, 1500.0, 1e5, &[1.0], RootChoice::Stable).unwrap();
    let e = s.properties(&m).unwrap_err();
    assert_eq!(e.kind(), tieline::ErrorKind::OutsideValidity, "{e}");
    assert!(flash_pt(&m, 1500.0, 1e5, &[1.0], &FlashOptions::default()).is_ok());
}

#[test]
fn saturation_is_consistent_with_clapeyron_and_its_inverse() {
    let m = pr(&["propane"]);
    let o = SaturationOptions::default();
    for t in [200.0, 280.0, 340.0, 365.0, 369.0] {
        let s = saturation_pressure(&m, t, 0, &o).unwrap();
        // Clapeyron: dp/dT = Δh/(T Δv) (exact), by central differences of p_sat(T).
        let h = 1e-3;
        let dpdt = (saturation_pressure(&m, t + h, 0, &o).unwrap().pressure
            - saturation_pressure(&m, t - h, 0, &o).unwrap().pressure)
            / (2.0 * h);
        let clap = s.enthalpy_of_vaporization / (t * (s.vapor_molar_volume - s.liquid_molar_volume));
        assert!((dpdt / clap - 1.0).abs() < 1e-5, "T = {t}: {dpdt} vs {clap}");
        // The boiling temperature at that pressure is T again.
        let back = saturation_temperature(&m, s.pressure, 0, &o).unwrap();
        assert!((back.temperature - t).abs() < 1e-7 * t, "{} vs {t}", back.temperature);
        assert!(s.liquid_density > s.vapor_density);
    }
    // Approaching the critical point the two densities merge.
    let tc = m.critical_constants(0).tc;
    let s = saturation_pressure(&m, tc - 0.01, 0, &o).unwrap();
    assert!(
        s.liquid_density / s.vapor_density < 1.2,
        "{}",
        s.liquid_density / s.vapor_density
    );
    assert!(saturation_pressure(&m, tc, 0, &o).is_err());
}

#[test]
fn bubble_and_dew_points_bound_the_two_phase_region() {
    // At the bubble (dew) pressure a flash just inside gives a two-phase split whose vapour
    // (liquid) fraction vanishes as p → p_bubble (p_dew), with the incipient composition.
    let m = pr(&["methane", "propane", "n-pentane"]);
    let z = [0.4, 0.35, 0.25];
    let o = SaturationOptions::default();
    let t = 300.0;
    let b = bubble_pressure(&m, t, &z, &o).unwrap();
    let d = dew_pressure(&m, t, &z, &o).unwrap();
    assert!(b.pressure > d.pressure);
    let opts = FlashOptions::default();
    let inside_b = flash_pt(&m, t, b.pressure * (1.0 - 1e-6), &z, &opts).unwrap();
    assert_eq!(inside_b.phases.len(), 2);
    let vap = &inside_b.phases[0];
    assert!(vap.fraction < 1e-4, "{}", vap.fraction);
    for i in 0..3 {
        assert!((vap.composition[i] - b.incipient[i]).abs() < 1e-4);
    }
    let outside_b = flash_pt(&m, t, b.pressure * (1.0 + 1e-4), &z, &opts).unwrap();
    assert_eq!(outside_b.phases.len(), 1);
    let inside_d = flash_pt(&m, t, d.pressure * (1.0 + 1e-6), &z, &opts).unwrap();
    assert_eq!(inside_d.phases.len(), 2);
    assert!(inside_d.phases[1].fraction < 1e-4);
    for i in 0..3 {
        assert!((inside_d.phases[1].composition[i] - d.incipient[i]).abs() < 1e-4);
    }
    assert_eq!(
        flash_pt(&m, t, d.pressure * (1.0 - 1e-4), &z, &opts)
            .unwrap()
            .phases
            .len(),
        1
    );
    // The temperature forms are the inverses of the pressure forms.
    let bt = bubble_temperature(&m, b.pressure, &z, &o).unwrap();
    assert!((bt.temperature - t).abs() < 1e-6, "{}", bt.temperature);
    let dt = dew_temperature(&m, d.pressure, &z, &o).unwrap();
    assert!((dt.temperature - t).abs() < 1e-6, "{}", dt.temperature);
}

#[test]
fn warm_start_gives_the_cold_answer_and_negative_flash_extends_the_tie_line() {
    let m = pr(&["methane", "ethane", "n-butane"]);
    let z = [0.6, 0.2, 0.2];
    let opts = FlashOptions::default();
    let mut ctx = FlashContext::new(3);
    ctx.flash(&m, 260.0, 30e5, &z, &opts).unwrap();
    let warm = ctx.flash(&m, 262.0, 31e5, &z, &opts).unwrap().clone();
    assert!(warm.diagnostics.warm_start);
    let cold = flash_pt(&m, 262.0, 31e5, &z, &opts).unwrap();
    for (a, b) in warm.phases.iter().zip(&cold.phases) {
        assert!((a.fraction - b.fraction).abs() < 1e-10);
        for i in 0..3 {
            assert!((a.composition[i] - b.composition[i]).abs() < 1e-10);
        }
    }
    // A warm start across the phase boundary falls back to the cold path.
    let one = ctx.flash(&m, 262.0, 200e5, &z, &opts).unwrap();
    assert_eq!(one.phases.len(), 1);
    assert!(!one.diagnostics.warm_start);
    // Negative flash: above the bubble point the tie line still extends through the feed.
    let z = [0.3, 0.2, 0.5];
    let b = bubble_pressure(&m, 262.0, &z, &SaturationOptions::default()).unwrap();
    let neg = FlashOptions {
        negative_flash: true,
        ..Default::default()
    };
    let r = flash_pt(&m, 262.0, b.pressure * 1.05, &z, &neg).unwrap();
    assert_eq!(r.phases.len(), 1);
    let tl = r.tie_line.expect("tie-line extension");
    assert!(tl.beta < 0.0, "β = {}", tl.beta);
    for i in 0..3 {
        let back = tl.beta * tl.y[i] + (1.0 - tl.beta) * tl.x[i];
        assert!((back - z[i]).abs() < 1e-12);
    }
}
