//! Activity-coefficient models against published values in tests/vectors/activity.json
//! (each case names its source there): a UNIFAC textbook example, the two-suffix Margules
//! model of a textbook modified-Raoult example, and liquid–liquid equal activities of the
//! NRTL water/1-butanol pair. Also: every model's derivatives and identities through the
//! public API on random compositions.

use serde::Deserialize;
use serde_json::Value;
use tieline::ErrorKind;
use tieline::model::activity::{ActivityPairs, MissingPairs, Unifac};
use tieline::model::{ActivityModel, ExcessDerivs, ExcessGibbs, Need, Nrtl};
use tieline_validation::load_vectors;

#[derive(Deserialize)]
struct Spec {
    #[serde(default)]
    unifac: Option<Vec<String>>,
    #[serde(default)]
    nrtl_pairs: Option<Vec<String>>,
    #[serde(default)]
    model: Option<Value>,
}

impl Spec {
    fn build(&self, id: &str) -> ActivityModel {
        if let Some(names) = &self.unifac {
            let n: Vec<&str> = names.iter().map(String::as_str).collect();
            return Unifac::from_names(&n).unwrap_or_else(|e| panic!("{id}: {e}")).into();
        }
        if let Some(names) = &self.nrtl_pairs {
            let n: Vec<&str> = names.iter().map(String::as_str).collect();
            return Nrtl::from_pairs(&n, ActivityPairs::embedded(), MissingPairs::Refuse)
                .unwrap_or_else(|e| panic!("{id}: {e}"))
                .into();
        }
        let v = self.model.as_ref().unwrap_or_else(|| panic!("{id}: no model"));
        ActivityModel::from_json(&v.to_string()).unwrap_or_else(|e| panic!("{id}: {e}"))
    }
}

#[derive(Deserialize)]
struct GammaCase {
    id: String,
    source: String,
    #[serde(flatten)]
    spec: Spec,
    temperature: f64,
    x: Vec<f64>,
    gamma: Vec<f64>,
    abs_tolerance: Vec<f64>,
}

#[derive(Deserialize)]
struct RaoultCase {
    id: String,
    source: String,
    #[serde(flatten)]
    spec: Spec,
    /// ln(P/kPa) = A − B/(T/K + C).
    antoine: Vec<[f64; 3]>,
    temperature: f64,
    x: Vec<f64>,
    pressure: f64,
    y1: f64,
    pressure_tolerance: f64,
    y1_tolerance: f64,
}

#[derive(Deserialize)]
struct LleCase {
    id: String,
    source: String,
    #[serde(flatten)]
    spec: Spec,
    temperature: f64,
    phase_a: Vec<f64>,
    phase_b: Vec<f64>,
    ln_activity_tolerance: f64,
}

#[derive(Deserialize)]
struct Vectors {
    gamma: Vec<GammaCase>,
    modified_raoult: Vec<RaoultCase>,
    lle: Vec<LleCase>,
}

fn vectors() -> Vectors {
    load_vectors("activity.json")
}

fn ln_gamma(m: &ActivityModel, t: f64, x: &[f64]) -> Vec<f64> {
    let mut out = ExcessDerivs::new(x.len());
    m.excess(t, x, Need::VALUES, &mut out).unwrap();
    out.ln_gamma
}

#[test]
fn activity_coefficients_match_published_values() {
    let v = vectors();
    assert!(!v.gamma.is_empty());
    for c in &v.gamma {
        assert!(!c.source.is_empty());
        let m = c.spec.build(&c.id);
        let lg = ln_gamma(&m, c.temperature, &c.x);
        for i in 0..c.x.len() {
            let g = lg[i].exp();
            assert!(
                (g - c.gamma[i]).abs() <= c.abs_tolerance[i],
                "{}: γ{} = {g}, published {} ({})",
                c.id,
                i + 1,
                c.gamma[i],
                c.source
            );
        }
    }
}

#[test]
fn modified_raoult_bubble_pressures_match_the_textbook() {
    let v = vectors();
    for c in &v.modified_raoult {
        assert!(!c.source.is_empty());
        let m = c.spec.build(&c.id);
        let lg = ln_gamma(&m, c.temperature, &c.x);
        let psat: Vec<f64> = c
            .antoine
            .iter()
            .map(|[a, b, cc]| (a - b / (c.temperature + cc)).exp())
            .collect();
        let parts: Vec<f64> = (0..c.x.len()).map(|i| c.x[i] * lg[i].exp() * psat[i]).collect();
        let p: f64 = parts.iter().sum();
        let y1 = parts[0] / p;
        assert!(
            (p - c.pressure).abs() <= c.pressure_tolerance,
            "{}: P = {p} kPa, published {}",
            c.id,
            c.pressure
        );
        assert!(
            (y1 - c.y1).abs() <= c.y1_tolerance,
            "{}: y1 = {y1}, published {}",
            c.id,
            c.y1
        );
    }
}

