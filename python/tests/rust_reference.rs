//! Reference outputs of the core for the calls the Python suite makes, written as JSON so that
//! `test_rust_parity.py` can check the Python package gives the same numbers bit for bit.
//!
//! The file goes to `$TIELINE_REFERENCE_OUT` when set (the Python test script sets it), else
//! under cargo's temporary directory. Inputs are the shared vectors of `tests/vectors/` plus
//! a sweep and curves defined here and written into the file, so both sides use the same ones.

use serde_json::{Value, json};
use std::path::PathBuf;
use tieline::equilibrium::{
    FlashContext, FlashOptions, SaturationOptions, StabilityOptions, bubble_pressure, dew_pressure, flash_pt,
    saturation_pressure, saturation_temperature, stability,
};
use tieline::model::{Model, PhaseState, RootChoice, model_from_json};
use tieline::substance::DataBank;

fn vectors() -> Value {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../tests/vectors/cases.json");
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("reading {}: {e}", path.display()));
    serde_json::from_str(&text).expect("cases.json parses")
}

fn model(desc: &Value) -> Result<Model, tieline::Error> {
    model_from_json(&desc.to_string(), DataBank::embedded())
}

fn f64s(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("array")
        .iter()
        .map(|x| x.as_f64().expect("number"))
        .collect()
}

/// A result, or the kind of its error (so that failures must agree too).
fn outcome<T: serde::Serialize>(r: Result<T, tieline::Error>) -> Value {
    match r {
        Ok(v) => serde_json::to_value(v).expect("serialisable"),
        Err(e) => json!({"error": format!("{:?}", e.kind())}),
    }
}

/// The vectorised flash of the Python package: consecutive blocks of `block` points, each
/// solved by one warm-started context.
fn sweep(m: &Model, t: &[f64], p: &[f64], feed: &[f64], block: usize) -> Vec<Value> {
    let opts = FlashOptions::default();
    let mut out = Vec::new();
    for start in (0..t.len()).step_by(block) {
        let mut ctx = FlashContext::new(feed.len());
        for i in start..(start + block).min(t.len()) {
            out.push(outcome(ctx.flash(m, t[i], p[i], feed, &opts).cloned()));
        }
    }
    out
}

#[test]
fn write_reference_outputs() {
    let v = vectors();
    let mut cases = serde_json::Map::new();
    let sat = SaturationOptions::default();
    for c in v["flash"].as_array().expect("flash cases") {
        let r = model(&c["model"]).and_then(|m| {
            let t = c["temperature"].as_f64().unwrap();
            let p = c["pressure"].as_f64().unwrap();
            flash_pt(&m, t, p, &f64s(&c["feed"]), &FlashOptions::default())
        });
        cases.insert(format!("flash/{}", c["id"].as_str().unwrap()), outcome(r));
    }
    for c in v["stability"].as_array().expect("stability cases") {
        let r = model(&c["model"]).and_then(|m| {
            let t = c["temperature"].as_f64().unwrap();
            let p = c["pressure"].as_f64().unwrap();
            stability(&m, t, p, &f64s(&c["feed"]), &StabilityOptions::default())
        });
        cases.insert(format!("stability/{}", c["id"].as_str().unwrap()), outcome(r));
    }
    for c in v["volumes"].as_array().expect("volume cases") {
        for (root, name) in [(RootChoice::Vapor, "vapor"), (RootChoice::Liquid, "liquid")] {
            let r = model(&c["model"]).and_then(|m| {
                let t = c["temperature"].as_f64().unwrap();
                let p = c["pressure"].as_f64().unwrap();
                PhaseState::new(&m, t, p, &f64s(&c["feed"]), root)?.properties(&m)
            });
            cases.insert(format!("volumes/{}/{name}", c["id"].as_str().unwrap()), outcome(r));
        }
    }
    for c in v["saturation"].as_array().expect("saturation cases") {
        let r = model(&c["model"]).and_then(|m| {
            let t = c["temperature"].as_f64().unwrap();
            saturation_pressure(&m, t, c["component"].as_u64().unwrap() as usize, &sat)
        });
        cases.insert(format!("saturation/{}", c["id"].as_str().unwrap()), outcome(r));
    }

    // A T–p sweep of a binary, ordered along T within each pressure, in blocks of 16.
    let desc = json!({"model": "cubic", "kind": "peng_robinson", "components": ["methane", "n-butane"],
                      "kij": [[0, 1, 0.02]]});
    let m = model(&desc).expect("binary model");
    let temps: Vec<f64> = (0..12).map(|i| 230.0 + 12.5 * i as f64).collect();
    let pres: Vec<f64> = (0..10).map(|j| 0.5e6 + 1.0e6 * j as f64).collect();
    let (mut t, mut p) = (Vec::new(), Vec::new());
    for &pj in &pres {
        for &ti in &temps {
            t.push(ti);
            p.push(pj);
        }
    }
    let feed = vec![0.6, 0.4];
    let block = 16;
    let flash_sweep = sweep(&m, &t, &p, &feed, block);

    let curve_t: Vec<f64> = (0..15).map(|i| 200.0 + 15.0 * i as f64).collect();
    let bubble: Vec<Value> = curve_t
        .iter()
        .map(|&x| outcome(bubble_pressure(&m, x, &feed, &sat)))
        .collect();
    let dew: Vec<Value> = curve_t
        .iter()
        .map(|&x| outcome(dew_pressure(&m, x, &feed, &sat)))
        .collect();
    let psat: Vec<Value> = curve_t
        .iter()
        .map(|&x| outcome(saturation_pressure(&m, x, 1, &sat)))
        .collect();
    let tsat_p = [1.0e5, 5.0e5, 1.0e6, 2.0e6, 3.5e6];
    let tsat: Vec<Value> = tsat_p
        .iter()
        .map(|&x| outcome(saturation_temperature(&m, x, 1, &sat)))
        .collect();
    let props: Vec<Value> = t
        .iter()
        .zip(&p)
        .take(24)
        .map(|(&ti, &pi)| {
            outcome(PhaseState::new(&m, ti, pi, &feed, RootChoice::Stable).and_then(|s| s.properties(&m)))
        })
        .collect();

    let out = json!({
        "about": "Outputs of the Rust core for the Python parity test; regenerated by each run.",
        "cases": cases,
        "binary": {
            "model": desc,
            "feed": feed,
            "sweep": {"temperature": t, "pressure": p, "block": block, "results": flash_sweep},
            "curves": {"temperature": curve_t, "bubble_pressure": bubble, "dew_pressure": dew,
                       "saturation_pressure_component1": psat,
                       "saturation_temperature_pressure": tsat_p, "saturation_temperature_component1": tsat},
            "properties_stable": props,
        },
    });
    // The sweep must contain both one- and two-phase points, or it tests little.
    let two_phase = flash_sweep
        .iter()
        .filter(|r| r["phases"].as_array().is_some_and(|a| a.len() == 2))
        .count();
    assert!(
        two_phase > 10 && two_phase < flash_sweep.len() - 10,
        "{two_phase} two-phase points"
    );
    let path = std::env::var_os("TIELINE_REFERENCE_OUT")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("python-reference.json"));
    if let Some(dir) = path.parent() {
        std::fs::create_dir_all(dir).expect("output directory");
    }
    std::fs::write(&path, serde_json::to_string_pretty(&out).expect("json")).expect("writing the reference file");
}
