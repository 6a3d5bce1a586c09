//! Phase envelopes (Michelsen 1980, Fluid Phase Equilib. 4:1-10) and critical points
//! (Heidemann & Khalil 1980, AIChE J. 26:769; Michelsen 1984, Fluid Phase Equilib. 16:57)
//! against the shared vectors in tests/vectors/envelope.json (each case names its source there),
//! against the saturation routines and the PT flash (self-consistency), and on bad input.

use serde::Deserialize;
use serde_json::Value;
use tieline::equilibrium::{
    CriticalOptions, EnvelopeOptions, EnvelopePoint, FlashOptions, PhaseEnvelope, SaturationOptions, bubble_pressure,
    bubble_temperature, critical_point, dew_pressure, dew_temperature, flash_pt, phase_envelope, saturation_pressure,
};
use tieline::model::{FluidModel, Model, ModelDescription};
use tieline::substance::DataBank;
use tieline::{Error, ErrorKind};
use tieline_validation::load_vectors;

#[derive(Deserialize)]
struct Case {
    id: String,
    source: String,
    model: Value,
    feed: Vec<f64>,
    #[serde(default)]
    options: Option<EnvelopeOptions>,
    expected: Value,
}

#[derive(Deserialize)]
struct Vectors {
    pure_critical: Vec<Case>,
    binary_critical: Vec<Case>,
    envelopes: Vec<Case>,
}

fn vectors() -> Vectors {
    load_vectors("envelope.json")
}

fn model(c: &Case) -> Model {
    let d: ModelDescription = serde_json::from_value(c.model.clone()).unwrap_or_else(|e| panic!("{}: {e}", c.id));
    d.build(DataBank::embedded())
        .unwrap_or_else(|e| panic!("{}: {e}", c.id))
}

fn num(v: &Value, k: &str) -> f64 {
    v[k].as_f64().unwrap_or_else(|| panic!("missing {k}"))
}

fn rel(a: f64, b: f64) -> f64 {
    (a / b - 1.0).abs()
}

fn envelope(c: &Case) -> (Model, PhaseEnvelope) {
    let m = model(c);
    let opts = c.options.clone().unwrap_or_default();
    let env = phase_envelope(&m, &c.feed, &opts).unwrap_or_else(|e| panic!("{}: {e}", c.id));
    (m, env)
}

fn nan_free(p: &EnvelopePoint) -> bool {
    p.temperature.is_finite()
        && p.pressure.is_finite()
        && p.incipient.iter().all(|v| v.is_finite())
        && p.ln_k.iter().all(|v| v.is_finite())
}

/// A cubic is fitted to its component's Tc and pc (Peng & Robinson 1976, Ind. Eng. Chem.
/// Fundam. 15:59; Soave 1972, Chem. Eng. Sci. 27:1197; sources per case in the file): the
/// critical point of a one-component feed is the equation's own critical point (derived in the
/// file from the exact criticality conditions, to 1e-8) and the input (Tc, pc) up to the
/// rounding of the printed Ω_a, Ω_b.
#[test]
fn pure_component_critical_point_is_tc_pc() {
    for c in vectors().pure_critical {
        assert!(!c.source.is_empty());
        let m = model(&c);
        let r = critical_point(&m, &c.feed, &CriticalOptions::default()).unwrap_or_else(|e| panic!("{}: {e}", c.id));
        let tol = num(&c.expected, "rel_tolerance");
        assert!(
            rel(r.temperature, num(&c.expected, "temperature")) < tol,
            "{}: Tc {} vs {}",
            c.id,
            r.temperature,
            num(&c.expected, "temperature")
        );
        assert!(
            rel(r.pressure, num(&c.expected, "pressure")) < tol,
            "{}: pc {} vs {}",
            c.id,
            r.pressure,
            num(&c.expected, "pressure")
        );
        // And the input constants, up to the rounding of the published Ω_a, Ω_b.
        let input = m.critical_constants(0);
        let tol = num(&c.expected, "input_rel_tolerance");
        assert!(
            rel(r.temperature, input.tc) < tol && rel(r.pressure, input.pc) < tol,
            "{}",
            c.id
        );
    }
}

