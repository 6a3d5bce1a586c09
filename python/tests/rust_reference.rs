//! Reference outputs of the core for the calls the Python suite makes, written as JSON so that
//! `test_rust_parity.py` can check the Python package gives the same numbers bit for bit.
//!
//! The file goes to `$TIELINE_REFERENCE_OUT` when set (the Python test script sets it), else
//! under cargo's temporary directory. Inputs are the shared vectors of `tests/vectors/` plus
//! a sweep and curves defined here and written into the file, so both sides use the same ones;
//! for water (IAPWS-95 with IAPWS-06 ice Ih) the calls of the "water" section, and the flashes
//! with solids (dry ice from methane, ice from methane and from pure water) with a frost point.

use serde_json::{Value, json};
use std::path::PathBuf;
use tieline::calc::{Plan, Workspace, run_points};
use tieline::equilibrium::batch::{BatchLayout, Partition, WarmStart, flash_batch_with, run_len};
use tieline::equilibrium::{
    Coexistence, FlashOptions, PhasePoint, PurePhase, PurePhases, SaturationOptions, SolidFlashOptions, SolidPhaseSpec,
    StabilityOptions, bubble_pressure, dew_pressure, flash_pt, flash_pt_with_solids, frost_point_temperature,
    saturation_pressure, saturation_temperature, stability,
};
use tieline::model::{
    CubicEos, CubicKind, FusionData, FusionSolid, Iapws95, IceIh, Model, PhaseState, RootChoice, SolidModel,
    model_from_json,
};
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

/// The vectorised flash of the Python package: the core batch with blocks of `block` points
/// (None: the default layout of `flash_batch`, blocks of 16 to 64), warm starts between near
/// neighbours only.
fn sweep(m: &Model, t: &[f64], p: &[f64], feed: &[f64], block: Option<usize>) -> Vec<Value> {
    let layout = BatchLayout {
        partition: block.map_or(Partition::Auto, Partition::Blocks),
        warm_start: WarmStart::Near,
    };
    flash_batch_with(m, t, p, feed, &FlashOptions::default(), 1, &layout)
        .expect("the batch runs")
        .into_iter()
        .map(outcome)
        .collect()
}

/// The vectorised `calculate` of the Python package: calculation `name` over the points whose
/// scalar arguments are the columns `cols`, one shared `feed`, cut into the runs of the layout
/// of the flash batch (blocks of `block` points, or None for the default `block_len`), each
/// run by the core's `run_points` with warm starts between near neighbours only. Each point
/// is its record's JSON or the kind of its error.
fn calc_sweep(m: &Model, name: &str, cols: &[&[f64]], feed: &[f64], block: Option<usize>) -> Vec<Value> {
    let plan = Plan::new(name, None).expect("the calculation exists");
    let layout = BatchLayout {
        partition: block.map_or(Partition::Auto, Partition::Blocks),
        warm_start: WarmStart::Near,
    };
    let n = cols[0].len();
    let run = run_len(&layout, n, 1);
    let mut out = vec![Value::Null; n];
    let mut ws = Workspace::default();
    for b in 0..n.div_ceil(run) {
        let range = b * run..((b + 1) * run).min(n);
        run_points(
            &plan,
            &mut ws,
            m,
            cols,
            |_| feed,
            range,
            layout.warm_start,
            |i, r| {
                out[i] = match r {
                    Ok(rec) => rec.to_json(),
                    Err(e) => json!({"error": format!("{:?}", e.kind())}),
                }
            },
        )
        .expect("the columns fit the calculation");
    }
    out
}

fn point(p: &PhasePoint) -> Value {
    json!({"temperature": p.temperature, "pressure": p.pressure, "gibbs": p.gibbs, "enthalpy": p.enthalpy,
           "entropy": p.entropy, "molar_volume": p.molar_volume})
}

