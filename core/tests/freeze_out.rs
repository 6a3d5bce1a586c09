//! Pure solids in mixtures: CO2 freeze-out from a cold methane-rich gas (Peng–Robinson with a
//! dry-ice solid from fusion data) and ice from humid nitrogen (Peng–Robinson with IAPWS-06
//! ice Ih). The checks are consistency relations between independent computations, each
//! stated at its test.

use tieline::equilibrium::{
    FlashOptions, PurePhase, PurePhases, SolidFlashOptions, SolidPhaseSpec, flash_pt_with_solids,
    frost_point_temperature,
};
use tieline::model::solid::{FusionData, FusionSolid, IceIh, SolidModel};
use tieline::model::{CubicEos, CubicKind, FluidModel, Iapws95, PhaseState, RootChoice};
use tieline::substance::{DataBank, R};

fn pr(names: &[&str]) -> CubicEos {
    // k_ij = 0: no published pair parameter is at hand (published-values lists none for
    // these pairs); the tests are consistency checks that hold for any k_ij.
    CubicEos::new(CubicKind::PengRobinson, DataBank::embedded().get_many(names).unwrap()).unwrap()
}

/// Frost point of CO2 in methane (2 % CO2, 5 bar). At the frost point T_f the CO2 fugacity of
/// the gas, f = y φ p (not the partial pressure y p), equals the pure-CO2 sublimation curve at
/// the same T carried to pressure p by the solid's Poynting factor:
/// ln f_gas(T_f, p, y) = ln[φ_pure(T_f, p_sub) p_sub] + v_s (p − p_sub)/(R T_f),
/// with p_sub from the pure-CO2 solid–vapour coexistence (a separate Peng–Robinson model of
/// pure CO2 with the same constants). Both sides are computed independently; agreement to
/// 1e-9. The partial pressure y p exceeds p_sub by about 1/φ_CO2 of the gas (φ ≈ 0.88 here):
/// within 20 %.
#[test]
fn co2_frost_point_matches_pure_sublimation_curve() {
    let mix = pr(&["methane", "carbon dioxide"]);
    let pure = pr(&["carbon dioxide"]);
    let dry_mix = FusionSolid::anchored(&mix, 1, FusionData::carbon_dioxide()).unwrap();
    let dry_pure = FusionSolid::anchored(&pure, 0, FusionData::carbon_dioxide()).unwrap();
    let spec = SolidPhaseSpec::matching(&mix, &dry_mix).unwrap();
    assert_eq!(spec.component, 1);
    let (p, z) = (5e5, [0.98, 0.02]);
    let tf = frost_point_temperature(&mix, spec, p, &z, 180.0, &FlashOptions::default()).unwrap();
    assert!(tf > 160.0 && tf < 180.0, "T_f = {tf}");
    let set = PurePhases::new(&pure, 0, vec![&dry_pure as &dyn SolidModel]).unwrap();
    let sub = set
        .coexistence_at_temperature(PurePhase::Solid(0), PurePhase::Vapor, tf, None)
        .unwrap();
    let vap = PhaseState::new(&pure, tf, sub.pressure, &[1.0], RootChoice::Vapor).unwrap();
    let ln_f_pure = vap.properties(&pure).unwrap().fugacity[0].ln();
    let vs = dry_pure.properties(tf, p).unwrap().molar_volume;
    let predicted = ln_f_pure + vs * (p - sub.pressure) / (R * tf);
    let gas = PhaseState::new(&mix, tf, p, &z, RootChoice::Vapor).unwrap();
    let ln_f_gas = gas.properties(&mix).unwrap().fugacity[1].ln();
    assert!((ln_f_gas - predicted).abs() < 1e-9, "{ln_f_gas} vs {predicted}");
    assert!(z[1] * p > sub.pressure && z[1] * p < 1.2 * sub.pressure);
    println!(
        "CO2 frost point in CH4 (2 %, 5 bar): {tf:.4} K; p_sub(T_f) = {:.1} Pa",
        sub.pressure
    );

    // Below the frost point the solid is present and fixes the CO2 fugacity; above it the
    // solid is absent with a positive margin.
    let solids = [spec];
    let opts = SolidFlashOptions::default();
    let cold = flash_pt_with_solids(&mix, &solids, tf - 3.0, p, &z, &opts).unwrap();
    assert_eq!(cold.solids.len(), 1);
    let s = &cold.solids[0];
    assert!(s.amount > 0.0 && s.amount < z[1]);
    assert!(cold.diagnostics.residual < 1e-9);
    let fl = cold.fluid.as_ref().unwrap();
    let co2_fluid: f64 = fl.phases.iter().map(|ph| ph.amount * ph.composition[1]).sum();
    assert!((co2_fluid + s.amount - z[1]).abs() < 1e-12, "CO2 balance");
    assert!(fl.diagnostics.certificate.unwrap() > -1e-9);
    let warm = flash_pt_with_solids(&mix, &solids, tf + 3.0, p, &z, &opts).unwrap();
    assert!(warm.solids.is_empty());
    assert!(warm.margins[0].margin > 0.0 && !warm.margins[0].present);
    // At the frost point itself the margin is zero.
    let at = flash_pt_with_solids(&mix, &solids, tf, p, &z, &opts).unwrap();
    assert!(at.margins[0].margin.abs() < 1e-8);
}

