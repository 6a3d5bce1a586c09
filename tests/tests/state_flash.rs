//! The state-function flashes (PH, PS, TV, UV) against the shared vectors in
//! tests/vectors/state_flash.json: IAPWS-95 saturation states of IAPWS R6-95(2018) Table 8 and
//! the normal boiling point of water, round trips PT → (h, s, u, v) → state flash on the B2
//! N2/C1/C2 mixtures, a 10-component natural gas, pure propane (PR) and water, and the typed
//! errors of unreachable specifications. Each case names its source in the file.

use serde::Deserialize;
use serde_json::Value;
use tieline::ErrorKind;
use tieline::equilibrium::{FlashOptions, StateFlashContext, StateFlashOptions, StateSpec, flash_pt, flash_state};
use tieline::model::{FluidModel, Model, ModelDescription, PhaseKind};
use tieline::substance::DataBank;
use tieline_validation::load_vectors;

#[derive(Deserialize)]
struct RoundTrip {
    id: String,
    source: String,
    model: Value,
    temperature: f64,
    pressure: f64,
    feed: Vec<f64>,
    specs: Vec<String>,
    rel_tolerance: f64,
}

#[derive(Deserialize)]
struct SpecCase {
    id: String,
    source: String,
    model: Value,
    feed: Vec<f64>,
    spec: StateSpec,
    expected: Value,
}

#[derive(Deserialize)]
struct Vectors {
    round_trips: Vec<RoundTrip>,
    water: Vec<SpecCase>,
    errors: Vec<SpecCase>,
}

fn vectors() -> Vectors {
    load_vectors("state_flash.json")
}

fn model(id: &str, v: &Value) -> Model {
    let d: ModelDescription = serde_json::from_value(v.clone()).unwrap_or_else(|e| panic!("{id}: {e}"));
    d.build(DataBank::embedded()).unwrap_or_else(|e| panic!("{id}: {e}"))
}

fn num(v: &Value, k: &str) -> f64 {
    v[k].as_f64().unwrap_or_else(|| panic!("missing {k}"))
}

#[test]
fn round_trips_return_the_pt_state() {
    let opts = StateFlashOptions::default();
    let mut n = 0;
    for c in vectors().round_trips {
        assert!(!c.source.is_empty());
        let m = model(&c.id, &c.model);
        let pt = flash_pt(&m, c.temperature, c.pressure, &c.feed, &FlashOptions::default())
            .unwrap_or_else(|e| panic!("{}: PT flash: {e}", c.id));
        let mp = pt.mixture_properties(&m).unwrap();
        // Liquid-like single phase: UV pressure compared through the volume it implies.
        let kappa = if pt.phases.len() == 1 && pt.phases[0].kind == Some(PhaseKind::Liquid) {
            Some(
                pt.phases[0]
                    .state(c.temperature, c.pressure)
                    .properties(&m)
                    .unwrap()
                    .isothermal_compressibility,
            )
        } else {
            None
        };
        // Both the one-shot functions and a context reused across the specs (warm starts).
        let mut ctx = StateFlashContext::new(m.num_components());
        for name in &c.specs {
            let spec = match name.as_str() {
                "pressure_enthalpy" => StateSpec::PressureEnthalpy {
                    pressure: c.pressure,
                    enthalpy: mp.enthalpy,
                },
                "pressure_entropy" => StateSpec::PressureEntropy {
                    pressure: c.pressure,
                    entropy: mp.entropy,
                },
                "temperature_volume" => StateSpec::TemperatureVolume {
                    temperature: c.temperature,
                    volume: mp.molar_volume,
                },
                "energy_volume" => StateSpec::EnergyVolume {
                    internal_energy: mp.internal_energy,
                    volume: mp.molar_volume,
                },
                s => panic!("{}: unknown spec {s}", c.id),
            };
            let cold = flash_state(&m, &spec, &c.feed, &opts).unwrap_or_else(|e| panic!("{} {name}: {e}", c.id));
            let warm = ctx
                .flash(&m, &spec, &c.feed, &opts)
                .unwrap_or_else(|e| panic!("{} {name} (context): {e}", c.id))
                .clone();
            for r in [&cold, &warm] {
                let f = &r.flash;
                let dt = (f.temperature / c.temperature - 1.0).abs();
                let dp = (f.pressure / c.pressure - 1.0).abs();
                assert!(
                    dt <= c.rel_tolerance,
                    "{} {name}: T {} vs {} ({dt:e})",
                    c.id,
                    f.temperature,
                    c.temperature
                );
                let p_ok = dp <= c.rel_tolerance
                    || (name == "energy_volume"
                        && kappa.is_some_and(|k| (f.pressure - c.pressure).abs() * k <= c.rel_tolerance));
                assert!(p_ok, "{} {name}: p {} vs {} ({dp:e})", c.id, f.pressure, c.pressure);
                assert_eq!(f.phases.len(), pt.phases.len(), "{} {name}: phase count", c.id);
                for (a, b) in f.phases.iter().zip(&pt.phases) {
                    assert!(
                        (a.fraction - b.fraction).abs() < 1e-7,
                        "{} {name}: β {} vs {}",
                        c.id,
                        a.fraction,
                        b.fraction
                    );
                }
                assert!(r.residual <= opts.tolerance, "{} {name}: residual {}", c.id, r.residual);
                assert_eq!(r.spec, Some(spec));
            }
            n += 1;
        }
    }
    assert!(n >= 60, "{n} round trips");
}