fn coexistence(r: Result<Coexistence, tieline::Error>) -> Value {
    match r {
        Ok(c) => json!({"temperature": c.temperature, "pressure": c.pressure, "a": point(&c.states.0),
                        "b": point(&c.states.1), "delta_h": c.delta_h, "delta_s": c.delta_s,
                        "delta_v": c.delta_v, "clapeyron_slope": c.clapeyron_slope,
                        "iterations": c.iterations}),
        Err(e) => json!({"error": format!("{:?}", e.kind())}),
    }
}

fn curves(r: Result<tieline::equilibrium::GibbsCurves, tieline::Error>) -> Value {
    match r {
        Ok(g) => {
            let rows: Vec<Value> = g.curves.iter().map(|(_, v)| json!(v)).collect();
            let xs: Vec<Value> = g
                .crossings
                .iter()
                .map(|x| json!({"point": coexistence(Ok(x.point)), "gibbs": x.gibbs, "stable": x.stable}))
                .collect();
            json!({"grid": g.grid, "gibbs": rows, "crossings": xs})
        }
        Err(e) => json!({"error": format!("{:?}", e.kind())}),
    }
}

/// The calls the Python suite makes for one case of the "water" section, by kind.
fn water_case(c: &Value) -> Value {
    let w = Iapws95::new();
    let m = model(&c["model"]).ok();
    let ice = IceIh::new();
    let num = |k: &str| c[k].as_f64().unwrap_or(f64::NAN);
    let (t, p) = (num("temperature"), num("pressure"));
    let rec = match c["kind"].as_str().expect("kind") {
        "state_td" => json!({"state": outcome(w.state_td(t, num("density")))}),
        "saturation_t" => {
            let m = m.expect("water model");
            let set = PurePhases::new(&m, 0, vec![&ice as &dyn SolidModel]).expect("water phases");
            json!({"saturation": outcome(w.saturation_at_temperature(t)),
                   "coexistence": coexistence(set.coexistence_at_temperature(PurePhase::Liquid, PurePhase::Vapor, t, None))})
        }
        "ice_tp" => {
            let mut sp = outcome(ice.specific_properties(t, p));
            sp["temperature"] = json!(t);
            sp["pressure"] = json!(p);
            json!({"specific": sp, "molar": outcome(ice.properties(t, p))})
        }
        "melting_p" => {
            let m = m.expect("water model");
            let set = PurePhases::new(&m, 0, vec![&ice as &dyn SolidModel]).expect("water phases");
            let ts: Vec<f64> = (0..9).map(|k| 263.15 + 5.0 * k as f64).collect();
            let stable = |t: f64| outcome(set.stable_phase(t, p).map(|s| point(&s.stable)));
            json!({"melting": coexistence(set.coexistence_at_pressure(PurePhase::Solid(0), PurePhase::Liquid, p, None)),
                   "stable_263": stable(263.15), "stable_283": stable(283.15),
                   "curves_temperatures": ts, "curves": curves(set.gibbs_curves_isobaric(p, &ts))})
        }
        "triple_point" => {
            let m = m.expect("water model");
            let set = PurePhases::new(&m, 0, vec![&ice as &dyn SolidModel]).expect("water phases");
            match set.triple_point(0, None) {
                Ok(tp) => json!({"temperature": tp.temperature, "pressure": tp.pressure, "residual": tp.residual,
                                 "iterations": tp.iterations,
                                 "phases": tp.phases.iter().map(point).collect::<Vec<_>>()}),
                Err(e) => json!({"error": format!("{:?}", e.kind())}),
            }
        }
        k => panic!("unknown water case kind {k}"),
    };
    json!({"id": c["id"], "kind": c["kind"], "result": rec})
}

