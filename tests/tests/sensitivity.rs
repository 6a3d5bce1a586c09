//! Derivatives of converged PT flashes (`flash_sensitivities`, implicit function theorem)
//! against central finite differences of `flash_pt` itself, on the cases of
//! tests/vectors/sensitivity.json (inputs and tolerances only: the reference of every
//! derivative is the finite difference, recomputed here), and against identities of exact
//! thermodynamics that hold on the equilibrium surface:
//!
//! - (∂H/∂T)_p = T (∂S/∂T)_p, from dH = T dS + V dp at fixed amounts (Gibbs–Helmholtz; any
//!   thermodynamics text, e.g. H. B. Callen, "Thermodynamics and an Introduction to
//!   Thermostatistics", 2nd ed., Wiley 1985, ch. 3 and 5, from memory);
//! - (∂S/∂p)_T = −(∂V/∂T)_p, the Maxwell relation from dG = −S dT + V dp (same source);
//! - Σ_j n_j ∂X/∂n_j = X for every extensive X and 0 for every mole fraction (Euler's theorem
//!   on homogeneous functions of degree 1 and 0: the equilibrium state scales with the feed
//!   at fixed T and p);
//! - Σ_k dN^k/dX = dN/dX (mass balance).

use serde::Deserialize;
use serde_json::Value;
use tieline::equilibrium::{
    Derivative, FlashContext, FlashOptions, FlashResult, FlashSensitivities, SensitivityWork, flash_pt,
    flash_sensitivities,
};
use tieline::model::{CubicEos, CubicKind, FluidModel, Model, ModelDescription};
use tieline::substance::DataBank;
use tieline::{ErrorKind, equilibrium};
use tieline_validation::load_vectors;

#[derive(Deserialize, Clone, Copy)]
struct Steps {
    flash_tolerance: f64,
    temperature_step: f64,
    pressure_step_relative: f64,
    feed_step_relative: f64,
    rel_tolerance: f64,
}

#[derive(Deserialize)]
struct Case {
    id: String,
    source: String,
    model: Value,
    temperature: f64,
    pressure: f64,
    feed: Vec<f64>,
    max_phases: usize,
    phases: usize,
    #[serde(default)]
    beta_range: Option<[f64; 2]>,
    #[serde(default)]
    flash_tolerance: Option<f64>,
}

#[derive(Deserialize)]
struct File {
    defaults: Steps,
    cases: Vec<Case>,
}

fn model(c: &Case) -> Model {
    let d: ModelDescription = serde_json::from_value(c.model.clone()).unwrap_or_else(|e| panic!("{}: {e}", c.id));
    d.build(DataBank::embedded())
        .unwrap_or_else(|e| panic!("{}: {e}", c.id))
}

/// The quantities a derivative is taken of, from a flash result by the library's property
/// routines (`mixture_properties`, independent of the sensitivity code).
#[derive(Debug, Clone)]
struct State {
    amounts: Vec<f64>,
    compositions: Vec<Vec<f64>>,
    volume: f64,
    enthalpy: f64,
    entropy: f64,
}

fn state(m: &Model, r: &FlashResult) -> State {
    let n: f64 = r.feed.iter().sum();
    let mp = r.mixture_properties(m).unwrap();
    State {
        amounts: r.phases.iter().map(|p| p.amount).collect(),
        compositions: r.phases.iter().map(|p| p.composition.clone()).collect(),
        volume: mp.molar_volume * n,
        enthalpy: mp.enthalpy * n,
        entropy: mp.entropy * n,
    }
}

fn options(c: &Case, s: &Steps) -> FlashOptions {
    FlashOptions {
        tolerance: c.flash_tolerance.unwrap_or(s.flash_tolerance),
        max_phases: c.max_phases,
        ..FlashOptions::default()
    }
}

/// A finite-difference derivative with the sum of the two flashes' final residuals and the
/// largest |ln φ| of their phases.
struct Fd {
    d: Derivative,
    residuals: f64,
    ln_phi_max: f64,
}