/// Measured binary critical points (sources and tolerances per case in the file; the
/// recalled values are marked "from memory" there).
#[test]
fn binary_critical_points_match_measurements() {
    for c in vectors().binary_critical {
        assert!(!c.source.is_empty());
        let m = model(&c);
        let r = critical_point(&m, &c.feed, &CriticalOptions::default()).unwrap_or_else(|e| panic!("{}: {e}", c.id));
        let e = &c.expected;
        assert!(
            rel(r.temperature, num(e, "temperature")) < num(e, "t_rel_tolerance"),
            "{}: Tc {} vs {}",
            c.id,
            r.temperature,
            num(e, "temperature")
        );
        assert!(
            rel(r.pressure, num(e, "pressure")) < num(e, "p_rel_tolerance"),
            "{}: pc {} vs {}",
            c.id,
            r.pressure,
            num(e, "pressure")
        );
    }
}

/// Each envelope traces completely (bubble branch, critical point, dew branch, from and back
/// to the start pressure, no NaN), passes through the directly computed critical point, and
/// has the cricondenbar and cricondentherm as its maxima of p and T.
#[test]
fn envelopes_close_through_the_critical_point() {
    for c in vectors().envelopes {
        assert!(!c.source.is_empty());
        let (m, env) = envelope(&c);
        let e = &c.expected;
        let p0 = c.options.clone().unwrap_or_default().start_pressure;
        assert!(env.points.iter().all(nan_free), "{}: NaN in the trace", c.id);
        assert_eq!(
            env.critical.len() as u64,
            e["critical_points"].as_u64().unwrap(),
            "{}",
            c.id
        );
        let (first, last) = (&env.points[0], env.points.last().unwrap());
        assert!(
            rel(first.pressure, p0) < 1e-9 && rel(last.pressure, p0) < 1e-9,
            "{}",
            c.id
        );
        assert_eq!(first.vapor_fraction, 0.0, "{}: starts on the bubble branch", c.id);
        assert_eq!(last.vapor_fraction, 1.0, "{}: ends on the dew branch", c.id);
        // One switch from bubble to dew labels.
        let switches = env
            .points
            .windows(2)
            .filter(|w| w[0].vapor_fraction != w[1].vapor_fraction)
            .count();
        assert_eq!(switches, 1, "{}", c.id);
        // The envelope passes through the critical point of the Heidemann-Khalil criteria.
        let direct = critical_point(&m, &c.feed, &CriticalOptions::default()).unwrap();
        let tol = num(e, "envelope_vs_direct_rel");
        let cp = &env.critical[0];
        assert!(
            rel(cp.temperature, direct.temperature) < tol && rel(cp.pressure, direct.pressure) < tol,
            "{}: envelope crosses at ({}, {}), direct ({}, {})",
            c.id,
            cp.temperature,
            cp.pressure,
            direct.temperature,
            direct.pressure
        );
        assert!(
            rel(cp.molar_volume, direct.molar_volume) < 1e-4,
            "{}: critical volume",
            c.id
        );
        // Cricondenbar and cricondentherm.
        let bar = env.cricondenbar.as_ref().expect("cricondenbar");
        let therm = env.cricondentherm.as_ref().expect("cricondentherm");
        for p in &env.points {
            assert!(
                p.pressure <= bar.pressure * (1.0 + 1e-12),
                "{}: p {} > cricondenbar",
                c.id,
                p.pressure
            );
            assert!(p.temperature <= therm.temperature * (1.0 + 1e-12), "{}", c.id);
        }
        assert!(
            env.points.contains(bar) && env.points.contains(therm),
            "{}: extrema marked in the trace",
            c.id
        );
        assert!(
            bar.pressure >= cp.pressure && therm.temperature >= cp.temperature,
            "{}",
            c.id
        );
    }
}