/// Traced boundaries and isothermal curves of water with ice, beyond the vector cases.
fn water_extra() -> Value {
    let m = Model::Iapws95(Iapws95::new());
    let ice = IceIh::new();
    let set = PurePhases::new(&m, 0, vec![&ice as &dyn SolidModel]).expect("water phases");
    let melt_p = [101_325.0, 1e6, 1e7, 5e7, 1e8];
    let boil_t = [300.0, 350.0, 400.0, 450.0, 500.0];
    let iso_p: Vec<f64> = (0..25).map(|k| 100.0 * 10f64.powf(k as f64 / 8.0)).collect();
    let trace = |r: Result<Vec<Coexistence>, tieline::Error>| match r {
        Ok(v) => json!(v.into_iter().map(|c| coexistence(Ok(c))).collect::<Vec<_>>()),
        Err(e) => json!({"error": format!("{:?}", e.kind())}),
    };
    json!({
        "melting_pressures": melt_p,
        "melting_trace": trace(set.trace_along_pressure(PurePhase::Solid(0), PurePhase::Liquid, &melt_p, None)),
        "boiling_temperatures": boil_t,
        "boiling_trace": trace(set.trace_along_temperature(PurePhase::Liquid, PurePhase::Vapor, &boil_t, None)),
        "isothermal_temperature": 265.0,
        "isothermal_pressures": iso_p,
        "isothermal": curves(set.gibbs_curves_isothermal(265.0, &iso_p)),
    })
}

/// Flashes with solids and a frost point, as the Python suite makes them.
fn solid_flashes() -> Value {
    let bank = DataBank::embedded();
    let co2 = Model::Cubic(
        CubicEos::new(
            CubicKind::PengRobinson,
            bank.get_many(&["methane", "carbon dioxide"]).expect("components"),
        )
        .expect("model"),
    );
    let dry = FusionSolid::anchored(&co2, 1, FusionData::carbon_dioxide()).expect("dry ice");
    let dry_spec = SolidPhaseSpec::matching(&co2, &dry).expect("spec");
    let humid = Model::Cubic(
        CubicEos::new(
            CubicKind::PengRobinson,
            bank.get_many(&["methane", "water"]).expect("components"),
        )
        .expect("model"),
    );
    let ice = IceIh::new();
    let ice_humid = SolidPhaseSpec::matching(&humid, &ice).expect("spec");
    let water = Model::Iapws95(Iapws95::new());
    let ice_water = SolidPhaseSpec::matching(&water, &ice).expect("spec");
    // 1 ppm of water: ice forms from the vapour (its dew point lies far below the frost point).
    let humid_feed = [1.0 - 1e-6, 1e-6];
    let o = SolidFlashOptions::default();
    let fo = FlashOptions {
        certificate: false,
        ..FlashOptions::default()
    };
    json!({
        "dry_ice": {"components": ["methane", "carbon dioxide"], "temperature": 160.0, "pressure": 5e5,
                    "feed": [0.98, 0.02],
                    "result": outcome(flash_pt_with_solids(&co2, &[dry_spec], 160.0, 5e5, &[0.98, 0.02], &o)),
                    "frost_point": outcome(frost_point_temperature(&co2, dry_spec, 5e5, &[0.98, 0.02], 216.592, &fo))},
        "ice_humid": {"components": ["methane", "water"], "temperature": 205.0, "pressure": 5e6,
                      "feed": humid_feed,
                      "result": outcome(flash_pt_with_solids(&humid, &[ice_humid], 205.0, 5e6, &humid_feed, &o)),
                      "frost_point": outcome(frost_point_temperature(&humid, ice_humid, 5e6, &humid_feed, 273.16, &fo))},
        "ice_water": {"temperature": 263.15, "pressure": 101_325.0, "feed": [1.0],
                      "result": outcome(flash_pt_with_solids(&water, &[ice_water], 263.15, 101_325.0, &[1.0], &o))},
    })
}

