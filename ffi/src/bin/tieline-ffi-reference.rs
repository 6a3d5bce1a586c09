//! Writes the Rust results of the calls that the C++ vector test (`ffi/tests/test_vectors.cpp`)
//! makes through the C ABI, computed with the core crate directly, so the C++ test can
//! require bit-for-bit equality. Usage: `tieline-ffi-reference CASES_JSON OUT_JSON`.
//!
//! Floats are written in the shortest round-trip form (serde_json `float_roundtrip`); NaN and
//! infinities become `null`. Failed calls are written as their C status number.

use serde_json::{Value, json};
use tieline::equilibrium::{
    FlashContext, FlashOptions, FlashResult, SaturationOptions, StabilityOptions, bubble_pressure, bubble_temperature,
    dew_pressure, dew_temperature, flash_batch, flash_pt, saturation_pressure, saturation_temperature, stability,
};
use tieline::model::{FluidModel, Model, PhaseState, RootChoice, model_from_json};
use tieline::substance::DataBank;
use tieline_ffi::tl_status;

fn status(e: &tieline::Error) -> Value {
    json!({ "status": tl_status::from_kind(e.kind()) as u32 })
}

fn flash_record(r: &FlashResult) -> Value {
    let phases: Vec<Value> = r
        .phases
        .iter()
        .map(|ph| {
            json!({
                "kind": tieline_ffi::tl_phase_kind::from_kind(ph.kind) as u32,
                "amount": ph.amount, "fraction": ph.fraction, "molar_volume": ph.molar_volume,
                "z": ph.z, "composition": ph.composition, "ln_phi": ph.ln_phi,
            })
        })
        .collect();
    let d = &r.diagnostics;
    json!({
        "status": 0,
        "phases": phases,
        "residual": d.residual,
        "certificate": d.certificate.unwrap_or(f64::NAN),
        "gibbs": d.gibbs,
        "ss_iterations": d.ss_iterations,
        "newton_iterations": d.newton_iterations,
        "stability_iterations": d.stability_iterations,
        "warm_start": d.warm_start,
        "json": serde_json::to_string(r).expect("serialising a flash result"),
    })
}

fn or_status<T>(r: tieline::Result<T>, f: impl FnOnce(T) -> Value) -> Value {
    match r {
        Ok(v) => f(v),
        Err(e) => status(&e),
    }
}