/// Central difference (f(x + h) − f(x − h)) / 2h of every quantity.
fn central(m: &Model, c: &Case, o: &FlashOptions, plus: (f64, f64, &[f64]), minus: (f64, f64, &[f64]), h: f64) -> Fd {
    let rp = flash_pt(m, plus.0, plus.1, plus.2, o).unwrap_or_else(|e| panic!("{}: {e}", c.id));
    let rm = flash_pt(m, minus.0, minus.1, minus.2, o).unwrap_or_else(|e| panic!("{}: {e}", c.id));
    assert_eq!(rp.phases.len(), c.phases, "{}: the step changed the phase count", c.id);
    assert_eq!(rm.phases.len(), c.phases, "{}: the step changed the phase count", c.id);
    for (a, b) in rp.phases.iter().zip(&rm.phases) {
        assert_eq!(a.kind, b.kind, "{}: the step reordered the phases", c.id);
    }
    let (sp, sm) = (state(m, &rp), state(m, &rm));
    let d = |a: f64, b: f64| (a - b) / (2.0 * h);
    let residuals = rp.diagnostics.residual + rm.diagnostics.residual;
    let ln_phi_max = rp
        .phases
        .iter()
        .chain(&rm.phases)
        .flat_map(|ph| ph.ln_phi.iter())
        .fold(0.0f64, |s, v| s.max(v.abs()));
    let d = Derivative {
        phase_amounts: sp.amounts.iter().zip(&sm.amounts).map(|(a, b)| d(*a, *b)).collect(),
        compositions: sp
            .compositions
            .iter()
            .zip(&sm.compositions)
            .map(|(x, y)| x.iter().zip(y).map(|(a, b)| d(*a, *b)).collect())
            .collect(),
        volume: d(sp.volume, sm.volume),
        enthalpy: d(sp.enthalpy, sm.enthalpy),
        entropy: d(sp.entropy, sm.entropy),
    };
    Fd {
        d,
        residuals,
        ln_phi_max,
    }
}

/// Compares every entry: |a − fd| ≤ tol·scale + floor (scales as stated in
/// sensitivity.json), where floor = (4ε(1 + L) + 4(r₊ + r₋))|X|/(2h) is the resolution of a
/// central difference of a quantity of size |X| with step h: round-off (ε the machine epsilon;
/// the ln φ of each phase carries a round-off of about ε|ln φ|, L the largest |ln φ| of the
/// two flashes, and a converged split cannot be sharper than that) plus
/// the two flashes' final equilibrium residuals r± (max |Δ ln f|), taken four times as the
/// relative error of the amounts they leave: a split converged by Newton to round-off level
/// has a computed residual below the round-off of its ln φ, and its compositions scatter by
/// up to about 2.6 r (measured for the three-phase water case, whose aqueous phase has
/// ln φ up to 45; common practice, no source). It matters only
/// for derivatives far below their quantity, e.g. of mole fractions near 1, or of the phase
/// compositions of three phases of three components, which the phase rule fixes at given T
/// and p. Returns the worst ratio (|a − fd| − floor)⁺ / scale.
fn compare(what: &str, a: &Derivative, fd: &Fd, x: &State, h: f64, tol: f64) -> f64 {
    let res = |v: f64| (4.0 * f64::EPSILON * (1.0 + fd.ln_phi_max) + 4.0 * fd.residuals) * v.abs() / (2.0 * h);
    let fd = &fd.d;
    let mut worst = 0.0f64;
    let mut check = |name: String, a: f64, b: f64, scale: f64, floor: f64| {
        let s = scale.max(f64::MIN_POSITIVE);
        let e = ((a - b).abs() - floor).max(0.0) / s;
        assert!(
            e <= tol,
            "{what}: {name}: analytic {a:e}, finite difference {b:e} (scale {scale:e}, floor {floor:e})"
        );
        worst = worst.max(e);
    };
    let amax = fd.phase_amounts.iter().fold(0.0f64, |s, v| s.max(v.abs()));
    for (k, (p, q)) in a.phase_amounts.iter().zip(&fd.phase_amounts).enumerate() {
        check(format!("phase amount {k}"), *p, *q, amax, res(x.amounts[k]));
    }
    for (k, (ps, qs)) in a.compositions.iter().zip(&fd.compositions).enumerate() {
        let cmax = qs.iter().fold(0.0f64, |s, v| s.max(v.abs()));
        for (i, (p, q)) in ps.iter().zip(qs).enumerate() {
            check(format!("x[{k}][{i}]"), *p, *q, cmax, res(x.compositions[k][i]));
        }
    }
    check("volume".into(), a.volume, fd.volume, fd.volume.abs(), res(x.volume));
    check(
        "enthalpy".into(),
        a.enthalpy,
        fd.enthalpy,
        fd.enthalpy.abs(),
        res(x.enthalpy),
    );
    check(
        "entropy".into(),
        a.entropy,
        fd.entropy,
        fd.entropy.abs(),
        res(x.entropy),
    );
    worst
}

