//! Writes the Rust results of the calls that the C++ vector test (`ffi/tests/test_vectors.cpp`)
//! makes through the C ABI, computed with the core crate directly, so the C++ test can
//! require bit-for-bit equality. Usage: `tieline-ffi-reference CASES_JSON OUT_JSON`.
//!
//! Floats are written in the shortest round-trip form (serde_json `float_roundtrip`); NaN and
//! infinities become `null`. Failed calls are written as their C status number.

use serde_json::{Value, json};
use tieline::equilibrium::{
    Coexistence, FlashContext, FlashOptions, FlashResult, PhasePoint, PurePhase, PurePhases, SaturationOptions,
    SolidFlashOptions, SolidPhaseSpec, StabilityOptions, bubble_pressure, bubble_temperature, dew_pressure,
    dew_temperature, flash_batch, flash_pt, flash_pt_with_solids, frost_point_temperature, saturation_pressure,
    saturation_temperature, stability,
};
use tieline::model::{
    CubicEos, CubicKind, FluidModel, FusionData, FusionSolid, IceIh, Model, PhaseState, RootChoice, SolidModel,
    model_from_json,
};
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

fn point(p: &PhasePoint) -> Value {
    json!({"gibbs": p.gibbs, "enthalpy": p.enthalpy, "entropy": p.entropy, "molar_volume": p.molar_volume})
}

fn coexistence(r: tieline::Result<Coexistence>) -> Value {
    or_status(r, |c| {
        json!({"status": 0, "temperature": c.temperature, "pressure": c.pressure, "a": point(&c.states.0),
               "b": point(&c.states.1), "delta_h": c.delta_h, "clapeyron_slope": c.clapeyron_slope,
               "iterations": c.iterations})
    })
}

/// The pure-water calls of the vector test: IAPWS-95 with IAPWS-06 ice Ih, by case kind.
fn water(c: &Value) -> Value {
    if !matches!(c["kind"].as_str(), Some("saturation_t" | "melting_p" | "triple_point")) {
        return json!({"id": c["id"], "kind": c["kind"], "result": null});
    }
    let m = model_from_json(&c["model"].to_string(), DataBank::embedded()).expect("water model");
    let ice = IceIh::new();
    let set = PurePhases::new(&m, 0, vec![&ice as &dyn SolidModel]).expect("water phases");
    let num = |k: &str| c[k].as_f64().unwrap_or_else(|| panic!("{}: missing {k}", c["id"]));
    let rec = match c["kind"].as_str() {
        Some("saturation_t") => {
            coexistence(set.coexistence_at_temperature(PurePhase::Liquid, PurePhase::Vapor, num("temperature"), None))
        }
        Some("melting_p") => {
            let p = num("pressure");
            let melt = coexistence(set.coexistence_at_pressure(PurePhase::Solid(0), PurePhase::Liquid, p, None));
            let stable = |t: f64| {
                or_status(set.stable_phase(t, p), |s| {
                    let code = match s.stable.phase {
                        PurePhase::Liquid => 1,
                        PurePhase::Vapor => 2,
                        PurePhase::Solid(k) => 16 + k as u32,
                    };
                    json!({"status": 0, "phase": code, "gibbs": s.stable.gibbs})
                })
            };
            let ts: Vec<f64> = (0..9).map(|k| 263.15 + 5.0 * k as f64).collect();
            let curves = or_status(set.gibbs_curves_isobaric(p, &ts), |g| {
                let rows: Vec<Value> = g
                    .curves
                    .iter()
                    .map(|(_, v)| json!(v.iter().map(|x| x.unwrap_or(f64::NAN)).collect::<Vec<_>>()))
                    .collect();
                let xs: Vec<Value> = g
                    .crossings
                    .iter()
                    .map(|x| json!({"temperature": x.point.temperature, "gibbs": x.gibbs, "stable": x.stable}))
                    .collect();
                json!({"status": 0, "temperatures": ts, "gibbs": rows, "crossings": xs})
            });
            json!({"status": 0, "melting": melt, "stable_263": stable(263.15), "stable_283": stable(283.15),
                   "curves": curves})
        }
        Some("triple_point") => or_status(set.triple_point(0, None), |t| {
            json!({"status": 0, "temperature": t.temperature, "pressure": t.pressure, "residual": t.residual,
                   "iterations": t.iterations, "solid": point(&t.phases[0])})
        }),
        _ => json!(null),
    };
    json!({"id": c["id"], "kind": c["kind"], "result": rec})
}

/// The freeze-out flash of the vector test: CO2 (2 %) from methane at 5e5 Pa and 160 K on
/// Peng-Robinson with dry ice anchored to it.
fn solid_flash() -> Value {
    let comps = DataBank::embedded()
        .get_many(&["methane", "carbon dioxide"])
        .expect("components");
    let m = Model::Cubic(CubicEos::new(CubicKind::PengRobinson, comps).expect("model"));
    let dry = FusionSolid::anchored(&m, 1, FusionData::carbon_dioxide()).expect("dry ice");
    let spec = SolidPhaseSpec::matching(&m, &dry).expect("spec");
    let (t, p, z) = (160.0, 5e5, [0.98, 0.02]);
    let r = flash_pt_with_solids(&m, &[spec], t, p, &z, &SolidFlashOptions::default());
    let rec = or_status(r, |r| {
        let mg = &r.margins[0];
        json!({"status": 0, "solid_amount": r.solids.first().map_or(0.0, |s| s.amount),
               "margin": mg.margin, "ln_fugacity_solid": mg.ln_fugacity_solid,
               "ln_fugacity_fluid": mg.ln_fugacity_fluid, "residual": r.diagnostics.residual,
               "fluid_flashes": r.diagnostics.fluid_flashes,
               "fluid": r.fluid.as_ref().map(flash_record)})
    });
    // The frost point of the same gas at the same pressure, searched from 180 K.
    let t_guess = 180.0;
    let frost = or_status(
        frost_point_temperature(&m, spec, p, &z, t_guess, &FlashOptions::default()),
        |t| json!({"status": 0, "temperature": t}),
    );
    json!({"names": ["methane", "carbon dioxide"], "temperature": t, "pressure": p, "feed": z, "result": rec,
           "frost_guess": t_guess, "frost_point": frost})
}

/// The calculations-by-name vectors (calculations.json, beside the cases file): each case's
/// record as JSON, for test_calc_vectors.
fn calculations(cases_path: &str) -> Value {
    let path = std::path::Path::new(cases_path).with_file_name("calculations.json");
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("reading {}: {e}", path.display()));
    tieline::calc::reference_outcomes(&text).unwrap_or_else(|e| panic!("{e}"))
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
        "water": cases["water"].as_array().expect("water cases").iter().map(water).collect::<Vec<_>>(),
        "solid_flash": solid_flash(),
        "batch": {"case": c["id"], "temperatures": temps, "pressure": p0, "runs": batch},
        "calculations": calculations(&args[1]),
    });
    std::fs::write(&args[2], serde_json::to_string_pretty(&out).expect("serialising"))
        .unwrap_or_else(|e| panic!("writing {}: {e}", args[2]));
}