/// Ice from humid nitrogen (1 bar, 225 K, 0.1 % water). With Peng–Robinson water the
/// supercooled liquid is too stable (PR's vapour pressure of water at 273.16 K is 486 Pa
/// against IAPWS-95's 611.655 Pa), so PR liquid water and IAPWS-06 ice coexist only at
/// 235.8 K at 1 bar: above that this fluid model condenses liquid rather than ice, which the
/// flash reports faithfully. The test is therefore run at 225 K. After freeze-out the gas's water
/// fugacity equals the ice's, and agrees with the pure-water sublimation curve from
/// IAPWS-95 vapour + IAPWS-06 ice (an independent fluid model) at the same T carried to 1 bar
/// by the ice's Poynting factor (∫v dp from the ice model), once the difference of the two fluid models' ideal gases of
/// water (IAPWS-95's and the bank's cp correlation, both anchored to ΔfH°, ΔfG° at 298.15 K)
/// is accounted for: to 1e-9. The remaining mole fraction is within 3 % of p_sub/p.
#[test]
fn ice_from_humid_gas() {
    let mix = pr(&["nitrogen", "water"]);
    let ice = IceIh::new();
    let spec = SolidPhaseSpec::matching(&mix, &ice).unwrap();
    let (t, p, z) = (225.0, 1e5, [0.999, 0.001]);
    let r = flash_pt_with_solids(&mix, &[spec], t, p, &z, &SolidFlashOptions::default()).unwrap();
    assert_eq!(r.solids.len(), 1, "{r:?}");
    let fl = r.fluid.as_ref().unwrap();
    assert_eq!(fl.phases.len(), 1);
    let y = fl.phases[0].composition[1];
    let ln_f = y.ln() + fl.phases[0].ln_phi[1] + p.ln();
    assert!((ln_f - r.solids[0].ln_fugacity).abs() < 1e-9);
    let water = Iapws95::new();
    let set = PurePhases::new(&water, 0, vec![&ice as &dyn SolidModel]).unwrap();
    let sub = set
        .coexistence_at_temperature(PurePhase::Solid(0), PurePhase::Vapor, t, None)
        .unwrap();
    let vap = PhaseState::new(&water, t, sub.pressure, &[1.0], RootChoice::Vapor).unwrap();
    let f_sub = vap.properties(&water).unwrap().fugacity[0];
    // Poynting factor of ice, exactly: ∫v dp = g_ice(p) − g_ice(p_sub).
    let poynting = (ice.properties(t, p).unwrap().gibbs - ice.properties(t, sub.pressure).unwrap().gibbs) / (R * t);
    let predicted = f_sub.ln() + poynting;
    // The two fluid models' ideal gases of water differ at 225 K by Δg°/(RT) ≈ 5e-4 (the
    // bank's cp correlation against IAPWS-95's ideal part, integrated from 298.15 K); with
    // that difference accounted for, the two routes agree to 1e-9.
    let (ga, gb) = (water.ideal_gas(t, 0).unwrap(), mix.ideal_gas(t, 1).unwrap());
    let dg = ((ga.h - t * ga.s) - (gb.h - t * gb.s)) / (R * t);
    assert!(dg.abs() < 1e-3, "ideal-gas difference {dg}");
    assert!((ln_f - predicted - dg).abs() < 1e-9, "{ln_f} vs {predicted} + {dg}");
    // y p differs from p_sub by φ_water of the gas (ln φ ≈ −0.013), the Poynting factor
    // (1e-3) and the ideal-gas difference (5e-4): within 3 %.
    assert!(
        ((y * p - sub.pressure) / sub.pressure).abs() < 0.03,
        "y p = {}, p_sub = {}",
        y * p,
        sub.pressure
    );
    println!(
        "ice from humid N2 at 225 K: y_water = {y:.4e}, p_sub = {:.3} Pa, ice {:.4e} mol",
        sub.pressure, r.solids[0].amount
    );
    // Dry enough gas: no ice, positive margin.
    let dry = flash_pt_with_solids(&mix, &[spec], t, p, &[0.99999, 1e-5], &SolidFlashOptions::default()).unwrap();
    assert!(dry.solids.is_empty() && dry.margins[0].margin > 0.0);
}