#[test]
fn derivatives_match_finite_differences_of_the_flash() {
    let file: File = load_vectors("sensitivity.json");
    let s = file.defaults;
    for c in &file.cases {
        assert!(!c.source.is_empty(), "{}: no source", c.id);
        let m = model(c);
        let o = options(c, &s);
        let (t, p, n) = (c.temperature, c.pressure, c.feed.as_slice());
        let r = flash_pt(&m, t, p, n, &o).unwrap_or_else(|e| panic!("{}: {e}", c.id));
        assert_eq!(r.phases.len(), c.phases, "{}: phases {:?}", c.id, r.phases);
        if let Some([lo, hi]) = c.beta_range {
            let b = r.phases[0].fraction;
            assert!(
                lo <= b && b <= hi,
                "{}: first-phase fraction {b} outside [{lo}, {hi}]",
                c.id
            );
        }
        let sens = flash_sensitivities(&m, &r).unwrap_or_else(|e| panic!("{}: {e}", c.id));
        let tol = s.rel_tolerance;
        let x = state(&m, &r);

        let h = s.temperature_step;
        let fd = central(&m, c, &o, (t + h, p, n), (t - h, p, n), h);
        let mut worst = compare(&format!("{} d/dT", c.id), &sens.temperature, &fd, &x, h, tol);

        let h = s.pressure_step_relative * p;
        let fd = central(&m, c, &o, (t, p + h, n), (t, p - h, n), h);
        worst = worst.max(compare(&format!("{} d/dp", c.id), &sens.pressure, &fd, &x, h, tol));

        let h = s.feed_step_relative * n.iter().sum::<f64>();
        for j in 0..n.len() {
            let mut np = n.to_vec();
            let mut nm = n.to_vec();
            np[j] += h;
            nm[j] -= h;
            let fd = central(&m, c, &o, (t, p, &np), (t, p, &nm), h);
            worst = worst.max(compare(&format!("{} d/dn_{j}", c.id), &sens.feed[j], &fd, &x, h, tol));
        }
        println!(
            "{}: {} phase(s), worst (|analytic − fd| − floor)/scale = {worst:.2e}; equilibrium cp = {:.4} J/(mol K), \
             κ_T = {:.4e} 1/Pa",
            c.id,
            r.phases.len(),
            sens.equilibrium_heat_capacity(),
            sens.equilibrium_isothermal_compressibility()
        );
    }
}

/// Relative agreement of two numbers to `tol` of `scale`.
fn close(a: f64, b: f64, scale: f64, tol: f64, what: &str) {
    assert!((a - b).abs() <= tol * scale, "{what}: {a:e} vs {b:e} (scale {scale:e})");
}