#[test]
fn water_saturation_states() {
    let opts = StateFlashOptions::default();
    for c in vectors().water {
        assert!(!c.source.is_empty());
        let m = model(&c.id, &c.model);
        let r = flash_state(&m, &c.spec, &c.feed, &opts).unwrap_or_else(|e| panic!("{}: {e}", c.id));
        let e = &c.expected;
        let f = &r.flash;
        assert_eq!(f.phases.len() as u64, e["phases"].as_u64().unwrap(), "{}: phases", c.id);
        if let Some(t) = e["temperature"].as_f64() {
            let tol = num(e, "temperature_tolerance");
            assert!((f.temperature - t).abs() <= tol, "{}: T {} vs {t}", c.id, f.temperature);
        }
        if let Some(b) = e["vapor_fraction"].as_f64() {
            let tol = num(e, "vapor_fraction_tolerance");
            assert!(
                (f.vapor_fraction() - b).abs() <= tol,
                "{}: β {} vs {b}",
                c.id,
                f.vapor_fraction()
            );
        }
        if let Some(lo) = e["temperature_min"].as_f64() {
            let hi = num(e, "temperature_max");
            assert!(
                f.temperature > lo && f.temperature < hi,
                "{}: T {}",
                c.id,
                f.temperature
            );
            let kind = match e["kind"].as_str().unwrap() {
                "liquid" => PhaseKind::Liquid,
                _ => PhaseKind::Vapor,
            };
            assert_eq!(f.phases[0].kind, Some(kind), "{}", c.id);
        }
        // The specification holds for the returned state, evaluated independently.
        let mp = f.mixture_properties(&m).unwrap();
        let (q, got, scale) = match c.spec {
            StateSpec::PressureEnthalpy { enthalpy, .. } => (enthalpy, mp.enthalpy, enthalpy.abs()),
            StateSpec::PressureEntropy { entropy, .. } => (entropy, mp.entropy, entropy.abs()),
            _ => unreachable!(),
        };
        assert!((got - q).abs() <= 1e-9 * scale, "{}: spec {q} vs {got}", c.id);
    }
}

#[test]
fn unreachable_and_bad_specifications_are_typed_errors() {
    let opts = StateFlashOptions::default();
    for c in vectors().errors {
        assert!(!c.source.is_empty());
        let m = model(&c.id, &c.model);
        let err = flash_state(&m, &c.spec, &c.feed, &opts).expect_err(&c.id);
        let kind = match c.expected["kind"].as_str().unwrap() {
            "invalid_input" => ErrorKind::InvalidInput,
            "outside_validity" => ErrorKind::OutsideValidity,
            "no_solution" => ErrorKind::NoSolution,
            k => panic!("{}: unknown kind {k}", c.id),
        };
        println!("{}: {err}", c.id);
        assert_eq!(err.kind(), kind, "{}: {err}", c.id);
        let needle = c.expected["message_contains"].as_str().unwrap();
        assert!(err.to_string().contains(needle), "{}: '{err}' lacks '{needle}'", c.id);
    }
}
