//! The "water" section of the shared test vectors (tests/vectors/cases.json) against the Rust
//! engine: IAPWS-95 single-phase and saturation states, IAPWS-06 ice, the normal melting point
//! and the triple point. Each case names its published source in the file.

use serde::Deserialize;
use serde_json::Value;
use tieline::equilibrium::{PurePhase, PurePhases};
use tieline::model::Iapws95;
use tieline::model::solid::{IceIh, SolidModel};
use tieline_validation::load_vectors;

#[derive(Deserialize)]
struct Case {
    id: String,
    source: String,
    kind: String,
    #[serde(default)]
    temperature: f64,
    #[serde(default)]
    pressure: f64,
    #[serde(default)]
    density: f64,
    expected: Value,
    #[serde(default)]
    rel_tolerance: f64,
    #[serde(default)]
    abs_tolerance: Value,
}

#[derive(Deserialize)]
struct Cases {
    water: Vec<Case>,
}

fn num(v: &Value, k: &str) -> f64 {
    v[k].as_f64().unwrap_or_else(|| panic!("missing {k}"))
}

#[test]
fn water_vectors() {
    let cases: Cases = load_vectors("cases.json");
    assert!(cases.water.len() >= 17);
    let water = Iapws95::new();
    let ice = IceIh::new();
    let set = PurePhases::new(&water, 0, vec![&ice as &dyn SolidModel]).unwrap();
    for c in &cases.water {
        assert!(!c.source.is_empty());
        let e = &c.expected;
        let rel = |got: f64, k: &str| {
            let want = num(e, k);
            assert!(
                ((got - want) / want).abs() <= c.rel_tolerance,
                "{} {k}: {got} vs {want}",
                c.id
            );
        };
        match c.kind.as_str() {
            "state_td" => {
                let s = water.state_td(c.temperature, c.density).unwrap();
                rel(s.pressure, "pressure");
                rel(s.cv, "cv");
                rel(s.speed_of_sound, "speed_of_sound");
                rel(s.entropy, "entropy");
            }
            "saturation_t" => {
                let s = water.saturation_at_temperature(c.temperature).unwrap();
                rel(s.pressure, "pressure");
                rel(s.liquid.density, "liquid_density");
                rel(s.vapor.density, "vapor_density");
                rel(s.liquid.enthalpy, "liquid_enthalpy");
                rel(s.vapor.enthalpy, "vapor_enthalpy");
                rel(s.liquid.entropy, "liquid_entropy");
                rel(s.vapor.entropy, "vapor_entropy");
            }
            "ice_tp" => {
                let s = ice.specific_properties(c.temperature, c.pressure).unwrap();
                rel(s.gibbs, "gibbs");
                rel(s.density, "density");
                rel(s.cp, "cp");
            }
            "melting_p" => {
                let m = set
                    .coexistence_at_pressure(PurePhase::Solid(0), PurePhase::Liquid, c.pressure, None)
                    .unwrap();
                let tol = c.abs_tolerance.as_f64().unwrap();
                assert!((m.temperature - num(e, "temperature")).abs() <= tol, "{}", c.id);
            }
            "triple_point" => {
                let tp = set.triple_point(0, None).unwrap();
                assert!((tp.temperature - num(e, "temperature")).abs() <= num(&c.abs_tolerance, "temperature"));
                assert!((tp.pressure - num(e, "pressure")).abs() <= num(&c.abs_tolerance, "pressure"));
            }
            k => panic!("{}: unknown kind {k}", c.id),
        }
    }
}