#[test]
fn lle_pair_gives_equal_activities_in_both_liquids() {
    let v = vectors();
    for c in &v.lle {
        assert!(!c.source.is_empty());
        let m = c.spec.build(&c.id);
        let la = ln_gamma(&m, c.temperature, &c.phase_a);
        let lb = ln_gamma(&m, c.temperature, &c.phase_b);
        for i in 0..la.len() {
            let d = (c.phase_a[i].ln() + la[i]) - (c.phase_b[i].ln() + lb[i]);
            assert!(
                d.abs() <= c.ln_activity_tolerance,
                "{}: ln a{} differs by {d}",
                c.id,
                i + 1
            );
        }
        // And the mixture between the two liquids is unstable: g^mix/RT lies above the tie line.
        let mid: Vec<f64> = (0..la.len()).map(|i| 0.5 * (c.phase_a[i] + c.phase_b[i])).collect();
        let gmix = |x: &[f64]| {
            let mut out = ExcessDerivs::new(x.len());
            m.excess(c.temperature, x, Need::VALUES, &mut out).unwrap();
            out.g_excess + x.iter().map(|v| v * v.ln()).sum::<f64>()
        };
        assert!(
            gmix(&mid) > 0.5 * (gmix(&c.phase_a) + gmix(&c.phase_b)),
            "{}: no miscibility gap",
            c.id
        );
    }
}

/// Finite-difference checks through the public API for every kind of model.
#[test]
fn every_model_is_consistent_through_the_public_api() {
    let models: Vec<ActivityModel> = vec![
        Unifac::from_names(&["water", "ethanol", "benzene", "toluene", "acetone"])
            .unwrap()
            .into(),
        Nrtl::from_pairs(
            &["acetone", "water", "methanol"],
            ActivityPairs::embedded(),
            MissingPairs::Ideal,
        )
        .unwrap()
        .into(),
        tieline::model::Wilson::from_pairs(
            &["methanol", "water"],
            ActivityPairs::embedded(),
            MissingPairs::Refuse,
            None,
        )
        .unwrap()
        .into(),
        tieline::model::Uniquac::from_pairs(
            &["ethanol", "water", "n-hexane"],
            ActivityPairs::embedded(),
            MissingPairs::Ideal,
            None,
        )
        .unwrap()
        .into(),
    ];
    for m in &models {
        let nc = m.num_components();
        let (lo, hi) = m.temperature_range();
        let t = 0.5 * (lo + hi);
        let n: Vec<f64> = (0..nc).map(|i| 0.5 + 0.37 * i as f64).collect();
        let mut out = ExcessDerivs::new(nc);
        m.excess(t, &n, Need::ALL, &mut out).unwrap();
        let h = 1e-6;
        for j in 0..nc {
            let mut p = n.clone();
            p[j] += h;
            let mut q = n.clone();
            q[j] -= h;
            let (a, b) = (ln_gamma(m, t, &p), ln_gamma(m, t, &q));
            for i in 0..nc {
                let num = (a[i] - b[i]) / (2.0 * h);
                let ana = out.dn[i * nc + j];
                assert!(
                    (num - ana).abs() <= 1e-6 * ana.abs() + 1e-8,
                    "{m:?}: dlnγ{i}/dn{j} {ana} vs {num}"
                );
            }
        }
        // Round trip through JSON.
        assert_eq!(&ActivityModel::from_json(&m.to_json()).unwrap(), m);
        // Typed errors for bad input.
        let kind = |r: tieline::Result<()>| r.unwrap_err().kind();
        let mut bad = n.clone();
        bad[0] = f64::NAN;
        assert_eq!(kind(m.excess(t, &bad, Need::VALUES, &mut out)), ErrorKind::InvalidInput);
        bad[0] = -1.0;
        assert_eq!(kind(m.excess(t, &bad, Need::VALUES, &mut out)), ErrorKind::InvalidInput);
        assert_eq!(
            kind(m.excess(hi + 1.0, &n, Need::VALUES, &mut out)),
            ErrorKind::OutsideValidity
        );
        assert_eq!(
            kind(m.excess(t, &n[..nc - 1], Need::VALUES, &mut out)),
            ErrorKind::InvalidInput
        );
    }
}