fn properties(m: &Model, t: f64, p: f64, n: &[f64], root: RootChoice) -> Value {
    let r = PhaseState::new(m, t, p, n, root).and_then(|s| s.properties(m).map(|pr| (s, pr)));
    or_status(r, |(s, pr)| {
        json!({
            "status": 0, "kind": tieline_ffi::tl_phase_kind::from_kind(Some(s.kind)) as u32,
            "molar_volume": pr.molar_volume, "z": pr.z, "enthalpy": pr.enthalpy, "entropy": pr.entropy,
            "gibbs": pr.gibbs, "cp": pr.cp, "cv": pr.cv, "speed_of_sound": pr.speed_of_sound,
            "joule_thomson": pr.joule_thomson, "ln_phi": pr.ln_phi,
        })
    })
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args.len() != 3 {
        eprintln!("usage: {} CASES_JSON OUT_JSON", args[0]);
        std::process::exit(2);
    }
    let text = std::fs::read_to_string(&args[1]).unwrap_or_else(|e| panic!("reading {}: {e}", args[1]));
    let cases: Value = serde_json::from_str(&text).expect("parsing the vectors");
    let model = |c: &Value| -> Model {
        let d = serde_json::to_string(&c["model"]).expect("model description");
        model_from_json(&d, DataBank::embedded()).unwrap_or_else(|e| panic!("{}: {e}", c["id"]))
    };
    let num = |c: &Value, k: &str| c[k].as_f64().unwrap_or_else(|| panic!("{}: missing {k}", c["id"]));
    let feed = |c: &Value| -> Vec<f64> {
        c["feed"]
            .as_array()
            .map(|a| a.iter().map(|x| x.as_f64().expect("feed value")).collect())
            .unwrap_or_default()
    };
    let fopts = FlashOptions::default();
    let sopts = SaturationOptions::default();

    let stab: Vec<Value> = cases["stability"]
        .as_array()
        .expect("stability cases")
        .iter()
        .map(|c| {
            let m = model(c);
            let r = stability(
                &m,
                num(c, "temperature"),
                num(c, "pressure"),
                &feed(c),
                &StabilityOptions::default(),
            );
            let rec = or_status(r, |s| {
                json!({"status": 0, "stable": s.stable, "min_tpd": s.min_tpd, "num_points": s.points.len(),
                       "iterations": s.iterations,
                       "json": serde_json::to_string(&s).expect("serialising a stability result")})
            });
            json!({"id": c["id"], "result": rec})
        })
        .collect();

    let mut flash = Vec::new();
    let mut warm = Vec::new();
    let mut mixtures = Vec::new();
    for c in cases["flash"].as_array().expect("flash cases") {
        let m = model(c);
        let (t, p, z) = (num(c, "temperature"), num(c, "pressure"), feed(c));
        flash.push(json!({"id": c["id"], "result": or_status(flash_pt(&m, t, p, &z, &fopts), |r| flash_record(&r))}));
        // A warm-started sequence through one context: T, T + 0.5 K, ... (as a simulator would).
        let mut ctx = FlashContext::new(m.num_components());
        let seq: Vec<Value> = (0..6)
            .map(|k| {
                let tk = t + 0.5 * k as f64;
                or_status(ctx.flash(&m, tk, p, &z, &fopts), flash_record)
            })
            .collect();
        warm.push(json!({"id": c["id"], "step": 0.5, "steps": 6, "results": seq}));
        let bd = |r: tieline::Result<tieline::equilibrium::BubbleDew>| {
            or_status(r, |b| {
                json!({"status": 0, "temperature": b.temperature, "pressure": b.pressure,
                       "incipient": b.incipient, "residual": b.residual})
            })
        };
        mixtures.push(json!({
            "id": c["id"],
            "bubble_pressure": bd(bubble_pressure(&m, t, &z, &sopts)),
            "dew_pressure": bd(dew_pressure(&m, t, &z, &sopts)),
            "bubble_temperature": bd(bubble_temperature(&m, p, &z, &sopts)),
            "dew_temperature": bd(dew_temperature(&m, p, &z, &sopts)),
        }));
    }

    let volumes: Vec<Value> = cases["volumes"]
        .as_array()
        .expect("volume cases")
        .iter()
        .map(|c| {
            let m = model(c);
            let (t, p, n) = (num(c, "temperature"), num(c, "pressure"), feed(c));
            json!({"id": c["id"],
                   "vapor": properties(&m, t, p, &n, RootChoice::Vapor),
                   "liquid": properties(&m, t, p, &n, RootChoice::Liquid),
                   "stable": properties(&m, t, p, &n, RootChoice::Stable)})
        })
        .collect();

    let saturation: Vec<Value> = cases["saturation"]
        .as_array()
        .expect("saturation cases")
        .iter()
        .map(|c| {
            let m = model(c);
            let i = c["component"].as_u64().unwrap_or(0) as usize;
            let rec = or_status(saturation_pressure(&m, num(c, "temperature"), i, &sopts), |s| {
                let back = or_status(
                    saturation_temperature(&m, s.pressure, i, &sopts),
                    |b| json!({"status": 0, "temperature": b.temperature, "iterations": b.iterations}),
                );
                json!({"status": 0, "pressure": s.pressure, "liquid_molar_volume": s.liquid_molar_volume,
                       "vapor_molar_volume": s.vapor_molar_volume,
                       "enthalpy_of_vaporization": s.enthalpy_of_vaporization, "iterations": s.iterations,
                       "boiling": back})
            });
            json!({"id": c["id"], "result": rec})
        })
        .collect();

    // A batch sweep on the model of the second flash case, on one and two threads.
    let c = &cases["flash"][1];
    let m = model(c);
    let (t0, p0, z) = (num(c, "temperature"), num(c, "pressure"), feed(c));
    let temps: Vec<f64> = (0..24).map(|k| t0 - 30.0 + 2.5 * k as f64).collect();
    let press = vec![p0; temps.len()];
    let batch: Vec<Value> = [1usize, 2]
        .iter()
        .map(|&threads| {
            let rs = flash_batch(&m, &temps, &press, &z, &fopts, threads).expect("batch inputs");
            let pts: Vec<Value> = rs.iter().map(|r| or_status(r.clone(), |f| flash_record(&f))).collect();
            json!({"threads": threads, "results": pts})
        })
        .collect();

    let out = json!({
        "about": "Rust results of the calls made by ffi/tests/test_vectors.cpp (written by tieline-ffi-reference)",
        "stability": stab, "flash": flash, "warm": warm, "bubble_dew": mixtures, "volumes": volumes,
        "saturation": saturation,
        "batch": {"case": c["id"], "temperatures": temps, "pressure": p0, "runs": batch},
    });
    std::fs::write(&args[2], serde_json::to_string_pretty(&out).expect("serialising"))
        .unwrap_or_else(|e| panic!("writing {}: {e}", args[2]));
}