/// Points of the trace solve the bubble- and dew-point problems of the saturation routines at
/// the same T or p, and a PT flash just inside is two-phase, just outside single-phase
/// (self-consistency). Sampled where each branch is single-valued in T and in p: the bubble
/// branch below 0.7 p_c, the dew branch below the cricondentherm pressure and 0.7 p_c.
#[test]
fn envelope_points_are_bubble_and_dew_points() {
    let sat = SaturationOptions::default();
    let fopts = FlashOptions::default();
    for c in vectors().envelopes {
        let (m, env) = envelope(&c);
        let pc = env.critical[0].pressure;
        let p_therm = env.cricondentherm.as_ref().unwrap().pressure;
        let n = env.points.len();
        // Where a branch folds back on itself in T (a swallowtail, the metastable ends of the
        // two-phase boundary next to a three-phase region; Y8 has one near 200 K, 5.3 MPa),
        // the saturation routines may land on another of its bubble points: skip that T range.
        let mut folds: Vec<(f64, f64)> = Vec::new();
        for k in 2..n - 2 {
            let w = &env.points[k - 1..=k + 1];
            let same = w.iter().all(|q| q.vapor_fraction == w[0].vapor_fraction);
            let turn = (w[1].temperature - w[0].temperature) * (w[2].temperature - w[1].temperature) < 0.0;
            if same && turn {
                let lo = env.points[k - 2..=k + 2]
                    .iter()
                    .map(|q| q.temperature)
                    .fold(f64::INFINITY, f64::min);
                let hi = env.points[k - 2..=k + 2]
                    .iter()
                    .map(|q| q.temperature)
                    .fold(0.0, f64::max);
                folds.push((lo, hi));
            }
        }
        let mut checked = (0, 0);
        for (k, pt) in env.points.iter().enumerate() {
            let folded = folds
                .iter()
                .any(|&(lo, hi)| pt.temperature >= lo - 1.0 && pt.temperature <= hi + 1.0);
            if k % 3 != 1 || pt.pressure < 2e5 || folded {
                continue;
            }
            let (t, p) = (pt.temperature, pt.pressure);
            let bubble = pt.vapor_fraction == 0.0;
            if bubble && p < 0.7 * pc {
                let bt = bubble_temperature(&m, p, &c.feed, &sat).unwrap_or_else(|e| panic!("{}: {e}", c.id));
                let bp = bubble_pressure(&m, t, &c.feed, &sat).unwrap_or_else(|e| panic!("{}: {e}", c.id));
                assert!(
                    rel(bt.temperature, t) < 1e-8,
                    "{}: bubble T {} vs {t}",
                    c.id,
                    bt.temperature
                );
                assert!(rel(bp.pressure, p) < 1e-7, "{}: bubble p {} vs {p}", c.id, bp.pressure);
                for (a, b) in bt.incipient.iter().zip(&pt.incipient) {
                    assert!((a - b).abs() < 1e-7, "{}: incipient vapour", c.id);
                }
                checked.0 += 1;
            } else if !bubble && p < p_therm.min(0.7 * pc) && k > n / 2 {
                let dt = dew_temperature(&m, p, &c.feed, &sat).unwrap_or_else(|e| panic!("{}: {e}", c.id));
                let dp = dew_pressure(&m, t, &c.feed, &sat).unwrap_or_else(|e| panic!("{}: {e}", c.id));
                assert!(
                    rel(dt.temperature, t) < 1e-8,
                    "{}: dew T {} vs {t}",
                    c.id,
                    dt.temperature
                );
                assert!(rel(dp.pressure, p) < 1e-7, "{}: dew p {} vs {p}", c.id, dp.pressure);
                for (a, b) in dt.incipient.iter().zip(&pt.incipient) {
                    assert!((a - b).abs() < 1e-7, "{}: incipient liquid", c.id);
                }
                checked.1 += 1;
            } else {
                continue;
            }
            // Just inside (towards the other branch at the same p: a quarter of the way, at
            // most 0.5 K) two phases, as far outside one.
            let other = if bubble {
                dew_temperature(&m, p, &c.feed, &sat)
            } else {
                bubble_temperature(&m, p, &c.feed, &sat)
            };
            let dt = other.map_or(0.5, |o| (0.25 * (o.temperature - t).abs()).min(0.5));
            let (t_in, t_out) = if bubble { (t + dt, t - dt) } else { (t - dt, t + dt) };
            let r_in = flash_pt(&m, t_in, p, &c.feed, &fopts).unwrap();
            let r_out = flash_pt(&m, t_out, p, &c.feed, &fopts).unwrap();
            assert_eq!(r_in.phases.len(), 2, "{}: inside at T = {t_in} K, p = {p} Pa", c.id);
            assert_eq!(r_out.phases.len(), 1, "{}: outside at T = {t_out} K, p = {p} Pa", c.id);
        }
        assert!(checked.0 >= 2 && checked.1 >= 2, "{}: sampled {checked:?}", c.id);
    }
}

