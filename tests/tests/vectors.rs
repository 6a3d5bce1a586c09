//! The shared test vectors (tests/vectors/cases.json) against the Rust engine. Each case
//! names its published source in the file; the C and Python suites read the same file.

use serde::Deserialize;
use serde_json::Value;
use tieline::equilibrium::{
    FlashOptions, SaturationOptions, StabilityOptions, flash_pt, saturation_pressure, stability,
};
use tieline::model::{FluidModel, FugacityWork, LnPhi, Model, ModelDescription, Need, PhaseState, RootChoice, ln_phi};
use tieline::substance::DataBank;
use tieline_validation::load_vectors;

#[derive(Deserialize)]
struct Case {
    id: String,
    source: String,
    model: Value,
    temperature: f64,
    #[serde(default)]
    pressure: f64,
    #[serde(default)]
    feed: Vec<f64>,
    #[serde(default)]
    component: usize,
    expected: Value,
}

#[derive(Deserialize)]
struct Cases {
    stability: Vec<Case>,
    flash: Vec<Case>,
    volumes: Vec<Case>,
    saturation: Vec<Case>,
}

fn model(c: &Case) -> Model {
    let d: ModelDescription = serde_json::from_value(c.model.clone()).unwrap_or_else(|e| panic!("{}: {e}", c.id));
    d.build(DataBank::embedded())
        .unwrap_or_else(|e| panic!("{}: {e}", c.id))
}

fn num(v: &Value, k: &str) -> f64 {
    v[k].as_f64().unwrap_or_else(|| panic!("missing {k}"))
}

fn cases() -> Cases {
    load_vectors("cases.json")
}

#[test]
fn stability_verdicts() {
    for c in cases().stability {
        assert!(!c.source.is_empty());
        let m = model(&c);
        let r = stability(&m, c.temperature, c.pressure, &c.feed, &StabilityOptions::default()).unwrap();
        let stable = c.expected["stable"].as_bool().unwrap();
        assert_eq!(r.stable, stable, "{}: verdict (min tpd {})", c.id, r.min_tpd);
        if let Some(tpd) = c.expected["min_tpd"].as_f64() {
            let tol = num(&c.expected, "tpd_tolerance");
            assert!(
                (r.min_tpd - tpd).abs() < tol,
                "{}: min tpd {} vs {tpd}",
                c.id,
                r.min_tpd
            );
        }
    }
}

#[test]
fn flash_splits() {
    for c in cases().flash {
        let m = model(&c);
        let r = flash_pt(&m, c.temperature, c.pressure, &c.feed, &FlashOptions::default()).unwrap();
        let e = &c.expected;
        assert_eq!(r.phases.len() as u64, e["phases"].as_u64().unwrap(), "{}", c.id);
        let tol = num(e, "tolerance");
        for (k, ph) in r.phases.iter().enumerate() {
            let f = e["fractions"][k].as_f64().unwrap();
            assert!(
                (ph.fraction - f).abs() < tol,
                "{}: phase {k} fraction {} vs {f}",
                c.id,
                ph.fraction
            );
            for (i, x) in ph.composition.iter().enumerate() {
                let want = e["compositions"][k][i].as_f64().unwrap();
                assert!((x - want).abs() < tol, "{}: phase {k} x{i} {x} vs {want}", c.id);
            }
        }
        if let Some(g) = e["gibbs"].as_f64() {
            let gt = num(e, "gibbs_tolerance");
            assert!(
                (r.diagnostics.gibbs - g).abs() < gt,
                "{}: G/RT {} vs {g}",
                c.id,
                r.diagnostics.gibbs
            );
        }
        assert!(r.diagnostics.residual < 1e-10, "{}", c.id);
        assert!(r.diagnostics.certificate.unwrap() >= -1e-10, "{}", c.id);
    }
}

#[test]
fn volume_roots_of_worked_examples() {
    for c in cases().volumes {
        let m = model(&c);
        let tol = num(&c.expected, "rel_tolerance");
        for (root, key) in [
            (RootChoice::Vapor, "vapor_molar_volume"),
            (RootChoice::Liquid, "liquid_molar_volume"),
        ] {
            let s = PhaseState::new(&m, c.temperature, c.pressure, &c.feed, root).unwrap();
            let want = num(&c.expected, key);
            assert!((s.v - want).abs() / want < tol, "{} {key}: {} vs {want}", c.id, s.v);
        }
    }
}

#[test]
fn vapour_pressures_against_experiment() {
    for c in cases().saturation {
        let m = model(&c);
        let s = saturation_pressure(&m, c.temperature, c.component, &SaturationOptions::default()).unwrap();
        let want = num(&c.expected, "pressure");
        let tol = num(&c.expected, "rel_tolerance");
        let dev = (s.pressure - want) / want;
        assert!(
            dev.abs() < tol,
            "{} ({}): p_sat {} vs {want} ({:+.2} %)",
            c.id,
            m.component_name(0),
            s.pressure,
            dev * 100.0
        );
        // Exact agreement with the equal-fugacity condition on both roots.
        let mut w = FugacityWork::new(1);
        let (mut l, mut v) = (LnPhi::new(1), LnPhi::new(1));
        ln_phi(
            &m,
            c.temperature,
            s.pressure,
            &[1.0],
            RootChoice::Liquid,
            Need::VALUES,
            &mut w,
            &mut l,
        )
        .unwrap();
        ln_phi(
            &m,
            c.temperature,
            s.pressure,
            &[1.0],
            RootChoice::Vapor,
            Need::VALUES,
            &mut w,
            &mut v,
        )
        .unwrap();
        assert!(l.two_roots && l.v < v.v, "{}: two distinct roots", c.id);
        assert!((l.ln_phi[0] - v.ln_phi[0]).abs() < 1e-10, "{}: ln φ_L − ln φ_V", c.id);
    }
}