/// A pure species below its sublimation temperature is entirely solid; a solid outside its
/// model's range is reported as not evaluated; a mismatched species is a typed error.
#[test]
fn pure_feed_and_bad_input() {
    let pure = pr(&["carbon dioxide"]);
    let dry = FusionSolid::anchored(&pure, 0, FusionData::carbon_dioxide()).unwrap();
    let spec = SolidPhaseSpec::matching(&pure, &dry).unwrap();
    let r = flash_pt_with_solids(&pure, &[spec], 180.0, 101325.0, &[2.0], &SolidFlashOptions::default()).unwrap();
    assert!(r.fluid.is_none());
    assert!((r.solids[0].amount - 2.0).abs() < 1e-15);
    let r = flash_pt_with_solids(&pure, &[spec], 300.0, 101325.0, &[2.0], &SolidFlashOptions::default()).unwrap();
    assert!(r.solids.is_empty() && !r.margins[0].evaluated);
    let ice = IceIh::new();
    assert!(SolidPhaseSpec::matching(&pure, &ice).is_err());
    let wrong = SolidPhaseSpec {
        component: 0,
        model: &ice,
    };
    let e = flash_pt_with_solids(&pure, &[wrong], 200.0, 1e5, &[1.0], &SolidFlashOptions::default()).unwrap_err();
    assert_eq!(e.kind(), tieline::ErrorKind::InvalidInput);
    let _ = pure.num_components();
}

/// Two solids at once: dry ice and ice Ih from a methane gas with 2 % CO2 and 0.1 % water at
/// 5 bar and 160 K (below both frost points). Both are present, each fixes its species'
/// fugacity in the gas (1e-9), the amounts balance, and the result is the same as freezing
/// each species alone with the other's remaining gas amount (the two conditions decouple in
/// a nearly ideal gas only approximately, so this is checked through the fugacities).
#[test]
fn two_solids_at_once() {
    let mix = pr(&["methane", "carbon dioxide", "water"]);
    let dry = FusionSolid::anchored(&mix, 1, FusionData::carbon_dioxide()).unwrap();
    let ice = IceIh::new();
    let solids = [
        SolidPhaseSpec::matching(&mix, &dry).unwrap(),
        SolidPhaseSpec::matching(&mix, &ice).unwrap(),
    ];
    let z = [0.979, 0.02, 0.001];
    let r = flash_pt_with_solids(&mix, &solids, 160.0, 5e5, &z, &SolidFlashOptions::default()).unwrap();
    assert_eq!(r.solids.len(), 2, "{:?}", r.margins);
    assert!(r.diagnostics.residual < 1e-9);
    let fl = r.fluid.as_ref().unwrap();
    for s in &r.solids {
        let j = s.component;
        let in_fluid: f64 = fl.phases.iter().map(|ph| ph.amount * ph.composition[j]).sum();
        assert!((in_fluid + s.amount - z[j]).abs() < 1e-12);
        let ph = &fl.phases[0];
        let lnf = ph.composition[j].ln() + ph.ln_phi[j] + 5e5f64.ln();
        assert!((lnf - s.ln_fugacity).abs() < 1e-9);
    }
}