#[test]
fn equilibrium_identities_hold() {
    let file: File = load_vectors("sensitivity.json");
    let s = file.defaults;
    for c in &file.cases {
        let m = model(c);
        let o = options(c, &s);
        let r = flash_pt(&m, c.temperature, c.pressure, &c.feed, &o).unwrap();
        let sens = flash_sensitivities(&m, &r).unwrap();
        let st = state(&m, &r);
        let t = c.temperature;
        let id = &c.id;
        // Gibbs–Helmholtz: (∂H/∂T)_p = T (∂S/∂T)_p, with the latent-heat terms included.
        let (ht, st_) = (sens.temperature.enthalpy, sens.temperature.entropy);
        close(ht, t * st_, ht.abs(), 1e-9, &format!("{id}: dH/dT = T dS/dT"));
        // Maxwell: (∂S/∂p)_T = −(∂V/∂T)_p.
        let (sp, vt) = (sens.pressure.entropy, sens.temperature.volume);
        close(sp, -vt, vt.abs(), 1e-9, &format!("{id}: dS/dp = −dV/dT"));
        // (∂H/∂p)_T = V − T (∂V/∂T)_p (from dH = T dS + V dp and Maxwell).
        close(
            sens.pressure.enthalpy,
            st.volume - t * vt,
            st.volume.abs() + (t * vt).abs(),
            1e-9,
            &format!("{id}: dH/dp = V − T dV/dT"),
        );
        // Euler: Σ_j n_j ∂X/∂n_j = X.
        let euler =
            |f: &dyn Fn(&Derivative) -> f64| -> f64 { c.feed.iter().zip(&sens.feed).map(|(nj, d)| nj * f(d)).sum() };
        close(
            euler(&|d| d.volume),
            st.volume,
            st.volume.abs(),
            1e-9,
            &format!("{id}: Euler V"),
        );
        close(
            euler(&|d| d.enthalpy),
            st.enthalpy,
            st.enthalpy.abs(),
            1e-9,
            &format!("{id}: Euler H"),
        );
        close(
            euler(&|d| d.entropy),
            st.entropy,
            st.entropy.abs(),
            1e-9,
            &format!("{id}: Euler S"),
        );
        let ntot: f64 = c.feed.iter().sum();
        for k in 0..r.phases.len() {
            close(
                euler(&|d| d.phase_amounts[k]),
                st.amounts[k],
                ntot,
                1e-9,
                &format!("{id}: Euler N^{k}"),
            );
            for i in 0..c.feed.len() {
                close(
                    euler(&|d| d.compositions[k][i]),
                    0.0,
                    1.0,
                    1e-9,
                    &format!("{id}: Euler x[{k}][{i}] (degree 0)"),
                );
            }
        }
        // Mass balance: Σ_k dN^k/dT = Σ_k dN^k/dp = 0, Σ_k dN^k/dn_j = 1.
        let sum = |d: &Derivative| d.phase_amounts.iter().sum::<f64>();
        close(sum(&sens.temperature), 0.0, ntot, 1e-12, &format!("{id}: Σ dN/dT"));
        close(
            sum(&sens.pressure) * c.pressure,
            0.0,
            ntot,
            1e-12,
            &format!("{id}: Σ dN/dp"),
        );
        for (j, d) in sens.feed.iter().enumerate() {
            close(sum(d), 1.0, 1.0, 1e-12, &format!("{id}: Σ dN/dn_{j}"));
        }
        // Gibbs phase rule: with as many phases as components, the phase compositions at given
        // T and p are fixed; the feed moves only the phase amounts.
        if r.phases.len() == c.feed.len() {
            for (j, d) in sens.feed.iter().enumerate() {
                for (k, xs) in d.compositions.iter().enumerate() {
                    for (i, x) in xs.iter().enumerate() {
                        assert!(x.abs() < 1e-12, "{id}: dx[{k}][{i}]/dn_{j} = {x:e}, not 0");
                    }
                }
            }
        }
        // Accessors.
        assert_eq!(sens.total_amount, ntot);
        close(
            sens.total_volume,
            st.volume,
            st.volume,
            1e-12,
            &format!("{id}: total volume"),
        );
        assert!(sens.equilibrium_heat_capacity() > 0.0 && sens.equilibrium_isothermal_compressibility() > 0.0);
    }
}

/// The equilibrium heat capacity of a two-phase state exceeds the frozen one by the latent
/// heat absorbed as the phase amounts move (a stable equilibrium: Le Chatelier–Braun; the
/// frozen value from the library's `mixture_properties`).
#[test]
fn two_phase_heat_capacity_includes_the_latent_heat() {
    let file: File = load_vectors("sensitivity.json");
    for c in file.cases.iter().filter(|c| c.phases > 1) {
        let m = model(c);
        let o = options(c, &file.defaults);
        let r = flash_pt(&m, c.temperature, c.pressure, &c.feed, &o).unwrap();
        let sens = flash_sensitivities(&m, &r).unwrap();
        let frozen = r.mixture_properties(&m).unwrap().cp_frozen;
        assert!(
            sens.equilibrium_heat_capacity() > frozen,
            "{}: {} vs frozen {frozen}",
            c.id,
            sens.equilibrium_heat_capacity()
        );
    }
}

