//! The calculations-by-name vectors (tests/vectors/calculations.json): every case runs through
//! `tieline::calc`, and where a case carries published values (its source named in the file)
//! the record's fields must match them. The C and Python suites run the same cases and compare
//! their records with these, bit for bit.

use serde::Deserialize;
use serde_json::Value;
use tieline::calc::Case;
use tieline_validation::load_vectors;

#[derive(Deserialize)]
struct Entry {
    id: String,
    source: String,
    #[serde(flatten)]
    case: Case,
    #[serde(default)]
    expected: Option<Value>,
}

#[derive(Deserialize)]
struct File {
    cases: Vec<Entry>,
}

#[test]
fn every_case_runs_and_matches_its_published_values() {
    let f: File = load_vectors("calculations.json");
    assert!(!f.cases.is_empty());
    for e in &f.cases {
        assert!(!e.source.is_empty(), "{}: no source", e.id);
        let out = e.case.run();
        let Some(exp) = &e.expected else {
            out.unwrap_or_else(|err| panic!("{}: {err}", e.id));
            continue;
        };
        if let Some(kind) = exp.get("error").and_then(Value::as_str) {
            let err = out.err().unwrap_or_else(|| panic!("{}: an error was expected", e.id));
            assert_eq!(format!("{:?}", err.kind()), kind, "{}: {err}", e.id);
            continue;
        }
        let rec = out.unwrap_or_else(|err| panic!("{}: {err}", e.id));
        let abs = exp.get("tolerance").and_then(Value::as_f64);
        let rel = exp.get("rel_tolerance").and_then(Value::as_f64);
        let obj = exp.as_object().expect("expected is an object");
        for (k, v) in obj.iter().filter(|(k, _)| !k.ends_with("tolerance")) {
            let want = v.as_f64().unwrap_or_else(|| panic!("{}: {k} is not a number", e.id));
            let got = rec.get_number(k).unwrap_or_else(|err| panic!("{}: {err}", e.id));
            let tol = abs.unwrap_or(0.0).max(rel.unwrap_or(0.0) * want.abs());
            assert!(tol > 0.0, "{}: no tolerance", e.id);
            assert!(
                (got - want).abs() <= tol,
                "{}: {k} = {got}, published {want} ± {tol}",
                e.id
            );
        }
    }
}

#[test]
fn outcomes_serialise_the_same_way_twice() {
    // The C and Python suites compare against `Case::outcome_json`; it must be deterministic.
    let f: File = load_vectors("calculations.json");
    for e in &f.cases {
        assert_eq!(e.case.outcome_json(), e.case.outcome_json(), "{}", e.id);
    }
}

/// The derivatives of a state-function flash's solution with respect to its specification
/// (`d_temperature_d_enthalpy` ...) against central finite differences of the flash itself,
/// to 1e-6 relative, at a two-phase and a one-phase state of the B2 mixture (METHODS §12 B2,
/// Hua, Brennecke & Stadtherr 1998; constants and k_ij as in cases.json).
#[test]
fn state_flash_derivatives_match_central_differences() {
    use tieline::calc::{Plan, Workspace};
    use tieline::model::{Model, model_from_json};
    use tieline::substance::DataBank;
    let f: File = load_vectors("calculations.json");
    let desc = &f.cases[0].case.model;
    let m: Model = model_from_json(&desc.to_string(), DataBank::embedded()).unwrap();
    let feed = [0.3, 0.1, 0.6];
    let tight = Some(r#"{"tolerance": 1e-13, "flash": {"tolerance": 1e-13}}"#);
    for (t, p) in [(270.0, 7.6e6), (330.0, 7.6e6)] {
        let pt = Plan::new("flash_pt", Some(r#"{"tolerance": 1e-13}"#)).unwrap();
        let s = pt.run(&mut Workspace::default(), &m, &[t, p], &feed).unwrap();
        let g = |k: &str| s.get_number(k).unwrap();
        let (h, en, u, v) = (g("enthalpy"), g("entropy"), g("internal_energy"), g("molar_volume"));
        for (name, args) in [
            ("flash_ph", [p, h]),
            ("flash_ps", [p, en]),
            ("flash_tv", [t, v]),
            ("flash_uv", [u, v]),
        ] {
            let plan = Plan::new(name, tight).unwrap();
            let c = plan.calculation();
            let run = |a: [f64; 2]| plan.run(&mut Workspace::default(), &m, &a, &feed).unwrap();
            let base = run(args);
            for out in ["temperature", "pressure"] {
                for k in 0..2 {
                    let arg = c.arguments[k].name;
                    if arg == out {
                        continue;
                    }
                    let field = format!("d_{out}_d_{arg}");
                    let Some(f) = base.field(&field) else {
                        continue; // e.g. p of a PH flash is given, not solved
                    };
                    let tieline::calc::Value::Number(exact) = f.value else {
                        panic!("{name}: {field} is absent: {:?}", base.field("derivatives_error"));
                    };
                    let step = 1e-5 * args[k].abs().max(1e-3);
                    let (mut up, mut dn) = (args, args);
                    up[k] += step;
                    dn[k] -= step;
                    let fd = (run(up).get_number(out).unwrap() - run(dn).get_number(out).unwrap()) / (2.0 * step);
                    assert!(
                        (exact - fd).abs() <= 1e-6 * exact.abs().max(fd.abs()),
                        "{name} at T = {t} K: {field} = {exact}, central difference {fd}"
                    );
                }
            }
        }
    }
}