/// Quality lines: every point is a two-phase state whose PT flash gives the line's vapour
/// fraction (so it lies inside the envelope), and the line ends at the critical point.
#[test]
fn quality_lines_lie_inside_and_end_at_the_critical_point() {
    let fopts = FlashOptions::default();
    let mut lines = 0;
    for c in vectors().envelopes {
        let (m, env) = envelope(&c);
        let betas = c.options.clone().unwrap_or_default().quality_lines;
        assert_eq!(env.quality_lines.len(), betas.len());
        for (line, &beta) in env.quality_lines.iter().zip(&betas) {
            lines += 1;
            assert!(line.iter().all(nan_free));
            let cp = &env.critical[0];
            let end = line.last().unwrap();
            assert!(
                rel(end.temperature, cp.temperature) < 1e-6 && rel(end.pressure, cp.pressure) < 1e-6,
                "{}: line {beta} ends at ({}, {}), critical ({}, {})",
                c.id,
                end.temperature,
                end.pressure,
                cp.temperature,
                cp.pressure
            );
            for pt in line.iter().step_by(5) {
                assert_eq!(pt.vapor_fraction, beta);
                if rel(pt.pressure, cp.pressure) < 0.02 {
                    continue; // too close to the critical point for a flash to be decisive
                }
                let r = flash_pt(&m, pt.temperature, pt.pressure, &c.feed, &fopts).unwrap();
                assert_eq!(
                    r.phases.len(),
                    2,
                    "{}: line {beta} at ({}, {})",
                    c.id,
                    pt.temperature,
                    pt.pressure
                );
                assert!(
                    (r.vapor_fraction() - beta).abs() < 1e-6,
                    "{}: flash vapour fraction {} on the line {beta}",
                    c.id,
                    r.vapor_fraction()
                );
            }
        }
    }
    assert!(lines >= 3);
}

/// A nearly pure mixture's envelope lies close to the pure component's saturation curve
/// (tolerance and its reasoning per case in the file).
#[test]
fn nearly_pure_envelope_follows_the_saturation_curve() {
    let mut seen = 0;
    for c in vectors().envelopes {
        let Some(i) = c.expected["pure_component"].as_u64() else {
            continue;
        };
        seen += 1;
        let i = i as usize;
        let tol = num(&c.expected, "pure_rel_tolerance");
        let (m, env) = envelope(&c);
        let tc = m.critical_constants(i).tc;
        let mut n = 0;
        for pt in &env.points {
            if pt.temperature > tc - 0.5 {
                continue;
            }
            let s = saturation_pressure(&m, pt.temperature, i, &SaturationOptions::default()).unwrap();
            assert!(
                rel(pt.pressure, s.pressure) < tol,
                "{}: envelope p {} vs saturation {} at T = {}",
                c.id,
                pt.pressure,
                s.pressure,
                pt.temperature
            );
            n += 1;
        }
        assert!(n > 10);
        // And its critical point is within 0.1 % of the pure component's.
        let cp = &env.critical[0];
        assert!(rel(cp.temperature, tc) < 1e-3, "{}: Tc {}", c.id, cp.temperature);
    }
    assert!(seen >= 1);
}

