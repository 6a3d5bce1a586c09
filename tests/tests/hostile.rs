//! The shared table of hostile inputs (tests/vectors/hostile.json), one row per class of
//! failure: resource limits, errors that name the real cause, duplicate components, compact
//! numbers, data-file locations, saturation near the critical point and at very low T, and
//! messages that read once. The C and Python suites read the same file. Each row's source:
//! the library's own specification of these behaviours (no external source).

use serde::Deserialize;
use serde_json::Value;
use tieline::equilibrium::{
    FlashOptions, SaturationOptions, bubble_temperature, flash_batch, flash_pt, saturation_pressure,
    saturation_temperature,
};
use tieline::model::{Model, ModelDescription};
use tieline::substance::DataBank;
use tieline::{Error, ErrorKind};
use tieline_validation::load_vectors;

#[derive(Deserialize)]
struct Expect {
    kind: String,
    #[serde(default)]
    contains: Vec<String>,
    #[serde(default)]
    absent: Vec<String>,
}

#[derive(Deserialize)]
struct Case {
    id: String,
    class: u32,
    source: String,
    op: String,
    #[serde(default)]
    model: Option<Value>,
    #[serde(default)]
    temperature: Option<Value>,
    #[serde(default)]
    pressure: Option<Value>,
    #[serde(default)]
    feed: Vec<Value>,
    #[serde(default)]
    threads: Option<usize>,
    #[serde(default)]
    options: serde_json::Map<String, Value>,
    #[serde(default)]
    toml: Option<String>,
    expect: Expect,
}

#[derive(Deserialize)]
struct Table {
    cases: Vec<Case>,
}

/// A number of the table: a JSON number, or a string such as "NaN", "inf" or "1e999".
fn number(v: &Value) -> f64 {
    match v {
        Value::Number(n) => n.as_f64().unwrap(),
        Value::String(s) => s.parse().unwrap_or_else(|_| panic!("not a number: {s}")),
        other => panic!("not a number: {other}"),
    }
}

fn kind_name(k: ErrorKind) -> &'static str {
    match k {
        ErrorKind::InvalidInput => "invalid_input",
        ErrorKind::UnknownComponent => "unknown_component",
        ErrorKind::OutsideValidity => "outside_validity",
        ErrorKind::NoSolution => "no_solution",
        ErrorKind::NotConverged => "not_converged",
        ErrorKind::Data => "data",
        _ => "other",
    }
}

fn build(c: &Case) -> Result<Model, Error> {
    let d: ModelDescription = serde_json::from_value(c.model.clone().unwrap()).unwrap();
    d.build(DataBank::embedded())
}

fn run(c: &Case) -> Result<(), Error> {
    let t = c.temperature.as_ref().map(number).unwrap_or(f64::NAN);
    let p = c.pressure.as_ref().map(number).unwrap_or(f64::NAN);
    let z: Vec<f64> = c.feed.iter().map(number).collect();
    let mut fo = FlashOptions::default();
    let mut so = SaturationOptions::default();
    for (k, v) in &c.options {
        match k.as_str() {
            "max_ss_iterations" => fo.max_ss_iterations = v.as_u64().unwrap() as usize,
            "tolerance" => fo.tolerance = number(v),
            "max_iterations" => so.max_iterations = v.as_u64().unwrap() as usize,
            other => panic!("{}: unknown option {other}", c.id),
        }
    }
    match c.op.as_str() {
        "model" => build(c).map(|_| ()),
        "bank" => DataBank::from_toml_str(c.toml.as_deref().unwrap()).map(|_| ()),
        "flash" => flash_pt(&build(c)?, t, p, &z, &fo).map(|_| ()),
        "flash_batch" => {
            let r = flash_batch(&build(c)?, &[t], &[p], &z, &fo, c.threads.unwrap_or(0))?;
            r.into_iter().next().unwrap().map(|_| ())
        }
        "saturation_pressure" => saturation_pressure(&build(c)?, t, 0, &so).map(|_| ()),
        "saturation_temperature" => saturation_temperature(&build(c)?, p, 0, &so).map(|_| ()),
        "bubble_temperature" => bubble_temperature(&build(c)?, p, &z, &so).map(|_| ()),
        other => panic!("{}: unknown op {other}", c.id),
    }
}

/// What every message must satisfy: each kind prefix at most once, and no run of 20 digits
/// (numbers print compactly).
fn reads_once(id: &str, msg: &str) {
    for prefix in [
        "invalid input:",
        "no solution:",
        "data error:",
        "outside validity range:",
        "did not converge",
    ] {
        assert!(msg.matches(prefix).count() <= 1, "{id}: '{prefix}' repeats in: {msg}");
    }
    let mut run = 0;
    for ch in msg.chars() {
        run = if ch.is_ascii_digit() { run + 1 } else { 0 };
        assert!(run < 20, "{id}: a number of 20 digits or more in: {msg}");
    }
}

#[test]
fn hostile_table() {
    let table: Table = load_vectors("hostile.json");
    let mut classes = std::collections::BTreeSet::new();
    for c in &table.cases {
        assert!(!c.source.is_empty(), "{}: no source", c.id);
        classes.insert(c.class);
        let r = run(c);
        match (&r, c.expect.kind.as_str()) {
            (_, "any") | (Ok(()), "ok") => {}
            (Ok(()), want) => panic!("{}: succeeded, {want} expected", c.id),
            (Err(e), want) => {
                let msg = e.to_string();
                assert_eq!(kind_name(e.kind()), want, "{}: {msg}", c.id);
                for s in &c.expect.contains {
                    assert!(msg.contains(s.as_str()), "{}: '{s}' not in: {msg}", c.id);
                }
                for s in &c.expect.absent {
                    assert!(!msg.contains(s.as_str()), "{}: '{s}' in: {msg}", c.id);
                }
            }
        }
        if let Err(e) = &r {
            reads_once(&c.id, &e.to_string());
        }
    }
    // Every class but the binding conversions (5, Python only) has rows here.
    for k in [1, 2, 3, 4, 6, 7, 8] {
        assert!(classes.contains(&k), "class {k} has no row");
    }
}
