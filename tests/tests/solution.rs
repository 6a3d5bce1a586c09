//! γ–φ (activity-coefficient liquid) vapour–liquid equilibrium through the public API, against
//! the worked examples in tests/vectors/solution.json (each case names its source): bubble and
//! dew points of Smith, Van Ness & Abbott, 7th ed., Examples 10.1 (Raoult's law) and 10.3
//! (modified Raoult's law with Margules), the azeotrope of Example 10.3(e), the PT flash at
//! the ends of its two-phase range, the ethanol–water azeotrope at 1 atm by UNIFAC against
//! experiment (Evans 1916), and the typed error of a property that needs a Helmholtz
//! energy.

use serde::Deserialize;
use serde_json::Value;
use std::collections::BTreeMap;
use tieline::ErrorKind;
use tieline::equilibrium::{
    AzeotropeOptions, FlashContext, FlashOptions, SaturationOptions, azeotrope_at_pressure, azeotrope_at_temperature,
    bubble_pressure, bubble_temperature, dew_pressure, dew_temperature, flash_pt,
};
use tieline::model::{FluidModel, Model, model_from_json};
use tieline::substance::DataBank;
use tieline_validation::load_vectors;

#[derive(Deserialize)]
struct Point {
    id: String,
    source: String,
    model: String,
    kind: String,
    spec: f64,
    feed: Vec<f64>,
    expected_unknown: f64,
    expected_incipient_x1: f64,
    tolerance_unknown: f64,
    tolerance_fraction: f64,
}

#[derive(Deserialize)]
struct Azeo {
    id: String,
    source: String,
    model: String,
    temperature: f64,
    expected_pressure: f64,
    expected_x1: f64,
    tolerance_pressure: f64,
    tolerance_x1: f64,
}

#[derive(Deserialize)]
struct NoAzeo {
    id: String,
    source: String,
    model: String,
    temperature: f64,
}

#[derive(Deserialize)]
struct Vectors {
    models: BTreeMap<String, Value>,
    points: Vec<Point>,
    azeotropes: Vec<Azeo>,
    no_azeotrope: Vec<NoAzeo>,
}

fn vectors() -> Vectors {
    load_vectors("solution.json")
}

fn model(v: &Vectors, key: &str) -> Model {
    model_from_json(&v.models[key].to_string(), DataBank::embedded()).unwrap_or_else(|e| panic!("{key}: {e}"))
}

#[test]
fn bubble_and_dew_points_of_the_worked_examples() {
    let v = vectors();
    let so = SaturationOptions::default();
    for c in &v.points {
        let m = model(&v, &c.model);
        let r = match c.kind.as_str() {
            "bubble_pressure" => bubble_pressure(&m, c.spec, &c.feed, &so),
            "dew_pressure" => dew_pressure(&m, c.spec, &c.feed, &so),
            "bubble_temperature" => bubble_temperature(&m, c.spec, &c.feed, &so),
            "dew_temperature" => dew_temperature(&m, c.spec, &c.feed, &so),
            k => panic!("{}: unknown kind {k}", c.id),
        }
        .unwrap_or_else(|e| panic!("{} ({}): {e}", c.id, c.source));
        let unknown = if c.kind.ends_with("pressure") {
            r.pressure
        } else {
            r.temperature
        };
        assert!(
            (unknown - c.expected_unknown).abs() <= c.tolerance_unknown,
            "{} ({}): {unknown} vs {}",
            c.id,
            c.source,
            c.expected_unknown
        );
        assert!(
            (r.incipient[0] - c.expected_incipient_x1).abs() <= c.tolerance_fraction,
            "{} ({}): incipient x1 {} vs {}",
            c.id,
            c.source,
            r.incipient[0],
            c.expected_incipient_x1
        );
    }
}

#[test]
fn azeotrope_of_example_10_3_and_none_for_an_ideal_liquid() {
    let v = vectors();
    let o = AzeotropeOptions::default();
    for c in &v.azeotropes {
        let m = model(&v, &c.model);
        let a = azeotrope_at_temperature(&m, c.temperature, None, &o).unwrap_or_else(|e| panic!("{}: {e}", c.id));
        assert!(
            (a.pressure - c.expected_pressure).abs() <= c.tolerance_pressure,
            "{} ({}): {} Pa",
            c.id,
            c.source,
            a.pressure
        );
        assert!(
            (a.composition[0] - c.expected_x1).abs() <= c.tolerance_x1,
            "{} ({}): x1 {}",
            c.id,
            c.source,
            a.composition[0]
        );
        // The same point from the pressure side, and from a guess.
        let b = azeotrope_at_pressure(&m, a.pressure, Some(0.5), &o).unwrap();
        assert!(
            (b.temperature - c.temperature).abs() < 1e-6,
            "{}: {}",
            c.id,
            b.temperature
        );
        assert!((b.composition[0] - a.composition[0]).abs() < 1e-6);
    }
    for c in &v.no_azeotrope {
        let m = model(&v, &c.model);
        let e = azeotrope_at_temperature(&m, c.temperature, None, &o).unwrap_err();
        assert_eq!(e.kind(), ErrorKind::NoSolution, "{} ({}): {e}", c.id, c.source);
        assert!(e.to_string().contains("no azeotrope"), "{e}");
    }
    // A ternary is refused.
    let comps = r#"{"model": "solution", "components": ["methanol", "ethanol", "water"],
        "liquid": {"kind": "margules", "a": [[0,0,0],[0,0,0],[0,0,0]], "t_min": 250, "t_max": 400}}"#;
    let m3 = model_from_json(comps, DataBank::embedded()).unwrap();
    assert_eq!(
        azeotrope_at_pressure(&m3, 1e5, None, &o).unwrap_err().kind(),
        ErrorKind::InvalidInput
    );
}