fn kind(r: Result<PhaseEnvelope, Error>) -> (ErrorKind, String) {
    let e = r.expect_err("an error was expected");
    (e.kind(), e.to_string())
}

/// Bad input and unreachable specifications are typed errors with the bound in the message.
#[test]
fn envelope_bad_input_is_a_typed_error() {
    let bank = DataBank::embedded();
    let m = tieline::model::CubicEos::new(
        tieline::model::CubicKind::PengRobinson,
        bank.get_many(&["methane", "n-butane"]).unwrap(),
    )
    .unwrap();
    let o = EnvelopeOptions::default();
    let (k, msg) = kind(phase_envelope(&m, &[1.0, 0.0], &o));
    assert_eq!(k, ErrorKind::NoSolution);
    assert!(msg.contains("saturation"), "{msg}");
    let pure = tieline::model::CubicEos::new(
        tieline::model::CubicKind::PengRobinson,
        bank.get_many(&["propane"]).unwrap(),
    )
    .unwrap();
    assert_eq!(kind(phase_envelope(&pure, &[1.0], &o)).0, ErrorKind::NoSolution);
    assert_eq!(
        kind(phase_envelope(&m, &[0.5, f64::NAN], &o)).0,
        ErrorKind::InvalidInput
    );
    assert_eq!(
        kind(phase_envelope(&m, &[0.5, 0.3, 0.2], &o)).0,
        ErrorKind::InvalidInput
    );
    let (k, msg) = kind(phase_envelope(
        &m,
        &[0.7, 0.3],
        &EnvelopeOptions {
            max_points: usize::MAX,
            ..o.clone()
        },
    ));
    assert_eq!(k, ErrorKind::InvalidInput);
    assert!(msg.contains("100000"), "{msg}");
    for tol in [0.0, -1.0, f64::NAN] {
        let (k, msg) = kind(phase_envelope(
            &m,
            &[0.7, 0.3],
            &EnvelopeOptions {
                tolerance: tol,
                ..o.clone()
            },
        ));
        assert_eq!(k, ErrorKind::InvalidInput);
        assert!(msg.contains("1e-14"), "{msg}");
    }
    for b in [0.0, 1.0, 1.5] {
        let (k, msg) = kind(phase_envelope(
            &m,
            &[0.7, 0.3],
            &EnvelopeOptions {
                quality_lines: vec![b],
                ..o.clone()
            },
        ));
        assert_eq!(k, ErrorKind::InvalidInput);
        assert!(msg.contains("(0, 1)"), "{msg}");
    }
    // Above the cricondenbar (about 13.4 MPa for this feed) there is no saturation point.
    let (k, msg) = kind(phase_envelope(
        &m,
        &[0.7, 0.3],
        &EnvelopeOptions {
            start_pressure: 3e7,
            ..o.clone()
        },
    ));
    assert_eq!(k, ErrorKind::NoSolution, "{msg}");
    assert!(msg.contains("3e7") || msg.contains("30000000"), "{msg}");
    // Too few points allowed: an error, not a truncated envelope.
    let (k, msg) = kind(phase_envelope(
        &m,
        &[0.7, 0.3],
        &EnvelopeOptions {
            max_points: 10,
            ..o.clone()
        },
    ));
    assert_eq!(k, ErrorKind::NotConverged);
    assert!(msg.contains("max_points = 10"), "{msg}");
    // Critical point options.
    let e = critical_point(
        &m,
        &[0.7, 0.3],
        &CriticalOptions {
            tolerance: 0.0,
            ..Default::default()
        },
    )
    .unwrap_err();
    assert_eq!(e.kind(), ErrorKind::InvalidInput);
    let e = critical_point(&m, &[0.7], &CriticalOptions::default()).unwrap_err();
    assert_eq!(e.kind(), ErrorKind::InvalidInput);
}