/// The reusable path gives the same numbers as the one-shot function, for results of a
/// warm-started context, and survives a change of phase count.
#[test]
fn reusable_work_matches_the_one_shot_function() {
    let file: File = load_vectors("sensitivity.json");
    let mut work = SensitivityWork::default();
    let mut out = FlashSensitivities::default();
    for c in &file.cases {
        let m = model(c);
        let o = options(c, &file.defaults);
        let mut ctx = FlashContext::new(m.num_components());
        for _ in 0..2 {
            let r = ctx.flash(&m, c.temperature, c.pressure, &c.feed, &o).unwrap();
            work.compute(&m, r, &mut out).unwrap();
            assert_eq!(out, flash_sensitivities(&m, r).unwrap(), "{}", c.id);
            assert!(work.min_pivot() > equilibrium::sensitivity::MIN_RELATIVE_PIVOT);
        }
    }
}

/// A pure substance split between vapour and liquid at its saturation pressure: the phase
/// amounts are not functions of (T, p) there (the Hessian of G is singular), so the
/// derivatives do not exist and the answer is a typed error naming the pivot.
#[test]
fn pure_substance_two_phase_has_no_derivatives() {
    let m = CubicEos::new(
        CubicKind::PengRobinson,
        DataBank::embedded().get_many(&["propane"]).unwrap(),
    )
    .unwrap();
    let t = 250.0;
    let sat = equilibrium::saturation_pressure(&m, t, 0, &equilibrium::SaturationOptions::default()).unwrap();
    let single = flash_pt(&m, t, sat.pressure * 0.9, &[1.0], &FlashOptions::default()).unwrap();
    // Build the two-phase state by hand from the coexisting volumes at saturation.
    let mut r = single.clone();
    r.pressure = sat.pressure;
    let mut phases = Vec::new();
    for (v, kind) in [
        (sat.vapor_molar_volume, tieline::model::PhaseKind::Vapor),
        (sat.liquid_molar_volume, tieline::model::PhaseKind::Liquid),
    ] {
        let mut ph = single.phases[0].clone();
        ph.kind = Some(kind);
        ph.amount = 0.5;
        ph.fraction = 0.5;
        ph.molar_volume = v;
        phases.push(ph);
    }
    r.phases = phases;
    let e = flash_sensitivities(&m, &r).unwrap_err();
    assert_eq!(e.kind(), ErrorKind::NoSolution, "{e}");
    assert!(e.to_string().contains("pivot"), "{e}");
}

/// Results that are not an equilibrium of the model are rejected, not differentiated.
#[test]
fn bad_results_are_typed_errors() {
    let file: File = load_vectors("sensitivity.json");
    let c = &file.cases[0];
    let m = model(c);
    let r = flash_pt(&m, c.temperature, c.pressure, &c.feed, &FlashOptions::default()).unwrap();
    // Compositions moved off the equilibrium.
    let mut bad = r.clone();
    bad.phases[0].composition[0] += 1e-3;
    bad.phases[0].composition[1] -= 1e-3;
    let e = flash_sensitivities(&m, &bad).unwrap_err();
    assert_eq!(e.kind(), ErrorKind::InvalidInput, "{e}");
    // Wrong number of components.
    let mut bad = r.clone();
    bad.feed.pop();
    assert_eq!(
        flash_sensitivities(&m, &bad).unwrap_err().kind(),
        ErrorKind::InvalidInput
    );
    // A component absent from the feed: ∂S/∂n_j does not exist.
    let rz = flash_pt(
        &m,
        c.temperature,
        c.pressure,
        &[0.5, 0.0, 0.5],
        &FlashOptions::default(),
    )
    .unwrap();
    assert_eq!(flash_sensitivities(&m, &rz).unwrap_err().kind(), ErrorKind::NoSolution);
    // No phase.
    let mut bad = r;
    bad.phases.clear();
    assert_eq!(
        flash_sensitivities(&m, &bad).unwrap_err().kind(),
        ErrorKind::InvalidInput
    );
}
