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