/// The two-phase PT flash of Example 10.3's mixture (z1 = 0.85 at 101.33 kPa) agrees with the
/// bubble and dew temperatures at the ends of its two-phase range: just inside them the
/// vapour fraction tends to 0 and 1 and the incipient compositions to the saturation points'.
#[test]
fn pt_flash_agrees_with_bubble_and_dew_points() {
    let v = vectors();
    let m = model(&v, "svna_10_3");
    let p = 101_330.0;
    let z = [0.85, 0.15];
    let so = SaturationOptions::default();
    let bub = bubble_temperature(&m, p, &z, &so).unwrap();
    let dew = dew_temperature(&m, p, &z, &so).unwrap();
    assert!(dew.temperature > bub.temperature + 0.1);
    let fo = FlashOptions::default();
    let eps = 1e-4;
    let near_bubble = flash_pt(&m, bub.temperature + eps, p, &z, &fo).unwrap();
    assert_eq!(near_bubble.phases.len(), 2);
    assert!(near_bubble.vapor_fraction() < 1e-2, "{}", near_bubble.vapor_fraction());
    let y = &near_bubble.phases[0].composition;
    assert!((y[0] - bub.incipient[0]).abs() < 1e-3, "{} {}", y[0], bub.incipient[0]);
    let near_dew = flash_pt(&m, dew.temperature - eps, p, &z, &fo).unwrap();
    assert_eq!(near_dew.phases.len(), 2);
    assert!(near_dew.vapor_fraction() > 0.99, "{}", near_dew.vapor_fraction());
    let x = &near_dew.phases[1].composition;
    assert!((x[0] - dew.incipient[0]).abs() < 1e-3, "{} {}", x[0], dew.incipient[0]);
    // Outside the range: one phase, liquid below the bubble point and vapour above the dew point.
    let below = flash_pt(&m, bub.temperature - 0.5, p, &z, &fo).unwrap();
    assert_eq!(below.phases.len(), 1);
    let above = flash_pt(&m, dew.temperature + 0.5, p, &z, &fo).unwrap();
    assert_eq!(above.phases.len(), 1);
    // Warm flashes along the range give the same answers as cold ones.
    let mut ctx = FlashContext::new(2);
    for k in 1..10 {
        let t = bub.temperature + (dew.temperature - bub.temperature) * k as f64 / 10.0;
        let warm = ctx.flash(&m, t, p, &z, &fo).unwrap().clone();
        let cold = flash_pt(&m, t, p, &z, &fo).unwrap();
        assert!((warm.vapor_fraction() - cold.vapor_fraction()).abs() < 1e-8, "T = {t}");
    }
    // Energies need a Helmholtz energy the liquid does not have: a typed error, no panic.
    let e = near_bubble.mixture_properties(&m).unwrap_err();
    assert_eq!(e.kind(), ErrorKind::InvalidInput);
    assert!(e.to_string().contains("Helmholtz"), "{e}");
    assert_eq!(m.num_components(), 2);
}

#[derive(Deserialize)]
struct AzeoP {
    id: String,
    source: String,
    model: String,
    pressure: f64,
    expected_temperature: f64,
    expected_x1: f64,
    tolerance_temperature: f64,
    tolerance_x1: f64,
}

#[derive(Deserialize)]
struct VectorsP {
    models: BTreeMap<String, Value>,
    azeotropes_at_pressure: Vec<AzeoP>,
}

#[test]
fn ethanol_water_azeotrope_at_one_atmosphere() {
    let v: VectorsP = load_vectors("solution.json");
    for c in &v.azeotropes_at_pressure {
        let m = model_from_json(&v.models[&c.model].to_string(), DataBank::embedded()).unwrap();
        let a = azeotrope_at_pressure(&m, c.pressure, None, &AzeotropeOptions::default())
            .unwrap_or_else(|e| panic!("{} ({}): {e}", c.id, c.source));
        assert!(
            (a.temperature - c.expected_temperature).abs() <= c.tolerance_temperature,
            "{} ({}): T = {} K",
            c.id,
            c.source,
            a.temperature
        );
        assert!(
            (a.composition[0] - c.expected_x1).abs() <= c.tolerance_x1,
            "{} ({}): x1 = {}",
            c.id,
            c.source,
            a.composition[0]
        );
    }
}