#[test]
fn write_reference_outputs() {
    let v = vectors();
    let mut cases = serde_json::Map::new();
    let calc = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../tests/vectors/calculations.json");
    let calc = std::fs::read_to_string(&calc).expect("calculations.json");
    let calculations = tieline::calc::reference_outcomes(&calc).expect("calculations.json runs");
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

    // A T–p sweep of a binary, ordered along T within each pressure, in blocks of 24 and in the
    // default layout (blocks of 16 for 120 points).
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
    let block = 24;
    let flash_sweep = sweep(&m, &t, &p, &feed, Some(block));
    let default_sweep = sweep(&m, &t, &p, &feed, None);

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

    // Calculations by name over sweeps: a PT flash along T (2.5 K apart, warm starts) at three
    // pressures in turn (T falls back by 60 K at each change of pressure: a cold start inside a
    // block), in the default layout (blocks of 16 for 75 points) and in blocks of 8; and a PH
    // flash along the enthalpy at 2 MPa, 300 J/mol apart, with one far jump.
    let (mut ct, mut cp) = (Vec::new(), Vec::new());
    for &pj in &[1.0e6, 3.0e6, 5.0e6] {
        for i in 0..25 {
            ct.push(240.0 + 2.5 * i as f64);
            cp.push(pj);
        }
    }
    let calc_pt = calc_sweep(&m, "flash_pt", &[&ct, &cp], &feed, None);
    let calc_pt_8 = calc_sweep(&m, "flash_pt", &[&ct, &cp], &feed, Some(8));
    let h0 = Plan::new("flash_pt", None)
        .and_then(|pl| pl.run(&mut Workspace::default(), &m, &[240.0, 2.0e6], &feed))
        .and_then(|r| r.get_number("enthalpy"))
        .expect("the enthalpy of the feed at 240 K");
    let mut ch: Vec<f64> = (0..40).map(|k| h0 + 300.0 * k as f64).collect();
    ch[25] = 0.85 * ch[24];
    let chp = vec![2.0e6; ch.len()];
    let calc_ph = calc_sweep(&m, "flash_ph", &[&chp, &ch], &feed, None);
    for (what, recs) in [
        ("flash_pt", &calc_pt),
        ("flash_pt blocks of 8", &calc_pt_8),
        ("flash_ph", &calc_ph),
    ] {
        assert!(recs.iter().all(|r| r.get("error").is_none()), "{what}: a point failed");
    }
    // Warm and cold starts both occur inside the blocks of the PT sweep.
    let warm = calc_pt.iter().filter(|r| r["warm_start"] == true).count();
    assert!(
        warm > 40 && calc_pt.len() - warm > calc_pt.len().div_ceil(16),
        "{warm} warm starts"
    );

    let out = json!({
        "about": "Outputs of the Rust core for the Python parity test; regenerated by each run.",
        "cases": cases,
        "calculations": calculations,
        "binary": {
            "model": desc,
            "feed": feed,
            "sweep": {"temperature": t, "pressure": p, "block": block, "results": flash_sweep,
                      "default_block_results": default_sweep},
            "curves": {"temperature": curve_t, "bubble_pressure": bubble, "dew_pressure": dew,
                       "saturation_pressure_component1": psat,
                       "saturation_temperature_pressure": tsat_p, "saturation_temperature_component1": tsat},
            "properties_stable": props,
            "calc_sweeps": {
                "flash_pt": {"args": [ct, cp], "results": calc_pt, "block8_results": calc_pt_8},
                "flash_ph": {"args": [chp, ch], "results": calc_ph},
            },
        },
        "water": v["water"].as_array().expect("water cases").iter().map(water_case).collect::<Vec<_>>(),
        "water_extra": water_extra(),
        "solid_flash": solid_flashes(),
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
    // ... and warm starts as well as cold starts inside blocks (neighbours too far apart).
    let warm = flash_sweep
        .iter()
        .filter(|r| r["diagnostics"]["warm_start"] == true)
        .count();
    let blocks = flash_sweep.len().div_ceil(block);
    assert!(
        warm > 10 && flash_sweep.len() - warm > blocks,
        "{warm} warm starts in {blocks} blocks"
    );
    let path = std::env::var_os("TIELINE_REFERENCE_OUT")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("python-reference.json"));
    if let Some(dir) = path.parent() {
        std::fs::create_dir_all(dir).expect("output directory");
    }
    std::fs::write(&path, serde_json::to_string_pretty(&out).expect("json")).expect("writing the reference file");
}
